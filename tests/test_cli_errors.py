"""Mistakes a user makes on the command line: each is one clear message and exit code 2.

Every case runs in-process through ``tracer.cli.main``; none may show a traceback. Option
mistakes caught by the argument parser are one ``error:`` line and a pointer to ``--help``
(no usage block); mistakes found later name the file, the key path or the option and what
was expected.
"""

import json
import re
from pathlib import Path

import pytest

from tracer.cli import build_parser, main

ROOT = Path(__file__).resolve().parents[1]
SCENES = ROOT / "scenes"
PLATE = SCENES / "plate_ghost.toml"
COUPLER = SCENES / "microwave_prism_coupler.toml"


def cli(capsys, *argv):
    """Exit code, stdout and stderr of one command (argument-parser exits included)."""
    try:
        code = main([str(a) for a in argv])
    except SystemExit as exc:  # argparse: --help or an option mistake
        code = exc.code
    out, err = capsys.readouterr()
    assert "Traceback" not in out + err
    return code, out, err


def one_error(err: str) -> str:
    """The error line of stderr; there is exactly one."""
    lines = [ln for ln in err.splitlines() if "error:" in ln]
    assert len(lines) == 1, err
    return lines[0]


@pytest.fixture
def no_detector_scene(tmp_path):
    text = PLATE.read_text(encoding="utf-8").split("[detectors")[0]
    path = tmp_path / "no_detector.toml"
    path.write_text(text, encoding="utf-8")
    return path


# --- files -------------------------------------------------------------------------------

@pytest.mark.parametrize("command", ["run", "ghosts", "draw", "path", "report", "check"])
def test_missing_scene_file(command, tmp_path, capsys):
    missing = tmp_path / "nope.toml"
    code, out, err = cli(capsys, command, missing)
    assert code == 2
    assert f"{missing}: no such scene file" in err


@pytest.mark.parametrize("command", ["run", "check", "sweep"])
def test_a_folder_instead_of_a_scene_file(command, capsys):
    argv = [command, SCENES] + (["--vary", "seed", "1", "2", "2"] if command == "sweep" else [])
    code, out, err = cli(capsys, *argv)
    assert code == 2
    assert "is a folder, not a scene file" in err and "*.toml" in err


def test_misspelt_key_names_file_key_and_the_right_name(tmp_path, capsys):
    bad = tmp_path / "typo.toml"
    bad.write_text(PLATE.read_text(encoding="utf-8").replace("[sources.beam]\n",
                                                              "[sources.beam]\npowr = 1\n", 1),
                   encoding="utf-8")
    assert "powr" in bad.read_text(encoding="utf-8")
    code, out, err = cli(capsys, "run", bad)
    assert code == 2
    assert f"{bad}: sources.beam.powr" in err and '"power"' in err


def test_out_is_a_file(tmp_path, capsys):
    f = tmp_path / "afile"
    f.write_text("x", encoding="utf-8")
    code, out, err = cli(capsys, "run", PLATE, "--rays", 3, "--out", f)
    assert code == 2 and "is a file, not a folder" in one_error(err)


@pytest.mark.parametrize("argv", [
    ["run", PLATE, "--rays", 3],
    ["ghosts", PLATE, "--rays", 3],
    ["path", PLATE],
    ["coefficients"],
])
def test_json_into_a_folder_is_refused_before_any_work(argv, tmp_path, capsys):
    code, out, err = cli(capsys, *argv, "--json", tmp_path)
    assert code == 2
    assert f"--json {tmp_path}: is a folder" in one_error(err)
    assert "power budget" not in out  # nothing was traced


# --- option values -------------------------------------------------------------------------

