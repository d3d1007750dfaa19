"""Prism catalog: face names, outward normals, angles and volumes of textbook shapes.

Shapes from W. J. Smith, "Modern Optical Engineering", 4th ed., 2008, ch. 8 (prisms), and
M. Born and E. Wolf, "Principles of Optics", 7th ed., 1999, sec. 1.5.4 (Fresnel rhomb);
values recalled from memory where noted.
"""

import math

import numpy as np
import pytest

from tracer.geometry import GeometryError
from tracer.geometry.catalog import KINDS, build
from tracer.geometry.catalog_prisms import FRESNEL_RHOMB_ANGLE, beamsplitter_cube

DEG = math.pi / 180

EXAMPLES = {
    "right_angle_prism": dict(leg=0.02, height=0.015),
    "dispersing_prism": dict(apex_angle=60 * DEG, side=0.025, height=0.01),
    "penta_prism": dict(aperture=0.01),
    "dove_prism": dict(aperture=0.01, length=0.045),
    "rhomb": dict(aperture=0.01, style="fresnel"),
    "wedge": dict(aperture=0.02, thickness=0.003, angle=2 * DEG),
    "plate": dict(width=0.02, height=0.01, thickness=0.002),
    "corner_cube": dict(size=0.01),
    "roof_prism": dict(leg=0.02),
}


def interior_angle(solid, a, b):
    """Interior angle between two faces meeting at an edge [rad] (pi minus the normals' angle)."""
    na, nb = solid.face_normals[solid.face_index(a)], solid.face_normals[solid.face_index(b)]
    return math.pi - math.acos(np.clip(na @ nb, -1, 1))


def test_every_kind_has_an_example():
    assert set(EXAMPLES) == set(KINDS)


@pytest.mark.parametrize("kind", sorted(EXAMPLES))
def test_face_names_match_registry(kind):
    s = build(kind, **EXAMPLES[kind])
    assert s.face_names == KINDS[kind].faces


@pytest.mark.parametrize("kind", sorted(EXAMPLES))
def test_outward_normals_and_convexity(kind):
    # common practice, no source: outward normals point away from the solid's centroid,
    # and every vertex of a convex solid satisfies n . x <= d for every face
    s = build(kind, **EXAMPLES[kind])
    c = s.centroid
    assert s.contains(c[None])[0]
    for i in range(len(s.face_names)):
        assert s.face_normals[i] @ (s.face_centroid(i) - c) > 0
        np.testing.assert_allclose(np.linalg.norm(s.face_normals[i]), 1.0, rtol=1e-14)
        np.testing.assert_allclose(s.face_polygons[i] @ s.face_normals[i], s.face_offsets[i], atol=1e-15)
        # polygon order is CCW seen from outside: its area vector points along the normal
        p = s.face_polygons[i]
        area_vec = 0.5 * np.cross(p, np.roll(p, -1, axis=0)).sum(axis=0)
        assert area_vec @ s.face_normals[i] > 0
        np.testing.assert_allclose(np.linalg.norm(area_vec), s.face_area(i), rtol=1e-12)
    assert s.is_convex
    v = np.vstack(s.face_polygons)
    assert np.all(v @ s.face_normals.T <= s.face_offsets + 1e-15)


@pytest.mark.parametrize("kind", sorted(EXAMPLES))
def test_volume_matches_trimesh(kind):
    # reference library: trimesh's mesh volume of the same solid
    s = build(kind, **EXAMPLES[kind])
    m = s.to_trimesh()
    assert m.is_watertight and m.is_winding_consistent
    np.testing.assert_allclose(s.volume, m.volume, rtol=1e-12)


def test_right_angle_prism_angles_and_volume():
    # textbook 45-45-90 prism
    s = build("right_angle_prism", leg=0.02, height=0.015)
    assert interior_angle(s, "leg_a", "leg_b") == pytest.approx(90 * DEG, abs=1e-12)
    assert interior_angle(s, "leg_a", "hypotenuse") == pytest.approx(45 * DEG, abs=1e-12)
    assert interior_angle(s, "leg_b", "hypotenuse") == pytest.approx(45 * DEG, abs=1e-12)
    assert s.volume == pytest.approx(0.5 * 0.02**2 * 0.015, rel=1e-12)
    assert s.face_area("hypotenuse") == pytest.approx(math.sqrt(2) * 0.02 * 0.015, rel=1e-12)
    assert s.bounds[:, 2] == pytest.approx([-0.0075, 0.0075])


