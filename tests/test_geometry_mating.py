"""Transforms, mating, gap finding and overlap detection.

Reference values are closed-form geometry (common practice, no source).
"""

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from tracer.geometry import (
    GeometryError,
    beamsplitter_cube,
    build,
    extrude_polygon,
    find_gaps,
    mate,
    overlap_volume,
    overlapping_solids,
    rotation_angles,
    rotation_matrix,
)
from tracer.geometry.transforms import axis_rotation, check_rotation, compose

DEG = math.pi / 180


def test_rotation_convention_extrinsic_xyz():
    rx, ry, rz = 0.3, -0.7, 1.1
    r = rotation_matrix(rx, ry, rz)
    # extrinsic x, then y, then z == applying the single-axis rotations in that order
    v = np.array([0.2, -0.5, 0.9])
    w = axis_rotation([0, 0, 1], rz) @ (axis_rotation([0, 1, 0], ry) @ (axis_rotation([1, 0, 0], rx) @ v))
    np.testing.assert_allclose(r @ v, w, atol=1e-15)
    np.testing.assert_allclose(rotation_angles(r), (rx, ry, rz), atol=1e-12)
    np.testing.assert_allclose(rotation_matrix(rz=math.pi / 2) @ [1, 0, 0], [0, 1, 0], atol=1e-15)
    with pytest.raises(GeometryError, match="proper rotation"):
        check_rotation(np.diag([1.0, 1.0, -1.0]))
    r2, t2 = compose((r, [1.0, 0, 0]), (r.T, [0, 0, 0]))
    np.testing.assert_allclose(r2, np.eye(3), atol=1e-15)


def test_transformed_solid_is_rigid():
    s = build("penta_prism", aperture=0.01)
    r, t = rotation_matrix(0.1, 0.2, 0.3), np.array([0.01, -0.02, 0.03])
    m = s.transformed(r, t)
    assert m.volume == pytest.approx(s.volume, rel=1e-12)
    for i in range(len(s.face_names)):
        np.testing.assert_allclose(m.face_normals[i], r @ s.face_normals[i], atol=1e-15)
        np.testing.assert_allclose(m.face_centroid(i), r @ s.face_centroid(i) + t, atol=1e-15)
    p = np.random.default_rng(0).uniform(-0.02, 0.02, size=(500, 3))
    np.testing.assert_array_equal(m.contains(p @ r.T + t), s.contains(p))


def _check_mated(moving_placed, mf, fixed, ff, gap, angle=0.0):
    im, i_f = moving_placed.face_index(mf), fixed.face_index(ff)
    nm, nf = moving_placed.face_normals[im], fixed.face_normals[i_f]
    assert math.acos(np.clip(-nm @ nf, -1, 1)) == pytest.approx(angle, abs=1e-12)
    cm = moving_placed.face_centroid(im)
    # centroid of the moving face at distance gap from the fixed face's plane
    assert nf @ cm - fixed.face_offsets[i_f] == pytest.approx(gap, abs=1e-15)
    return cm


@pytest.mark.parametrize("gap", [0.0, 2e-6, 1e-3])
def test_mate_antiparallel_at_gap(gap):
    fixed = build("right_angle_prism", leg=0.02).transformed(rotation_matrix(0.1, 0.2, 0.3), [0.1, 0, 0])
    moving = build("right_angle_prism", leg=0.02)
    m = mate(moving, "hypotenuse", fixed, "hypotenuse", gap=gap)
    cm = _check_mated(m.solid, "hypotenuse", fixed, "hypotenuse", gap)
    cf = fixed.face_centroid("hypotenuse")
    nf = fixed.face_normals[fixed.face_index("hypotenuse")]
    np.testing.assert_allclose(cm, cf + gap * nf, atol=1e-15)
    np.testing.assert_allclose(m.solid.face_normals, moving.face_normals @ m.rotation.T, atol=1e-15)
    assert not overlapping_solids({"a": fixed, "b": m.solid})


