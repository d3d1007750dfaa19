"""Ground bevels: chamfer geometry, the [[solids.NAME.bevels]] table, its errors, and what
the rest of the tool does with a bevelled solid (treatments, tracing, mates, gaps, plots,
writing back, includes, key paths, fuzzing)."""

from __future__ import annotations

import copy
import math
import random
import tomllib

import numpy as np
import pytest

import tracer
from tracer.geometry.bevels import (
    BEVEL_MIN_WIDTH,
    Bevel,
    BevelError,
    bevelled,
    chamfer_leg,
    chamfer_plane,
    max_width,
    shared_edge,
)
from tracer.geometry.catalog import build
from tracer.scene import SceneError, from_dict, loader
from tracer.scene.loader import INTERNAL_ERROR


def _across(solid, face: str, edge_axis) -> float:
    """Extent of a face's polygon across ``edge_axis`` within its own plane [m]."""
    i = solid.face_index(face)
    across = np.cross(solid.face_normals[i], edge_axis)
    across /= np.linalg.norm(across)
    t = np.asarray(solid.face_polygons[i]) @ across
    return float(t.max() - t.min())


# -- geometry -----------------------------------------------------------------------
# Outside checks for all of these: plane geometry of the cross-section (an isosceles
# triangle of apex angle theta and base w has legs w / (2 sin(theta/2)) and area
# w^2 / (4 tan(theta/2))); common practice, no source.


def test_right_angle_edge_chamfer_width_area_and_removed_volume():
    L, w = 0.01, 0.8e-3
    prism = build("right_angle_prism", leg=0.02, height=L)
    cut = bevelled(prism, [Bevel(("leg_a", "leg_b"), w)])
    face = "bevel_leg_a_leg_b"
    assert cut.face_names == prism.face_names + (face,)
    # the chamfer face is w wide across and runs the full height: area w L
    assert _across(cut, face, [0, 0, 1.0]) == pytest.approx(w, rel=1e-12)
    assert cut.face_area(face) == pytest.approx(w * L, rel=1e-12)
    # a symmetric chamfer of face-width w on a 90 deg edge removes a triangular prism of
    # legs w / sqrt 2: volume w^2 L / 4
    assert prism.volume - cut.volume == pytest.approx(w**2 * L / 4, rel=1e-9)
    # each face loses a strip of width w / sqrt 2 along the edge
    for f in ("leg_a", "leg_b"):
        assert prism.face_area(f) - cut.face_area(f) == pytest.approx(w / math.sqrt(2) * L, rel=1e-9)
    # 45 deg to both faces
    n = dict(zip(cut.face_names, cut.face_normals))
    assert math.degrees(math.acos(n[face] @ n["leg_a"])) == pytest.approx(45.0, abs=1e-9)
    assert math.degrees(math.acos(n[face] @ n["leg_b"])) == pytest.approx(45.0, abs=1e-9)


def test_sixty_degree_edge_removes_an_equilateral_triangle():
    L, w = 0.012, 1.5e-3
    prism = build("dispersing_prism", apex_angle=math.radians(60), side=0.02, height=L)
    cut = bevelled(prism, [Bevel(("exit", "entrance"), w)])
    # apex 60 deg: legs w / (2 sin 30 deg) = w, so the removed triangle is equilateral
    assert prism.volume - cut.volume == pytest.approx(math.sqrt(3) / 4 * w**2 * L, rel=1e-9)
    assert _across(cut, "bevel_exit_entrance", [0, 0, 1.0]) == pytest.approx(w, rel=1e-12)
    assert prism.face_area("exit") - cut.face_area("exit") == pytest.approx(w * L, rel=1e-9)


def test_forty_five_degree_edge():
    L, w = 0.01, 0.5e-3
    prism = build("right_angle_prism", leg=0.02, height=L)
    cut = bevelled(prism, [Bevel(("leg_a", "hypotenuse"), w)])
    # apex 45 deg: area w^2 / (4 tan 22.5 deg) = w^2 (1 + sqrt 2) / 4 (tan 22.5 = sqrt 2 - 1)
    assert prism.volume - cut.volume == pytest.approx(w**2 * (1 + math.sqrt(2)) / 4 * L, rel=1e-9)
    assert cut.face_area("bevel_leg_a_hypotenuse") == pytest.approx(w * L, rel=1e-12)
    n = dict(zip(cut.face_names, cut.face_normals))
    a = math.acos(n["bevel_leg_a_hypotenuse"] @ n["leg_a"])
    b = math.acos(n["bevel_leg_a_hypotenuse"] @ n["hypotenuse"])
    assert a == pytest.approx(b, abs=1e-12) and math.degrees(a) == pytest.approx(67.5, abs=1e-9)


