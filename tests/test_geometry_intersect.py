"""Ray-solid intersection: backend parity, entry/exit, non-convex solids, 2D fans, many solids.

Reference values are closed-form (common practice, no source) or come from an independent
backend (trimesh's ray engine, our numpy Moller-Trumbore test) on the same solid.
"""

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from tracer.geometry import available_backends, build, extrude_polygon, get_backend, intersect_many
from tracer.geometry.transforms import rotation_matrix

DEG = math.pi / 180
L_SHAPE = [[0, 0], [0.02, 0], [0.02, 0.01], [0.01, 0.01], [0.01, 0.02], [0, 0.02]]

SOLIDS = {
    "right_angle_prism": build("right_angle_prism", leg=0.02),
    "penta_prism": build("penta_prism", aperture=0.01),
    "corner_cube": build("corner_cube", size=0.01),
    "roof_prism": build("roof_prism", leg=0.02),
    "dispersing_prism": build("dispersing_prism", apex_angle=60 * DEG, side=0.02).transformed(
        rotation_matrix(0.3, -0.2, 0.5), [0.01, -0.02, 0.003]
    ),
    "l_shape": extrude_polygon(L_SHAPE, height=0.01),
}


def random_rays(solid, seed, n=300, inside=False):
    rng = np.random.default_rng(seed)
    lo, hi = solid.bounds
    c, r = (lo + hi) / 2, np.linalg.norm(hi - lo)
    d = rng.normal(size=(n, 3))
    d /= np.linalg.norm(d, axis=1)[:, None]
    if inside:
        p = rng.uniform(lo, hi, size=(20 * n, 3))
        p = p[solid.contains(p, tol=0)][:n]
        return p, d[: len(p)]
    # outside: start on a sphere around the solid, aimed roughly at it
    start = rng.normal(size=(n, 3))
    start = c + 1.5 * r * start / np.linalg.norm(start, axis=1)[:, None]
    aim = rng.uniform(lo, hi, size=(n, 3))
    d = aim - start
    return start, d / np.linalg.norm(d, axis=1)[:, None]


def backends_for(solid):
    return [b for b in available_backends() if get_backend(b).supports(solid)]


@pytest.mark.parametrize("name", sorted(SOLIDS))
@settings(max_examples=15, deadline=None)
@given(seed=st.integers(0, 2**32 - 1), inside=st.booleans())
def test_backend_parity(name, seed, inside):
    solid = SOLIDS[name]
    o, d = random_rays(solid, seed, inside=inside)
    results = {b: get_backend(b).intersect(solid, o, d, np.full(len(o), inside)) for b in backends_for(solid)}
    assert len(results) >= 2
    ref_name = "halfspace" if "halfspace" in results else "triangles"
    t0, f0 = results[ref_name]
    if inside:
        assert np.all(np.isfinite(t0)), "every ray inside a closed solid leaves it"
    for b, (t, f) in results.items():
        np.testing.assert_array_equal(np.isfinite(t), np.isfinite(t0), err_msg=b)
        hit = np.isfinite(t0)
        np.testing.assert_allclose(t[hit], t0[hit], rtol=1e-9, atol=1e-12, err_msg=b)
        np.testing.assert_array_equal(f[hit], f0[hit], err_msg=b)
        assert np.all(f[~hit] == -1)
    # the hit point lies on the reported face's plane
    hit = np.isfinite(t0)
    p = o[hit] + t0[hit, None] * d[hit]
    n, off = solid.face_normals[f0[hit]], solid.face_offsets[f0[hit]]
    np.testing.assert_allclose(np.einsum("ij,ij->i", p, n), off, atol=1e-12)


def test_cube_entry_and_exit():
    # closed form: unit-size plate (cube) centred at x = 0.5
    s = build("plate", width=1.0, height=1.0, thickness=1.0)
    o = np.array([[-1.0, 0.0, 0.0], [0.5, 0.0, 0.0], [0.5, 0.0, 0.0], [-1.0, 2.0, 0.0], [2.0, 0, 0]])
    d = np.array([[1.0, 0, 0], [0, 1.0, 0], [-1.0, 0, 0], [1.0, 0, 0], [1.0, 0, 0]])
    t, f = s.intersect(o, d, [False, True, True, False, False])
    np.testing.assert_allclose(t[:3], [1.0, 0.5, 0.5])
    assert [s.face_names[i] for i in f[:3]] == ["front", "side_b", "front"]
    assert np.isinf(t[3]) and f[3] == -1  # passes beside the cube
    assert np.isinf(t[4]) and f[4] == -1  # cube behind the ray
    # a ray on a face moving outwards (just reflected outside) does not hit that face
    t, f = s.intersect([[0.0, 0, 0]], [[-1.0, 0.1, 0]], False)
    assert np.isinf(t[0])
    # a ray entering at an oblique angle: t = distance along the unit direction
    dd = np.array([1.0, 0.0, 1.0]) / math.sqrt(2)
    t, f = s.intersect([[-0.5, 0, -0.5]], [dd], False)
    assert t[0] == pytest.approx(0.5 * math.sqrt(2)) and s.face_names[f[0]] == "front"


