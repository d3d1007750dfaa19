"""Loading valid scenes: SI values, placement and mating, gaps, sources, detectors."""

from __future__ import annotations

import math

import numpy as np
import pytest

from tracer.scene import from_dict, loads, summarize

from scene_helpers import base

SCENES = sorted((__import__("pathlib").Path(__file__).parent.parent / "scenes").glob("*.toml"))


def test_si_values_from_unit_strings():
    doc = base()
    doc["length_unit"] = "cm"
    doc["solids"]["lower"]["leg"] = 2          # bare number: cm
    doc["solids"]["upper"]["leg"] = "20 mm"
    doc["sources"]["beam"]["position"] = [1, -1.5]
    doc["sources"]["beam"]["width"] = "8 mm"
    doc["detectors"]["screen"]["position"] = [-1.5, 1]
    s = from_dict(doc)
    assert s.solids["lower"].geometry.face_area("leg_a") == pytest.approx(0.02 * 0.02)
    assert s.sources["beam"].position.tolist() == pytest.approx([0.01, -0.015, 0.0])
    assert s.sources["beam"].size == pytest.approx((0.008, 0.0))
    assert s.sources["beam"].power == pytest.approx(5e-3)
    assert s.spectrum.wavelengths.tolist() == pytest.approx([550e-9])


def test_frequency_as_wavelength():
    doc = base()
    doc["spectrum"] = {"wavelengths": ["10.7 GHz"]}
    for solid in doc["solids"].values():
        solid["material"] = "microwave-dielectric-1.44"
    doc["ambient"] = "air-radio"
    doc["solids"]["upper"]["mate"]["medium"] = "air-radio"
    del doc["coatings"], doc["solids"]["lower"]["faces"]
    s = from_dict(doc)
    # lambda = c / f, c = 299 792 458 m/s exact (SI)
    assert s.spectrum.wavelengths[0] == pytest.approx(299_792_458.0 / 10.7e9)


def test_mated_gap_geometry():
    s = from_dict(base())
    gap = s.gaps["upper.mate"]
    assert (gap.solid_a, gap.face_a, gap.solid_b, gap.face_b) == ("lower", "hypotenuse", "upper", "hypotenuse")
    assert gap.origin == "mated"
    assert gap.thickness == pytest.approx(5e-6, abs=1e-12)
    assert gap.wedge == pytest.approx(0.0, abs=1e-9)
    a, b = s.solids["lower"].geometry, s.solids["upper"].geometry
    na = a.face_normals[a.face_names.index("hypotenuse")]
    nb = b.face_normals[b.face_names.index("hypotenuse")]
    assert na @ nb == pytest.approx(-1.0)
    # the pair forms a square of side 20 mm (plus the gap): upper spans x, y in [0, 20 mm]
    lo, hi = np.asarray(b.bounds)
    assert lo[:2] == pytest.approx([0.0 + 5e-6 / math.sqrt(2)] * 2, abs=1e-9)
    assert hi[:2] == pytest.approx([0.02 + 5e-6 / math.sqrt(2)] * 2, abs=1e-9)


def test_mate_wedge_in_2d_turns_about_z():
    doc = base()
    doc["solids"]["upper"]["mate"]["wedge"] = "0.5 deg"
    doc["solids"]["upper"]["mate"]["gap"] = "20 um"
    s = from_dict(doc)
    g = s.gaps["upper.mate"]
    assert g.wedge == pytest.approx(math.radians(0.5), rel=1e-9)
    assert g.thickness == pytest.approx(20e-6, rel=1e-6)
    normals = np.asarray(s.solids["upper"].geometry.face_normals)
    assert np.all((np.abs(normals[:, 2]) < 1e-12) | (np.abs(np.abs(normals[:, 2]) - 1) < 1e-12))


def test_polarization_states():
    doc = base()
    cases = {
        "unpolarized": ({"kind": "unpolarized"}, [1, 0, 0, 0]),
        "linear 0": ({"kind": "linear", "angle": 0}, [1, 1, 0, 0]),
        "linear 45": ({"kind": "linear", "angle": "45 deg"}, [1, 0, 1, 0]),
        "right": ({"kind": "circular", "handedness": "right"}, [1, 0, 0, 1]),
        "left": ({"kind": "circular", "handedness": "left"}, [1, 0, 0, -1]),
        "elliptical": ({"kind": "elliptical", "azimuth": "30 deg", "ellipticity": "10 deg"},
                       [1, math.cos(math.radians(20)) * math.cos(math.radians(60)),
                        math.cos(math.radians(20)) * math.sin(math.radians(60)), math.sin(math.radians(20))]),
        "partial": ({"kind": "stokes", "stokes": [2, 1, 0, 0]}, [1, 0.5, 0, 0]),
        "half linear": ({"kind": "linear", "angle": 90, "degree": 0.5}, [1, -0.5, 0, 0]),
    }
    for label, (pol, expected) in cases.items():
        doc["sources"]["beam"]["polarization"] = pol
        s = from_dict(doc)
        assert s.sources["beam"].polarization.stokes.tolist() == pytest.approx(expected, abs=1e-12), label


