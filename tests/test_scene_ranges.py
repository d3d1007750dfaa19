"""Physical ranges at load (tracer/scene/ranges.py): absurd but well-typed values are
refused with their key path, one problem each; `check` refuses what `run` would."""

from __future__ import annotations

import math

import pytest

from tracer.cli import main
from tracer.scene import ranges

from scene_helpers import base, problems


def _only(doc):
    found = problems(doc)
    assert found, "expected a problem"
    return found


@pytest.mark.parametrize("edit, key, text", [
    (lambda d: d["sources"]["beam"].update(power="1e308 mW"), "sources.beam.power", "at most 1 GW"),
    (lambda d: d["sources"]["beam"].update(power="5e-324 W"), "sources.beam.power", "at least 1e-30 W"),
    (lambda d: d["sources"]["beam"].update(power="0 W"), "sources.beam.power", "positive power"),
    (lambda d: d["detectors"]["screen"].update(position=[1e300, 10]), "detectors.screen.position[0]",
     "at most 10 km"),
    (lambda d: d["solids"]["lower"].update(leg="1e-300 mm"), "solids.lower.leg", "at least 1 pm"),
    (lambda d: d["solids"]["lower"].update(leg="-2 um"), "solids.lower.leg",
     'got a negative length ("-2 um")'),
    (lambda d: d.update(trace={"power_threshold": 0}), "trace.power_threshold", "1e-15 <= t < 1"),
    (lambda d: d.update(trace={"power_threshold": 1}), "trace.power_threshold", "1e-15 <= t < 1"),
    (lambda d: d.update(trace={"power_threshold": 1e-300}), "trace.power_threshold", "1e-15 <= t < 1"),
    (lambda d: d.update(trace={"power_threshold": "1e-6"}), "trace.power_threshold", '"auto" or'),
    (lambda d: d["spectrum"].update(wavelengths=["1e-300 nm"]), "spectrum.wavelengths[0]",
     "at least 1 nm"),
    (lambda d: d["sources"]["beam"].update(direction=[0, "y"]), "sources.beam.direction[1]",
     'expected a finite number, got "y" (a string)'),
    (lambda d: d["detectors"]["screen"].update(pixels=[100000, 100000]), "detectors.screen.pixels",
     "pixels in all"),
    (lambda d: d["solids"]["upper"]["mate"].update(spin="1e308 deg"), "solids.upper.mate.spin",
     "at most 360 deg"),
])
def test_absurd_values_are_refused_with_their_key(edit, key, text):
    doc = base()
    edit(doc)
    found = _only(doc)
    hits = [p for p in found if p.key == key]
    assert hits, "\n".join(str(p) for p in found)
    assert text in hits[0].message, hits[0].message


@pytest.mark.parametrize("n", [1e308, 1e-300, 5e-324, 1000.0])
def test_index_out_of_range(n):
    doc = base()
    doc["materials"] = {"m": {"model": "constant", "n": n}}
    doc["solids"]["lower"]["material"] = "m"
    found = _only(doc)
    assert [p.key for p in found] == ["materials.m.n"], "\n".join(map(str, found))


def test_evaluated_index_out_of_range_names_the_material_key():
    # a Cauchy formula whose B term makes the index absurd at the scene wavelength
    doc = base()
    doc["materials"] = {"m": {"model": "cauchy", "A": 1.5, "B": 1e5}}
    doc["solids"]["lower"]["material"] = "m"
    found = _only(doc)
    assert any(p.key == "solids.lower.material" and "refractive index" in p.message for p in found)


def test_bad_mate_face_gives_no_follow_on_unknown_gap():
    doc = base()
    doc["solids"]["upper"]["mate"]["face"] = "hypotenus"
    found = _only(doc)
    assert [p.key for p in found] == ["solids.upper.mate.face"], "\n".join(map(str, found))
    assert not any("unknown gap" in p.message for p in found)


def test_threshold_auto_is_accepted_by_the_range():
    assert ranges.threshold_problem("auto") is None
    assert ranges.threshold_problem(math.nan) is not None
    assert ranges.threshold_problem(True) is not None


def _write(tmp_path, doc, name="s.toml"):
    import tomli_w
    path = tmp_path / name
    path.write_text(tomli_w.dumps(doc))
    return str(path)


def test_check_refuses_what_run_refuses(tmp_path, capsys):
    doc = base()
    doc["trace"] = {"power_threshold": 1}
    path = _write(tmp_path, doc)
    assert main(["check", "-q", path]) == 2
    assert main(["run", "-q", path]) == 2
    err = capsys.readouterr().err
    assert "trace.power_threshold" in err and "Traceback" not in err


def test_scene_without_sources_traces_at_its_own_spectrum(tmp_path, capsys):
    # a radio-only medium: the engine must not evaluate it at a default visible wavelength
    doc = base()
    doc["spectrum"] = {"wavelengths": ["10 mm"]}
    doc["ambient"] = "air-radio"
    doc["materials"] = {"ptfe": {"model": "constant", "n": 1.44}}
    for s in doc["solids"].values():
        s["material"] = "ptfe"
    del doc["coatings"]
    del doc["solids"]["lower"]["faces"]
    del doc["sources"]
    del doc["requirements"]
    path = _write(tmp_path, doc)
    assert main(["check", "-q", path]) == 0
    assert main(["run", "-q", path]) == 0
    assert "Traceback" not in capsys.readouterr().err


def test_missing_mesh_package_is_named_with_its_install_command(tmp_path, monkeypatch):
    import sys

    import trimesh
    trimesh.creation.box(extents=[10, 10, 10]).export(tmp_path / "box.stl")
    doc = base()
    doc["dimension"] = 3
    doc["solids"] = {"m": {"material": "fused-silica", "kind": "mesh", "path": "box.stl"}}
    for k in ("sources", "detectors", "requirements", "coatings"):
        doc.pop(k, None)
    path = _write(tmp_path, doc)
    monkeypatch.setitem(sys.modules, "trimesh", None)  # as if it were not installed
    from tracer.scene import SceneError, load
    with pytest.raises(SceneError) as info:
        load(path)
    [p] = info.value.problems
    assert p.key == "solids.m" and "optional package 'trimesh'" in p.message
    assert "pip install trimesh" in p.message