@pytest.mark.parametrize("argv, needle", [
    (["run", PLATE, "--rays", "-5"], "--rays: expected a positive whole number"),
    (["run", PLATE, "--rays", "0"], "--rays: expected a positive whole number"),
    (["run", PLATE, "--top", "-1"], "--top: expected 0 or more"),
    (["ghosts", PLATE, "--top", "-3"], "--top: expected 0 or more"),
    (["report", PLATE, "--top", "-2"], "--top: expected 0 or more"),
    (["draw", PLATE, "--segments", "-4"], "--segments: expected 0 or more"),
    (["draw", PLATE, "--kind", "ray"], "invalid choice: 'ray'"),
    (["run", PLATE, "--mode", "montecarlo"], "invalid choice: 'montecarlo'"),
    (["run", PLATE, "--threshold", "2"], "--threshold: expected a fraction t with 1e-15 <= t < 1"),
    (["run", PLATE, "--threshold", "0"], "--threshold: expected a fraction t with 1e-15 <= t < 1"),
    (["run", PLATE, "--threshold", "1e-300"], "--threshold: expected a fraction t with 1e-15 <= t < 1"),
    (["run", PLATE, "--rays", "1000000000000"], "--rays: expected at most 100000000 rays"),
    (["sweep", COUPLER, "--vary", "solids.output.mate.gap", "2mm", "4mm", "2", "--workers", "0"],
     "--workers: expected 1 or more worker processes (or 'auto'"),
    (["sweep", COUPLER, "--vary", "solids.output.mate.gap", "2mm", "4mm", "2", "--workers", "-1"],
     "--workers: expected 1 or more worker processes"),
    (["tolerance", COUPLER, "--workers", "0"], "--workers: expected 1 or more worker processes"),
    (["tolerance", COUPLER, "--trials", "0"], "--trials: expected 1 or more trials"),
    (["tolerance", COUPLER, "--trials", "-1"], "--trials: expected 1 or more trials"),
    (["tolerance", COUPLER, "--min-yield", "2"], "--min-yield: expected a fraction from 0 to 1"),
    (["runn", PLATE], "invalid choice: 'runn'"),
])
def test_option_mistakes_are_one_line_and_exit_2(argv, needle, capsys):
    code, out, err = cli(capsys, *argv)
    assert code == 2
    assert needle in one_error(err)
    assert "usage:" not in err and "--help" in err


def test_workers_auto_means_one_per_cpu():
    args = build_parser().parse_args(["sweep", str(COUPLER), "--workers", "auto"])
    assert args.workers == 0  # the backend's "one per CPU"
    assert build_parser().parse_args(["sweep", str(COUPLER), "--workers", "2"]).workers == 2


def test_unknown_detector_suggests_the_right_one(capsys):
    code, out, err = cli(capsys, "ghosts", PLATE, "--detector", "scren")
    assert code == 2
    line = one_error(err)
    assert "--detector scren" in line and str(PLATE) in line and 'did you mean "screen"' in line


def test_coefficients_angle_beyond_the_normal_range(capsys):
    code, out, err = cli(capsys, "coefficients", "--angle", "95 deg")
    assert code == 2
    line = one_error(err)
    assert "--angle 95 deg" in line and "0 to 90 deg" in line and "np." not in line


# --- scenes that lack something ------------------------------------------------------------

def test_ghosts_on_a_scene_without_detectors(no_detector_scene, capsys):
    code, out, err = cli(capsys, "ghosts", no_detector_scene, "--rays", 3)
    assert code == 2
    assert "has no detector" in one_error(err) and "[detectors.NAME]" in err


def test_run_on_a_scene_without_detectors_says_so(no_detector_scene, capsys):
    code, out, err = cli(capsys, "run", no_detector_scene, "--rays", 3)
    assert code == 0
    assert "detectors: none declared" in out and "closure residual" in out


def test_draw_maps_without_a_detector_says_why(no_detector_scene, tmp_path, capsys):
    code, out, err = cli(capsys, "draw", no_detector_scene, "--kind", "irradiance", "--rays", 3,
                         "--out", tmp_path)
    assert code == 2
    assert "no plane detector" in one_error(err)


def test_path_without_a_design_path(capsys):
    code, out, err = cli(capsys, "path", COUPLER)
    assert code == 2
    line = one_error(err)
    assert "no design path" in line and "--sequence" in line and "input.hypotenuse" in line


def test_path_unknown_source(capsys):
    code, out, err = cli(capsys, "path", PLATE, "--source", "bem")
    assert code == 2
    assert '--source bem' in one_error(err) and 'did you mean "beam"' in err