def test_source_frame_defaults_and_2d_line_aperture():
    s = from_dict(base())
    src = s.sources["beam"]
    assert src.direction.tolist() == pytest.approx([0, 1, 0])
    # default x_axis = z x direction
    assert src.x_axis.tolist() == pytest.approx([-1, 0, 0])
    assert src.aperture == "rectangle" and src.size[1] == 0.0


def test_detector_on_face():
    doc = base()
    doc["detectors"]["screen"] = {"on_face": "lower.leg_b", "pixels": [10, 1]}
    s = from_dict(doc)
    d = s.detectors["screen"]
    g = s.solids["lower"].geometry
    i = g.face_names.index("leg_b")
    outward = g.face_normals[i]
    assert d.normal.tolist() == pytest.approx((-outward).tolist())   # detects outgoing light
    assert d.position == pytest.approx(g.face_centroid("leg_b") + 1e-8 * outward)
    assert d.size == pytest.approx((0.02, 0.02))
    assert d.on_face == "lower.leg_b"
    doc["detectors"]["screen"]["detects"] = "incoming"
    assert from_dict(doc).detectors["screen"].normal.tolist() == pytest.approx(outward.tolist())


def test_far_field_detector():
    doc = base()
    doc["detectors"]["sky"] = {"kind": "far_field", "pixels": [36, 18]}
    s = from_dict(doc)
    assert s.detectors["sky"].kind == "far_field"
    assert s.detectors["sky"].pixels == (36, 18)


def test_automatic_gap_finding():
    doc = base()
    del doc["solids"]["upper"]["mate"]
    del doc["requirements"]["leak"]
    doc["solids"]["upper"]["position"] = [20.0014142136, 20.0014142136]   # 2 um along (1,1)/sqrt2
    doc["solids"]["upper"]["rotation"] = 180
    assert summarize(from_dict(doc))["gaps"] == {}
    doc["gap_finding"] = {"enabled": True, "max_separation": "10 um"}
    s = from_dict(doc)
    (name, gap), = s.gaps.items()
    assert gap.origin == "automatic"
    assert gap.thickness == pytest.approx(2e-6, abs=1e-11)
    assert {gap.face_a, gap.face_b} == {"hypotenuse"}
    assert any("found gap" in n for n in s.notes)


def test_inline_materials_and_coatings():
    doc = base()
    doc["materials"] = {
        "n151": {"model": "constant", "n": 1.51},
        "cau": {"model": "cauchy", "A": 1.5, "B": 0.004},
        "sel": {"model": "sellmeier", "B": [1.03961212, 0.231792344, 1.01046945],
                "C": [0.00600069867, 0.0200179144, 103.560653], "valid_range": ["300 nm", "2.5 um"]},
        "tab": {"model": "table", "wavelengths": ["500 nm", "600 nm"], "n": [1.6, 1.5]},
        "code": {"model": "glass-code", "code": "620364"},
        "alias": {"model": "catalog", "name": "fused-silica"},
    }
    doc["coatings"]["v"] = {"kind": "v-coat", "high": "ta2o5", "low": "mgf2", "design_wavelength": "550 nm"}
    doc["coatings"]["m"] = {"kind": "hl-mirror", "high": "ta2o5", "low": "mgf2", "pairs": 3,
                            "design_wavelength": "550 nm"}
    doc["coatings"]["two"] = {"kind": "stack", "design_wavelength": "550 nm",
                              "layers": [{"material": "ta2o5", "waves": 0.25}, {"material": "mgf2", "thickness": "99 nm"}]}
    doc["coatings"]["half"] = {"kind": "ideal", "reflectance": "50 %"}
    doc["coatings"]["al"] = {"kind": "mirror", "metal": "aluminium"}
    doc["solids"]["lower"]["material"] = "sel"
    doc["solids"]["lower"]["faces"] = {"leg_a": {"coating": "v"}, "leg_b": {"coating": "half"}}
    doc["solids"]["upper"]["faces"] = {"leg_a": {"coating": "two"}, "leg_b": {"coating": "al"}, "top": {"coating": "m"}}
    s = from_dict(doc)
    n_sel = s.solids["lower"].material.relative_index(587.6e-9).real
    assert float(n_sel) == pytest.approx(1.5168, abs=2e-4)   # the published N-BK7 Sellmeier fit gives 1.5168 at d
    lower = s.solids["lower"].faces
    assert lower["leg_a"].kind == "stack" and lower["leg_a"].coating_name == "v"
    assert lower["leg_b"].kind == "ideal" and lower["leg_b"].reflectance == 0.5
    upper = s.solids["upper"].faces
    two = upper["leg_a"].coating
    import tracer.materials as m
    n_ta = float(m.get("ta2o5").refractive_index(550e-9).real)
    assert two.thicknesses[0] == pytest.approx(0.25 * 550e-9 / n_ta)     # quarter wave: n d = lambda / 4
    assert two.thicknesses[1] == pytest.approx(99e-9)
    assert upper["leg_b"].kind == "mirror" and upper["leg_b"].coating.thicknesses == (200e-9,)
    assert len(upper["top"].coating) == 7


