"""Scatter models against closed forms and independent quadrature.

Sources named beside each test. The quadratures here integrate on a Cartesian grid of the
direction-sine plane (dOmega = dalpha dbeta / gamma), independent of the models' own
polar Gauss--Legendre tables.
"""

import numpy as np
import pytest

from tracer.scatter import REFLECT_SIDE, TRANSMIT_SIDE, BlackSurface, Lambertian, RoughSurface
from tracer.scatter import psd as kpsd
from tracer.scatter import rayleigh_rice_brdf
from tracer.scatter.table import BsdfTableError, read_table

WL = 633e-9


def _disk_grid(n=1601):
    """Cell centres (alpha, beta), gamma and cell area of the unit disk of direction sines."""
    x = (np.arange(n) + 0.5) / n * 2.0 - 1.0
    a, b = np.meshgrid(x, x, indexing="ij")
    r2 = a * a + b * b
    inside = r2 < 1.0
    a, b = a[inside], b[inside]
    g = np.sqrt(1.0 - a * a - b * b)
    return a, b, g, (2.0 / n) ** 2


def _solid_angle_integral(density_fn, n=1601):
    a, b, g, da = _disk_grid(n)
    return float(np.sum(density_fn(a, b, g) / g) * da)


# K-correlation PSD: closed forms of Church, Takacs & Leonard (Proc. SPIE 1165, 1989) --------

def test_psd_band_variance_matches_numerical_integral():
    a = kpsd.amplitude(rms_roughness=2e-9, correlation_length=3e-6, exponent=2.4)
    f = np.linspace(0.0, 5e6, 400001)
    p = kpsd.psd(f, amplitude=a, correlation_length=3e-6, exponent=2.4)
    numeric = np.trapezoid(p * 2 * np.pi * f, f)
    assert numeric == pytest.approx(kpsd.band_variance(5e6, amplitude=a, correlation_length=3e-6,
                                                       exponent=2.4), rel=1e-6)
    # nearly all of sigma^2 lies below 5/B for C = 2.4
    assert kpsd.band_variance(np.inf, amplitude=a, correlation_length=3e-6,
                              exponent=2.4) == pytest.approx(4e-18, rel=1e-12)


def test_sampled_frequencies_follow_the_radial_psd():
    rng = np.random.default_rng(1)
    f = kpsd.sample_frequency(rng.random(200000), correlation_length=1e-6, exponent=3.0)
    for f0 in (2e5, 1e6, 4e6):
        expected = kpsd.band_variance(f0, amplitude=1.0, correlation_length=1e-6, exponent=3.0) / \
            kpsd.band_variance(np.inf, amplitude=1.0, correlation_length=1e-6, exponent=3.0)
        assert np.mean(f < f0) == pytest.approx(expected, abs=4e-3)


# TIS: Davies 1954; Bennett & Porteus, JOSA 51, 123 (1961) --------------------------------

@pytest.mark.parametrize("sigma_over_lambda", [1e-4, 3e-4, 1e-3, 3e-3, 1e-2])
def test_rayleigh_rice_integral_equals_tis_in_the_smooth_limit(sigma_over_lambda):
    """The hemispherical integral of the Rayleigh--Rice BRDF of a K-correlation surface whose
    correlation length is much longer than the wavelength is R (4 pi sigma cos / lambda)^2."""
    sigma = sigma_over_lambda * WL
    for theta in (0.0, 0.5):
        cos_i = np.cos(theta)
        val = _solid_angle_integral(lambda a, b, g: rayleigh_rice_brdf(
            rms_roughness=sigma, correlation_length=40 * WL, exponent=2.5, wavelength=WL,
            cos_i=cos_i, alpha=a, beta=b, gamma=g, reflectance=0.04) * g, n=2401)
        tis = (4 * np.pi * sigma * cos_i / WL) ** 2
        assert val == pytest.approx(0.04 * tis, rel=0.02)


