"""Tests of tracer.fresnel against published values, closed forms and the tmm package."""

import numpy as np
import pytest
import tmm

from tracer import fresnel
from tracer.errors import TracerError


def test_normal_incidence_glass_4_percent():
    # R = ((n - 1)/(n + 1))^2 = 4.0 % for n = 1.5 (Born & Wolf, Principles of Optics, 1999,
    # section 1.5.3; common practice).
    c = fresnel.coefficients(n1=1.0, n2=1.5, angle=0.0)
    assert c.Rs == pytest.approx(0.04, abs=1e-15)
    assert c.Rp == pytest.approx(0.04, abs=1e-15)
    assert c.Ts == pytest.approx(0.96, abs=1e-15)
    # At normal incidence rp = -rs (our basis convention, same physical field).
    assert c.rp == pytest.approx(-c.rs, abs=1e-15)


def test_brewster_angle_glass():
    # Brewster's angle arctan(1.5) = 56.31 deg, Rp = 0 there (Born & Wolf 1999, section 1.5.3).
    theta_b = np.radians(56.31)
    c = fresnel.coefficients(n1=1.0, n2=1.5, angle=theta_b)
    assert c.Rp < 1e-8
    assert c.Rs > 0.1
    exact = fresnel.coefficients(n1=1.0, n2=1.5, angle=np.arctan(1.5))
    assert abs(exact.rp) < 1e-15


def test_critical_angle_silica_like_to_air():
    # n = 1.44 into air: critical angle arcsin(1/1.44) ~ 44 deg; at 45 deg both
    # polarisations are totally reflected (common practice, no source).
    assert np.degrees(fresnel.critical_angle(n1=1.44, n2=1.0)) == pytest.approx(43.98, abs=0.01)
    c = fresnel.coefficients(n1=1.44, n2=1.0, angle=np.radians(45))
    assert c.Rs == pytest.approx(1.0, abs=1e-14)
    assert c.Rp == pytest.approx(1.0, abs=1e-14)
    assert c.Ts == 0.0 and c.Tp == 0.0
    below = fresnel.coefficients(n1=1.44, n2=1.0, angle=np.radians(43))
    assert below.Rs < 0.9 and below.Ts > 0.1


def test_tir_phase_fresnel_rhomb():
    # n = 1.51 at 54.6 deg: 45 deg between the s and p phase shifts (the Fresnel rhomb,
    # Born & Wolf, Principles of Optics, 1999, section 1.5.4), with the published closed form
    # tan(delta/2) = cos(theta) sqrt(sin^2 theta - n^-2) / sin^2 theta  (Born & Wolf section 1.5.4, Eq. (60)
    # as recalled from memory),
    # delta = phase(rs) - phase(rp) in our convention.
    n = 1.51
    theta = np.radians(54.6)
    c = fresnel.coefficients(n1=n, n2=1.0, angle=theta)
    delta = np.angle(c.rs / c.rp)
    assert np.degrees(delta) == pytest.approx(45.0, abs=0.1)
    thetas = np.radians(np.linspace(42, 89, 50))
    c = fresnel.coefficients(n1=n, n2=1.0, angle=thetas)
    closed = 2 * np.arctan(np.cos(thetas) * np.sqrt(np.sin(thetas) ** 2 - n**-2) / np.sin(thetas) ** 2)
    np.testing.assert_allclose(np.angle(c.rs / c.rp), closed, atol=1e-12)