def test_chamfer_of_an_edge_ending_on_an_oblique_face_is_w_wide_everywhere():
    cube = build("corner_cube", size=0.01)
    w = 0.7e-3
    cut = bevelled(cube, [Bevel(("reflector_a", "reflector_b"), w)])
    # the edge is the z axis; the chamfer face is a trapezoid (it ends on the oblique
    # entrance) whose vertices lie on two lines parallel to the edge, w apart
    assert _across(cut, "bevel_reflector_a_reflector_b", [0, 0, 1.0]) == pytest.approx(w, rel=1e-12)
    poly = cut.face_polygons[cut.face_index("bevel_reflector_a_reflector_b")]
    assert len(poly) == 4
    s = w / math.sqrt(2)
    xy = np.round(np.abs(poly[:, :2]) / s, 9)
    assert {tuple(p) for p in xy} == {(1.0, 0.0), (0.0, 1.0)}


def test_chamfer_plane_and_leg_are_vectorised():
    na = np.array([[1.0, 0, 0], [0, -1.0, 0]])
    nb = np.array([[0, 1.0, 0], [-1.0, 0, 0]])
    m, d = chamfer_plane(na, [0.0, 0.0], nb, [0.0, 0.0], width=np.array([1.0, 2.0]))
    np.testing.assert_allclose(m, [[1, 1, 0], [-1, -1, 0]] / np.sqrt(2), atol=1e-15)
    np.testing.assert_allclose(d, [-0.5, -1.0], atol=1e-15)  # 90 deg: set back by w / 2
    np.testing.assert_allclose(chamfer_leg(na, nb, width=[1.0, 2.0]), [1, 2] / np.sqrt(2), rtol=1e-15)


def test_bevels_meet_in_a_mitre_and_their_order_does_not_matter():
    plate = build("plate", width=0.02, height=0.02, thickness=0.005)
    bevels = [Bevel(("front", "side_a"), 1e-3), Bevel(("front", "top"), 0.6e-3),
              Bevel(("side_a", "top"), 0.4e-3)]
    one = bevelled(plate, bevels)
    two = bevelled(plate, bevels[::-1])
    assert one.volume == pytest.approx(two.volume, rel=1e-12)
    assert set(one.face_names) == set(two.face_names)
    for f in one.face_names:
        assert one.face_area(f) == pytest.approx(two.face_area(f), rel=1e-9)
    assert one.volume < plate.volume


def test_shared_edge_and_max_width():
    plate = build("plate", width=0.02, height=0.03, thickness=0.004)
    assert shared_edge(plate, "front", "back") is None
    ends = shared_edge(plate, "front", "side_a")
    assert np.linalg.norm(ends[1] - ends[0]) == pytest.approx(0.03, rel=1e-12)
    # the strip on side_a (4 mm wide) limits it: w / sqrt 2 < 4 mm
    assert max_width(plate, "front", "side_a") == pytest.approx(math.sqrt(2) * 0.004, rel=1e-12)


def test_geometry_errors():
    plate = build("plate", width=0.02, height=0.02, thickness=0.001)
    with pytest.raises(BevelError, match="do not share an edge") as e:
        bevelled(plate, [Bevel(("front", "back"), 1e-4)])
    assert e.value.index == 0 and e.value.key == "edge"
    with pytest.raises(BevelError, match='far edge of face "side_b"') as e:
        bevelled(plate, [Bevel(("front", "side_a"), 1e-4), Bevel(("front", "side_b"), 1.5e-3)])
    assert e.value.index == 1 and e.value.key == "width"
    with pytest.raises(BevelError, match="at least") as e:
        bevelled(plate, [Bevel(("front", "side_a"), BEVEL_MIN_WIDTH / 2)])
    assert e.value.key == "width"
    with pytest.raises(BevelError, match="twice"):
        bevelled(plate, [Bevel(("front", "side_a"), 1e-4), Bevel(("side_a", "front"), 1e-4)])
    with pytest.raises(BevelError, match='no face "frnt"'):
        bevelled(plate, [Bevel(("frnt", "side_a"), 1e-4)])
    # each fits alone (strips of 0.57 mm on a 1 mm face), together they eat side_a
    with pytest.raises(BevelError, match="remove face side_a entirely") as e:
        bevelled(plate, [Bevel(("front", "side_a"), 0.8e-3), Bevel(("back", "side_a"), 0.8e-3)])
    assert e.value.index is None
    ring = tracer.geometry.extrude_polygon([[0, 0], [2, 0], [2, 1], [1, 1], [1, 2], [0, 2]], height=1.0)
    with pytest.raises(BevelError, match="convex solid"):
        bevelled(ring, [Bevel(("side_0", "side_1"), 0.1)])


