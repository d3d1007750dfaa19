"""The broken-scene set: each problem is reported with its key path and what was expected,
and all problems of a document are reported together."""

from __future__ import annotations

import pytest
import tomli_w

from tracer.scene import SceneError, loads
from tracer.errors import TracerError

from scene_helpers import base, find, problems


def test_base_scene_is_valid():
    assert problems(base()) == []


def _set(doc, dotted, value):
    keys = dotted.split(".")
    d = doc
    for k in keys[:-1]:
        d = d.setdefault(k, {})
    d[keys[-1]] = value


def _del(doc, dotted):
    keys = dotted.split(".")
    d = doc
    for k in keys[:-1]:
        d = d[k]
    del d[keys[-1]]


# (edit, key path of the problem, text the message must contain)
CASES = [
    ("unknown top-level key", lambda d: _set(d, "titel", "x"),
     "titel", 'unknown key "titel"; did you mean "title"?'),
    ("unknown coating, did you mean", lambda d: _set(d, "solids.upper.faces", {"leg_a": {"coating": "ar-coat"}}),
     "solids.upper.faces.leg_a.coating", 'unknown coating "ar-coat"; did you mean "ar_coat"?'),
    ("unknown material", lambda d: _set(d, "solids.lower.material", "bk-seven"),
     "solids.lower.material", "bk-seven"),
    ("unknown face in a faces table", lambda d: _set(d, "solids.lower.faces", {"hypotenus": {"coating": "ar_coat"}}),
     "solids.lower.faces.hypotenus", 'did you mean "hypotenuse"?'),
    ("wrong type of a catalog parameter", lambda d: _set(d, "solids.lower.leg", True),
     "solids.lower.leg", "expected a length"),
    ("non-positive size", lambda d: _set(d, "solids.lower.leg", "-5 mm"),
     "solids.lower.leg", "positive"),
    ("missing catalog parameter", lambda d: _del(d, "solids.lower.leg"),
     "solids.lower", 'missing key "leg"'),
    ("unknown solid kind", lambda d: _set(d, "solids.lower.kind", "right_angle_prsm"),
     "solids.lower.kind", 'did you mean "right_angle_prism"?'),
    ("unknown key in a solid", lambda d: _set(d, "solids.lower.lenght", 3),
     "solids.lower.lenght", 'unknown key "lenght"'),
    ("missing power", lambda d: _del(d, "sources.beam.power"),
     "sources.beam", 'missing key "power"'),
    ("power with a length unit", lambda d: _set(d, "sources.beam.power", "5 mm"),
     "sources.beam.power", "expected a power"),
    ("power without a unit", lambda d: _set(d, "sources.beam.power", 5),
     "sources.beam.power", "with a unit"),
    ("2D source out of the plane", lambda d: _set(d, "sources.beam.position", [10, -15, 1]),
     "sources.beam.position", "expected z = 0"),
    ("2D direction out of the plane", lambda d: _set(d, "sources.beam.direction", [0, 1, 0.5]),
     "sources.beam.direction", "expected z = 0"),
    ("2D point source", lambda d: _set(d, "sources.beam", {"kind": "point", "position": [0, -30], "power": "1 mW"}),
     "sources.beam.kind", 'use kind = "fan"'),
    ("2D rotation about x", lambda d: _set(d, "solids.lower.rotation", [10, 0, 0]),
     "solids.lower.rotation", "rotations about z only"),
    ("diameter on a 2D line source", lambda d: _set(d, "sources.beam.diameter", "3 mm"),
     "sources.beam.diameter", "line aperture"),
    ("zero rays", lambda d: _set(d, "sources.beam.rays", 0),
     "sources.beam.rays", "expected an integer >= 1"),
    ("unknown polarisation kind", lambda d: _set(d, "sources.beam.polarization", {"kind": "circluar"}),
     "sources.beam.polarization.kind", 'did you mean "circular"?'),
    ("unphysical Stokes vector", lambda d: _set(d, "sources.beam.polarization", {"kind": "stokes", "stokes": [1, 1, 1, 0]}),
     "sources.beam.polarization.stokes", "S1^2 + S2^2 + S3^2 <= S0^2"),
    ("missing handedness", lambda d: _set(d, "sources.beam.polarization", {"kind": "circular"}),
     "sources.beam.polarization", 'missing key "handedness"'),
    ("requirement on an unknown detector", lambda d: _set(d, "requirements.enough.detector", "scren"),
     "requirements.enough.detector", 'unknown detector "scren"; did you mean "screen"?'),
    ("leakage through an unknown gap", lambda d: _set(d, "requirements.leak.gap", "upper.mat"),
     "requirements.leak.gap", 'did you mean "upper.mate"?'),
    ("limit of the wrong kind", lambda d: _set(d, "requirements.enough.limit", "5 mm"),
     "requirements.enough.limit", "expected a power"),
    ("mate to an unknown solid", lambda d: _set(d, "solids.upper.mate.to", "lowr.hypotenuse"),
     "solids.upper.mate.to", 'unknown solid "lowr"; did you mean "lower"?'),
    ("mate to an unknown face", lambda d: _set(d, "solids.upper.mate.to", "lower.hypot"),
     "solids.upper.mate.to", 'has no face "hypot"'),
    ("mate face malformed", lambda d: _set(d, "solids.upper.mate.to", "lower"),
     "solids.upper.mate.to", 'expected "solid.face"'),
    ("position together with a mate", lambda d: _set(d, "solids.upper.position", [1, 2]),
     "solids.upper.position", "mated solid"),
    ("negative gap", lambda d: _set(d, "solids.upper.mate.gap", "-1 um"),
     "solids.upper.mate.gap", "non-negative"),
    ("overlapping solids without a joint",
     lambda d: (_del(d, "solids.upper.mate"), _set(d, "solids.upper.position", [2, 2]), _del(d, "requirements.leak")),
     "solids.upper", 'overlaps solid "lower"'),
    ("unknown design-path face", lambda d: _set(d, "trace", {"sequence": ["lower.leg_a", "lower.hypotenuze"]}),
     "trace.sequence[1]", 'did you mean "hypotenuse"?'),
    ("unknown trace mode", lambda d: _set(d, "trace", {"mode": "montecarlo"}),
     "trace.mode", 'did you mean "monte-carlo"?'),
    ("spectrum weights of the wrong length", lambda d: _set(d, "spectrum.weights", [1, 2]),
     "spectrum.weights", "one per wavelength"),
    ("wavelength without a unit", lambda d: _set(d, "spectrum.wavelengths", [550]),
     "spectrum.wavelengths[0]", "with a unit"),
    ("material out of its range", lambda d: _set(d, "spectrum.wavelengths", ["28 mm"]),
     "solids.lower.material", "outside its valid range"),
    ("missing spectrum", lambda d: _del(d, "spectrum"),
     "", 'missing key "spectrum"'),
    ("dimension 4", lambda d: _set(d, "dimension", 4),
     "dimension", "expected 2"),
    ("detector on an unknown face", lambda d: _set(d, "detectors.screen", {"on_face": "lower.exit"}),
     "detectors.screen.on_face", 'solid "lower" has no face "exit"'),
    ("detector without width", lambda d: _del(d, "detectors.screen.width"),
     "detectors.screen", 'missing key "width"'),
    ("absorber on a gap face",
     lambda d: _set(d, "solids.lower.faces", {"hypotenuse": {"coating": "absorber"}}),
     "solids.lower.faces.hypotenuse.coating", "only uncoated faces or thin-film stacks can face a gap"),
    ("inline material with a bad model", lambda d: _set(d, "materials", {"g": {"model": "sellmeyer"}}),
     "materials.g.model", 'did you mean "sellmeier"?'),
    ("inline constant with negative index", lambda d: _set(d, "materials", {"g": {"model": "constant", "n": -1.5}}),
     "materials.g.n", "expected a refractive index (real part) >= 0.001"),
    ("coating with a missing layer thickness",
     lambda d: _set(d, "coatings.ar_coat", {"kind": "stack", "layers": [{"material": "mgf2"}]}),
     "coatings.ar_coat.layers[0]", 'exactly one of "thickness"'),
    ("ideal coating reflectance above one", lambda d: _set(d, "coatings.half", {"kind": "ideal", "reflectance": 1.5}),
     "coatings.half.reflectance", "at most"),
    ("format too new", lambda d: _set(d, "format", 99),
     "format", "update tracer"),
]


