"""Compiled coefficients of the faces that need no thin-film solve.

For bare interfaces, ideal coatings (a given reflectance R and transmittance 1 - R
wherever a wave propagates beyond the face, with the phases of
:func:`tracer.coatings.face_response`) and mirrors, the coefficients are closed-form per
ray. :func:`simple_coefficients` evaluates them in one compiled loop, writing the
power coefficients and the power-normalised amplitudes (``|t~|^2 = T``) that the event
loop uses straight into its arrays. It is the compiled twin of
:func:`tracer.fresnel.coefficients` and :func:`tracer.coatings.face_response`
(``"uncoated"``, ``"ideal"``, ``"mirror"`` kinds) followed by
:func:`tracer.fresnel.amplitude_factor`, and follows their conventions (module
docstring of :mod:`tracer.fresnel`: Born and Wolf, "Principles of Optics", 7th ed.,
1999, section 1.5; Byrnes, "Multilayer optical calculations", 2016, for the power
factors and the forward-wave branch). ``tests/test_fresnel_kernel.py`` checks it
against those functions; they are tested against ``tmm``.

The incident medium is lossless here (the engine passes the real part of its index;
its extinction is booked as bulk absorption).
"""

from __future__ import annotations

import math

import numpy as np

from ..tolerances import BRANCH_IMAG_TOL
from .jit import njit

__all__ = ["BARE", "IDEAL", "PARTIAL_MIRROR", "PERFECT_MIRROR", "simple_coefficients"]

#: Kinds of simple faces.
BARE, IDEAL, PARTIAL_MIRROR, PERFECT_MIRROR = range(4)


@njit
def _forward_root(z):
    # forward-wave branch: decaying (Im >= 0), else outgoing (Re >= 0)
    if z.imag == 0.0:
        if z.real < 0.0:
            return complex(0.0, math.sqrt(-z.real))
        return complex(math.sqrt(z.real), 0.0)
    q = np.sqrt(z)
    if q.imag < -BRANCH_IMAG_TOL:
        q = -q
    return q


@njit
def _amp(T, t):
    # factor sqrt(T / |t|^2) making |t f|^2 == T (0 where t == 0)
    a2 = t.real * t.real + t.imag * t.imag
    if a2 > 0.0:
        return t * math.sqrt(max(T, 0.0) / a2)
    return 0j


@njit
def _bare_real(n1, n2, c1):
    """:func:`_bare` for a lossless ``n2`` below the critical angle: every quantity is
    real (the complex formulas on zero imaginary parts give the same numbers)."""
    q1 = n1 * c1
    z = (n2 * n2 - n1 * n1) + q1 * q1
    q2 = math.sqrt(z)
    c2 = q2 / n2
    den_s = q1 + q2
    a = n2 * c1
    b = n1 * c2
    den_p = a + b
    fs = q2 / q1 if q1 > 0.0 else 0.0
    if den_s == 0.0 or den_p == 0.0:
        return 0j, 0j, 1 + 0j, 1 + 0j, 0.0, 0.0, 1.0, 1.0, fs, fs
    inv_s = 1.0 / den_s
    inv_p = 1.0 / den_p
    rs = (q1 - q2) * inv_s
    ts = 2 * q1 * inv_s
    rp = (a - b) * inv_p
    tp = 2 * q1 * inv_p
    return (complex(rs, 0.0), complex(rp, 0.0), complex(ts, 0.0), complex(tp, 0.0), rs * rs,
            rp * rp, fs * (ts * ts), fs * (tp * tp), fs, fs)


@njit
def _bare_tir(n1, n2, c1, z):
    """:func:`_bare` for a lossless ``n2`` beyond the critical angle (``z < 0``).

    ``q2 = i g`` with ``g = sqrt(-z)`` (the decaying branch), so
    ``rs = (q1 - i g) / (q1 + i g)`` and ``rp = (a - i b) / (a + i b)`` with
    ``a = n2 c1``, ``b = n1 g / n2`` are unimodular: ``Rs = Rp = 1``, ``Ts = Tp = 0``.
    """
    q1 = n1 * c1
    g = math.sqrt(-z)
    a = n2 * c1
    b = n1 * (g / n2)
    ds = q1 * q1 + g * g
    dp = a * a + b * b
    rs = complex((q1 * q1 - g * g) / ds, -2.0 * q1 * g / ds)
    rp = complex((a * a - b * b) / dp, -2.0 * a * b / dp)
    return rs, rp, 0j, 0j, 1.0, 1.0, 0.0, 0.0, 0.0, 0.0


