"""Tests of tracer.detectors (sources named beside each test)."""

import numpy as np
import pytest

from tracer import detectors as dets
from tracer import polarization as pol
from tracer import sources
from tracer.errors import TracerError
from tracer.scene.model import DetectorSpec, Polarization, SourceSpec, Spectrum

RNG = np.random.default_rng(99)


def plane(**kw):
    base = dict(
        name="d",
        kind="plane",
        position=np.array([0.0, 0.0, 0.05]),
        normal=np.array([0.0, 0.0, 1.0]),
        x_axis=np.array([1.0, 0.0, 0.0]),
        size=(8e-3, 4e-3),
        pixels=(16, 8),
    )
    base.update(kw)
    return DetectorSpec(**base)


def far(**kw):
    base = dict(
        name="ff", kind="far_field", position=np.zeros(3), normal=np.array([0.0, 0.0, 1.0]),
        x_axis=np.array([1.0, 0.0, 0.0]), size=(0.0, 0.0), pixels=(24, 12),
    )
    base.update(kw)
    return DetectorSpec(**base)


def beam(**kw):
    base = dict(
        name="b", kind="collimated", position=np.array([0.0, 0.0, 0.2]),
        direction=np.array([0.0, 0.0, -1.0]), x_axis=np.array([1.0, 0.0, 0.0]), power=1.0,
        rays=1000, spectrum=Spectrum(np.array([550e-9]), np.array([1.0])),
        polarization=Polarization(), aperture="circle", size=(2e-3, 0.0), sampling="grid",
    )
    base.update(kw)
    return SourceSpec(**base)


def test_plane_hits_geometry_and_sides():
    det = plane(normal=np.array([0.0, 0.0, 2.0]), x_axis=np.array([1.0, 0.0, 0.5]))
    o = np.array([[1e-3, 1e-3, 0.1], [1e-3, 1e-3, 0.0], [1e-3, 1e-3, 0.1], [0.0, 0.0, 0.1], [5e-3, 0, 0.1]])
    d = np.array([[0.0, 0.0, -1.0], [0.0, 0.0, 1.0], [1.0, 0.0, 0.0], [0.0, 0.0, 1.0], [0, 0, -1.0]])
    t, u, v, hit = dets.plane_hits(det, o, d)
    # 0: hits from the front; 1: from behind (missed); 2: parallel; 3: moving away; 4: outside |u|<=4mm
    assert hit.tolist() == [True, False, False, False, False]
    assert t[0] == pytest.approx(0.05) and np.isinf(t[1:]).all() and np.isnan(u[1:]).all()
    assert u[0] == pytest.approx(1e-3) and v[0] == pytest.approx(1e-3)  # y = n x x = +y
    t2, _, _, hit2 = dets.plane_hits(plane(two_sided=True), o, d)
    assert hit2.tolist() == [True, True, False, False, False] and t2[1] == pytest.approx(0.05)
    # a ray starting just past the plane is only accepted with a negative t_min
    o3 = np.array([[0.0, 0.0, 0.05 - 1e-10]])
    d3 = np.array([[0.0, 0.0, -1.0]])
    assert not dets.plane_hits(det, o3, d3)[3][0]
    assert dets.plane_hits(det, o3, d3, t_min=-1e-9)[3][0]


def test_plane_frame_and_oblique_plane():
    n = np.array([1.0, 1.0, 0.0]) / np.sqrt(2)
    det = plane(position=np.array([0.01, 0.0, 0.0]), normal=n, x_axis=np.array([0.0, 0.0, 1.0]))
    nn, x, y = dets.plane_frame(det)
    assert np.allclose(np.cross(x, y), nn) and np.allclose(x, [0, 0, 1])
    o = np.array([[0.05, 0.04, 1e-3]])
    d = -n[None]
    t, u, v, hit = dets.plane_hits(det, o, d)
    q = o + t[:, None] * d
    assert hit[0] and abs((q[0] - det.position) @ nn) < 1e-15
    assert u[0] == pytest.approx(1e-3) and v[0] == pytest.approx((q[0] - det.position) @ y)