@pytest.mark.parametrize("edit, key, text", [c[1:] for c in CASES], ids=[c[0] for c in CASES])
def test_broken_scene(edit, key, text):
    doc = base()
    edit(doc)
    found = problems(doc)
    assert found, "expected a problem"
    assert find(found, key, text), "\n".join(str(p) for p in found)
    # every message names the file and the key path
    for p in found:
        assert str(p).startswith("scenes/x.toml: ")


def test_missing_format():
    doc = base()
    del doc["format"]
    found = problems(doc)
    assert find(found, "", 'missing key "format"')


def test_declared_gap_thickness_must_match_geometry():
    doc = base()
    doc["gaps"] = {"tir": {"faces": ["lower.hypotenuse", "upper.hypotenuse"], "thickness": "5 um"}}
    found = problems(doc)
    # the mated gap already joins these faces
    assert find(found, "gaps.tir", 'already form gap "upper.mate"')
    doc["gaps"]["tir"]["thickness"] = "8 um"
    del doc["solids"]["upper"]["mate"]
    doc["solids"]["upper"]["position"] = [20.0035355339, 20.0035355339]
    doc["solids"]["upper"]["rotation"] = "180 deg"
    doc["requirements"]["leak"]["gap"] = "tir"
    found = problems(doc)
    assert find(found, "gaps.tir.thickness", "declared 8 µm but the placed faces are 5 µm apart")
    doc["gaps"]["tir"]["thickness"] = "5 um"
    assert problems(doc) == []