# -- the scene table ----------------------------------------------------------------

HEAD = """
format = 1
title = "bevels"
dimension = 3
length_unit = "mm"
ambient = "vacuum"
seed = 3

[spectrum]
wavelengths = ["633 nm"]

[trace]
power_threshold = 1e-12

[coatings.ground]
kind = "lambertian"
reflectance = 0.3
rest = "absorbed"

[coatings.ground_black]
kind = "black"
diffuse_reflectance = 0.04
"""

PRISM = """
[solids.p]
material = "glass:517642"
kind = "right_angle_prism"
leg = "20 mm"
height = "10 mm"
"""


def scene(extra: str, head: str = HEAD):
    return loader.loads(head + extra, path="bevels.toml")


def problems(extra: str, head: str = HEAD) -> list[str]:
    with pytest.raises(SceneError) as exc:
        scene(extra, head)
    return [f"{p.key}: {p.message}" for p in exc.value.problems]


def has(msgs, key, *words):
    return any(m.startswith(key + ":") and all(w in m for w in words) for m in msgs)


def test_bevel_faces_take_coatings_and_default_to_bare_glass():
    s = scene(PRISM + """
[[solids.p.bevels]]
edge = ["leg_a", "hypotenuse"]
width = "0.5 mm"
coating = "ground_black"

[[solids.p.bevels]]
edge = ["leg_b", "leg_a"]
width = "0.3 mm"

[[solids.p.bevels]]
edge = ["leg_b", "hypotenuse"]
width = "0.2 mm"

[solids.p.faces.bevel_leg_b_leg_a]
coating = "ground"
""")
    p = s.solids["p"]
    faces = p.faces
    assert faces["bevel_leg_a_hypotenuse"].coating_name == "ground_black"
    assert faces["bevel_leg_b_leg_a"].coating_name == "ground"
    assert faces["bevel_leg_b_hypotenuse"].kind == "uncoated" and faces["bevel_leg_b_hypotenuse"].scatter is None
    assert [b.face for b in p.bevels] == ["bevel_leg_a_hypotenuse", "bevel_leg_b_leg_a", "bevel_leg_b_hypotenuse"]
    assert p.bevels[0].width == pytest.approx(0.5e-3, rel=1e-12)
    from tracer.scene.summary import format_summary, summarize
    summary = summarize(s)
    assert summary["solids"]["p"]["bevels"][1] == {"face": "bevel_leg_b_leg_a", "edge": ["leg_b", "leg_a"],
                                                   "width_m": 0.0003}
    text = format_summary(summary)
    assert "bevel_leg_a_hypotenuse: black (ground_black), a 500 µm bevel on the edge leg_a | hypotenuse" in text
    assert "bevel_leg_b_hypotenuse: uncoated, a 200 µm bevel" in text


