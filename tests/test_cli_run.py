"""The command line end to end: run, ghosts, path, draw on the demo scenes and on bad input.

Commands are run in-process through ``tracer.cli.main`` (same parsing, dispatch and exit
codes as the console script) with few rays, so the suite stays fast.
"""

import json
import math
from pathlib import Path

import numpy as np
import pytest

from tracer.cli import main

ROOT = Path(__file__).resolve().parents[1]
SCENES = sorted((ROOT / "scenes").glob("*.toml"))
PLATE = ROOT / "scenes" / "plate_ghost.toml"


def run_cli(capsys, *argv):
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    assert "Traceback" not in out + err
    return code, out, err


@pytest.mark.skipif(not SCENES, reason="no demo scenes")
@pytest.mark.parametrize("scene", SCENES, ids=[p.stem for p in SCENES])
def test_run_every_demo_scene(scene, tmp_path, capsys):
    out_dir = tmp_path / "out"
    js = tmp_path / "summary.json"
    code, out, err = run_cli(capsys, "run", scene, "--rays", 5, "--out", out_dir, "--json", js,
                             "--no-figures")
    data = json.loads(js.read_text(encoding="utf-8"))
    # exit code 1 exactly when a requirement failed or is inconclusive (few rays here), and
    # then the table says which
    assert code == (0 if data["passed"] else 1), out + err
    if code == 1:
        assert "FAIL" in out or "INCONCLUSIVE" in out
    assert "power budget" in out and "closure residual" in out
    assert (out_dir / "summary.json").exists() and (out_dir / "budget.csv").exists()
    for det, d in data["detectors"].items():
        assert (out_dir / f"ghosts-{det}.csv").exists()
        assert d["power_w"] >= 0
    # the ledger closes to the source power (energy conservation)
    led = data["ledger"]
    booked = sum(led[k] for k in ("detected_w", "absorbed_w", "escaped_w", "discarded_w", "cut_w",
                                  "sampling_w"))
    assert booked == pytest.approx(data["source_power_w"], rel=1e-9)
    assert data["settings"]["rays_requested"] == 5
    assert json.loads((out_dir / "summary.json").read_text(encoding="utf-8")) == data


def _glass_index(scene_path):
    """Index of the plate relative to the surrounding air: a glass code gives n relative
    to air (common practice for glass catalogs, no source), and the scene is in air."""
    from tracer.scene import load

    sc = load(scene_path)
    assert sc.ambient_name == "air"
    solid = next(iter(sc.solids.values()))
    wl = float(sc.spectrum.wavelengths[0])
    return float(solid.material.relative_index(wl).real)


def test_run_plate_json_ghost_powers_follow_fresnel(tmp_path, capsys):
    # Plate at normal incidence: direct T^2, ghosts T^2 R^2 and T^2 R^4 of the source
    # power, with R = ((n - 1)/(n + 1))^2 and T = 1 - R (Hecht, Optics, 5th ed., 2017,
    # Eq. 4.67 and sec. 9.7).
    js = tmp_path / "plate.json"
    code, out, _ = run_cli(capsys, "run", PLATE, "--rays", 7, "--json", js, "--quiet")
    assert code == 0 and out == ""
    data = json.loads(js.read_text(encoding="utf-8"))
    n = _glass_index(PLATE)
    R = ((n - 1) / (n + 1)) ** 2
    T = 1 - R
    src = data["source_power_w"]
    paths = data["detectors"]["screen"]["paths"]
    assert [p["reflections"] for p in paths[:3]] == [0, 2, 4]
    assert paths[0]["power_w"] / src == pytest.approx(T**2, rel=1e-9)
    assert paths[1]["power_w"] / src == pytest.approx(T**2 * R**2, rel=1e-9)
    assert paths[2]["power_w"] / src == pytest.approx(T**2 * R**4, rel=1e-9)
    assert paths[0]["design"] and data["detectors"]["screen"]["design_rule"] == "sequence"
    assert paths[1]["ratio_to_design"] == pytest.approx(R**2, rel=1e-9)