def test_mating_cycle():
    doc = base()
    doc["solids"]["lower"]["mate"] = {"to": "upper.hypotenuse", "face": "hypotenuse"}
    found = problems(doc)
    assert [p for p in found if "mating cycle" in p.message and p.key.endswith(".mate.to")]


def test_mated_solids_in_dependency_order():
    doc = base()
    # a third prism mated to upper, declared before it
    third = {"material": "crown-517642", "kind": "right_angle_prism", "leg": "20 mm",
             "mate": {"to": "upper.leg_a", "face": "leg_a", "gap": "1 mm"}}
    doc["solids"] = {"third": third, **doc["solids"]}
    assert problems(doc) == []


def test_all_problems_reported_together():
    doc = base()
    doc["titel"] = "x"
    doc["sources"]["beam"]["power"] = "5 mm"
    doc["solids"]["lower"]["material"] = "unobtainium"
    doc["detectors"]["screen"]["pixels"] = [0, 1]
    found = problems(doc)
    keys = {p.key for p in found}
    assert {"titel", "sources.beam.power", "solids.lower.material", "detectors.screen.pixels"} <= keys
    with pytest.raises(SceneError) as info:
        loads(tomli_w.dumps(doc), path="scenes/x.toml")
    lines = str(info.value).splitlines()
    assert len(lines) == len(info.value.problems) >= 4
    assert isinstance(info.value, TracerError)


def test_toml_syntax_error_has_line_and_column():
    text = 'format = 1\n[spectrum]\nwavelengths = ["550 nm"\n'
    with pytest.raises(SceneError) as info:
        loads(text, path="broken.toml")
    p = info.value.problems[0]
    assert p.line == 4 or p.line == 3
    assert str(p).startswith(f"broken.toml:{p.line}")
    assert "TOML syntax error" in p.message


def test_source_inside_a_solid_is_a_note():
    doc = base()
    doc["sources"]["beam"]["position"] = [5, 5]
    from tracer.scene import from_dict
    scene = from_dict(doc, path="x.toml")
    assert scene.sources["beam"].inside_solid == "lower"
    assert any(n.startswith("sources.beam.position:") and 'inside solid "lower"' in n for n in scene.notes)


def test_mesh_problems(tmp_path):
    import trimesh
    box = trimesh.creation.box(extents=[10, 10, 10])
    open_box = trimesh.Trimesh(box.vertices, box.faces[:-1], process=False)
    open_box.export(tmp_path / "open.stl")
    box.export(tmp_path / "box.stl")
    doc = base()
    doc["dimension"] = 3
    doc["solids"] = {"m": {"material": "fused-silica", "kind": "mesh", "path": "open.stl"}}
    doc["sources"]["beam"] = {"kind": "collimated", "position": [-30, 0, 0], "direction": [1, 0, 0],
                              "diameter": "2 mm", "power": "1 mW"}
    doc["detectors"]["screen"] = {"position": [30, 0, 0], "normal": [-1, 0, 0], "width": 10, "height": 10}
    del doc["requirements"]["leak"]
    del doc["coatings"]
    scene_file = tmp_path / "scene.toml"
    scene_file.write_text(tomli_w.dumps(doc))
    from tracer.scene import load
    with pytest.raises(SceneError) as info:
        load(scene_file)
    assert any(p.key == "solids.m" and "not watertight" in p.message for p in info.value.problems)

    doc["solids"]["m"]["path"] = "box.stl"
    doc["solids"]["m"]["labels"] = {"skew": [0, 4]}
    scene_file.write_text(tomli_w.dumps(doc))
    with pytest.raises(SceneError) as info:
        load(scene_file)
    assert any(p.key == "solids.m" and "not planar" in p.message for p in info.value.problems)

    doc["solids"]["m"]["path"] = "missing.stl"
    del doc["solids"]["m"]["labels"]
    scene_file.write_text(tomli_w.dumps(doc))
    with pytest.raises(SceneError) as info:
        load(scene_file)
    missing = [p for p in info.value.problems if p.key == "solids.m.path"]
    assert missing and "missing or unreadable" in missing[0].message

    # a file that exists but is not a mesh gets the very same message (no probing for files)
    (tmp_path / "notes.stl").write_text("not a mesh")
    doc["solids"]["m"]["path"] = "notes.stl"
    scene_file.write_text(tomli_w.dumps(doc))
    with pytest.raises(SceneError) as info:
        load(scene_file)
    garbled = [p for p in info.value.problems if p.key == "solids.m.path"]
    assert [p.message for p in garbled] == [missing[0].message.replace("missing.stl", "notes.stl")]

    # no doubled key path in geometry messages
    doc["solids"]["m"]["path"] = "open.stl"
    scene_file.write_text(tomli_w.dumps(doc))
    with pytest.raises(SceneError) as info:
        load(scene_file)
    assert all("solids.m: solids.m" not in str(p) for p in info.value.problems)

    # files outside the scene's folder tree: refused by default, read when allowed
    inner = tmp_path / "inner"
    inner.mkdir()
    doc["solids"]["m"]["path"] = "../box.stl"
    (inner / "scene.toml").write_text(tomli_w.dumps(doc))
    with pytest.raises(SceneError) as info:
        load(inner / "scene.toml")
    outside = [p for p in info.value.problems if p.key == "solids.m.path"]
    assert outside and "outside the scene file's folder" in outside[0].message
    assert "--allow-outside-files" in outside[0].message
    assert len(load(inner / "scene.toml", allow_outside_files=True).solids["m"].geometry.face_names) == 6

    doc["solids"]["m"]["path"] = "box.stl"
    scene_file.write_text(tomli_w.dumps(doc))
    scene = load(scene_file)
    assert len(scene.solids["m"].geometry.face_names) == 6