def test_scene_errors_name_the_key_path():
    def one(bevel: str):
        return problems(PRISM + "[[solids.p.bevels]]\n" + bevel)

    key = "solids.p.bevels[0]"
    msgs = one('edge = ["leg_a", "hypotenus"]\nwidth = "0.3 mm"\n')
    assert has(msgs, key + ".edge", 'no face "hypotenus"', 'did you mean "hypotenuse"'), msgs
    msgs = one('edge = ["top", "bottom"]\nwidth = "0.3 mm"\n')
    assert has(msgs, key + ".edge", "do not share an edge"), msgs
    msgs = one('edge = ["leg_a", "leg_b"]\nwidth = "30 mm"\n')
    assert has(msgs, key + ".width", "too wide", "expected a width below"), msgs
    msgs = one('edge = ["leg_a", "leg_b"]\nwidth = "-0.3 mm"\n')
    assert has(msgs, key + ".width", "positive"), msgs
    msgs = one('edge = ["leg_a", "leg_b"]\nwidth = 0\n')
    assert has(msgs, key + ".width", "positive"), msgs
    msgs = one('edge = ["leg_a"]\nwidth = "0.3 mm"\n')
    assert has(msgs, key + ".edge", "two faces"), msgs
    msgs = one('edge = ["leg_a", "leg_b"]\n')
    assert has(msgs, key, 'missing key "width"'), msgs
    msgs = one('edge = ["leg_a", "leg_b"]\nwidth = "0.3 mm"\ncoating = "grund"\n')
    assert has(msgs, key + ".coating", 'unknown coating "grund"', 'did you mean "ground"'), msgs
    msgs = one('edge = ["leg_a", "leg_b"]\nwidth = "0.3 mm"\nwidht = 1\n')
    assert has(msgs, key + ".widht", "unknown key", 'did you mean "width"'), msgs
    msgs = one('edge = ["leg_a", "leg_b"]\nwidth = "0.3 mm"\ncoating = "ground"\n'
               '[solids.p.faces.bevel_leg_a_leg_b]\ncoating = "ground_black"\n')
    assert has(msgs, "solids.p.faces.bevel_leg_a_leg_b.coating", "one place only"), msgs
    msgs = problems(PRISM + 'bevels = {edge = ["leg_a", "leg_b"], width = "1 mm"}\n')
    assert has(msgs, "solids.p.bevels", "expected an array of tables"), msgs
    msgs = problems(PRISM + '[solids.p.faces.bevel_leg_a_leg_c]\ncoating = "ground"\n')
    assert has(msgs, "solids.p.faces.bevel_leg_a_leg_c", "no face"), msgs


def test_bevels_on_parts_meshes_and_non_convex_outlines_are_refused(tmp_path):
    msgs = problems("""
[parts.q]
kind = "plate"
width = "20 mm"
height = "20 mm"
thickness = "2 mm"
position = [0, 0, 0]

[[parts.q.bevels]]
edge = ["front", "side_a"]
width = "0.3 mm"
""")
    assert has(msgs, "parts.q.bevels", "a part is not bevelled"), msgs
    msgs = problems("""
[solids.l]
material = "glass:517642"
kind = "polygon"
vertices = [[0, 0], [20, 0], [20, 10], [10, 10], [10, 20], [0, 20]]
height = "10 mm"

[[solids.l.bevels]]
edge = ["side_0", "side_1"]
width = "0.3 mm"
""")
    assert has(msgs, "solids.l.bevels", "convex solids only", "not convex"), msgs
    import trimesh

    trimesh.creation.box(extents=(10, 10, 10)).export(tmp_path / "box.stl")
    path = tmp_path / "mesh.toml"
    path.write_text(HEAD + """
[solids.m]
material = "glass:517642"
kind = "mesh"
path = "box.stl"

[[solids.m.bevels]]
edge = ["face_0", "face_1"]
width = "0.3 mm"
""")
    with pytest.raises(SceneError) as exc:
        loader.load(path)
    msgs = [f"{p.key}: {p.message}" for p in exc.value.problems]
    assert has(msgs, "solids.m.bevels", "convex solids only", "a mesh"), msgs


def test_convex_polygon_and_polyhedron_take_bevels():
    s = scene("""
[solids.block]
material = "glass:517642"
kind = "polygon"
vertices = [[0, 0], [30, 0], [30, 10], [0, 10]]
height = "10 mm"
side_names = ["bottom_edge", "exit", "top_edge", "entrance"]

[[solids.block.bevels]]
edge = ["exit", "top"]
width = "0.5 mm"
""")
    g = s.solids["block"].geometry
    assert g.face_area("bevel_exit_top") == pytest.approx(0.5e-3 * 10e-3, rel=1e-9)


# -- tracing -------------------------------------------------------------------------

AIMED = """
[sources.beam]
kind = "collimated"
aperture = "circle"
diameter = "0.05 mm"
rays = 7
power = "1 W"

[sources.beam.aim]
face = "p.bevel_leg_a_hypotenuse"
angle = 0
plane = "xy"
distance = "10 mm"
"""