@pytest.mark.parametrize("path", SCENES, ids=[p.stem for p in SCENES])
def test_demo_scene_loads(path):
    from tracer.scene import load
    s = load(path)
    assert s.solids and s.sources and s.detectors
    assert s.requirements
    summary = summarize(s)
    for name, solid in summary["solids"].items():
        assert set(solid["faces"]) == set(s.solids[name].geometry.face_names)


def test_expected_demo_scenes_present():
    names = {p.stem for p in SCENES}
    assert {"tir_prism_pair", "penta_prism_laser", "cube_beamsplitter_camera", "porro_erecting_pair",
            "fresnel_rhomb_retarder", "microwave_prism_coupler", "corner_cube_retroreflector",
            "plate_ghost"} <= names


def test_load_is_exposed_on_the_package():
    import tracer
    assert tracer.load is __import__("tracer.scene", fromlist=["load"]).load


def test_loads_accepts_text():
    import tomli_w
    s = loads(tomli_w.dumps(base()), path="mem.toml")
    assert s.path == "mem.toml" and s.title == "base"


def _three_d(doc):
    doc["dimension"] = 3
    doc["sources"]["beam"] = {"kind": "collimated", "position": [10, -15, 0], "direction": [0, 1, 0],
                              "diameter": "4 mm", "power": "1 mW"}
    doc["detectors"]["screen"] = {"position": [-15, 10, 0], "normal": [1, 0, 0], "width": 16, "height": 16}
    return doc


def test_source_kinds_in_3d():
    doc = _three_d(base())
    doc["sources"]["rect"] = {"kind": "collimated", "position": [10, -15, 0], "direction": [0, 1, 0],
                              "aperture": "rectangle", "width": "4 mm", "height": "2 mm", "power": "1 mW",
                              "x_axis": [0, 0, 1]}
    doc["sources"]["lamp"] = {"kind": "point", "position": [10, -15, 0], "power": "1 mW"}
    doc["sources"]["cone"] = {"kind": "cone", "position": [10, -15, 0], "direction": [0, 1, 0],
                              "half_angle": "5 deg", "power": "1 mW", "sampling": "random", "rays": 50}
    doc["sources"]["fan"] = {"kind": "fan", "position": [10, -15, 0], "direction": [0, 1, 0],
                             "half_angle": "10 deg", "power": "1 mW",
                             "spectrum": {"wavelengths": ["500 nm", "600 nm"], "weights": [1, 3]}}
    s = from_dict(doc)
    assert s.sources["beam"].aperture == "circle" and s.sources["beam"].size == pytest.approx((0.004, 0.004))
    assert s.sources["rect"].size == pytest.approx((0.004, 0.002))
    assert s.sources["rect"].x_axis.tolist() == pytest.approx([0, 0, 1])
    assert s.sources["lamp"].kind == "point" and s.sources["lamp"].half_angle == pytest.approx(math.pi)
    assert s.sources["cone"].kind == "point" and s.sources["cone"].half_angle == pytest.approx(math.radians(5))
    assert s.sources["cone"].sampling == "random"
    assert s.sources["fan"].kind == "fan"
    assert s.sources["fan"].spectrum.weights.tolist() == pytest.approx([0.25, 0.75])
    assert s.sources["beam"].spectrum is s.spectrum


def test_x_axis_must_be_perpendicular():
    from scene_helpers import find, problems
    doc = _three_d(base())
    doc["sources"]["beam"]["x_axis"] = [0, 1, 0]
    assert find(problems(doc), "sources.beam.x_axis", "perpendicular")


def test_polygon_and_polyhedron_constructions():
    doc = _three_d(base())
    doc["solids"] = {
        "slab": {"material": "fused-silica", "kind": "polygon", "vertices": [[0, 0], [30, 0], [30, 10], [0, 10]],
                 "height": 5, "side_names": ["south", "exit", "north", "entrance"],
                 "position": [0, 30, 0], "faces": {"exit": {"coating": "absorber"}}},
        "tetra": {"material": "fused-silica", "kind": "polyhedron",
                  "vertices": [[0, 0, 0], [10, 0, 0], [0, 10, 0], [0, 0, 10]], "position": [-40, 0, 0]},
    }
    del doc["requirements"]["leak"]
    s = from_dict(doc)
    slab = s.solids["slab"]
    assert slab.geometry.face_names == ("south", "exit", "north", "entrance", "top", "bottom")
    assert slab.faces["exit"].kind == "absorber" and slab.faces["south"].kind == "uncoated"
    assert slab.geometry.volume == pytest.approx(30e-3 * 10e-3 * 5e-3)
    assert s.solids["tetra"].geometry.volume == pytest.approx(1e-6 / 6)
    assert len(s.solids["tetra"].geometry.face_names) == 4