def test_l_shape_nonconvex():
    s = SOLIDS["l_shape"]
    assert not s.is_convex
    assert s.volume == pytest.approx(3e-4 * 0.01, rel=1e-12)
    # a ray along y = 0.015 from the left passes the notch: enters side_5 (x = 0), exits
    # side_3 (x = 0.01), then -- from outside -- would enter nothing else
    o = np.array([[-0.01, 0.015, 0.0]])
    d = np.array([[1.0, 0.0, 0.0]])
    t, f = s.intersect(o, d, False)
    assert t[0] == pytest.approx(0.01) and s.face_names[f[0]] == "side_5"
    t, f = s.intersect(o + [0.0105, 0, 0], d, True)
    assert t[0] == pytest.approx(0.0095) and s.face_names[f[0]] == "side_3"
    t, f = s.intersect([[0.015, 0.015, 0.0]], d, False)  # in the notch, heading away
    assert np.isinf(t[0])
    t, f = s.intersect([[0.015, 0.015, 0.0]], [[0.0, -1.0, 0.0]], False)  # notch -> down into the foot
    assert t[0] == pytest.approx(0.005) and s.face_names[f[0]] == "side_2"
    # from inside the foot, heading up through the notch's floor and out
    t, f = s.intersect([[0.015, 0.005, 0.0]], [[0.0, 1.0, 0.0]], True)
    assert t[0] == pytest.approx(0.005) and s.face_names[f[0]] == "side_2"
    # winding-number containment agrees with the two boxes the L is made of
    rng = np.random.default_rng(3)
    p = rng.uniform([-0.005, -0.005, -0.006], [0.025, 0.025, 0.006], size=(2000, 3))
    inside = (np.abs(p[:, 2]) < 0.005) & (p[:, 0] > 0) & (p[:, 1] > 0) & (
        ((p[:, 0] < 0.02) & (p[:, 1] < 0.01)) | ((p[:, 0] < 0.01) & (p[:, 1] < 0.02))
    )
    np.testing.assert_array_equal(s.contains(p, tol=0), inside)


@pytest.mark.parametrize("name", ["right_angle_prism", "penta_prism", "l_shape"])
def test_2d_fan_stays_in_plane(name):
    # rays in the plane z = 0 hit only side faces, at points with z = 0 exactly
    s = SOLIDS[name]
    ang = np.linspace(-0.6, 0.6, 101)
    d = np.column_stack([np.cos(ang), np.sin(ang), np.zeros_like(ang)])
    o = np.tile([-0.02, 0.007, 0.0], (len(ang), 1))
    for backend in backends_for(s):
        t, f = get_backend(backend).intersect(s, o, d, False)
        hit = np.isfinite(t)
        assert hit.sum() > 20
        p = o[hit] + t[hit, None] * d[hit]
        assert np.all(p[:, 2] == 0.0)
        assert not set(np.array(s.face_names)[f[hit]]) & {"top", "bottom"}
        # and from inside, the exit is also a side face in the plane
        start = p + 1e-9 * d[hit]
        t2, f2 = get_backend(backend).intersect(s, start, d[hit], True)
        assert np.all(np.isfinite(t2))
        assert np.all((start + t2[:, None] * d[hit])[:, 2] == 0.0)
        assert not set(np.array(s.face_names)[f2]) & {"top", "bottom"}


def test_intersect_many_matches_brute_force():
    rng = np.random.default_rng(7)
    solids = [
        build("right_angle_prism", leg=0.02),
        build("penta_prism", aperture=0.01).transformed(rotation_matrix(0, 0, 0.4), [0.05, 0.0, 0.0]),
        extrude_polygon(L_SHAPE, height=0.01).transformed(np.eye(3), [0.0, 0.04, 0.0]),
        build("corner_cube", size=0.01).transformed(rotation_matrix(0.2, 0.1, 0), [0.04, 0.04, 0.0]),
    ]
    n = 4000
    o = rng.uniform([-0.03, -0.02, -0.01], [0.08, 0.07, 0.01], size=(n, 3))
    d = rng.normal(size=(n, 3))
    d /= np.linalg.norm(d, axis=1)[:, None]
    current = np.full(n, -1)
    for k, s in enumerate(solids):
        current[s.contains(o, tol=0)] = k
    t, sid, f = intersect_many(solids, o, d, current)
    tb = np.full(n, np.inf)
    sb = np.full(n, -1)
    fb = np.full(n, -1)
    for k, s in enumerate(solids):
        tk, fk = s.intersect(o, d, current == k)
        better = tk < tb
        tb[better], sb[better], fb[better] = tk[better], k, fk[better]
    np.testing.assert_array_equal(sid, sb)
    np.testing.assert_array_equal(f, fb)
    np.testing.assert_allclose(t[np.isfinite(tb)], tb[np.isfinite(tb)], rtol=1e-12)
    assert np.isfinite(tb).mean() > 0.1
    assert np.all(np.isfinite(t[current >= 0]))  # every ray inside a solid gets out


def test_intersect_many_empty_and_shapes():
    s = build("plate", width=0.01, height=0.01, thickness=0.001)
    t, sid, f = intersect_many([s], np.zeros((0, 3)), np.zeros((0, 3)))
    assert t.shape == sid.shape == f.shape == (0,)
    t, sid, f = intersect_many([], [[0, 0, 0.0]], [[1.0, 0, 0]])
    assert np.isinf(t[0]) and sid[0] == -1 and f[0] == -1