def test_rough_scattered_fraction_is_the_integrated_rayleigh_rice_brdf():
    """Outside the smooth limit (correlation length ~ wavelength) part of the roughness
    scatters into evanescent waves: the model's scattered fraction R (1 - exp(-TIS)) eta
    still equals the integrated first-order BRDF (to first order in TIS)."""
    m = RoughSurface(rms_roughness=1e-9, correlation_length=0.5 * WL, exponent=2.0)
    for theta in (0.0, 0.6):
        cos_i = np.array([np.cos(theta)])
        part = m.partition(cos_i=cos_i, wavelength=WL, n1=1.0, n2=1.5, r_spec=np.array([0.04]),
                           t_spec=np.array([0.96]))
        oracle = _solid_angle_integral(lambda a, b, g: rayleigh_rice_brdf(
            rms_roughness=1e-9, correlation_length=0.5 * WL, exponent=2.0, wavelength=WL,
            cos_i=cos_i[0], alpha=a, beta=b, gamma=g, reflectance=0.04) * g)
        tis = m.tis_reflect(cos_i=cos_i, wavelength=WL, n1=1.0)
        assert part.scatter_r[0] * tis[0] / (1 - np.exp(-tis[0])) == pytest.approx(oracle, rel=5e-3)
        assert part.scatter_r[0] < 0.04 * tis[0] * 0.9  # a real evanescent share here
        assert part.keep_r[0] == pytest.approx(np.exp(-tis[0]))  # Bennett & Porteus specular


def test_transmitted_tis_closed_form():
    m = RoughSurface(rms_roughness=2e-9, correlation_length=50e-6)
    # normal incidence, air to n = 1.5: (2 pi sigma (1 - 1.5) / lambda)^2
    tis = m.tis_transmit(cos_i=1.0, cos_t=1.0, wavelength=WL, n1=1.0, n2=1.5)
    assert tis == pytest.approx((2 * np.pi * 2e-9 * 0.5 / WL) ** 2)


@pytest.mark.parametrize("side", [REFLECT_SIDE, TRANSMIT_SIDE])
@pytest.mark.parametrize("theta", [0.0, 0.4, 0.9])
def test_rough_density_is_normalised(side, theta):
    m = RoughSurface(rms_roughness=1e-9, correlation_length=3 * WL, exponent=2.2)
    s = np.sin(theta)
    val = _solid_angle_integral(lambda a, b, g: m.density(
        side, sin_i=np.full(a.shape, s), wavelength=WL, n1=1.0, n2=1.5, alpha=a, beta=b, gamma=g))
    assert val == pytest.approx(1.0, rel=5e-3)


def test_rough_brdf_is_reciprocal():
    """Helmholtz reciprocity (Nicodemus et al., NBS Monograph 160, 1977): in the plane of
    incidence BRDF(theta_i -> theta_s) = BRDF(theta_s -> theta_i)."""
    kw = dict(rms_roughness=1e-9, correlation_length=2e-6, exponent=2.5, wavelength=WL,
              reflectance=0.04, beta=0.0)
    for ti, ts in ((0.1, 0.5), (0.3, 1.0), (0.0, 0.7)):
        fwd = rayleigh_rice_brdf(cos_i=np.cos(ti), alpha=np.sin(ts), gamma=np.cos(ts), **kw)
        back = rayleigh_rice_brdf(cos_i=np.cos(ts), alpha=np.sin(ti), gamma=np.cos(ti), **kw)
        assert fwd == pytest.approx(back, rel=1e-12)


def test_rough_samples_follow_the_density():
    """Mean direction cosine of many samples against the quadrature of the density."""
    m = RoughSurface(rms_roughness=1e-9, correlation_length=2 * WL, exponent=2.0)
    n = 200000
    rng = np.random.default_rng(7)
    draws = {}

    def draw(k):
        if k not in draws:
            draws[k] = rng.random(n)
        return draws[k]

    s = np.full(n, np.sin(0.5))
    a, b, g = m.sample(REFLECT_SIDE, sin_i=s, wavelength=WL, n1=1.0, n2=1.5, draw=draw)
    expect_g = _solid_angle_integral(lambda x, y, z: z * m.density(
        REFLECT_SIDE, sin_i=np.full(x.shape, s[0]), wavelength=WL, n1=1.0, n2=1.5, alpha=x,
        beta=y, gamma=z))
    expect_a = _solid_angle_integral(lambda x, y, z: x * m.density(
        REFLECT_SIDE, sin_i=np.full(x.shape, s[0]), wavelength=WL, n1=1.0, n2=1.5, alpha=x,
        beta=y, gamma=z))
    assert np.allclose(a * a + b * b + g * g, 1.0)
    assert g.mean() == pytest.approx(expect_g, abs=3e-3)
    assert a.mean() == pytest.approx(expect_a, abs=3e-3)


# Lambertian and black: Lambert's cosine law (common practice, no source) -----------------