# --- sweeps and tolerances over key paths ---------------------------------------------------

def test_sweep_over_a_misspelt_key_is_one_message(capsys):
    code, out, err = cli(capsys, "sweep", COUPLER, "--vary", "solids.output.mate.gapp", "2 mm",
                         "40 mm", 3)
    assert code == 2
    line = one_error(err)
    assert "--vary solids.output.mate.gapp" in line and 'did you mean "gap"' in line
    assert "point" not in line  # not repeated once per point


def test_sweep_over_a_table_that_does_not_exist(capsys):
    code, out, err = cli(capsys, "sweep", COUPLER, "--vary", "solids.nosuch.mate.gap", "2 mm",
                         "4 mm", 2)
    assert code == 2
    assert 'solids has no key "nosuch"' in one_error(err)


def test_sweep_values_with_an_empty_item(capsys):
    code, out, err = cli(capsys, "sweep", COUPLER, "--values", "solids.output.mate.gap", "2 mm,,3 mm")
    assert code == 2
    assert "empty value" in one_error(err)


def test_tolerance_over_a_misspelt_key_is_one_message(capsys):
    code, out, err = cli(capsys, "tolerance", COUPLER, "--trials", 3, "--tol",
                         "solids.output.mate.gapz", "normal", "1mm")
    assert code == 2
    line = one_error(err)
    assert "--tol solids.output.mate.gapz" in line and 'did you mean "gap"' in line


def test_sweep_over_an_optional_key_the_file_leaves_out(capsys):
    # mate.wedge is not written in the file but is a key of the format: accepted
    code, out, err = cli(capsys, "sweep", COUPLER, "--vary", "solids.output.mate.wedge", "0 deg",
                         "1 deg", 2, "--rays", 3, "--no-polarization")
    assert code == 0, err
    # the swept value without its unit (the header carries it)
    assert "solids.output.mate.wedge [deg]" in out
    assert not re.search(r"^\s*0\s+0 deg", out, flags=re.M)


# --- the caution ---------------------------------------------------------------------------

def test_run_text_ends_with_the_caution_and_the_json_carries_it(tmp_path, capsys):
    js = tmp_path / "s.json"
    code, out, err = cli(capsys, "run", PLATE, "--rays", 3, "--json", js, "--out", tmp_path / "o",
                         "--no-figures")
    assert code == 0
    last = out.strip().splitlines()[-1]
    assert last.startswith("caution:") and "not a safety certification" in last
    data = json.loads(js.read_text(encoding="utf-8"))
    assert "not a safety certification" in data["caution"]
    # --json and --out DIR naming the same file: written once, listed once
    code, out, err = cli(capsys, "run", PLATE, "--rays", 3, "--out", tmp_path / "o",
                         "--json", tmp_path / "o" / "summary.json", "--no-figures")
    wrote = next(ln for ln in out.splitlines() if ln.startswith("wrote "))
    assert wrote.count("summary.json") == 1


# --- the help ------------------------------------------------------------------------------

def _examples():
    parser = build_parser()
    sub = next(a for a in parser._actions if a.dest == "command")
    for name, p in sub.choices.items():
        for line in (p.epilog or "").splitlines():
            if line.strip().startswith("tracer "):
                yield name, line.strip()


def test_every_scene_named_in_the_help_examples_exists():
    named = {(cmd, m) for cmd, line in _examples() for m in re.findall(r"scenes/\w+\.toml", line)}
    assert named
    missing = sorted((cmd, m) for cmd, m in named if not (ROOT / m).exists())
    assert not missing, missing
    # and no example points at a file that is not shipped
    loose = [(cmd, line) for cmd, line in _examples()
             if re.search(r"\s(\w+)\.toml", line) and "scenes/" not in line]
    assert not loose, loose


def test_the_path_example_with_a_sequence_runs(capsys):
    code, out, err = cli(capsys, "path", SCENES / "cube_beamsplitter_camera.toml", "--source", "beam",
                         "--wavelength", "532 nm", "--sequence", "a.leg_b", "a.hypotenuse:R",
                         "a.leg_a", "monitor")
    assert code == 0, err
    assert "so far" in out and "monitor" in out