@njit
def _bare(n1, n2, c1):
    """rs, rp, ts, tp, Rs, Rp, Ts, Tp of a lossless n1 -> n2 interface, fs and fp."""
    if n2.imag == 0.0:
        nr = n2.real
        q1 = n1 * c1
        z = (nr * nr - n1 * n1) + q1 * q1
        if z >= 0.0:
            return _bare_real(n1, nr, c1)
        return _bare_tir(n1, nr, c1, z)
    q1 = n1 * c1
    q_ref = n1 * c1
    z = (n2 * n2 - n1 * n1) + q_ref * q_ref
    q2 = _forward_root(z)
    c2 = q2 / n2
    den_s = q1 + q2
    a = n2 * c1
    b = n1 * c2
    den_p = a + b
    # power factors: Re(n2 c2) / Re(n1 c1) and Re(n2 conj(c2)) / Re(n1 conj(c1))
    fs = q2.real / q1 if q1 > 0.0 else 0.0
    if n2.imag == 0.0:
        fp = fs
    else:
        num_p = (n2 * np.conj(q2) / np.conj(n2)).real
        fp = num_p / q1 if q1 > 0.0 else 0.0
    if den_s == 0 or den_p == 0:  # same medium at grazing incidence: the limit r = 0, t = 1
        return 0j, 0j, 1 + 0j, 1 + 0j, 0.0, 0.0, 1.0, 1.0, fs, fp
    rs = (q1 - q2) / den_s
    ts = 2 * q1 / den_s
    rp = (a - b) / den_p
    tp = 2 * q1 / den_p
    ars = abs(rs)
    arp = abs(rp)
    ats = abs(ts)
    atp = abs(tp)
    return rs, rp, ts, tp, ars * ars, arp * arp, fs * (ats * ats), fp * (atp * atp), fs, fp


@njit
def _simple(n1, n2, cos1, kind, refl, rows, Rs, Rp, Ts, Tp, rs_n, rp_n, ts_n, tp_n):
    for m in range(rows.shape[0]):
        i = rows[m]
        kd = kind[m]
        if kd == PERFECT_MIRROR:
            rs, rp, ts, tp = -1 + 0j, 1 + 0j, 0j, 0j
            rs_, rp_, ts_, tp_ = 1.0, 1.0, 0.0, 0.0
        elif kd == PARTIAL_MIRROR:
            R = refl[m]
            a = math.sqrt(R)
            rs, rp, ts, tp = complex(-a, 0.0), complex(a, 0.0), 0j, 0j
            rs_, rp_, ts_, tp_ = R, R, 0.0, 0.0
        else:
            rs, rp, ts, tp, rs_, rp_, ts_, tp_, fs, fp = _bare(n1[i], n2[i], cos1[i])
            if kd == IDEAL:  # the given reflectance wherever a wave propagates beyond
                R = refl[m]
                a = math.sqrt(R)
                T = 1.0 - R
                if fs > 0.0:
                    rs, ts, rs_, ts_ = complex(-a, 0.0), complex(math.sqrt(T / fs), 0.0), R, T
                if fp > 0.0:
                    rp, tp, rp_, tp_ = complex(a, 0.0), complex(math.sqrt(T / fp), 0.0), R, T
        Rs[i] = rs_
        Rp[i] = rp_
        Ts[i] = ts_
        Tp[i] = tp_
        rs_n[i] = _amp(rs_, rs)
        rp_n[i] = _amp(rp_, rp)
        ts_n[i] = _amp(ts_, ts)
        tp_n[i] = _amp(tp_, tp)


def simple_coefficients(co, rows, *, n1, n2, cos1, kind, reflectance):
    """Fill rows ``rows`` of the coefficient arrays of ``co`` (``Rs`` ... ``tp_n``).

    Parameters
    ----------
    co : object with (N,) arrays ``Rs, Rp, Ts, Tp`` (float) and ``rs_n, rp_n, ts_n,
        tp_n`` (complex), filled in place.
    rows : (m,) int
        Rays to fill.
    n1 : (N,) float or complex [1]
        Index of the medium of incidence (real part used).
    n2 : (N,) complex [1]
        Index beyond the face.
    cos1 : (N,) float [1]
        Cosine of the angle of incidence.
    kind : (m,) int
        :data:`BARE`, :data:`IDEAL`, :data:`PARTIAL_MIRROR` or :data:`PERFECT_MIRROR`.
    reflectance : (m,) float [1]
        Reflectance of ideal coatings and partial mirrors (ignored otherwise).
    """
    _simple(np.ascontiguousarray(np.real(n1), dtype=np.float64),
            np.ascontiguousarray(n2, dtype=np.complex128),
            np.ascontiguousarray(cos1, dtype=np.float64),
            np.ascontiguousarray(kind, dtype=np.int64),
            np.ascontiguousarray(reflectance, dtype=np.float64),
            np.ascontiguousarray(rows, dtype=np.int64),
            co.Rs, co.Rp, co.Ts, co.Tp, co.rs_n, co.rp_n, co.ts_n, co.tp_n)