def _closes(res):
    t = res.ledger.totals()
    booked = t["detected_w"] + t["absorbed_w"] + t["escaped_w"] + t["discarded_w"] + t["cut_w"] + t["sampling_w"]
    assert booked == pytest.approx(t["source_w"], rel=1e-12)  # the books close
    return t


def test_a_black_bevel_absorbs_what_reaches_it():
    res = tracer.trace(scene(PRISM + """
[[solids.p.bevels]]
edge = ["leg_a", "hypotenuse"]
width = "0.5 mm"
coating = "absorber"
""" + AIMED))
    _closes(res)
    # the absorber ends every ray that reaches the face (no Fresnel reflection first)
    assert res.ledger.breakdown()["absorbed_faces"]["p.bevel_leg_a_hypotenuse"] == pytest.approx(1.0, rel=1e-12)


def test_a_ground_bevel_scatters_its_reflectance():
    res = tracer.trace(scene(PRISM + """
[[solids.p.bevels]]
edge = ["leg_a", "hypotenuse"]
width = "0.5 mm"
coating = "ground"
""" + AIMED))
    t = _closes(res)
    # Lambertian reflectance 0.3, the rest absorbed on the face (rest = "absorbed")
    assert res.scattered_power()["p.bevel_leg_a_hypotenuse"] == pytest.approx(0.3, rel=1e-12)
    assert res.ledger.breakdown()["absorbed_faces"]["p.bevel_leg_a_hypotenuse"] >= 0.7 - 1e-12
    assert t["escaped_w"] > 0


def test_a_bare_bevel_reflects_by_fresnel():
    res = tracer.trace(scene(PRISM + """
[[solids.p.bevels]]
edge = ["leg_a", "hypotenuse"]
width = "0.5 mm"
""" + AIMED))
    _closes(res)
    assert not res.scattered_power()
    n = complex(np.ravel(tracer.materials.get("glass:517642").refractive_index(633e-9))[0]).real
    R = ((n - 1) / (n + 1)) ** 2  # normal incidence from vacuum (Born & Wolf, Principles of Optics)
    # the first event is the bare bevel: R of the power goes straight back out
    back = res.ledger.breakdown()["escaped_faces"].get("p.bevel_leg_a_hypotenuse", 0.0)
    assert back == pytest.approx(R, rel=1e-6)


# -- placement, gaps, writing back, includes, key paths -----------------------------

PAIR = """
[solids.lower]
material = "glass:517642"
kind = "right_angle_prism"
leg = "20 mm"
height = "10 mm"
position = [0, 0, 0]
{lower_bevels}
[solids.upper]
material = "glass:517642"
kind = "right_angle_prism"
leg = "20 mm"
height = "10 mm"
{upper_bevels}
[solids.upper.mate]
to = "lower.hypotenuse"
face = "hypotenuse"
gap = "5 um"
offset = ["1 mm", 0]
"""

LOWER_BEVELS = """
[[solids.lower.bevels]]
edge = ["leg_a", "hypotenuse"]
width = "0.4 mm"
coating = "ground"
"""
UPPER_BEVELS = """
[[solids.upper.bevels]]
edge = ["hypotenuse", "top"]
width = "0.3 mm"
"""


def test_bevels_do_not_move_mated_solids_and_the_gap_stays():
    plain = scene(PAIR.format(lower_bevels="", upper_bevels=""))
    cut = scene(PAIR.format(lower_bevels=LOWER_BEVELS, upper_bevels=UPPER_BEVELS))
    a, b = plain.solids["upper"].geometry, cut.solids["upper"].geometry
    for f in a.face_names:  # every plane of the upper prism is where it was
        i, j = a.face_index(f), b.face_index(f)
        np.testing.assert_allclose(b.face_normals[j], a.face_normals[i], atol=1e-15)
        assert b.face_offsets[j] == pytest.approx(a.face_offsets[i], abs=1e-15)
    assert "bevel_hypotenuse_top" in b.face_names
    (gap,) = cut.gaps.values()
    assert gap.origin == "mated" and gap.thickness == pytest.approx(5e-6, rel=1e-9)
    # a mate to a chamfer face is measured on the bevelled shape (only it has that face)
    on_bevel = scene(PAIR.format(lower_bevels=LOWER_BEVELS, upper_bevels="")
                     .replace('to = "lower.hypotenuse"', 'to = "lower.bevel_leg_a_hypotenuse"')
                     .replace('offset = ["1 mm", 0]', ""))
    up = on_bevel.solids["upper"].geometry
    low = on_bevel.solids["lower"].geometry
    n_low = low.face_normals[low.face_index("bevel_leg_a_hypotenuse")]
    n_up = up.face_normals[up.face_index("hypotenuse")]
    np.testing.assert_allclose(n_up, -n_low, atol=1e-12)


