"""Tests of tracer.sources: ray generation (sources named beside each test)."""

import numpy as np
import pytest

from tracer import polarization as pol
from tracer import sources
from tracer.errors import TracerError
from tracer.scene.model import Polarization, SourceSpec, Spectrum

MONO = Spectrum(np.array([633e-9]), np.array([1.0]))
THREE = Spectrum(np.array([450e-9, 550e-9, 650e-9]), np.array([0.2, 0.5, 0.3]))


def make(**kw):
    base = dict(
        name="s",
        kind="collimated",
        position=np.array([1e-3, -2e-3, 5e-3]),
        direction=np.array([0.0, 0.6, 0.8]),
        x_axis=np.array([1.0, 0.0, 0.0]),
        power=2.5e-3,
        rays=500,
        spectrum=MONO,
        polarization=Polarization(),
        aperture="circle",
        size=(4e-3, 0.0),
        half_angle=0.0,
        sampling="grid",
    )
    base.update(kw)
    return SourceSpec(**base)


ALL_KINDS = [
    dict(kind="collimated", aperture="circle", sampling="grid"),
    dict(kind="collimated", aperture="circle", sampling="random"),
    dict(kind="collimated", aperture="rectangle", size=(6e-3, 2e-3), sampling="grid"),
    dict(kind="collimated", aperture="rectangle", size=(6e-3, 2e-3), sampling="random"),
    dict(kind="point", half_angle=0.4, sampling="grid"),
    dict(kind="point", half_angle=np.pi, sampling="random"),
    dict(kind="fan", half_angle=0.5, sampling="grid"),
    dict(kind="fan", half_angle=0.5, sampling="random"),
]


def rng(seed=7):
    return np.random.default_rng(seed)


@pytest.mark.parametrize("kw", ALL_KINDS)
def test_contract_power_units_frames(kw):
    src = make(spectrum=THREE, polarization=Polarization(pol.circular("right"), "rhc"), **kw)
    r = sources.generate(src, rng=rng(), index=3)
    n = len(r)
    assert n == sources.ray_count(src) == 3 * sources.geometric_count(src)
    # power sums to the source power (to round-off) and splits by the weights
    assert r.power.sum() == pytest.approx(src.power, rel=1e-13)
    for k, w in enumerate(THREE.weights):
        assert r.power[r.line_index == k].sum() == pytest.approx(w * src.power, rel=1e-13)
        assert np.all(r.wavelengths[r.line_index == k] == THREE.wavelengths[k])
    # unit directions, right-handed orthonormal transverse frames
    assert np.allclose(np.linalg.norm(r.directions, axis=1), 1.0)
    assert np.allclose(np.cross(r.x_axis, r.y_axis), r.directions)
    assert np.allclose(np.sum(r.x_axis * r.directions, axis=1), 0.0)
    assert r.field.shape == (n, 3, 2) and r.field.dtype == complex
    assert np.allclose(pol.ray_power(r.field, r.coherency), 1.0)
    assert np.allclose(pol.coherency_to_stokes(r.coherency), [1, 0, 0, 1])
    assert np.all(r.source_index == 3)
    assert np.array_equal(r.ray_index, np.arange(n))


def test_collimated_circle_containment_and_axes():
    src = make(rays=777)
    r = sources.generate(src, rng=rng())
    d, x, y = sources.source_frame(src)
    assert len(r) == 777  # the sunflower pattern keeps the exact count
    rel = r.origins - src.position
    assert np.allclose(rel @ d, 0.0)  # aperture plane through position, normal to direction
    rad = np.hypot(rel @ x, rel @ y)
    assert rad.max() <= 2e-3 * (1 + 1e-12)
    assert rad.max() > 0.95 * 2e-3  # fills the aperture
    assert np.allclose(r.directions, d)
    assert np.allclose(r.x_axis, x)  # x_axis made perpendicular to the direction
    # uniform areal density: mean r^2 = R^2/2 for a uniform disk (closed form)
    assert np.mean(rad**2) == pytest.approx(0.5 * 2e-3**2, rel=0.01)