def test_convention_matches_tmm_interface_coefficients():
    # tmm (S. J. Byrnes, arXiv:1603.02720, 2016): interface_r/interface_t/interface_T.
    rng = np.random.default_rng(1)
    for _ in range(200):
        n1 = rng.uniform(1.0, 2.5)
        n2 = rng.uniform(1.0, 2.5) + 1j * rng.choice([0.0, rng.uniform(0, 0.5)])
        th1 = rng.uniform(0, np.pi / 2 * 0.999)
        th2 = tmm.snell(n1, n2, th1)
        c = fresnel.coefficients(n1=n1, n2=n2, angle=th1)
        for pol, r, t, T in (("s", c.rs, c.ts, c.Ts), ("p", c.rp, c.tp, c.Tp)):
            assert r == pytest.approx(tmm.interface_r(pol, n1, n2, th1, th2), abs=1e-12)
            assert t == pytest.approx(tmm.interface_t(pol, n1, n2, th1, th2), abs=1e-12)
            assert T == pytest.approx(tmm.interface_T(pol, n1, n2, th1, th2), abs=1e-12)
    # tmm's p reflection is (n2 cos1 - n1 cos2)/(n2 cos1 + n1 cos2), the same as ours:
    # checked numerically at normal incidence where rp = -rs in both.
    r_p = tmm.interface_r("p", 1.0, 1.5, 0.0, 0.0)
    r_s = tmm.interface_r("s", 1.0, 1.5, 0.0, 0.0)
    assert r_p == pytest.approx(0.2) and r_s == pytest.approx(-0.2)
    c = fresnel.coefficients(n1=1.0, n2=1.5, angle=0.0)
    assert c.rp == pytest.approx(r_p) and c.rs == pytest.approx(r_s)


def test_energy_conservation_lossless_broadcast():
    n1 = np.array([1.0, 1.5, 1.8])[:, None]
    n2 = np.array([1.33, 1.0, 2.2])[None, :]
    theta = np.radians(np.linspace(0, 89.9, 101))[:, None, None]
    c = fresnel.coefficients(n1=n1, n2=n2, angle=theta)
    assert c.Rs.shape == (101, 3, 3)
    np.testing.assert_allclose(c.Rs + c.Ts, 1.0, atol=1e-13)
    np.testing.assert_allclose(c.Rp + c.Tp, 1.0, atol=1e-13)


def test_cos_angle_equals_angle():
    theta = np.linspace(0, 1.5, 7)
    a = fresnel.coefficients(n1=1.5, n2=1.0, angle=theta)
    b = fresnel.coefficients(n1=1.5, n2=1.0, cos_angle=np.cos(theta))
    np.testing.assert_allclose(a.rs, b.rs, atol=1e-15)
    np.testing.assert_allclose(a.tp, b.tp, atol=1e-15)


def test_branch_decaying_beyond_critical_and_absorbing():
    q = fresnel.ncos_transmitted(n1=1.5, n2=1.0, cos_angle=np.linspace(0, 0.7, 8))
    assert np.all(q.imag > 0) and np.all(q.real == 0)
    q = fresnel.ncos_transmitted(n1=1.0, n2=0.2 + 3.0j, angle=np.linspace(0, 1.5, 8))
    assert np.all(q.imag > 0) and np.all(q.real > 0)
    c2 = fresnel.cos_transmitted(n1=1.0, n2=1.5, angle=0.3)
    assert c2 == pytest.approx(np.sqrt(1 - (np.sin(0.3) / 1.5) ** 2))


def test_perfect_conductor_limit():
    # n2 -> i*inf: rs -> -1, rp -> +1 in our convention (the perfect mirror phases).
    c = fresnel.coefficients(n1=1.0, n2=1e-3 + 1e8j, angle=np.linspace(0, 1.4, 5))
    np.testing.assert_allclose(c.rs, -1, atol=1e-7)
    np.testing.assert_allclose(c.rp, 1, atol=1e-7)


def test_amplitude_factor_makes_power():
    c = fresnel.coefficients(n1=1.0, n2=1.7 + 0.1j, angle=np.linspace(0, 1.5, 9))
    np.testing.assert_allclose(np.abs(c.ts_power) ** 2, c.Ts, rtol=1e-13)
    np.testing.assert_allclose(np.abs(c.tp_power) ** 2, c.Tp, rtol=1e-13)
    assert fresnel.amplitude_factor(T=0.0, t=0.0) == 0.0