def test_irradiance_integral_equals_total_power():
    det = plane()
    rec = dets.DetectorRecord(det)
    u = RNG.uniform(-4e-3, 4e-3, 5000)
    v = RNG.uniform(-2e-3, 2e-3, 5000)
    p = RNG.uniform(0, 1e-3, 5000)
    rec.add(u, v, p)
    rec.add(np.array([np.nan]), np.array([np.nan]), np.array([5.0]))  # misses are ignored
    assert rec.irradiance().shape == (8, 16)
    assert rec.irradiance().sum() * rec.pixel_area == pytest.approx(p.sum(), rel=1e-12)
    assert rec.total_power == pytest.approx(p.sum(), rel=1e-12) and rec.ray_count == 5000
    assert rec.count_map().sum() == 5000


def test_uniform_beam_gives_flat_map():
    # A uniform beam filling the detector: irradiance P / A in every pixel
    # (common practice, no source). A 64 x 32 ray lattice over a 16 x 8 pixel grid
    # puts exactly 16 rays in each pixel.
    det = plane()
    src = beam(aperture="rectangle", size=(8e-3, 4e-3), rays=64 * 32, power=2.0)
    rays = sources.generate(src, rng=np.random.default_rng(0))
    t, u, v, hit = dets.plane_hits(det, rays.origins, rays.directions)
    assert hit.all()
    rec = dets.DetectorRecord(det)
    rec.add(u, v, rays.power)
    assert np.allclose(rec.irradiance(), 2.0 / (8e-3 * 4e-3), rtol=1e-12)
    # and a random uniform beam is flat within Poisson noise
    rr = sources.generate(beam(aperture="rectangle", size=(8e-3, 4e-3), rays=128_000, sampling="random"),
                          rng=np.random.default_rng(1))
    t, u, v, hit = dets.plane_hits(det, rr.origins, rr.directions)
    rec = dets.DetectorRecord(det)
    rec.add(u[hit], v[hit], rr.power[hit])
    E = rec.irradiance() / (1.0 / (8e-3 * 4e-3))
    assert np.std(E) == pytest.approx(1 / np.sqrt(1000), rel=0.15)  # 1000 rays per pixel
    assert np.mean(E) == pytest.approx(1.0, rel=1e-12)


@pytest.mark.parametrize("sampling", ["grid", "random"])
def test_rms_size_of_uniform_disk(sampling):
    # RMS radius of a uniform disk of radius R is R / sqrt(2) (closed form:
    # <r^2> = int r^2 2 pi r dr / (pi R^2) = R^2 / 2).
    R = 1.5e-3
    src = beam(size=(2 * R, 0.0), rays=40_000, sampling=sampling, position=np.array([1e-3, -5e-4, 0.2]))
    rays = sources.generate(src, rng=np.random.default_rng(2))
    _, u, v, hit = dets.plane_hits(plane(), rays.origins, rays.directions)
    rec = dets.DetectorRecord(plane())
    rec.add(u, v, rays.power, path_ids=np.full(len(rays), 7))
    radial, ru, rv = rec.rms_size(7)
    tol = 1e-3 if sampling == "grid" else 1e-2
    assert radial == pytest.approx(R / np.sqrt(2), rel=tol)
    assert ru == pytest.approx(R / 2, rel=tol) and rv == pytest.approx(R / 2, rel=tol)
    cu, cv = rec.centroid(7)
    assert cu == pytest.approx(1e-3, abs=R * tol) and cv == pytest.approx(-5e-4, abs=R * tol)


