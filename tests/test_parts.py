"""Opaque parts (``[parts.NAME]``): shapes, loading, errors, and what the engine does at them."""

from __future__ import annotations

import math

import numpy as np
import pytest

import tracer
from tracer.geometry.errors import GeometryError
from tracer.geometry.parts import plate_with_hole, regular_polygon, tube
from tracer.materials import get as material
from tracer.scene import SceneError, loader

# -- shapes -------------------------------------------------------------------------


def test_tube_volume_faces_and_bore():
    t = tube(outer_diameter=0.03, inner_diameter=0.02, length=0.01, sides=32)
    # regular polygon of width w across flats: area = sides * tan(pi / sides) * (w / 2)^2
    # (elementary geometry, common practice, no source)
    area = 32 * math.tan(math.pi / 32) * (0.015**2 - 0.010**2)
    assert t.volume == pytest.approx(area * 0.01, rel=1e-12)
    assert not t.is_convex
    names = t.face_names
    assert {"front", "back", "outer_0", "inner_0", "outer_31", "inner_31"} <= set(names)
    n = dict(zip(names, np.asarray(t.face_normals)))
    np.testing.assert_allclose(n["outer_0"], [0, 1, 0], atol=1e-12)
    np.testing.assert_allclose(n["inner_0"], [0, -1, 0], atol=1e-12)  # bore wall on +y faces the axis
    np.testing.assert_allclose(n["inner_8"], [0, 0, -1], atol=1e-12)
    # a ray along the axis passes; one from the axis outwards meets inner_0 at the bore radius
    o = np.array([[-1.0, 0, 0], [0.005, 0, 0]])
    d = np.array([[1.0, 0, 0], [0, 1.0, 0]])
    tt, face = t.intersect(o, d, np.zeros(2, dtype=bool))
    assert math.isinf(tt[0]) and face[0] == -1
    assert names[face[1]] == "inner_0" and tt[1] == pytest.approx(0.010, rel=1e-12)
    assert t.contains(np.array([[0.005, 0.0125, 0.0]]))[0]
    assert not t.contains(np.array([[0.005, 0.0, 0.0]]))[0]


def test_plate_with_hole_shapes_and_errors():
    p = plate_with_hole(width=0.04, height=0.03, thickness=0.002, hole_width=0.01, hole_height=0.008)
    assert p.volume == pytest.approx((0.04 * 0.03 - 0.01 * 0.008) * 0.002, rel=1e-12)
    n = dict(zip(p.face_names, np.asarray(p.face_normals)))
    np.testing.assert_allclose(n["hole_0"], [0, -1, 0], atol=1e-12)
    np.testing.assert_allclose(n["hole_1"], [0, 0, -1], atol=1e-12)
    np.testing.assert_allclose(n["side_a"], [0, -1, 0], atol=1e-12)
    with pytest.raises(GeometryError, match="either hole_diameter"):
        plate_with_hole(width=0.04, height=0.03, thickness=0.002)
    with pytest.raises(GeometryError, match="inside the outline"):
        plate_with_hole(width=0.01, height=0.01, thickness=0.002, hole_diameter=0.02)
    with pytest.raises(GeometryError, match="smaller than outer"):
        tube(outer_diameter=0.01, inner_diameter=0.02, length=0.01)
    v = regular_polygon(2.0, 4)
    np.testing.assert_allclose(np.abs(v), 1.0, atol=1e-12)  # a square of side 2


# -- scenes -------------------------------------------------------------------------

HEAD = """
format = 1
title = "parts"
dimension = 3
length_unit = "mm"
ambient = "vacuum"
seed = 2

[spectrum]
wavelengths = ["633 nm"]

[trace]
power_threshold = 1e-12

[coatings.anodised]
kind = "black"
diffuse_reflectance = 0.04
specular_reflectance = 0.01

[coatings.white]
kind = "lambertian"
reflectance = 0.5
transmittance = 0.2

[sources.beam]
kind = "collimated"
position = [-20, 0, 0]
direction = [1, 0, 0]
aperture = "circle"
diameter = "1 mm"
rays = 7
power = "1 W"
"""