def test_penta_prism_textbook_shape():
    # Smith ch. 8: interior angles 90 and 4 x 112.5 deg; reflectors at 45 deg to each
    # other; entrance and exit perpendicular; axial path (2 + sqrt2) A (recalled from memory)
    a = 0.01
    s = build("penta_prism", aperture=a)
    ring = ["entrance", "exit", "reflector_a", "bevel", "reflector_b"]
    angles = [interior_angle(s, ring[i], ring[(i + 1) % 5]) for i in range(5)]
    np.testing.assert_allclose(np.degrees(angles), [90, 112.5, 112.5, 112.5, 112.5], atol=1e-10)
    na = s.face_normals[s.face_index("reflector_a")]
    nb = s.face_normals[s.face_index("reflector_b")]
    assert math.degrees(math.acos(-na @ nb)) == pytest.approx(45.0, abs=1e-10)
    # a ray entering normally is deviated by 90 deg after reflecting on both reflectors
    d = -s.face_normals[s.face_index("entrance")]
    for n in (na, nb):
        d = d - 2 * (d @ n) * n
    np.testing.assert_allclose(d, s.face_normals[s.face_index("exit")], atol=1e-12)
    # axial ray path length inside the glass
    o = np.array([[a / 2, -1e-3, 0.0]])
    t, f = s.intersect(o, [[0, 1.0, 0]], False)
    p = o[0] + t[0] * np.array([0, 1.0, 0])
    d, total = np.array([0, 1.0, 0]), 0.0
    for _ in range(3):
        t, f = s.intersect(p[None], d[None], True)
        total += t[0]
        p = p + t[0] * d
        n = s.face_normals[f[0]]
        d = d - 2 * (d @ n) * n
    assert s.face_names[f[0]] == "exit"
    assert total == pytest.approx((2 + math.sqrt(2)) * a, rel=1e-12)


def test_dispersing_prism_apex_and_sizes():
    s = build("dispersing_prism", apex_angle=60 * DEG, side=0.025)
    assert interior_angle(s, "entrance", "exit") == pytest.approx(60 * DEG, abs=1e-12)
    assert s.face_area("base") / s.face_area("entrance") == pytest.approx(1.0, rel=1e-12)  # equilateral
    s2 = build("dispersing_prism", apex_angle=45 * DEG, base=0.02, height=0.01)
    assert interior_angle(s2, "entrance", "exit") == pytest.approx(45 * DEG, abs=1e-12)
    assert s2.face_area("base") == pytest.approx(0.02 * 0.01, rel=1e-12)
    with pytest.raises(GeometryError, match="exactly one of side and base"):
        build("dispersing_prism", apex_angle=1.0, side=0.01, base=0.01)


def test_dove_prism_shape():
    s = build("dove_prism", aperture=0.01, length=0.045, base_angle=30 * DEG)
    assert interior_angle(s, "base", "entrance") == pytest.approx(30 * DEG, abs=1e-12)
    assert interior_angle(s, "base", "exit") == pytest.approx(30 * DEG, abs=1e-12)
    nb, nu = s.face_normals[s.face_index("base")], s.face_normals[s.face_index("upper")]
    assert nb @ nu == pytest.approx(-1.0, abs=1e-14)
    # trapezoid area (L + l)/2 * a, l = L - 2 a / tan(beta), times depth
    L, a = 0.045, 0.01
    l_top = L - 2 * a / math.tan(30 * DEG)
    assert s.volume == pytest.approx((L + l_top) / 2 * a * a, rel=1e-12)
    with pytest.raises(GeometryError, match="too short"):
        build("dove_prism", aperture=0.01, length=0.02)