def test_run_threshold_and_seed_options_reach_the_trace(tmp_path, capsys):
    js = tmp_path / "s.json"
    code, _, _ = run_cli(capsys, "run", PLATE, "--rays", 3, "--threshold", 1e-3, "--seed", 11,
                         "--max-events", 8, "--json", js, "--quiet")
    data = json.loads(js.read_text(encoding="utf-8"))
    assert data["settings"]["power_threshold"] == 1e-3 and data["seed"] == 11
    assert data["settings"]["max_events"] == 8
    # with threshold 1e-3 only the first ghost (T^2 R^2 ~ 1.7e-3) survives
    assert data["detectors"]["screen"]["paths_total"] == 2
    assert data["ledger"]["discarded_w"] > 0
    assert code in (0, 1)


def test_failing_requirement_exits_1_with_table(tmp_path, capsys):
    text = PLATE.read_text(encoding="utf-8").replace('limit = "90 %"', 'limit = "99.9 %"')
    assert '"99.9 %"' in text
    bad = tmp_path / "plate_strict.toml"
    bad.write_text(text, encoding="utf-8")
    js = tmp_path / "strict.json"
    code, out, _ = run_cli(capsys, "run", bad, "--rays", 3, "--json", js)
    assert code == 1
    assert "FAIL" in out and "1 of 2 FAILED: direct" in out
    data = json.loads(js.read_text(encoding="utf-8"))
    assert data["passed"] is False
    direct = next(r for r in data["requirements"] if r["name"] == "direct")
    assert direct["passed"] is False and direct["limit"] == pytest.approx(0.999)
    # even --quiet prints the failing table
    code, out, _ = run_cli(capsys, "run", bad, "--rays", 3, "--quiet")
    assert code == 1 and "FAIL" in out


@pytest.mark.parametrize("argv, needle", [
    (["run", "does/not/exist.toml"], "no such scene file"),
    (["ghosts", "does/not/exist.toml"], "no such scene file"),
    (["path", "does/not/exist.toml"], "no such scene file"),
    (["report", "does/not/exist.toml"], "no such scene file"),
    (["draw", "does/not/exist.toml"], "no such scene file"),
])
def test_missing_scene_exits_2(argv, needle, capsys):
    code, _, err = run_cli(capsys, *argv)
    assert code == 2 and needle in err


def test_scene_with_problems_prints_all_of_them(tmp_path, capsys):
    text = PLATE.read_text(encoding="utf-8")
    text = text.replace('kind = "plate"', 'kind = "plait"').replace('detector = "screen"\nlimit = "90 %"',
                                                                  'detector = "scren"\nlimit = "90 %"')
    bad = tmp_path / "broken.toml"
    bad.write_text(text, encoding="utf-8")
    code, _, err = run_cli(capsys, "run", bad)
    assert code == 2
    assert "plait" in err and "scren" in err  # both problems, one run


def test_bad_options_exit_2(capsys):
    with pytest.raises(SystemExit) as exc:
        main(["run", str(PLATE), "--rays", "0"])
    assert exc.value.code == 2
    assert "positive" in capsys.readouterr().err
    with pytest.raises(SystemExit) as exc:
        main(["run", str(PLATE), "--threshold", "2"])
    assert exc.value.code == 2


def test_unwritable_output_is_a_clear_error(tmp_path, capsys):
    blocker = tmp_path / "file"
    blocker.write_text("x")
    code, _, err = run_cli(capsys, "run", PLATE, "--rays", 2, "--out", blocker / "sub", "--quiet")
    assert code == 2 and "--out" in err


def test_ghosts_command_tables_csv_json(tmp_path, capsys):
    csv_path = tmp_path / "g.csv"
    js = tmp_path / "g.json"
    code, out, _ = run_cli(capsys, "ghosts", PLATE, "--rays", 3, "--detector", "screen",
                           "--csv", csv_path, "--json", js, "--top", 2)
    assert code == 0
    assert "plate(front:T back:R front:R back:T)" in out
    assert "2 weaker paths" in out
    lines = csv_path.read_text(encoding="utf-8").splitlines()
    assert lines[0].startswith("rank,design,power_w,fraction_of_source,ratio_to_design")
    assert lines[1].split(",")[1] == "yes"
    data = json.loads(js.read_text(encoding="utf-8"))
    assert data["detectors"]["screen"]["paths"][0]["design"] is True
    code, _, err = run_cli(capsys, "ghosts", PLATE, "--detector", "nope")
    assert code == 2 and "no such detector" in err