def test_pivot_centroid_is_that_of_the_unbevelled_shape():
    text = PRISM.replace('height = "10 mm"', 'height = "10 mm"\npivot = "centroid"\nrotation = [0, 0, 30]')
    plain = scene(text).solids["p"].geometry
    cut = scene(text + LOWER_BEVELS.replace("lower", "p")).solids["p"].geometry
    i, j = plain.face_index("leg_b"), cut.face_index("leg_b")
    assert cut.face_offsets[j] == pytest.approx(plain.face_offsets[i], abs=1e-15)


def test_gap_finding_still_finds_the_joint_of_bevelled_prisms():
    # the upper prism turned by 180 deg about z and moved by (L + e, L + e): its hypotenuse
    # x + y = L + 2e lies sqrt(2) e from the lower one's, x + y = L
    e = 5e-3 / math.sqrt(2)  # mm, for a 5 um gap
    place = f'height = "10 mm"\nposition = [{20 + e!r}, {20 + e!r}, 0]\nrotation = [0, 0, 180]\n'
    upper = PAIR.format(lower_bevels=LOWER_BEVELS, upper_bevels=UPPER_BEVELS).split("[solids.upper.mate]")[0]
    head, _, tail = upper.partition("[solids.upper]")
    text = head + "[solids.upper]" + tail.replace('height = "10 mm"\n', place, 1)
    found = scene(text, HEAD + "\n[gap_finding]\nenabled = true\n")
    (gap,) = found.gaps.values()
    assert gap.origin == "automatic" and gap.thickness == pytest.approx(5e-6, rel=1e-6)
    assert (gap.face_a, gap.face_b) == ("hypotenuse", "hypotenuse")


def test_written_back_and_loaded_again_gives_the_same_solid():
    from tracer.scene.writer import dump

    s = scene(PAIR.format(lower_bevels=LOWER_BEVELS, upper_bevels=UPPER_BEVELS))
    text = dump(s)
    assert "[[solids.lower.bevels]]" in text and "[[solids.upper.bevels]]" in text
    back = loader.loads(text, path="again.toml")
    for name in ("lower", "upper"):
        a, b = s.solids[name], back.solids[name]
        assert a.geometry.face_names == b.geometry.face_names
        assert a.geometry.volume == pytest.approx(b.geometry.volume, rel=1e-14)
        assert a.bevels == b.bevels
        assert {f: t.coating_name for f, t in a.faces.items()} == {f: t.coating_name for f, t in b.faces.items()}


def test_a_bevelled_solid_from_an_included_file(tmp_path):
    (tmp_path / ".git").mkdir()
    (tmp_path / "shared").mkdir()
    (tmp_path / "shared" / "prisms.toml").write_text(PRISM + LOWER_BEVELS.replace("lower", "p"))
    (tmp_path / "scene.toml").write_text('include = ["shared/prisms.toml"]\n' + HEAD)
    s = loader.load(tmp_path / "scene.toml")
    assert s.solids["p"].faces["bevel_leg_a_hypotenuse"].coating_name == "ground"
    bad = PRISM + LOWER_BEVELS.replace("lower", "p").replace('"0.4 mm"', '"40 mm"')
    (tmp_path / "shared" / "prisms.toml").write_text(bad)
    with pytest.raises(SceneError) as exc:
        loader.load(tmp_path / "scene.toml")
    (p,) = exc.value.problems
    assert p.key == "solids.p.bevels[0].width" and p.file.endswith("prisms.toml")