def test_grazing_incidence_finite():
    c = fresnel.coefficients(n1=1.0, n2=1.5, cos_angle=0.0)
    assert c.rs == pytest.approx(-1) and c.rp == pytest.approx(-1) and c.Ts == 0
    same = fresnel.coefficients(n1=1.5, n2=1.5, cos_angle=0.0)
    assert same.rs == 0 and same.Ts == 1


def test_bad_input_raises_tracer_error():
    with pytest.raises(TracerError, match="exactly one"):
        fresnel.coefficients(n1=1.0, n2=1.5)
    with pytest.raises(TracerError, match="exactly one"):
        fresnel.coefficients(n1=1.0, n2=1.5, angle=0.1, cos_angle=0.9)
    with pytest.raises(TracerError, match="angle"):
        fresnel.coefficients(n1=1.0, n2=1.5, angle=2.0)
    with pytest.raises(TracerError, match="cos_angle"):
        fresnel.coefficients(n1=1.0, n2=1.5, cos_angle=-0.5)


def test_real_fast_path_same_branch_as_complex_root():
    # Lossless media take a real-arithmetic square root; it must equal the complex branch.
    z = np.linspace(-3, 3, 1001) + 0j
    fast = fresnel._forward_root(z)
    slow = np.array([fresnel._forward_root(np.complex128(v)) for v in z])
    np.testing.assert_array_equal(fast, slow)
    assert np.all(fast.imag >= 0) and np.all(fast.real >= 0)


# --- absorbing medium of incidence ---------------------------------------------------------


def _tmm_incident_angle(n1, theta):
    """tmm's th_0 for our real angle: n1 sin th_0 = Re(n1) sin theta (real), forward branch.

    tmm (S. J. Byrnes, arXiv:1603.02720, 2016) asks for a complex th_0 with n0 sin th_0 real
    for a dissipative incoming medium (coh_tmm docstring) and checks it with is_forward_angle.
    """
    th0 = np.lib.scimath.arcsin(n1.real * np.sin(theta) / n1)
    if not tmm.is_forward_angle(n1, th0):
        th0 = np.pi - th0
    return th0


def test_lossy_incident_medium_matches_tmm():
    # Reference: tmm.coh_tmm for two semi-infinite media, slightly to clearly lossy n1.
    rng = np.random.default_rng(11)
    checked = 0
    while checked < 300:
        n1 = rng.uniform(1.3, 2.4) + 1j * rng.choice([1e-9, 1e-6, 1e-3, 0.05, 0.3])
        n2 = rng.uniform(1.0, 2.4) + 1j * rng.choice([0.0, 0.0, rng.uniform(0, 0.5)])
        th = rng.uniform(0, np.pi / 2 * 0.999)
        crit = fresnel.critical_angle(n1=n1, n2=n2)
        if np.isfinite(crit) and abs(th - crit) < 1e-4:  # ill-conditioned in tmm's arcsin/cos
            continue
        c = fresnel.coefficients(n1=n1, n2=n2, angle=th)
        th0 = _tmm_incident_angle(n1, th)
        for pol, r, t, R, T in (("s", c.rs, c.ts, c.Rs, c.Ts), ("p", c.rp, c.tp, c.Rp, c.Tp)):
            ref = tmm.coh_tmm(pol, [n1, n2], [np.inf, np.inf], th0, 633e-9)
            assert r == pytest.approx(ref["r"], abs=1e-10)
            assert t == pytest.approx(ref["t"], abs=1e-10)
            assert R == pytest.approx(ref["R"], abs=1e-10)
            assert T == pytest.approx(ref["T"], abs=1e-10)
        checked += 1