def test_per_path_statistics_and_merge():
    det = plane()
    u1, v1 = RNG.normal(1e-3, 1e-4, 3000), RNG.normal(0.0, 2e-4, 3000)
    u2, v2 = RNG.normal(-2e-3, 3e-4, 1000), RNG.normal(5e-4, 1e-4, 1000)
    p1, p2 = np.full(3000, 1e-4), np.full(1000, 2e-5)
    a = dets.DetectorRecord(det)
    a.add(np.r_[u1, u2], np.r_[v1, v2], np.r_[p1, p2], path_ids=np.r_[np.zeros(3000, int), np.ones(1000, int)])
    assert a.path_ids().tolist() == [0, 1]
    assert a.path_power(0) == pytest.approx(0.3) and a.path_power(1) == pytest.approx(0.02)
    assert a.centroid(1) == pytest.approx((u2.mean(), v2.mean()))
    assert a.rms_size(0)[1] == pytest.approx(u1.std()) and a.rms_size(0)[2] == pytest.approx(v1.std())
    table = a.path_table()
    assert [row["path"] for row in table] == [0, 1] and table[0]["rays"] == 3000
    with pytest.raises(KeyError):
        a.path_power(5)
    # the same hits added in two records and merged give the same result
    b, c = dets.DetectorRecord(det), dets.DetectorRecord(det)
    b.add(u1, v1, p1, path_ids=np.zeros(3000, int))
    c.add(u2, v2, p2, path_ids=np.ones(1000, int))
    b.merge(c)
    assert np.allclose(b.irradiance(), a.irradiance())
    assert b.rms_size(1) == pytest.approx(a.rms_size(1)) and b.total_power == pytest.approx(a.total_power)


def test_stokes_maps_of_polarised_beam():
    # Right-circular light through the detector frame: S3 = S0, DOP 1 (module convention).
    det = plane()
    src = beam(polarization=Polarization(pol.circular("right"), "rhc"), rays=500)
    rays = sources.generate(src, rng=np.random.default_rng(3))
    _, u, v, hit = dets.plane_hits(det, rays.origins, rays.directions)
    n, x, y = dets.plane_frame(det)
    S = rays.power[:, None] * pol.detector_stokes(rays.field, rays.coherency, x, y, directions=rays.directions)
    rec = dets.DetectorRecord(det, keep_hits=True)
    rec.add(u, v, rays.power, stokes=S)
    tot = rec.total_stokes()
    assert tot == pytest.approx([1.0, 0.0, 0.0, 1.0], abs=1e-12)
    maps = rec.stokes_maps()
    assert np.allclose(maps[0], rec.irradiance())
    lit = rec.power_map() > 0
    assert np.allclose(rec.dop_map()[lit], 1.0)
    assert rec.hits()["stokes"].shape == (500, 4)


def test_far_field_solid_angles_sum_to_4pi_and_isotropic_source():
    det = far(normal=np.array([0.0, 1.0, 0.0]), x_axis=np.array([0.0, 0.0, 1.0]), pixels=(36, 18))
    omega = dets.far_field_solid_angles(det)
    assert omega.shape == (18, 36) and omega.sum() == pytest.approx(4 * np.pi, rel=1e-14)
    # An isotropic point source has intensity P / (4 pi) in every direction (closed form).
    src = beam(kind="point", half_angle=np.pi, rays=400_000, sampling="random", power=3.0)
    rays = sources.generate(src, rng=np.random.default_rng(4))
    rec = dets.DetectorRecord(det)
    rec.add_directions(rays.directions, rays.power)
    I = rec.intensity()
    assert (I * omega).sum() == pytest.approx(3.0, rel=1e-12)
    expected = 3.0 / (4 * np.pi)
    # bins hold >= ~ 400000 * min(omega) / 4pi rays; allow 5 sigma of Poisson noise
    sigma = 1 / np.sqrt(400_000 * omega / (4 * np.pi))
    assert np.all(np.abs(I / expected - 1) < 5 * sigma)