def scene(extra: str):
    return loader.loads(HEAD + extra, path="parts.toml")


def problems(extra: str) -> list[str]:
    with pytest.raises(SceneError) as exc:
        scene(extra)
    return [f"{p.key}: {p.message}" for p in exc.value.problems]


def totals(res):
    t = res.ledger.totals()
    booked = t["detected_w"] + t["absorbed_w"] + t["escaped_w"] + t["discarded_w"] + t["cut_w"] + t["sampling_w"]
    assert booked == pytest.approx(t["source_w"], rel=1e-12)  # the books close
    return t


def test_metal_part_reflects_by_its_fresnel_coefficient_and_absorbs_the_rest():
    res = tracer.trace(scene("""
[parts.wall]
kind = "plate"
material = "aluminium"
width = "20 mm"
height = "20 mm"
thickness = "2 mm"
position = [0, 0, 0]
"""))
    t = totals(res)
    n = complex(np.ravel(material("aluminium").refractive_index(633e-9))[0])
    R = abs((n - 1) / (n + 1)) ** 2  # normal incidence (Born & Wolf, Principles of Optics, 1999)
    assert t["escaped_w"] == pytest.approx(R, rel=1e-9)
    assert t["absorbed_w"] == pytest.approx(1 - R, rel=1e-9)
    # never entered: no event inside the metal
    assert res.ledger.breakdown()["absorbed_faces"]["wall.front"] == pytest.approx(1 - R, rel=1e-9)


def test_glass_part_reflects_four_percent_and_transmits_nothing():
    res = tracer.trace(scene("""
[parts.block]
kind = "plate"
material = "glass:517642"
width = "20 mm"
height = "20 mm"
thickness = "2 mm"
position = [0, 0, 0]

[detectors.behind]
position = [10, 0, 0]
normal = [-1, 0, 0]
width = "10 mm"
height = "10 mm"
"""))
    t = totals(res)
    n = complex(np.ravel(material("glass:517642").refractive_index(633e-9))[0]).real
    R = ((n - 1) / (n + 1)) ** 2  # Fresnel at normal incidence (Born & Wolf 1999)
    assert res.detector_power("behind") == 0.0
    assert t["escaped_w"] == pytest.approx(R, rel=1e-9)
    assert res.ledger.breakdown()["absorbed_faces"]["block.front"] == pytest.approx(1 - R, rel=1e-9)


def test_tube_lets_the_beam_through_its_bore_and_a_stop_cuts_it():
    res = tracer.trace(scene("""
[parts.cell]
kind = "tube"
outer_diameter = "12 mm"
inner_diameter = "8 mm"
length = "10 mm"
surface = "anodised"
position = [0, 0, 0]

[parts.stop]
kind = "plate_with_hole"
width = "12 mm"
height = "12 mm"
thickness = "1 mm"
hole_diameter = "0.4 mm"
position = [15, 0, 0]

[detectors.camera]
position = [30, 0, 0]
normal = [-1, 0, 0]
width = "10 mm"
height = "10 mm"
"""))
    t = totals(res)
    cam = res.detector_power("camera")
    # 7 grid rays over a 1 mm disk: the centre ray passes the 0.4 mm hole, the others meet the
    # absorbing stop (the default surface of a part without a material)
    assert 0 < cam < 1
    assert res.ledger.breakdown()["absorbed_faces"]["stop.front"] == pytest.approx(1 - cam, rel=1e-12)
    assert t["escaped_w"] == 0.0


def test_black_part_scatters_back_and_never_lets_light_in():
    res = tracer.trace(scene("""
[parts.baffle]
kind = "plate"
width = "20 mm"
height = "20 mm"
thickness = "1 mm"
position = [0, 0, 0]
surface = "anodised"

[detectors.behind]
position = [10, 0, 0]
normal = [-1, 0, 0]
width = "10 mm"
height = "10 mm"
"""))
    t = totals(res)
    assert res.detector_power("behind") == 0.0
    # black finish: 4 % diffuse + 1 % specular leave the face, 95 % are absorbed on it
    assert res.ledger.breakdown()["absorbed_faces"]["baffle.front"] == pytest.approx(0.95, rel=1e-9)
    assert t["escaped_w"] + t["sampling_w"] == pytest.approx(0.05, rel=1e-9)