def test_mate_offset_spin_wedge():
    fixed = build("plate", width=0.02, height=0.02, thickness=0.005)
    moving = build("plate", width=0.01, height=0.01, thickness=0.002)
    u, v, n = fixed.face_frame("back")
    np.testing.assert_allclose(np.cross(u, v), n, atol=1e-15)
    np.testing.assert_allclose(n, [1, 0, 0])
    m = mate(moving, "front", fixed, "back", gap=1e-5, offset=(0.003, -0.002))
    cm = _check_mated(m.solid, "front", fixed, "back", 1e-5)
    np.testing.assert_allclose(cm, fixed.face_centroid("back") + 1e-5 * n + 0.003 * u - 0.002 * v, atol=1e-15)
    # spin turns the moving face about the fixed normal: side normals rotate in the u-v plane
    ms = mate(moving, "front", fixed, "back", gap=1e-5, spin=30 * DEG)
    _check_mated(ms.solid, "front", fixed, "back", 1e-5)
    side0 = m.solid.face_normals[m.solid.face_index("side_b")]
    side1 = ms.solid.face_normals[ms.solid.face_index("side_b")]
    assert math.acos(side0 @ side1) == pytest.approx(30 * DEG, abs=1e-12)
    np.testing.assert_allclose(np.cross(side0, side1), math.sin(30 * DEG) * n, atol=1e-15)
    # wedge tilts by the stated angle about u, keeping the centroid at the gap
    mw = mate(moving, "front", fixed, "back", gap=1e-4, wedge=0.5 * DEG, offset=(0.001, 0.0))
    cm = _check_mated(mw.solid, "front", fixed, "back", 1e-4, angle=0.5 * DEG)
    nm = mw.solid.face_normals[mw.solid.face_index("front")]
    assert abs(nm @ u) < 1e-15  # the tilt axis is u
    # the gap finder sees the wedged pair, with the separation at the footprint centre
    gaps = find_gaps({"fixed": fixed, "moving": mw.solid}, max_separation=1e-3, max_angle=1 * DEG)
    assert [(g.face_a, g.face_b) for g in gaps] == [("back", "front")]
    g = gaps[0]
    assert g.angle == pytest.approx(0.5 * DEG, abs=1e-12)
    assert g.overlap_area == pytest.approx(1e-4, rel=1e-4)  # the 10 mm x 10 mm face, slightly foreshortened
    assert g.separation == pytest.approx(1e-4, rel=1e-3)
    # a wedge beyond max_angle is not a gap
    assert not find_gaps({"fixed": fixed, "moving": mw.solid}, max_angle=0.1 * DEG)


def test_mate_rejects_bad_input():
    p = build("plate", width=0.01, height=0.01, thickness=0.001)
    with pytest.raises(GeometryError, match="non-negative"):
        mate(p, "front", p, "back", gap=-1e-6)
    with pytest.raises(GeometryError, match="no face 'frnt'"):
        mate(p, "frnt", p, "back")


def test_find_gaps_finds_declared_gaps_and_nothing_else():
    # a TIR prism pair: two right-angle prisms with a 5 um air gap at the hypotenuse, and a
    # plate 2 mm away from the second prism's leg (outside max_separation) and one 0.2 mm
    # away from the first prism's leg_a (inside)
    h = beamsplitter_cube(size=0.01, gap=5e-6)
    a, b = h.first, h.second
    near = mate(build("plate", width=0.008, height=0.008, thickness=0.002), "front", a, "leg_a", gap=2e-4).solid
    far = mate(build("plate", width=0.008, height=0.008, thickness=0.002), "front", b, "leg_a", gap=2e-3).solid
    gaps = find_gaps({"a": a, "b": b, "near": near, "far": far}, max_separation=1e-3)
    found = {(g.solid_a, g.face_a, g.solid_b, g.face_b): g for g in gaps}
    assert set(found) == {("a", "hypotenuse", "b", "hypotenuse"), ("a", "leg_a", "near", "front")}
    g = found[("a", "hypotenuse", "b", "hypotenuse")]
    assert g.separation == pytest.approx(5e-6, rel=1e-9)
    assert g.angle == pytest.approx(0.0, abs=1e-7)
    assert g.overlap_area == pytest.approx(math.sqrt(2) * 0.01 * 0.01, rel=1e-6)
    assert found[("a", "leg_a", "near", "front")].separation == pytest.approx(2e-4, rel=1e-9)
    assert found[("a", "leg_a", "near", "front")].overlap_area == pytest.approx(0.008**2, rel=1e-9)
    # shifted sideways so that the footprints do not overlap: no gap
    off = mate(build("plate", width=0.008, height=0.008, thickness=0.002), "front", a, "leg_a",
               gap=2e-4, offset=(0.02, 0.0)).solid
    assert not find_gaps({"a": a, "off": off})
    # contacted halves (gap 0) are a gap of thickness 0
    h0 = beamsplitter_cube(size=0.01)
    g0 = find_gaps({"a": h0.first, "b": h0.second})
    assert len(g0) == 1 and g0[0].separation == pytest.approx(0.0, abs=1e-15)


