"""Cross-check of tracer.fresnel against Maxwell's boundary conditions, closed forms and tmm.

Sources named beside each test. Oracles in ``test_crosscheck_oracles`` (no tracer physics).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from test_crosscheck_oracles import INF, interface_fields, tmm

from tracer import fresnel

ANGLES = np.radians(np.r_[np.linspace(0.0, 89.9, 120), 89.99])
PAIRS = [(1.0, 1.5), (1.5, 1.0), (1.0, 1.0003), (1.7, 1.33), (1.33, 1.7), (2.4, 1.0),
         (1.0, 0.05 + 4.2j), (1.0, 2.5 + 0.3j), (1.52, 0.056 + 4.276j), (1.0, 1.45 + 1e-6j)]


@pytest.mark.parametrize("n1,n2", PAIRS)
def test_coefficients_against_tmm_all_angles(n1, n2):
    """rs, rp, ts, tp, Rs, Rp, Ts, Tp over 0-89.99 deg, external, internal (beyond critical
    included) and absorbing n2, against tmm.coh_tmm (Byrnes, arXiv:1603.02720, 2016),
    which uses the same exp(-i w t) convention and the same p basis."""
    c = fresnel.coefficients(n1=n1, n2=n2, angle=ANGLES)
    for pol in "sp":
        ref = {k: np.array([tmm.coh_tmm(pol, [n1, n2], [INF, INF], a, 633e-9)[k] for a in ANGLES])
               for k in ("r", "t", "R", "T")}
        # tmm's own arcsin loses ~1e-10 near grazing for nearly matched media
        tol = 1e-9 if abs(n1 - n2) > 0.01 else 3e-7
        np.testing.assert_allclose(getattr(c, "r" + pol), ref["r"], atol=tol, rtol=0)
        np.testing.assert_allclose(getattr(c, "t" + pol), ref["t"], atol=tol, rtol=0)
        np.testing.assert_allclose(getattr(c, "R" + pol), ref["R"], atol=tol, rtol=0)
        np.testing.assert_allclose(getattr(c, "T" + pol), ref["T"], atol=tol, rtol=0)


@pytest.mark.parametrize("n1,n2", PAIRS[:6] + [(1.0, 0.05 + 4.2j)])
def test_coefficients_against_maxwell_3d(n1, n2):
    """The tool's rs, rp (basis s perpendicular to the plane of incidence, p = k x s per
    wave) equal the reflected field solved from Maxwell's boundary conditions in 3D
    (continuity of tangential E and H; first principles, no convention borrowed)."""
    for a in np.radians([0.0, 5.0, 30.0, 41.0, 42.0, 50.0, 70.0, 85.0]):
        c = fresnel.coefficients(n1=n1, n2=n2, angle=a)
        kh = np.array([math.sin(a), 0.0, math.cos(a)])
        s = np.array([0.0, 1.0, 0.0])
        nu = np.array([0.0, 0.0, 1.0])
        fs = interface_fields(n1=n1, n2=n2, k_hat=kh, normal=nu, E=s)
        fp = interface_fields(n1=n1, n2=n2, k_hat=kh, normal=nu, E=np.cross(kh, s))
        assert abs(fs["Er"] @ s - c.rs) < 1e-12
        assert abs(fp["Er"] @ np.cross(fp["kr"], s) - c.rp) < 1e-12
        assert fs["T"] == pytest.approx(float(c.Ts), abs=1e-12)
        assert fp["T"] == pytest.approx(float(c.Tp), abs=1e-12)


@pytest.mark.parametrize("n1,n2", [(1.5, 1.0), (1.5168, 1.0), (1.51, 1.0), (2.4, 1.33)])
def test_tir_phases_closed_form(n1, n2):
    """Beyond the critical angle, with n = n2/n1 and exp(-i w t) (decaying branch):
    tan(phi_s/2) = -sqrt(sin^2 - n^2)/cos,  tan(phi_p/2) = -sqrt(sin^2 - n^2)/(n^2 cos),
    and phi_p - phi_s = -2 atan(cos sqrt(sin^2 - n^2)/sin^2)
    (Born and Wolf, Principles of Optics, sec. 1.5.4, written for our sign convention;
    magnitudes of the phases from memory, signs derived here)."""
    n = n2 / n1
    crit = math.asin(n)
    a = np.linspace(crit + 1e-4, math.radians(89.9), 200)
    c = fresnel.coefficients(n1=n1, n2=n2, angle=a)
    root = np.sqrt(np.sin(a) ** 2 - n * n)
    np.testing.assert_allclose(np.abs(c.rs), 1.0, atol=1e-13)
    np.testing.assert_allclose(np.abs(c.rp), 1.0, atol=1e-13)
    np.testing.assert_allclose(np.tan(np.angle(c.rs) / 2), -root / np.cos(a), rtol=1e-9)
    np.testing.assert_allclose(np.tan(np.angle(c.rp) / 2), -root / (n * n * np.cos(a)), rtol=1e-9)
    delta = np.angle(c.rp / c.rs)
    np.testing.assert_allclose(delta, -2 * np.arctan(np.cos(a) * root / np.sin(a) ** 2), atol=1e-12)
    np.testing.assert_allclose(c.Ts, 0.0, atol=0)
    np.testing.assert_allclose(c.Tp, 0.0, atol=0)


def test_fresnel_rhomb_angle_gives_45_deg_per_reflection():
    """n = 1.51, 54 deg 37': the retardance per total reflection is 45 deg
    (Born and Wolf sec. 1.5.4; the classic Fresnel rhomb, from memory)."""
    c = fresnel.coefficients(n1=1.51, n2=1.0, angle=math.radians(54 + 37 / 60))
    assert abs(np.degrees(np.angle(c.rp / c.rs))) == pytest.approx(45.0, abs=0.02)


def test_metal_normal_incidence_silver():
    """Silver n = 0.05 + 4.2i at 633 nm: R = ((n-1)^2 + k^2)/((n+1)^2 + k^2) = 0.98933
    (Fresnel at normal incidence; Born and Wolf sec. 14.2)."""
    n, k = 0.05, 4.2
    R = ((n - 1) ** 2 + k**2) / ((n + 1) ** 2 + k**2)
    c = fresnel.coefficients(n1=1.0, n2=n + 1j * k, angle=0.0)
    assert float(c.Rs) == pytest.approx(R, abs=1e-14)
    assert float(c.Rp) == pytest.approx(R, abs=1e-14)
    assert float(c.Ts) == pytest.approx(1 - R, abs=1e-14)
    assert float(c.As) == pytest.approx(0.0, abs=1e-14)


@pytest.mark.parametrize("n1,n2", [(1.0, 1.5), (1.5, 1.0), (1.0, 0.05 + 4.2j), (1.33, 2.4)])
def test_normal_incidence_rp_equals_minus_rs(n1, n2):
    """At normal incidence rp = -rs and ts = tp (same physical field; our basis), with
    rs = (n1 - n2)/(n1 + n2) (Fresnel)."""
    c = fresnel.coefficients(n1=n1, n2=n2, angle=0.0)
    assert complex(c.rs) == pytest.approx((n1 - n2) / (n1 + n2), abs=1e-15)
    assert complex(c.rp) == pytest.approx(-complex(c.rs), abs=1e-15)
    assert complex(c.ts) == pytest.approx(complex(c.tp), abs=1e-15)


@pytest.mark.parametrize("n1,n2", [(1.0, 1.5), (1.5, 1.0), (1.0003, 1.7)])
def test_brewster(n1, n2):
    """rp = 0 at tan(theta_B) = n2/n1 (Brewster's law)."""
    c = fresnel.coefficients(n1=n1, n2=n2, angle=math.atan(n2 / n1))
    assert abs(complex(c.rp)) < 1e-14
    assert float(c.Tp) == pytest.approx(1.0, abs=1e-14)


def test_critical_angle_and_grazing():
    """At the critical angle R = 1, T = 0; at grazing incidence rs = rp = -1 (limits of the
    Fresnel formulas; common practice, no source)."""
    # asin(1/1.5) rounds to either side of the critical angle; R near it moves as
    # sqrt(angle error) ~ 1e-8, so compare at 1e-6
    c = fresnel.coefficients(n1=1.5, n2=1.0, angle=math.asin(1 / 1.5))
    assert float(c.Rs) == pytest.approx(1.0, abs=1e-6) and float(c.Ts) < 1e-6
    c = fresnel.coefficients(n1=1.5, n2=1.0, cos_angle=math.sqrt(1 - 1 / 2.25))
    assert float(c.Rs) == pytest.approx(1.0, abs=1e-6)
    g = fresnel.coefficients(n1=1.0, n2=1.5, cos_angle=0.0)
    assert complex(g.rs) == pytest.approx(-1.0) and complex(g.rp) == pytest.approx(-1.0)
    assert math.degrees(float(fresnel.critical_angle(n1=1.5, n2=1.0))) == pytest.approx(
        math.degrees(math.asin(1 / 1.5)), abs=1e-12)


def test_energy_conservation_lossless():
    """R + T = 1 for lossless media at every angle (Stokes relations; common practice)."""
    a = np.radians(np.linspace(0, 89.99, 500))
    for n1, n2 in [(1.0, 1.5), (1.5, 1.0), (1.33, 2.4)]:
        c = fresnel.coefficients(n1=n1, n2=n2, angle=a)
        np.testing.assert_allclose(c.Rs + c.Ts, 1.0, atol=1e-13)
        np.testing.assert_allclose(c.Rp + c.Tp, 1.0, atol=1e-13)