def test_design_path_suffixes_and_detector():
    doc = base()
    doc["trace"] = {"sequence": ["lower.leg_a", "lower.hypotenuse:R", "lower.leg_b:T", "screen"]}
    assert problems(doc) == []
    doc["trace"]["sequence"][1] = "lower.hypotenuse:X"
    assert find(problems(doc), "trace.sequence[1]", 'suffix ":T"')
    doc["trace"]["sequence"] = ["lower.leg_a", "scren"]
    assert find(problems(doc), "trace.sequence[1]", 'did you mean "screen"?')


def test_missing_format_does_not_hide_other_problems():
    doc = base()
    del doc["format"]
    doc["titel"] = "x"
    keys = {p.key for p in problems(doc)}
    assert {"", "titel"} <= keys


def test_scene_error_importable_from_tracer_errors():
    import pickle
    import subprocess
    import sys

    from tracer import errors

    assert errors.SceneError is SceneError
    assert "SceneError" in errors.__all__
    with pytest.raises(errors.SceneError) as info:
        loads("format = 1\ntitel = 'x'\n", path="x.toml")
    assert isinstance(info.value, TracerError)
    again = pickle.loads(pickle.dumps(info.value))
    assert type(again) is errors.SceneError and str(again) == str(info.value)
    # tracer.errors stays a leaf module: importing it loads no scene code (no import cycle)
    code = ("import sys, tracer.errors as e; assert 'tracer.scene' not in sys.modules; "
            "from tracer.scene import SceneError; assert SceneError is e.SceneError")
    subprocess.run([sys.executable, "-c", code], check=True)


def test_huge_direction_components_give_a_unit_vector_not_nan():
    # found by the fuzz test: [0, 1e300] overflowed the norm and left a NaN frame
    from scene_helpers import from_dict

    doc = base()
    doc["sources"]["beam"]["direction"] = [0, 1e300]
    sc = from_dict(doc, path="scenes/x.toml")
    d = sc.sources["beam"].direction
    assert d.tolist() == [0.0, 1.0, 0.0]
    assert all(abs(v) <= 1 for v in sc.sources["beam"].x_axis)


# ---------------------------------------------------------------- detector outlines
def test_circular_detector_takes_a_diameter_only():


    doc = base()
    doc["detectors"]["screen"].update(outline="circle")
    probs = problems(doc)
    assert find(probs, "detectors.screen.width", 'takes "diameter"')
    assert find(probs, "detectors.screen", 'missing key "diameter"')
    del doc["detectors"]["screen"]["width"]
    doc["detectors"]["screen"]["diameter"] = "12 mm"
    assert problems(doc) == []
    doc["detectors"]["screen"]["outline"] = "circel"
    assert find(problems(doc), "detectors.screen.outline", 'did you mean "circle"')
    doc = base()
    doc["detectors"]["screen"]["diameter"] = "12 mm"
    assert find(problems(doc), "detectors.screen.diameter", 'applies to outline = "circle"')