def test_part_errors_name_the_key():
    base = """
[parts.p]
kind = "plate"
width = "20 mm"
height = "20 mm"
thickness = "1 mm"
position = [0, 0, 0]
"""
    msgs = problems(base + 'surface = "white"\n')
    assert any(m.startswith("parts.p.surface:") and "transmittance" in m for m in msgs), msgs
    msgs = problems(base + 'surface = "uncoated"\n')
    assert any(m.startswith("parts.p.surface:") and "material" in m for m in msgs), msgs
    msgs = problems(base + 'faces.front.coating = "uncoated"\n')
    assert any(m.startswith("parts.p.faces.front.coating:") for m in msgs), msgs
    msgs = problems(base + 'surface = "anodized"\n')
    assert any("parts.p.surface:" in m and 'did you mean "anodised"' in m for m in msgs), msgs
    msgs = problems(base + '[parts.p.mate]\nto = "x.front"\nface = "front"\n')
    assert any(m.startswith("parts.p.mate:") for m in msgs), msgs
    msgs = problems(base.replace("[0, 0, 0]", "[-20, 0, 0]"))
    assert any(m.startswith("sources.beam.position:") and "opaque part" in m for m in msgs), msgs
    msgs = problems(base + """
[solids.glass]
material = "glass:517642"
kind = "plate"
width = "5 mm"
height = "5 mm"
thickness = "5 mm"
position = [0.5, 0, 0]
""")
    assert any(m.startswith("parts.p:") and "overlaps" in m or m.startswith("solids.glass:") and "overlaps" in m
               for m in msgs), msgs
    msgs = problems(base + '[solids.p]\nmaterial = "glass:517642"\nkind = "plate"\nwidth = "1 mm"\n'
                           'height = "1 mm"\nthickness = "1 mm"\nposition = [40, 0, 0]\n')
    assert any("names both a solid and a part" in m for m in msgs), msgs
    msgs = problems(base.replace('kind = "plate"', 'kind = "tub"'))
    assert any(m.startswith("parts.p.kind:") and 'did you mean "tube"' in m for m in msgs), msgs


def test_parts_do_not_form_gaps_and_survive_a_round_trip():
    from tracer.scene.writer import dump

    s = scene("""
[solids.glass]
material = "glass:517642"
kind = "plate"
width = "5 mm"
height = "5 mm"
thickness = "5 mm"
position = [0, 0, 0]

[parts.cell]
kind = "tube"
outer_diameter = "12 mm"
inner_diameter = "5 mm"
length = "5 mm"
sides = 4
surface = "anodised"
position = [0, 0, 0]
""")
    assert not s.gaps  # the square bore touches the plate's sides: contact, not a gap
    assert s.solids["cell"].opaque and not s.solids["glass"].opaque
    back = loader.loads(dump(s), path="again.toml")
    assert back.solids["cell"].opaque
    assert back.solids["cell"].geometry.face_names == s.solids["cell"].geometry.face_names


def test_square_tube_works_in_a_2d_scene():
    text = HEAD.replace("dimension = 3", "dimension = 2").replace("[-20, 0, 0]", "[-20, 0]") \
        .replace("[1, 0, 0]", "[1, 0]").replace('aperture = "circle"\ndiameter = "1 mm"', 'width = "1 mm"')
    s = loader.loads(text + """
[parts.cell]
kind = "tube"
outer_diameter = "12 mm"
inner_diameter = "8 mm"
length = "10 mm"
sides = 4
surface = "anodised"
position = [0, 0]
rotation = 0
""", path="p2.toml")
    res = tracer.trace(s)
    totals(res)
    with pytest.raises(SceneError, match="2D scene"):
        loader.loads(text + """
[parts.cell]
kind = "tube"
outer_diameter = "12 mm"
inner_diameter = "8 mm"
length = "10 mm"
position = [0, 0]
""", path="p2.toml")