def test_overlapping_solids():
    p = build("plate", width=0.01, height=0.01, thickness=0.002)
    q = p.transformed(np.eye(3), [0.001, 0.0, 0.0])  # overlaps by half its thickness
    touching = p.transformed(np.eye(3), [0.002, 0.0, 0.0])
    apart = p.transformed(np.eye(3), [0.01, 0.0, 0.0])
    assert overlap_volume(p, q) == pytest.approx(0.01 * 0.01 * 0.001, rel=1e-9)
    assert overlap_volume(p, touching) == pytest.approx(0.0, abs=1e-18)
    pairs = overlapping_solids({"p": p, "q": q, "t": touching, "x": apart})
    assert [(a, b) for a, b, _ in pairs] == [("p", "q"), ("q", "t")]
    # non-convex: a small cube in the L-shape's notch does not overlap it; moved into the foot it does
    ell = extrude_polygon([[0, 0], [0.02, 0], [0.02, 0.01], [0.01, 0.01], [0.01, 0.02], [0, 0.02]], height=0.01)
    cube = build("plate", width=0.004, height=0.004, thickness=0.004)
    in_notch = cube.transformed(np.eye(3), [0.013, 0.015, 0.0])
    in_foot = cube.transformed(np.eye(3), [0.013, 0.009, 0.0])  # 3 mm of its 4 mm in y inside
    assert overlap_volume(ell, in_notch) == pytest.approx(0.0, abs=1e-18)
    assert overlap_volume(ell, in_foot) == pytest.approx(0.004 * 0.003 * 0.004, rel=1e-9)
    assert overlap_volume(ell, ell) == pytest.approx(ell.volume, rel=1e-9)


MATE_SOLIDS = {
    "right_angle_prism": dict(leg=0.02),
    "penta_prism": dict(aperture=0.01),
    "corner_cube": dict(size=0.01),
    "dispersing_prism": dict(apex_angle=1.0, side=0.02),
}

angles = st.floats(-math.pi, math.pi, allow_nan=False)


@settings(max_examples=60, deadline=None)
@given(
    kinds=st.tuples(st.sampled_from(sorted(MATE_SOLIDS)), st.sampled_from(sorted(MATE_SOLIDS))),
    faces=st.tuples(st.integers(0, 6), st.integers(0, 6)),
    pose=st.tuples(angles, angles, angles),
    gap=st.floats(0, 1e-3),
    offset=st.tuples(st.floats(-5e-3, 5e-3), st.floats(-5e-3, 5e-3)),
    spin=angles,
    wedge=st.floats(-0.1, 0.1),
)
def test_mate_property(kinds, faces, pose, gap, offset, spin, wedge):
    # for any pose and faces: faces anti-parallel up to the wedge, the moving centroid at
    # the stated (u, v) offset and at distance gap from the fixed plane
    fixed = build(kinds[0], **MATE_SOLIDS[kinds[0]]).transformed(rotation_matrix(*pose), [0.1, -0.2, 0.3])
    moving = build(kinds[1], **MATE_SOLIDS[kinds[1]])
    ff = faces[0] % len(fixed.face_names)
    mf = faces[1] % len(moving.face_names)
    m = mate(moving, mf, fixed, ff, gap=gap, offset=offset, spin=spin, wedge=wedge)
    u, v, n = fixed.face_frame(ff)
    nm = m.solid.face_normals[mf]
    assert -nm @ n == pytest.approx(math.cos(wedge), abs=1e-12)
    assert nm @ u == pytest.approx(0.0, abs=1e-12)  # the tilt is about u only
    cm = m.solid.face_centroid(mf)
    rel = cm - fixed.face_centroid(ff)
    np.testing.assert_allclose([rel @ u, rel @ v, rel @ n], [offset[0], offset[1], gap], atol=1e-15)
    np.testing.assert_allclose(m.solid.volume, moving.volume, rtol=1e-12)