def test_far_field_angles_and_frame():
    det = far()
    d = np.array([[0.0, 0.0, 1.0], [1.0, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, -1.0], [1.0, 1.0, 1.0]])
    az, polar = dets.far_field_angles(det, d)
    assert np.allclose(polar, [0, np.pi / 2, np.pi / 2, np.pi, np.arccos(1 / np.sqrt(3))])
    assert np.allclose(az[1:3], [0, np.pi / 2]) and az[4] == pytest.approx(np.pi / 4)
    et, ep = dets.far_field_frame(det, d)
    k = d / np.linalg.norm(d, axis=1, keepdims=True)
    assert np.allclose(np.cross(et, ep), k)
    assert np.allclose(et[1], [0, 0, -1]) and np.allclose(ep[1], [0, 1, 0])
    rec = dets.DetectorRecord(det)
    rec.add_directions(d, np.ones(5), path_ids=[1, 1, 2, 2, 3])
    assert rec.mean_direction(3) == pytest.approx(k[4])
    assert rec.total_power == 5.0 and rec.power_map().sum() == 5.0


def test_invalid_detectors_raise():
    with pytest.raises(TracerError, match="size"):
        dets.plane_hits(plane(size=(0.0, 1e-3)), np.zeros((1, 3)), np.array([[0, 0, -1.0]]))
    with pytest.raises(TracerError, match="parallel"):
        dets.DetectorRecord(plane(x_axis=np.array([0.0, 0.0, 3.0])))
    with pytest.raises(TracerError, match="pixels"):
        dets.DetectorRecord(plane(pixels=(0, 4)))
    with pytest.raises(TracerError, match="detector 'd'"):
        dets.DetectorRecord(plane(kind="sphere"))


def _grid_hits(pitch, n):
    g = (np.arange(n) - (n - 1) / 2) * pitch
    u, v = np.meshgrid(g, g)
    return u.ravel(), v.ravel()


def test_uniform_ray_grid_gives_a_uniform_map_when_spread():
    # A uniform beam sampled by a square ray grid: each ray stands for one cell, so the
    # irradiance is the beam power over its area (P / A, common practice, no source) in
    # every pixel the beam covers whole, whatever the pixel pitch.
    spec = plane(size=(8e-3, 8e-3), pixels=(13, 13))  # pixel pitch 0.615 mm
    pitch, n = 0.25e-3, 20  # a 5 mm square beam of 400 rays
    u, v = _grid_hits(pitch, n)
    power = np.full(u.size, 1e-3 / u.size)
    half = dets.ray_footprints(u, v, np.zeros(u.size, dtype=int))
    assert np.allclose(half, pitch / 2)
    point = dets.DetectorRecord(spec)
    point.add(u, v, power)
    spread = dets.DetectorRecord(spec)
    spread.add(u, v, power, footprint=half)
    expected = 1e-3 / (n * pitch) ** 2
    edges = spread.u_edges
    whole = (edges[:-1] >= -n * pitch / 2) & (edges[1:] <= n * pitch / 2)
    inner = np.outer(whole, whole)
    assert np.allclose(spread.irradiance()[inner], expected, rtol=1e-12)
    # the point deposits are not uniform (integer rays per pixel): the test can fail
    assert np.ptp(point.irradiance()[inner]) > 0.2 * expected
    assert spread.power_map().sum() == pytest.approx(1e-3, rel=1e-12)
    assert np.array_equal(spread.count_map(), point.count_map())


def test_spread_keeps_power_and_stokes_at_the_detector_edge():
    spec = plane(size=(4e-3, 4e-3), pixels=(8, 8))
    u = np.array([1.95e-3, -1.99e-3, 0.0, 5e-3])  # the last misses the detector
    v = np.array([0.0, 1.9e-3, 0.0, 0.0])
    power = np.array([1.0, 2.0, 3.0, 4.0])
    stokes = np.column_stack([power, 0.5 * power, -0.25 * power, 0.1 * power])
    rec = dets.DetectorRecord(spec)
    rec.add(u, v, power, stokes, footprint=np.full(4, 0.3e-3))
    assert rec.power_map().sum() == pytest.approx(6.0, rel=1e-12)
    s = rec.stokes_maps().sum(axis=(1, 2)) * rec.pixel_area
    assert np.allclose(s, [6.0, 3.0, -1.5, 0.6], rtol=1e-12)
