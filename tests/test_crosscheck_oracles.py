"""Independent oracles for the cross-check tests, and tests of the oracles themselves.

Nothing here imports the physics of ``tracer``: the functions are written from first
principles (Maxwell's boundary conditions for a plane wave at a planar interface) or
from published formulas (recalled from memory where marked), or they wrap ``tmm``
(S. J. Byrnes, "Multilayer optical calculations", arXiv:1603.02720, 2016) as a
reference library. The other ``test_crosscheck_*`` files import them.

Conventions of the oracles (chosen here, independently of the tool):

* time dependence exp(-i w t), complex index n + i k with k >= 0 for loss, a plane wave
  exp(i k.r); the transmitted normal wave-vector component is the root with
  non-negative imaginary part (decaying), or non-negative real part when real;
* Stokes parameters of a field E (complex 3-vector) travelling along k are taken in a
  right-handed frame (x, y, k): S3 = 2 Im(Ex conj(Ey)); with exp(-i w t), S3 > 0 means
  E turns clockwise as seen by a receiver looking back at the source (right-handed
  in the optics convention; common practice, no source). The test
  ``test_oracle_stokes_handedness`` checks this statement by sampling E(t).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

tmm = pytest.importorskip("tmm")

INF = np.inf


# ----------------------------------------------------------------------------- 3D fields

def _unit(v):
    v = np.asarray(v, dtype=complex if np.iscomplexobj(v) else float)
    return v / np.linalg.norm(v)


def _skew(k):
    """Matrix K with K @ E == cross(k, E)."""
    return np.array([[0, -k[2], k[1]], [k[2], 0, -k[0]], [-k[1], k[0], 0]], dtype=complex)


def forward_root(z):
    """sqrt(z) with Im >= 0 (decaying), and Re >= 0 when the imaginary part is ~0."""
    q = np.sqrt(complex(z))
    if q.imag < -1e-15 or (abs(q.imag) <= 1e-15 and q.real < 0):
        q = -q
    return q


def interface_fields(*, n1, n2, k_hat, normal, E):
    """Reflected and transmitted plane waves at a planar interface, from Maxwell's equations.

    Solves the six linear equations: transversality of the reflected and transmitted
    fields (k.E = 0), continuity of the two tangential components of E and of
    H ~ k x E (non-magnetic media), for an incident wave of unit direction ``k_hat`` in a
    lossless medium ``n1`` meeting the medium ``n2`` (complex allowed) across a plane of
    unit normal ``normal`` pointing into medium 2.

    Returns
    -------
    dict with ``kr`` (unit, real), ``Er``, ``kt`` (complex wave vector / k0), ``Et``,
    ``R`` (reflected power fraction) and ``T`` (transmitted power fraction, normal
    Poynting flux ratio).
    """
    nu = _unit(np.asarray(normal, float))
    kh = _unit(np.asarray(k_hat, float))
    if kh @ nu <= 0:
        raise ValueError("normal must point into medium 2 (along the incident direction)")
    ki = n1 * kh
    q1 = ki @ nu
    beta = ki - q1 * nu
    q2 = forward_root(n2 * n2 - beta @ beta)
    kr = beta - q1 * nu
    kt = beta + q2 * nu
    # two tangent vectors
    a = np.array([1.0, 0, 0]) if abs(nu[0]) < 0.9 else np.array([0, 1.0, 0])
    t1 = _unit(np.cross(nu, a))
    t2 = np.cross(nu, t1)
    E = np.asarray(E, dtype=complex)
    A = np.zeros((6, 6), dtype=complex)
    b = np.zeros(6, dtype=complex)
    A[0, :3] = kr
    A[1, 3:] = kt
    Kr, Kt, Ki = _skew(kr), _skew(kt), _skew(ki)
    for j, t in enumerate((t1, t2)):
        A[2 + j, :3] = t
        A[2 + j, 3:] = -t
        b[2 + j] = -(t @ E)
        A[4 + j, :3] = t @ Kr
        A[4 + j, 3:] = -(t @ Kt)
        b[4 + j] = -(t @ (Ki @ E))
    x = np.linalg.solve(A, b)
    Er, Et = x[:3], x[3:]
    Si = np.real(np.cross(E, np.conj(Ki @ E))) @ nu
    St = np.real(np.cross(Et, np.conj(Kt @ Et))) @ nu
    Sr = -np.real(np.cross(Er, np.conj(Kr @ Er))) @ nu
    return dict(kr=np.real(kr) / n1, Er=Er, kt=kt, Et=Et, R=Sr / Si, T=St / Si)


def s_p_basis(k_hat, normal):
    """Unit s (perpendicular to the plane of incidence) for a wave ``k_hat`` on ``normal``."""
    s = np.cross(k_hat, normal)
    if np.linalg.norm(s) < 1e-12:  # normal incidence: any perpendicular
        a = np.array([0, 0, 1.0]) if abs(k_hat[2]) < 0.9 else np.array([1.0, 0, 0])
        s = np.cross(k_hat, a)
    return _unit(s)


def stokes_physical(E, k_hat):
    """Normalised (S0 = 1) Stokes vector of field E along k_hat in a right-handed frame.

    S1 and S2 depend on the choice of x (here any unit vector perpendicular to k); S0,
    S3 and the degree of linear polarisation do not.
    """
    k = _unit(np.asarray(k_hat, float))
    a = np.array([0, 0, 1.0]) if abs(k[2]) < 0.9 else np.array([1.0, 0, 0])
    x = _unit(np.cross(a, k))
    y = np.cross(k, x)
    return stokes_in_frame(E, x, y)


def stokes_in_frame(E, x, y):
    """Normalised Stokes vector of E in the frame (x, y): S3 = 2 Im(Ex conj(Ey))."""
    ex, ey = np.asarray(E) @ x, np.asarray(E) @ y
    s0 = abs(ex) ** 2 + abs(ey) ** 2
    return np.array([1.0, (abs(ex) ** 2 - abs(ey) ** 2) / s0,
                     2 * (ex * np.conj(ey)).real / s0, 2 * (ex * np.conj(ey)).imag / s0])


# ----------------------------------------------------------------------------- tmm wrappers

def tmm_coh(n_list, d_list, angle, wl):
    """(rs, rp, ts, tp, Rs, Rp, Ts, Tp) of a stack by tmm.coh_tmm [Byrnes 2016]."""
    s = tmm.coh_tmm("s", n_list, d_list, angle, wl)
    p = tmm.coh_tmm("p", n_list, d_list, angle, wl)
    return s["r"], p["r"], s["t"], p["t"], s["R"], p["R"], s["T"], p["T"]


def tmm_T(n_list, d_list, angle, wl, pol):
    return tmm.coh_tmm(pol, list(n_list), list(d_list), angle, wl)["T"]


def tmm_R(n_list, d_list, angle, wl, pol):
    return tmm.coh_tmm(pol, list(n_list), list(d_list), angle, wl)["R"]


def tmm_stack_fields(*, n1, layers, n2, k_hat, normal, E, wl):
    """Reflected/transmitted fields at a coated interface, from tmm's rs, rp, ts, tp.

    tmm's basis (verified against :func:`interface_fields` by
    ``test_oracle_tmm_basis_is_maxwell``): s perpendicular to the plane of incidence,
    the same vector for every wave, p = k x s for each wave; t is the ratio of field
    amplitudes. Only for a lossless exit medium with a propagating wave (or none).
    """
    nu = _unit(np.asarray(normal, float))
    kh = _unit(np.asarray(k_hat, float))
    c1 = float(np.clip(kh @ nu, -1, 1))
    th = math.acos(c1)
    ns = [n1] + [n for n, _ in layers] + [n2]
    ds = [INF] + [d for _, d in layers] + [INF]
    rs, rp, ts, tp, Rs, Rp, Ts, Tp = tmm_coh(ns, ds, th, wl)
    s = s_p_basis(kh, nu)
    beta = kh - c1 * nu
    kr = beta - c1 * nu
    pi = np.cross(kh, s)
    pr = np.cross(kr, s)
    a_s, a_p = E @ s, E @ pi
    Er = rs * a_s * s + rp * a_p * pr
    out = dict(kr=kr, Er=Er)
    sin2 = n1 * math.sin(th) / np.real(n2)
    if abs(np.imag(n2)) == 0 and sin2 < 1:
        c2 = math.sqrt(1 - sin2**2)
        kt = (n1 / np.real(n2)) * beta + c2 * nu
        kt = _unit(kt)
        pt = np.cross(kt, s)
        out.update(kt=kt, Et=ts * a_s * s + tp * a_p * pt)
        # power: split the incident power between s and p
        ps, pp = abs(a_s) ** 2, abs(a_p) ** 2
        out["T"] = (Ts * ps + Tp * pp) / (ps + pp)
    out["R"] = float(np.linalg.norm(Er) ** 2 / np.linalg.norm(E) ** 2)
    return out


# ----------------------------------------------------------------------------- materials (from memory)

def sellmeier(lam_um, B, C):
    """n from n^2 - 1 = sum B_i l^2 / (l^2 - C_i), l in um, C in um^2."""
    l2 = lam_um**2
    return math.sqrt(1 + sum(b * l2 / (l2 - c) for b, c in zip(B, C)))


def ciddor(lam_um, *, t_c=15.0, p=101325.0, h=0.0, xc=450.0):
    """Phase index of air, P. E. Ciddor, Appl. Opt. 35, 1566 (1996), written from memory.

    Eqs. 1-5 and the BIPM compressibility (Eq. 12), with the vapour-pressure and
    enhancement-factor formulas of the same paper (from memory).
    """
    T = t_c + 273.15
    s2 = 1.0 / lam_um**2
    nas = 1e-8 * (5792105 / (238.0185 - s2) + 167917 / (57.362 - s2))
    naxs = nas * (1 + 0.534e-6 * (xc - 450))
    nws = 1e-8 * 1.022 * (295.235 + 2.6422 * s2 - 0.032380 * s2**2 + 0.004028 * s2**3)
    Ma = 1e-3 * (28.9635 + 12.011e-6 * (xc - 400))
    Mw = 0.018015
    R = 8.314510

    def Z(T, p, xw):
        t = T - 273.15
        return (1 - (p / T) * (1.58123e-6 - 2.9331e-8 * t + 1.1043e-10 * t * t
                               + (5.707e-6 - 2.051e-8 * t) * xw + (1.9898e-4 - 2.376e-6 * t) * xw * xw)
                + (p / T) ** 2 * (1.83e-11 - 0.765e-8 * xw * xw))

    psv = math.exp(1.2378847e-5 * T * T - 1.9121316e-2 * T + 33.93711047 - 6.3431645e3 / T)
    f = 1.00062 + 3.14e-8 * p + 5.6e-7 * t_c**2
    xw = f * h * psv / p
    rho_axs = 101325 * Ma / (Z(288.15, 101325, 0) * R * 288.15)
    rho_ws = 1333 * Mw / (Z(293.15, 1333, 1) * R * 293.15)
    Zm = Z(T, p, xw)
    rho_a = p * Ma * (1 - xw) / (Zm * R * T)
    rho_w = p * Mw * xw / (Zm * R * T)
    return 1 + (rho_a / rho_axs) * naxs + (rho_w / rho_ws) * nws


def cauchy_from_code(nd, vd, lam_um):
    """Two-term Cauchy n = A + B/l^2 through n_d with n_F - n_C = (n_d - 1)/V_d.

    Line wavelengths (d 587.5618 nm, F 486.1327 nm, C 656.2725 nm) from memory.
    """
    lf, lc, ld = 0.4861327, 0.6562725, 0.5875618
    B = (nd - 1) / (vd * (1 / lf**2 - 1 / lc**2))
    A = nd - B / ld**2
    return A + B / lam_um**2


def air_ciddor_std(lam_m):
    return ciddor(lam_m * 1e6)


# ----------------------------------------------------------------------------- tests of the oracles

def test_oracle_stokes_handedness():
    """E = x + i y with exp(-i w t): sample E(t) and look from the receiver (along -k)."""
    E = np.array([1.0, 1j, 0.0])
    k = np.array([0, 0, 1.0])
    t = np.linspace(0, 0.5, 6)
    field = np.real(E[None, :] * np.exp(-1j * 2 * np.pi * t)[:, None])
    # receiver looks along -z: its view has right = -x... use the angle seen from +z
    ang = np.unwrap(np.arctan2(field[:, 1], field[:, 0]))
    # seen from +z (the receiver, looking towards -z at the source) the angle grows:
    # counter-clockwise = left-handed in the optics convention, so S3 must be < 0.
    assert np.all(np.diff(ang) > 0)
    assert stokes_physical(E, k)[3] == pytest.approx(-1.0)


@pytest.mark.parametrize("n1,n2", [(1.0, 1.5), (1.5, 1.0), (1.0, 0.05 + 4.2j), (1.7, 1.33)])
@pytest.mark.parametrize("deg", [0.0, 10.0, 33.0, 45.0, 60.0, 80.0, 89.0])
def test_oracle_tmm_basis_is_maxwell(n1, n2, deg):
    """tmm's rs, rp with p = k x s agree with Maxwell's boundary conditions solved in 3D.

    Sources: Maxwell's equations (boundary conditions on tangential E and H), and the
    tmm package (Byrnes 2016).
    """
    th = math.radians(deg)
    nu = np.array([0, 0, 1.0])
    kh = np.array([math.sin(th), 0, math.cos(th)])
    s = np.array([0, 1.0, 0]) if deg > 0 else np.array([0, 1.0, 0])
    for pol in "sp":
        E = s if pol == "s" else np.cross(kh, s)
        f = interface_fields(n1=n1, n2=n2, k_hat=kh, normal=nu, E=E)
        o = tmm.coh_tmm(pol, [n1, n2], [INF, INF], th, 633e-9)
        basis_r = s if pol == "s" else np.cross(f["kr"], s)
        r = f["Er"] @ basis_r
        assert abs(r - o["r"]) < 1e-9
        assert f["R"] == pytest.approx(o["R"], abs=1e-9)
        assert f["T"] == pytest.approx(o["T"], abs=1e-9)
        if abs(np.imag(f["kt"]) @ nu) < 1e-12 and abs(np.imag(n2)) == 0:
            kt = np.real(f["kt"]) / np.linalg.norm(np.real(f["kt"]))
            basis_t = s if pol == "s" else np.cross(kt, s)
            assert abs(f["Et"] @ basis_t - o["t"]) < 1e-9


def test_oracle_ciddor_textbook_value():
    """Standard dry air at 633 nm: n - 1 = 2.7653e-4 (Eq. 1 of Ciddor 1996 evaluated
    by hand; Edlen-type values near 2.765e-4, from memory)."""
    assert (ciddor(0.633) - 1) == pytest.approx(2.7653e-4, abs=3e-8)


def test_oracle_silica_textbook_value():
    """Fused silica n_d = 1.4585 (Malitson 1965 Sellmeier; catalogue value 1.45846, from memory)."""
    n = sellmeier(0.5875618, (0.6961663, 0.4079426, 0.8974794),
                  (0.0684043**2, 0.1162414**2, 9.896161**2))
    assert n == pytest.approx(1.45846, abs=2e-5)


# ----------------------------------------------------------------------------- chief-ray tracer

def trace_faces(*, faces, n_solid, n_ambient, start, k, E, steps, wl=None):
    """Follow one ray through a convex solid along a given list of face events.

    Parameters
    ----------
    faces : dict name -> (outward unit normal (3,), offset d) with planes n.x = d
    n_solid, n_ambient : complex indices (ambient lossless)
    start, k, E : start point, unit direction, complex field (3,)
    steps : list of (face name, "T" or "R", layers or None); ``layers`` are
        (index, thickness [m]) in the order the light meets them (tmm is then used for
        the coefficients, in the basis verified by ``test_oracle_tmm_basis_is_maxwell``)
    wl : vacuum wavelength [m] (needed with layers)

    Returns
    -------
    dict with ``power`` (fraction kept), ``k``, ``E`` (unit norm), ``point``, ``events``
    (per step: angle of incidence [deg], power fraction of the step).
    """
    p = np.asarray(start, float)
    k = _unit(np.asarray(k, float))
    E = np.asarray(E, complex)
    E = E / np.linalg.norm(E)
    inside = False
    power = 1.0
    events = []
    for name, child, layers in steps:
        N, d = faces[name]
        N = np.asarray(N, float)
        t = (d - N @ p) / (N @ k)
        if t <= 0:
            raise ValueError(f"face {name} is behind the ray")
        p = p + t * k
        nu = N if inside else -N
        n1, n2 = (n_solid, n_ambient) if inside else (n_ambient, n_solid)
        if np.imag(n1) != 0:
            raise ValueError("medium of incidence must be lossless")
        n1 = float(np.real(n1))
        if layers is None:
            f = interface_fields(n1=n1, n2=n2, k_hat=k, normal=nu, E=E)
            kt = f["kt"]
            kt_real = abs(np.imag(kt @ nu)) < 1e-12
            kt_dir = _unit(np.real(kt)) if kt_real else None
        else:
            f = tmm_stack_fields(n1=n1, layers=layers, n2=n2, k_hat=k, normal=nu, E=E, wl=wl)
            kt_dir = f.get("kt")
        aoi = math.degrees(math.acos(float(np.clip(k @ nu, -1, 1))))
        if child == "R":
            frac = f["R"]
            k, E = _unit(f["kr"]), f["Er"]
        else:
            if kt_dir is None:
                raise ValueError(f"no transmitted wave at {name}")
            frac = f["T"]
            k, E = kt_dir, f["Et"]
            inside = not inside
        power *= float(np.real(frac))
        E = E / np.linalg.norm(E)
        events.append(dict(face=name, child=child, aoi_deg=aoi, fraction=float(np.real(frac))))
    return dict(power=power, k=k, E=E, point=p, events=events)


def solid_faces(solid):
    """{face name: (normal, offset)} of a tracer solid (geometry input only)."""
    g = solid.geometry
    return {n: (np.asarray(g.face_normals[i], float), float(g.face_offsets[i]))
            for i, n in enumerate(g.face_names)}