def test_path_command_reports_the_design_path(tmp_path, capsys):
    js = tmp_path / "p.json"
    code, out, _ = run_cli(capsys, "path", PLATE, "--json", js)
    assert code == 0
    assert "design path: plate.front > plate.back" in out and "throughput" in out
    data = json.loads(js.read_text(encoding="utf-8"))
    n = _glass_index(PLATE)
    R = ((n - 1) / (n + 1)) ** 2
    assert data["throughput"] == pytest.approx((1 - R) ** 2, rel=1e-9)  # Hecht, as above
    assert data["deviation_deg"] == pytest.approx(0.0, abs=1e-9)
    # a plate turns no direction: the angular map is the identity (common practice, no
    # source), printed as well as in the JSON
    assert np.allclose(data["angular_map"], np.eye(2), atol=1e-9)
    assert "angular map           [+1.0000 +0.0000]  [+0.0000 +1.0000]" in out
    # a sequence the chief ray cannot follow: exit 1 and where it left
    code, out, _ = run_cli(capsys, "path", PLATE, "--sequence", "plate.back", "plate.front")
    assert code == 1 and "LEFT the sequence" in out
    # an unknown face is an input error
    code, _, err = run_cli(capsys, "path", PLATE, "--sequence", "plate.nope")
    assert code == 2 and "nope" in err


def test_help_lists_commands_with_examples(capsys):
    with pytest.raises(SystemExit) as exc:
        main(["--help"])
    assert exc.value.code == 0
    out = capsys.readouterr().out
    for name in ("run", "path", "ghosts", "draw", "report", "check"):
        assert name in out
    for name in ("run", "path", "ghosts", "draw", "report"):
        with pytest.raises(SystemExit):
            main([name, "--help"])
        text = capsys.readouterr().out
        assert "examples:" in text and "exit codes:" in text
        if name in ("run", "ghosts", "draw", "report"):
            assert "--rays" in text and "--seed" in text and "--threshold" in text


def test_draw_writes_png(tmp_path, capsys):
    pytest.importorskip("matplotlib")
    from tracer.report.figures import make_figures  # noqa: F401

    plot = pytest.importorskip("tracer.plot")
    if not hasattr(plot, "draw_2d"):
        pytest.skip("tracer.plot has no draw_2d yet")
    code, out, err = run_cli(capsys, "draw", PLATE, "--rays", 5, "--out", tmp_path)
    assert code == 0, err
    png = tmp_path / "plate_ghost-rays.png"
    assert png.exists() and png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert math.isfinite(png.stat().st_size)


@pytest.mark.skipif(not SCENES, reason="no demo scenes")
@pytest.mark.parametrize("scene", SCENES, ids=[p.stem for p in SCENES])
def test_ghosts_path_report_on_every_demo_scene(scene, tmp_path, capsys):
    from tracer.scene import load

    js = tmp_path / "g.json"
    code, out, _ = run_cli(capsys, "ghosts", scene, "--rays", 3, "--json", js, "--top", 3)
    assert code == 0 and "detector" in out
    data = json.loads(js.read_text(encoding="utf-8"))
    for d in data["detectors"].values():
        # paths add up to the detector's power, and exactly one is the design path when lit
        assert sum(p["power_w"] for p in d["paths"]) == pytest.approx(d["power_w"], rel=1e-9, abs=1e-300)
        assert sum(p["design"] for p in d["paths"]) == (1 if d["paths"] else 0)
    if load(scene).settings.sequence:
        code, out, _ = run_cli(capsys, "path", scene)
        assert code in (0, 1) and "design path:" in out
    code, out, _ = run_cli(capsys, "report", scene, "--rays", 3, "--no-figures", "--out", tmp_path)
    assert code in (0, 1)
    assert (tmp_path / f"{scene.stem}.html").exists()