def test_collimated_random_circle_is_uniform():
    src = make(rays=20000, sampling="random")
    r = sources.generate(src, rng=rng())
    _, x, y = sources.source_frame(src)
    rel = r.origins - src.position
    rad = np.hypot(rel @ x, rel @ y)
    assert rad.max() <= 2e-3
    # uniform disk: fraction within R/2 is 1/4; mean r^2 = R^2/2 (closed form)
    assert np.mean(rad < 1e-3) == pytest.approx(0.25, abs=0.015)
    assert np.mean(rad**2) == pytest.approx(2e-6, rel=0.02)


def test_collimated_rectangle_grid():
    src = make(aperture="rectangle", size=(6e-3, 2e-3), rays=300)
    r = sources.generate(src, rng=rng())
    _, x, y = sources.source_frame(src)
    rel = r.origins - src.position
    a, b = rel @ x, rel @ y
    assert len(r) == 300  # 30 x 10 lattice matches the 3:1 aspect
    assert np.all(np.abs(a) < 3e-3) and np.all(np.abs(b) < 1e-3)
    assert len(np.unique(np.round(a, 12))) == 30 and len(np.unique(np.round(b, 12))) == 10
    assert np.mean(a) == pytest.approx(0.0, abs=1e-15) and np.mean(b) == pytest.approx(0.0, abs=1e-15)
    assert sources.geometric_count(make(aperture="rectangle", size=(6e-3, 2e-3), rays=310)) in range(290, 331)


@pytest.mark.parametrize("sampling,n,tol", [("grid", 2000, 1e-3), ("random", 40000, 6e-3)])
@pytest.mark.parametrize("alpha", [0.2, 1.0, np.pi / 2, np.pi])
def test_cone_uniform_in_solid_angle(sampling, n, tol, alpha):
    # Uniform in solid angle within half-angle a: <cos theta> = (1 + cos a)/2 and
    # <cos^2 theta> = (1 + cos a + cos^2 a)/3 (closed forms: cos theta uniform on [cos a, 1]).
    src = make(kind="point", half_angle=alpha, rays=n, sampling=sampling)
    r = sources.generate(src, rng=rng())
    d, x, _ = sources.source_frame(src)
    c = r.directions @ d
    ca = np.cos(alpha)
    assert c.min() >= ca - 1e-12
    assert np.mean(c) == pytest.approx((1 + ca) / 2, abs=tol)
    assert np.mean(c**2) == pytest.approx((1 + ca + ca * ca) / 3, abs=tol)
    # azimuthally even: the mean transverse direction vanishes
    assert abs(np.mean(r.directions @ x)) < 0.02
    assert np.allclose(r.origins, src.position)
    # per-ray x_axis is the source x_axis projected perpendicular to the ray
    proj = x - (r.directions @ x)[:, None] * r.directions
    ok = np.linalg.norm(proj, axis=1) > 1e-6
    assert np.allclose(r.x_axis[ok], proj[ok] / np.linalg.norm(proj[ok], axis=1, keepdims=True))


def test_point_source_ray_along_x_axis_has_a_frame():
    # a ray running along the source x_axis falls back to the projected y_axis
    x, y = np.array([1.0, 0.0, 0.0]), np.array([0.0, 1.0, 0.0])
    k = np.array([[1.0, 0.0, 0.0], [-1.0, 0.0, 0.0], [0.6, 0.0, 0.8]])
    xr, yr = sources._projected_frames(k, x, y)
    assert np.all(np.isfinite(xr))
    assert np.allclose(np.cross(xr, yr), k)
    assert np.allclose(yr[:2], y)  # y_axis kept where x_axis is along the ray
    assert np.allclose(xr[2], [0.8, 0.0, -0.6])  # ordinary projection elsewhere