def test_rhomb_angles():
    # Fresnel rhomb acute angle 54 deg 37 min for n = 1.51 (Born and Wolf 1.5.4, from memory)
    s = build("rhomb", aperture=0.01, style="fresnel")
    assert math.degrees(FRESNEL_RHOMB_ANGLE) == pytest.approx(54.6167, abs=1e-4)
    assert interior_angle(s, "reflector_a", "entrance") == pytest.approx(FRESNEL_RHOMB_ANGLE, abs=1e-12)
    # a ray entering normally meets reflector_a at an angle of incidence equal to the acute angle
    d = -s.face_normals[s.face_index("entrance")]
    n = s.face_normals[s.face_index("reflector_a")]
    assert math.acos(d @ n) == pytest.approx(FRESNEL_RHOMB_ANGLE, abs=1e-12)
    lat = build("rhomb", aperture=0.01)
    assert interior_angle(lat, "reflector_a", "entrance") == pytest.approx(45 * DEG, abs=1e-12)
    # two reflections on parallel faces: output parallel to input, leaving exit normally
    d = -lat.face_normals[lat.face_index("entrance")]
    for name in ("reflector_a", "reflector_b"):
        n = lat.face_normals[lat.face_index(name)]
        d = d - 2 * (d @ n) * n
    np.testing.assert_allclose(d, lat.face_normals[lat.face_index("exit")], atol=1e-12)


def test_wedge_and_plate():
    w = build("wedge", aperture=0.02, thickness=0.003, angle=2 * DEG)
    nf, nb = w.face_normals[w.face_index("front")], w.face_normals[w.face_index("back")]
    assert math.acos(-nf @ nb) == pytest.approx(2 * DEG, abs=1e-12)
    assert w.volume == pytest.approx(0.02 * 0.003 * 0.02, rel=1e-12)  # mean thickness = centre
    w2 = build("wedge", aperture=0.02, thickness=0.001, angle=2 * DEG, thickness_at="thin_end")
    side = w2.face_polygons[w2.face_index("side_a")]
    assert np.ptp(side[:, 0]) == pytest.approx(0.001, rel=1e-12)
    with pytest.raises(GeometryError, match="too steep"):
        build("wedge", aperture=0.02, thickness=0.0001, angle=10 * DEG)
    p = build("plate", width=0.02, height=0.01, thickness=0.002)
    assert p.volume == pytest.approx(0.02 * 0.01 * 0.002, rel=1e-12)
    assert p.face_area("front") == pytest.approx(0.02 * 0.01, rel=1e-12)


def test_corner_cube_retroreflects():
    # common practice, no source: three mutually perpendicular mirrors reverse any direction
    s = build("corner_cube", size=0.01)
    n = s.face_normals[:3]
    np.testing.assert_allclose(n @ n.T, np.eye(3), atol=1e-15)
    assert s.volume == pytest.approx(0.01**3 / 6, rel=1e-12)
    rng = np.random.default_rng(1)
    for _ in range(5):
        d = -s.face_normals[3] + 0.2 * rng.normal(size=3)
        d /= np.linalg.norm(d)
        out = d.copy()
        for k in range(3):
            out = out - 2 * (out @ n[k]) * n[k]
        np.testing.assert_allclose(out, -d, atol=1e-14)


def test_roof_prism():
    s = build("roof_prism", leg=0.02)
    na, nb = s.face_normals[s.face_index("roof_a")], s.face_normals[s.face_index("roof_b")]
    assert interior_angle(s, "roof_a", "roof_b") == pytest.approx(90 * DEG, abs=1e-12)
    # the ridge lies along the hypotenuse direction in the plane z = 0
    ridge = np.cross(na, nb)
    np.testing.assert_allclose(abs(ridge @ [1, -1, 0]) / np.linalg.norm(ridge), math.sqrt(2), atol=1e-12)
    assert abs(ridge[2]) < 1e-15
    with pytest.raises(GeometryError, match="below sqrt"):
        build("roof_prism", leg=0.01, height=0.02)


def test_beamsplitter_cube_halves_form_a_cube():
    h = beamsplitter_cube(size=0.01)
    for s in (h.first, h.second):
        assert s.volume == pytest.approx(0.5e-6, rel=1e-12)
    b = np.vstack([h.first.bounds, h.second.bounds])
    np.testing.assert_allclose(b.min(axis=0), [-0.005] * 3, atol=1e-15)
    np.testing.assert_allclose(b.max(axis=0), [0.005] * 3, atol=1e-15)
    n1 = h.first.face_normals[h.first.face_index("hypotenuse")]
    n2 = h.second.face_normals[h.second.face_index("hypotenuse")]
    assert n1 @ n2 == pytest.approx(-1.0, abs=1e-14)