def test_a_bevel_width_is_a_key_path_for_sweeps_and_tolerances():
    from tracer.sweep.keypath import set_value

    doc = tomllib.loads(HEAD + PRISM + LOWER_BEVELS.replace("lower", "p"))
    wide = copy.deepcopy(doc)
    set_value(wide, "solids.p.bevels[0].width", "0.8 mm")
    v0 = from_dict(doc, path="a.toml").solids["p"].geometry.volume
    v1 = from_dict(wide, path="b.toml").solids["p"].geometry.volume
    # removed cross-section w^2 (1 + sqrt 2) / 4 on the 45 deg edge (see above)
    assert v0 - v1 == pytest.approx((0.8e-3**2 - 0.4e-3**2) * (1 + math.sqrt(2)) / 4 * 0.01, rel=1e-9)
    tol = copy.deepcopy(doc)
    tol["tolerances"] = {"bevel": {"key": "solids.p.bevels[0].width", "sigma": "0.05 mm"}}
    from_dict(tol, path="c.toml")  # accepted: a length the loader reads


# -- 2D scenes and plots -------------------------------------------------------------

HEAD_2D = HEAD.replace("dimension = 3", "dimension = 2")


def test_2d_scene_bevels_edges_along_z_only_and_the_section_shows_the_chamfer():
    text = PRISM.replace('height = "10 mm"\n', "") + LOWER_BEVELS.replace("lower", "p")
    s = scene(text, HEAD_2D)
    from tracer.plot._section import plane_for, section

    sec = section(s.solids["p"].geometry, plane_for("xy"))
    cut = [e for e in sec.edges if e[2] == "bevel_leg_a_hypotenuse"]
    assert len(cut) == 1
    p0, p1 = cut[0][0], cut[0][1]
    assert np.linalg.norm(np.asarray(p1) - np.asarray(p0)) == pytest.approx(0.4e-3, rel=1e-9)
    msgs = problems(PRISM.replace('height = "10 mm"\n', "")
                    + '[[solids.p.bevels]]\nedge = ["leg_a", "top"]\nwidth = "0.3 mm"\n', HEAD_2D)
    assert has(msgs, "solids.p.bevels[0].edge", "only edges along z", '"top"'), msgs


def test_drawings_of_a_bevelled_scene():
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    from tracer.plot.diagram2d import draw_2d
    from tracer.plot.diagram3d import draw_3d_views

    s = scene(PAIR.format(lower_bevels=LOWER_BEVELS, upper_bevels=UPPER_BEVELS))
    fig = draw_2d(s)
    fig2 = draw_3d_views(s)
    plt.close("all")
    del fig, fig2


# -- fuzzing -------------------------------------------------------------------------

_FUZZ_DOC = tomllib.loads(HEAD + PAIR.format(lower_bevels=LOWER_BEVELS, upper_bevels=UPPER_BEVELS)
                          + """
[[solids.lower.bevels]]
edge = ["leg_b", "hypotenuse"]
width = "0.2 mm"
""")
_ODD = [0, -1, 1e308, -1e-300, math.nan, math.inf, "", "x", "nan mm", "-2 um", "1e308 mm",
        "1e-300 mm", "0 mm", "20 mm", True, [], {}, ["leg_a"], ["leg_a", "leg_a"], ["top", "bottom"],
        ["leg_a", 3], ["bevel_leg_a_hypotenuse", "leg_a"], [{"a": 1}], "ground", "absorber", "mirror"]


def test_mutated_bevels_give_problems_never_a_crash():
    rng = random.Random(20261204)
    keys = ["edge", "width", "coating", "note", "extra"]
    for _ in range(300):
        doc = copy.deepcopy(_FUZZ_DOC)
        solid = doc["solids"][rng.choice(["lower", "upper"])]
        bevels = solid["bevels"]
        roll = rng.random()
        if roll < 0.1:
            solid["bevels"] = rng.choice(_ODD)
        elif roll < 0.2:
            bevels.append(copy.deepcopy(rng.choice(bevels)))
        elif roll < 0.3:
            bevels[rng.randrange(len(bevels))] = rng.choice(_ODD)
        else:
            item = bevels[rng.randrange(len(bevels))]
            key = rng.choice(keys)
            if rng.random() < 0.2:
                item.pop(key, None)
            else:
                item[key] = rng.choice(_ODD)
        try:
            from_dict(doc, path="fuzz.toml")
        except SceneError as exc:
            internal = [str(p) for p in exc.problems if INTERNAL_ERROR in p.message]
            assert not internal, internal
            assert exc.problems and all(p.key for p in exc.problems), [str(p) for p in exc.problems]