def test_fan_in_plane_and_even():
    # 2D fan in the x-y plane: zero z, angles evenly spaced over +-half_angle.
    src = make(
        kind="fan", position=np.array([0.0, 0.0, 0.0]), direction=np.array([1.0, 0.0, 0.0]),
        x_axis=np.array([0.0, 1.0, 0.0]), half_angle=np.radians(30), rays=7,
    )
    r = sources.generate(src, rng=rng())
    assert np.allclose(r.directions[:, 2], 0.0) and np.allclose(r.x_axis[:, 2], 0.0)
    ang = np.degrees(np.arctan2(r.directions[:, 1], r.directions[:, 0]))
    assert np.allclose(ang, np.linspace(-30, 30, 7))
    assert np.allclose(r.y_axis, [0, 0, 1])  # direction x x_axis, the same for all rays
    rr = sources.generate(make(kind="fan", half_angle=0.5, rays=5000, sampling="random"), rng=rng())
    d, x, y = sources.source_frame(make(kind="fan"))
    assert np.allclose(rr.directions @ y, 0.0)
    phi = np.arctan2(rr.directions @ x, rr.directions @ d)
    assert np.all(np.abs(phi) <= 0.5) and np.mean(phi**2) == pytest.approx(0.25 / 3, rel=0.05)


@pytest.mark.parametrize("kw", ALL_KINDS)
def test_deterministic_and_batch_independent(kw):
    src = make(spectrum=THREE, rays=150, **kw)
    a = sources.generate(src, rng=rng(11))
    b = sources.generate(src, rng=rng(11))
    for name in ("origins", "directions", "wavelengths", "power", "field", "ray_index", "line_index"):
        assert np.array_equal(getattr(a, name), getattr(b, name))
    for size in (1, 37, 150, 10_000):
        batches = list(sources.generate_batches(src, rng=rng(11), batch_size=size))
        assert all(len(p) <= size for p in batches)
        joined = sources.SourceRays.concatenate(batches)
        for name in ("origins", "directions", "wavelengths", "power", "field", "ray_index", "line_index"):
            assert np.array_equal(getattr(joined, name), getattr(a, name)), (size, name)
    if kw["sampling"] == "random":
        c = sources.generate(src, rng=rng(12))
        assert not np.array_equal(a.origins + a.directions, c.origins + c.directions)


def test_random_blocks_span_batches():
    # more rays than one random block: batches across the block boundary agree
    src = make(sampling="random", rays=70_000, size=(1e-3, 0.0))
    a = sources.generate(src, rng=rng(3))
    parts = list(sources.generate_batches(src, rng=rng(3), batch_size=30_001))
    assert np.array_equal(sources.SourceRays.concatenate(parts).origins, a.origins)
    assert len(np.unique(a.origins[:, 0])) == len(a)


def test_zero_weight_lines_are_skipped():
    spec = Spectrum(np.array([500e-9, 600e-9]), np.array([0.0, 2.0]))
    r = sources.generate(make(spectrum=spec, rays=10), rng=rng())
    assert len(r) == 10 and np.all(r.wavelengths == 600e-9) and np.all(r.line_index == 1)
    assert r.power.sum() == pytest.approx(2.5e-3, rel=1e-14)


@pytest.mark.parametrize(
    "kw,match",
    [
        (dict(x_axis=np.array([0.0, 0.6, 0.8])), "parallel"),
        (dict(direction=np.zeros(3)), "direction"),
        (dict(rays=0), "positive integer"),
        (dict(kind="laser"), "kind"),
        (dict(kind="point", half_angle=4.0), "half_angle"),
        (dict(polarization=Polarization(np.array([1.0, 1.0, 0.5, 0.0]), "bad")), "degree of polarisation"),
        (dict(spectrum=Spectrum(np.array([5e-7]), np.array([0.0]))), "weights"),
        (dict(size=(-1.0, 0.0)), "size"),
    ],
)
def test_invalid_sources_raise_clear_errors(kw, match):
    with pytest.raises(TracerError, match=match) as info:
        sources.generate(make(**kw), rng=rng())
    assert "source 's'" in str(info.value)
