"""Baseline files (tracer.versions.baseline) and ``tracer run --save-baseline/--baseline``.

The perturbed scene changes the plate's glass: a higher index raises the Fresnel
reflectance ((n-1)/(n+1))^2 of each face (common practice, no source), so the direct
power must drop and the first ghost must rise; the test only asserts that the baseline
names those quantities.
"""

import tomllib
from pathlib import Path

import pytest

from tracer.cli import main
from tracer.versions import baseline as b

PLATE = Path(__file__).resolve().parent.parent / "scenes" / "plate_ghost.toml"


@pytest.fixture()
def scene(tmp_path):
    f = tmp_path / "plate.toml"
    f.write_text(PLATE.read_text(encoding="utf-8"), encoding="utf-8")
    return f


def test_save_is_small_sorted_rounded_and_stable(scene, tmp_path):
    base = tmp_path / "plate.baseline.toml"
    assert main(["run", str(scene), "--rays", "8", "--save-baseline", str(base), "-q"]) == 0
    text = base.read_text()
    data = tomllib.loads(text)
    keys = list(data["values"])
    assert keys == sorted(keys)
    assert data["run"]["seed"] == 9 and data["run"]["rays"] == {"beam": 8 * 1}
    assert "ledger.residual_w" not in data["values"]
    assert data["values"]["requirements.direct.verdict"] == "pass"
    for v in data["values"].values():
        if isinstance(v, float) and v:
            assert float(f"{v:.6g}") == v
    assert len(text.splitlines()) < 60
    again = tmp_path / "again.toml"
    main(["run", str(scene), "--rays", "8", "--save-baseline", str(again), "-q"])
    assert again.read_text() == text  # byte-stable: a re-run gives no diff


def test_unchanged_scene_passes(scene, tmp_path, capsys):
    base = tmp_path / "b.toml"
    main(["run", str(scene), "--rays", "8", "--save-baseline", str(base), "-q"])
    assert main(["run", str(scene), "--rays", "8", "--baseline", str(base)]) == 0
    assert "quantities within tolerance" in capsys.readouterr().out


def test_perturbed_scene_fails_naming_the_quantities(scene, tmp_path, capsys):
    base = tmp_path / "b.toml"
    main(["run", str(scene), "--rays", "8", "--save-baseline", str(base), "-q"])
    # a glass of slightly higher index; requirements still pass, so only the baseline catches it
    scene.write_text(scene.read_text().replace("glass:517642", "glass:523587"))
    capsys.readouterr()
    rc = main(["run", str(scene), "--rays", "8", "--baseline", str(base), "-q"])
    out = capsys.readouterr().out
    assert rc == 1
    assert "FAIL" not in out  # every requirement still passes: only the baseline catches it
    assert "moved beyond their tolerance" in out
    assert "detectors.screen.power_w: " in out and "ledger.escaped_w: " in out
    assert "detectors.screen.ghost_fraction" in out


def test_scene_tolerances_override_defaults(scene, tmp_path, capsys):
    base = tmp_path / "b.toml"
    main(["run", str(scene), "--rays", "8", "--save-baseline", str(base), "-q"])
    scene.write_text(scene.read_text().replace("glass:517642", "glass:523587")
                     + '\n[baseline]\nrelative = "50 %"\n[baseline.tolerances."detectors.*.ghost_fraction"]\n'
                       'relative = "1 %"\n')
    capsys.readouterr()
    assert main(["run", str(scene), "--rays", "8", "--baseline", str(base), "-q"]) == 1
    out = capsys.readouterr().out
    moved = [line.split(":")[0].strip() for line in out.splitlines() if "tolerance" in line and "->" in line]
    assert moved == ["detectors.screen.ghost_fraction"], out


def test_tolerance_lookup_and_compare_rules():
    tol = b.Tolerances(relative=1e-3, absolute=0.0,
                       overrides={"ledger.*": (0.1, None), "ledger.detected_w": (None, 5.0)})
    assert tol.of("ledger.detected_w") == (1e-3, 5.0)  # exact key wins
    assert tol.of("ledger.escaped_w") == (0.1, 0.0)
    assert tol.of("source_power_w") == (1e-3, 0.0)
    summary = dict(source_power_w=1.0, ledger={"detected_w": 0.5}, gaps={}, requirements=[],
                   detectors={"d": dict(power_w=0.5, paths=[dict(signature="s1", power_w=0.4),
                                                           dict(signature="s2", power_w=0.1)])})
    saved = dict(run={}, values=b.baseline_values(summary))
    assert b.compare(saved, summary).passed
    # a new ghost stronger than the weakest recorded path is caught; a weaker one is not
    summary["detectors"]["d"]["paths"].append(dict(signature="s3", power_w=0.2))
    check = b.compare(saved, summary)
    assert [m.key for m in check.moved] == ["detectors.d.path[s3].power_w"]
    summary["detectors"]["d"]["paths"][-1]["power_w"] = 0.01
    assert b.compare(saved, summary).passed
    # a recorded path that is gone compares with 0 W
    del summary["detectors"]["d"]["paths"][1]
    assert [m.key for m in b.compare(saved, summary).moved] == ["detectors.d.path[s2].power_w"]
    # quantities added to the summary later are listed, not failed
    summary["detectors"]["d"]["paths"].insert(1, dict(signature="s2", power_w=0.1))
    summary["gaps"] = {"g": {"crossed_w": 0.3}}
    check = b.compare(saved, summary)
    assert check.passed and check.unrecorded == ["gaps.g.crossed_w"]


def test_bad_baseline_table_and_file_are_input_errors(scene, tmp_path, capsys):
    scene.write_text(scene.read_text() + '\n[baseline]\nrelative = "5 mm"\n'
                     '[baseline.tolerances."ledger.*"]\nrelativ = 0.1\n')
    assert main(["check", str(scene)]) == 2
    err = capsys.readouterr().err
    assert "baseline.relative: expected a fraction" in err
    assert 'baseline.tolerances."ledger.*".relativ: unknown key' in err
    bad = tmp_path / "bad.toml"
    bad.write_text("[values]\nx = true\n")
    ok = tmp_path / "ok.toml"
    ok.write_text(PLATE.read_text())
    assert main(["run", str(ok), "--rays", "4", "--baseline", str(bad), "-q"]) == 2
    assert "bad.toml: values: expected a [values] table" in capsys.readouterr().err


def test_shipped_demo_baseline_still_holds(capsys):
    """The committed baselines/plate_ghost.toml is the check a repository runs in CI.

    When a deliberate change of the engine moves these results, rewrite it with
    ``tracer run scenes/plate_ghost.toml --save-baseline baselines/plate_ghost.toml``.
    """
    root = PLATE.parent.parent
    rc = main(["run", str(PLATE), "--baseline", str(root / "baselines" / "plate_ghost.toml"), "-q"])
    assert rc == 0, capsys.readouterr().out