def test_parameter_validation():
    kind = KINDS["right_angle_prism"]
    assert kind.resolve({"leg": 0.01}) == {"leg": 0.01}
    with pytest.raises(GeometryError, match="did you mean 'leg'"):
        kind.resolve({"legs": 0.01}, where="solids.p1")
    with pytest.raises(GeometryError, match="missing required parameter 'leg'"):
        kind.resolve({})
    with pytest.raises(GeometryError, match="positive length"):
        build("right_angle_prism", leg=-1.0)
    with pytest.raises(GeometryError, match="one of"):
        build("rhomb", aperture=0.01, style="spiral")
    with pytest.raises(GeometryError, match="did you mean 'penta_prism'"):
        build("pentaprism", aperture=0.01)
    for k in KINDS.values():
        assert {p.kind for p in k.parameters} <= {"length", "angle", "count", "choice", "bool"}
        assert k.doc


def _reflect_until(solid, origin, direction, stop, max_events=8):
    """Follow a ray in from outside, reflecting at every face until it meets a face in ``stop``."""
    t, f = solid.intersect(origin[None], direction[None], False)
    p, d = origin + t[0] * direction, direction.copy()
    path = [solid.face_names[f[0]]]
    for _ in range(max_events):
        t, f = solid.intersect(p[None], d[None], True)
        assert np.isfinite(t[0])
        p = p + t[0] * d
        path.append(solid.face_names[f[0]])
        if path[-1] in stop:
            break
        n = solid.face_normals[f[0]]
        d = d - 2 * (d @ n) * n
    return path, d


def _aperture_points(solid, face, count=9):
    poly = solid.face_polygons[solid.face_index(face)]
    mid = np.unique(poly[:, :2].round(15), axis=0)  # the face's two edge points in the x-y plane
    a, b = np.append(mid[0], 0.0), np.append(mid[1], 0.0)
    return [a + f * (b - a) for f in np.linspace(0.01, 0.99, count)]


@pytest.mark.parametrize(
    "kind, params, design",
    [
        ("rhomb", dict(aperture=0.01), ["entrance", "reflector_a", "reflector_b", "exit"]),
        ("rhomb", dict(aperture=0.01, style="fresnel"), ["entrance", "reflector_a", "reflector_b", "exit"]),
        ("penta_prism", dict(aperture=0.01), ["entrance", "reflector_a", "reflector_b", "exit"]),
    ],
)
def test_full_aperture_follows_the_design_path(kind, params, design):
    # the default dimensions pass the whole entrance aperture (normal incidence) through the
    # design path: Smith ch. 8 for the penta prism; for the rhomb our own default length
    s = build(kind, **params)
    n_in = s.face_normals[s.face_index("entrance")]
    for q in _aperture_points(s, "entrance"):
        path, d = _reflect_until(s, q + 1e-3 * n_in, -n_in, stop={"exit", "entrance"})
        assert path == design
        np.testing.assert_allclose(d, s.face_normals[s.face_index("exit")], atol=1e-12)


def test_corner_cube_traced_retroreflection():
    s = build("corner_cube", size=0.01)
    n = s.face_normals[s.face_index("entrance")]
    rng = np.random.default_rng(11)
    c = s.face_centroid("entrance")
    for _ in range(20):
        d = -n + 0.05 * rng.normal(size=3)  # near-normal, near the centre: inside the
        # hexagonal retroreflecting aperture (rays near the corners meet only two reflectors)
        d /= np.linalg.norm(d)
        u = rng.normal(size=3)
        u -= (u @ n) * n
        start = c + 0.0005 * u / np.linalg.norm(u) - 0.01 * d
        path, out = _reflect_until(s, start, d, stop={"entrance"})
        assert path[0] == "entrance" and path[-1] == "entrance"
        assert sorted(path[1:-1]) == ["reflector_a", "reflector_b", "reflector_c"]
        np.testing.assert_allclose(out, -d, atol=1e-12)