def test_lambertian_density_and_partition():
    m = Lambertian(reflectance=0.05, transmittance=0.02)
    assert _solid_angle_integral(lambda a, b, g: m.density(REFLECT_SIDE, sin_i=0, wavelength=WL,
                                 n1=1, n2=1.5, alpha=a, beta=b, gamma=g)) == pytest.approx(1, rel=2e-3)
    p = m.partition(cos_i=np.array([0.3]), wavelength=WL, n1=1, n2=1.5, r_spec=np.array([0.2]),
                    t_spec=np.array([0.8]))
    assert (p.scatter_r[0], p.scatter_t[0], p.keep_r[0]) == pytest.approx((0.05, 0.02, 0.93))
    absorbed = Lambertian(reflectance=0.05, rest="absorbed").partition(
        cos_i=np.array([1.0]), wavelength=WL, n1=1, n2=1.5, r_spec=np.array([0.04]),
        t_spec=np.array([0.96]))
    assert absorbed.keep_r[0] == 0 and absorbed.keep_t[0] == 0


def test_black_surface_is_opaque_with_a_diffuse_part():
    p = BlackSurface(diffuse=0.03, specular=0.005).partition(
        cos_i=np.array([0.8]), wavelength=WL, n1=1, n2=1, r_spec=np.array([0.005]),
        t_spec=np.array([0.0]))
    assert (p.keep_r[0], p.keep_t[0], p.scatter_r[0], p.scatter_t[0]) == (1.0, 0.0, 0.03, 0.0)


# measured tables ------------------------------------------------------------------------

def _write_table(path, fn, inc=(0, 20, 40, 60, 80), sca=tuple(range(0, 90, 5)),
                 azi=(0, 45, 90, 135, 180)):
    lines = ["incidence_deg,scatter_deg,azimuth_deg,bsdf_per_sr"]
    for i in inc:
        for s in sca:
            for a in azi:
                lines.append(f"{i},{s},{a},{fn(i, s, a):.10g}")
    path.write_text("\n".join(lines) + "\n")
    return path


def test_table_of_a_lambertian_integrates_to_its_reflectance(tmp_path):
    """A table of BSDF = rho / pi holds rho at every incidence (Lambert's law; the table's
    grid ends at 85 deg, held beyond, so the quadrature sees the full hemisphere)."""
    t = read_table(_write_table(tmp_path / "lam.csv", lambda i, s, a: 0.2 / np.pi))
    assert np.allclose(t.fractions(), 0.2, rtol=1e-3)
    assert t.warnings == ()
    assert _solid_angle_integral(lambda a, b, g: t.density(
        REFLECT_SIDE, sin_i=np.full(a.shape, 0.5), wavelength=WL, n1=1, n2=1, alpha=a, beta=b,
        gamma=g)) == pytest.approx(1.0, rel=3e-3)


def test_table_that_creates_energy_is_refused(tmp_path):
    with pytest.raises(BsdfTableError, match=r"hot\.csv: incidence .*hemispherical integral"):
        read_table(_write_table(tmp_path / "hot.csv", lambda i, s, a: 0.5))


def test_non_reciprocal_table_is_reported(tmp_path):
    t = read_table(_write_table(tmp_path / "skew.csv",
                                lambda i, s, a: 0.05 * (1 + i / 40.0) / np.pi,
                                inc=(0, 20, 40), sca=(0, 20, 40, 60, 80)))
    assert t.warnings and "not reciprocal" in t.warnings[0]


@pytest.mark.parametrize("text, message", [
    ("incidence_deg,scatter_deg,bsdf_per_sr\n0,0,1\n", "missing column"),
    ("incidence_deg,scatter_deg,azimuth_deg,bsdf_per_sr\n0,0,0,x\n", "row 2: expected four numbers"),
    ("incidence_deg,scatter_deg,azimuth_deg,bsdf_per_sr\n0,0,0,0.1\n0,10,0,0.1\n10,0,0,0.1\n",
     "do not fill the grid"),
    ("incidence_deg,scatter_deg,azimuth_deg,bsdf_per_sr\n95,0,0,0.1\n", "outside 0 <= angle < 90"),
    ("incidence_deg,scatter_deg,azimuth_deg,bsdf_per_sr\n0,0,0,-0.1\n", "negative"),
])
def test_bad_tables_name_file_and_row(tmp_path, text, message):
    p = tmp_path / "bad.csv"
    p.write_text(text)
    with pytest.raises(BsdfTableError, match=message) as err:
        read_table(p)
    assert "bad.csv" in str(err.value)