def test_lossy_incident_medium_review_case_is_physical():
    # The case found in review: n1 = 1.85 + 1e-6 i into air. Away from grazing incidence
    # the coefficients are those of the lossless n1 = 1.85 up to O(kappa / (n cos^2)):
    # below the critical angle (arcsin(1/1.85) = 32.7 deg) R + T = 1, beyond it T = 0 and
    # R = 1 (lossless limit: common practice, no source).
    th = np.radians(np.concatenate([np.linspace(0, 32.5, 30), np.linspace(33, 80, 30)]))
    c = fresnel.coefficients(n1=1.85 + 1e-6j, n2=1.0, angle=th)
    lossless = fresnel.coefficients(n1=1.85, n2=1.0, angle=th)
    for got, ref in ((c.Rs, lossless.Rs), (c.Rp, lossless.Rp), (c.Ts, lossless.Ts), (c.Tp, lossless.Tp)):
        np.testing.assert_allclose(got, ref, atol=1e-4)
    grazing = fresnel.coefficients(n1=1.85 + 1e-6j, n2=1.0, angle=np.radians(np.linspace(80, 90, 20)))
    assert np.all(grazing.Rs <= 1) and np.all(np.abs(grazing.rp) < 1 + 1e-5)
    assert np.all(c.Ts >= 0) and np.all(c.Tp >= 0)
    assert np.all(np.abs(c.rs) < 1 + 1e-5) and np.all(np.abs(c.rp) < 1 + 1e-5)
    beyond = th > np.radians(33)
    assert np.all(c.Ts[beyond] == 0) and np.all(c.Tp[beyond] == 0)


def test_lossy_incident_medium_energy_balance():
    # R + T + A = 1 where A is the interference of the incident and reflected waves in the
    # absorbing medium: the normal Poynting flux of E = e^{iqz} + r e^{-iqz} just before the
    # face is Re(q)(1 - |r|^2) + 2 Im(q) Im(r) for s (q = n1 cos th1), and the same with
    # w = q / n1^2 for p carried by H (derived here; it is tmm's power_entering_from_r).
    # With a lossless n2 all of that flux is transmitted.
    rng = np.random.default_rng(12)
    n1 = rng.uniform(1.3, 2.4, 400) + 1j * rng.choice([1e-6, 1e-3, 0.05, 0.3], 400)
    n2 = rng.uniform(1.0, 2.4, 400)
    th = rng.uniform(0, np.pi / 2 * 0.999, 400)
    c = fresnel.coefficients(n1=n1, n2=n2, angle=th)
    q = c.ncos_in
    w = q / n1**2
    flux_s = 1 - c.Rs + 2 * q.imag * c.rs.imag / q.real
    flux_p = 1 - c.Rp + 2 * w.imag * c.rp.imag / w.real
    np.testing.assert_allclose(c.Ts, flux_s, atol=1e-12)
    np.testing.assert_allclose(c.Tp, flux_p, atol=1e-12)
    np.testing.assert_allclose(c.As, 1 - c.Rs - c.Ts, atol=0)
    for i in range(0, 400, 40):
        for pol, A in (("s", c.As[i]), ("p", c.Ap[i])):
            ref = tmm.coh_tmm(pol, [n1[i], n2[i]], [np.inf, np.inf], _tmm_incident_angle(n1[i], th[i]), 633e-9)
            assert A == pytest.approx(1 - ref["R"] - ref["power_entering"], abs=1e-10)
    # the interference term vanishes with the loss: |A| = O(Im q / Re q) ~ kappa / (n cos^2)
    small = n1.imag <= 1e-3
    bound = 4 * n1.imag / (n1.real * np.cos(th) ** 2)
    assert np.all(np.abs(c.As[small]) < bound[small]) and np.all(np.abs(c.Ap[small]) < bound[small])


def test_lossy_incident_invariant_is_real():
    # n1 sin th1 = Re(n1) sin th for the complex angle th1 (our definition), forward branch:
    # Im(n1 cos th1) > 0 (the wave decays along its way, tmm's is_forward_angle).
    n1 = 1.6 + 0.02j
    th = np.linspace(0, 1.5, 7)
    q = fresnel.ncos_of(n=n1, cos_angle=np.cos(th))
    np.testing.assert_allclose(q**2 + (n1.real * np.sin(th)) ** 2, n1**2, rtol=1e-14)
    assert np.all(q.imag > 0) and np.all(q.real > 0)
    assert fresnel.ncos_of(n=1.6, cos_angle=0.5) == 0.8
