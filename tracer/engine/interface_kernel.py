"""Compiled per-ray loops of the interface event (:mod:`tracer.engine.interact`).

Three kernels, each the fused equivalent of a group of numpy passes in
:mod:`tracer.engine.interact` (the reference, used when :func:`tracer.engine.jit.compiled`
is false):

* :func:`frame` -- the normal facing the second medium, ``cos(theta_1)`` and the s unit
  vector (``normalise(k x n)``, at normal incidence the fixed choice of
  :func:`tracer.polarization.sp_basis`);
* :func:`waves` -- reflected and refracted directions (vector Snell law), the field's
  s and p amplitudes, their powers through the source coherency and the children's
  powers from the coefficients;
* :func:`child_fields` -- field matrices ``s (amp_s a_s) + p_out (amp_p a_p)`` of the
  children that survive.

Every expression follows the reference's order of floating-point operations; the
kernels are compiled without fast-math, so the two paths agree to the last bit on
the same machine (``tests/test_interface_kernel.py`` checks it).
"""

from __future__ import annotations

import math

import numpy as np

from ..tolerances import NORMAL_INCIDENCE_SIN
from .jit import njit

__all__ = ["frame", "waves", "child_fields", "field_column", "perpendicular"]


@njit
def perpendicular(k0, k1, k2):
    """``k x e`` (not normalised), ``e`` the world axis least aligned with ``k`` (lowest
    index on ties): the fallback of :func:`tracer.polarization.sp_basis` and
    :func:`tracer.polarization.transverse_frame`, on scalars."""
    ax = 0
    m = abs(k0)
    if abs(k1) < m:
        ax = 1
        m = abs(k1)
    if abs(k2) < m:
        ax = 2
    e0 = 1.0 if ax == 0 else 0.0
    e1 = 1.0 if ax == 1 else 0.0
    e2 = 1.0 if ax == 2 else 0.0
    return k1 * e2 - k2 * e1, k2 * e0 - k0 * e2, k0 * e1 - k1 * e0


@njit
def _frame(k, face_normal, face, inside, nhat, cos1, s):
    for i in range(k.shape[0]):
        f = face[i]
        sg = 1.0 if inside[i] else -1.0
        n0 = face_normal[f, 0] * sg
        n1 = face_normal[f, 1] * sg
        n2 = face_normal[f, 2] * sg
        nhat[i, 0] = n0
        nhat[i, 1] = n1
        nhat[i, 2] = n2
        kx = k[i, 0]
        ky = k[i, 1]
        kz = k[i, 2]
        c = kx * n0 + ky * n1 + kz * n2
        cos1[i] = min(max(c, 0.0), 1.0)
        s0 = ky * n2 - kz * n1
        s1 = kz * n0 - kx * n2
        s2 = kx * n1 - ky * n0
        ns = math.sqrt(s0 * s0 + s1 * s1 + s2 * s2)
        kn = math.sqrt(kx * kx + ky * ky + kz * kz)
        scale = kn * math.sqrt(n0 * n0 + n1 * n1 + n2 * n2)
        if ns < NORMAL_INCIDENCE_SIN * scale:
            # normal incidence: the fixed choice of tracer.polarization.sp_basis
            s0, s1, s2 = perpendicular(kx, ky, kz)
            ns = math.sqrt(s0 * s0 + s1 * s1 + s2 * s2)
        s[i, 0] = s0 / ns
        s[i, 1] = s1 / ns
        s[i, 2] = s2 / ns


def frame(k, face_normal, face, inside):
    """Normal into the second medium, ``cos(theta_1)`` and the s vector of each ray.

    Parameters
    ----------
    k : (N, 3) float [1]
        Unit incident directions.
    face_normal : (F, 3) float [1]
        Outward unit normals of all faces.
    face : (N,) int
        Face each ray meets.
    inside : (N,) bool
        The ray travels inside the face's solid (the normal is used as is), else it
        is flipped.

    Returns
    -------
    nhat : (N, 3) float [1]
    cos1 : (N,) float [1]
        ``k . nhat`` clipped to [0, 1].
    s : (N, 3) float [1]
        ``normalise(k x nhat)``, or at normal incidence ``normalise(k x e)`` with ``e``
        the world axis least aligned with ``k``.
    """
    n = len(face)
    nhat = np.empty((n, 3))
    cos1 = np.empty(n)
    s = np.empty((n, 3))
    _frame(np.ascontiguousarray(k, dtype=np.float64), face_normal,
           np.ascontiguousarray(face, dtype=np.int64), np.ascontiguousarray(inside), nhat,
           cos1, s)
    return nhat, cos1, s


@njit
def _waves(k, nhat, cos1, ratio, s, field, coherency, root, Rs, Rp, Ts, Tp, power,
           r_dir, t_dir, prop, a_s, a_p, r_power, t_power, t_exists, absorbed):
    for i in range(k.shape[0]):
        kx = k[i, 0]
        ky = k[i, 1]
        kz = k[i, 2]
        n0 = nhat[i, 0]
        n1 = nhat[i, 1]
        n2 = nhat[i, 2]
        c1 = cos1[i]
        # reflected: k - 2 cos1 n
        c = 2.0 * c1
        r_dir[i, 0] = kx - c * n0
        r_dir[i, 1] = ky - c * n1
        r_dir[i, 2] = kz - c * n2
        # refracted: (n1/n2)(k - cos1 n) + cos2 n, normalised
        q = ratio[i]
        sin2 = (q * q) * ((1.0 - c1) * (1.0 + c1))
        ok = sin2 <= 1.0
        prop[i] = ok
        c2 = math.sqrt(max(1.0 - sin2, 0.0))
        t0 = q * (kx - c1 * n0) + c2 * n0
        t1 = q * (ky - c1 * n1) + c2 * n1
        t2 = q * (kz - c1 * n2) + c2 * n2
        tn = math.sqrt(t0 * t0 + t1 * t1 + t2 * t2)
        t_dir[i, 0] = t0 / tn
        t_dir[i, 1] = t1 / tn
        t_dir[i, 2] = t2 / tn
        # p_in = (k / |k|) x s
        kn = math.sqrt(kx * kx + ky * ky + kz * kz)
        u0 = kx / kn
        u1 = ky / kn
        u2 = kz / kn
        s0 = s[i, 0]
        s1 = s[i, 1]
        s2 = s[i, 2]
        p0 = u1 * s2 - u2 * s1
        p1 = u2 * s0 - u0 * s2
        p2 = u0 * s1 - u1 * s0
        # s and p amplitudes of both field columns
        for col in range(2):
            f0 = field[i, 0, col]
            f1 = field[i, 1, col]
            f2 = field[i, 2, col]
            a_s[i, col] = complex(s0 * f0.real + s1 * f1.real + s2 * f2.real,
                                  s0 * f0.imag + s1 * f1.imag + s2 * f2.imag)
            a_p[i, col] = complex(p0 * f0.real + p1 * f1.real + p2 * f2.real,
                                  p0 * f0.imag + p1 * f1.imag + p2 * f2.imag)
        r = root[i]
        J00 = coherency[r, 0, 0].real
        J11 = coherency[r, 1, 1].real
        J01 = coherency[r, 0, 1]
        Ps = _jpower(a_s[i, 0], a_s[i, 1], J00, J11, J01)
        Pp = _jpower(a_p[i, 0], a_p[i, 1], J00, J11, J01)
        rp = Rs[i] * Ps + Rp[i] * Pp
        tp = Ts[i] * Ps + Tp[i] * Pp
        te = ok and (Ts[i] > 0 or Tp[i] > 0)
        t_exists[i] = te
        if not te:
            tp = 0.0
        r_power[i] = rp
        t_power[i] = tp
        absorbed[i] = power[i] - rp - tp


@njit
def _jpower(a0, a1, J00, J11, J01):
    # Re(a J a^H), as the reference: J00 |a0|^2 + J11 |a1|^2 + 2 Re((a0 J01) conj(a1))
    x = a0 * J01
    cross = x.real * a1.real + x.imag * a1.imag  # Re(x conj(a1))
    return (J00 * (a0.real * a0.real + a0.imag * a0.imag)
            + J11 * (a1.real * a1.real + a1.imag * a1.imag) + 2.0 * cross)


def waves(k, nhat, cos1, ratio, s, field, coherency, root, Rs, Rp, Ts, Tp, power):
    """Child directions, field amplitudes and powers of rays meeting an interface.

    Parameters
    ----------
    k, nhat : (N, 3) float [1]
        Incident direction and the unit normal into the second medium.
    cos1, ratio : (N,) float [1]
        ``k . nhat`` and ``Re(n1) / Re(n2)``.
    s : (N, 3) float [1]
        Unit s vector.
    field : (N, 3, 2) complex [sqrt(W)]
        Field matrices of the incident rays.
    coherency : (M, 2, 2) complex
        Source coherency table; ray ``i`` uses row ``root[i]``.
    root : (N,) int
    Rs, Rp, Ts, Tp : (N,) float [1]
        Power coefficients.
    power : (N,) float [W]

    Returns
    -------
    dict of arrays: ``r_dir``, ``t_dir`` (N, 3); ``prop`` (refracted wave exists),
    ``t_exists`` (and carries power); ``a_s``, ``a_p`` (N, 2) complex [sqrt(W)];
    ``r_power``, ``t_power``, ``absorbed`` (N,) [W].
    """
    n = len(cos1)
    out = dict(r_dir=np.empty((n, 3)), t_dir=np.empty((n, 3)), prop=np.empty(n, np.bool_),
               a_s=np.empty((n, 2), complex), a_p=np.empty((n, 2), complex),
               r_power=np.empty(n), t_power=np.empty(n), t_exists=np.empty(n, np.bool_),
               absorbed=np.empty(n))
    f64 = np.float64
    _waves(np.ascontiguousarray(k, dtype=f64), nhat, cos1, np.ascontiguousarray(ratio, dtype=f64),
           s, np.ascontiguousarray(field, dtype=np.complex128),
           np.ascontiguousarray(coherency, dtype=np.complex128),
           np.ascontiguousarray(root, dtype=np.int64),
           *(np.ascontiguousarray(a, dtype=f64) for a in (Rs, Rp, Ts, Tp, power)),
           out["r_dir"], out["t_dir"], out["prop"], out["a_s"], out["a_p"], out["r_power"],
           out["t_power"], out["t_exists"], out["absorbed"])
    return out


@njit
def field_column(s0, s1, s2, p0, p1, p2, amp_s, amp_p, a_s, a_p, g, use_gain):
    """One field-matrix column ``s (amp_s a_s) + p (amp_p a_p)`` times a real gain.

    Scalars only: array arguments to a helper cost reference counting per call.
    """
    cs = amp_s * a_s
    cp = amp_p * a_p
    e0 = complex(s0 * cs.real + p0 * cp.real, s0 * cs.imag + p0 * cp.imag)
    e1 = complex(s1 * cs.real + p1 * cp.real, s1 * cs.imag + p1 * cp.imag)
    e2 = complex(s2 * cs.real + p2 * cp.real, s2 * cs.imag + p2 * cp.imag)
    if use_gain:
        e0 = complex(e0.real * g, e0.imag * g)
        e1 = complex(e1.real * g, e1.imag * g)
        e2 = complex(e2.real * g, e2.imag * g)
    return e0, e1, e2


@njit
def _child_fields(s, d, a_s, a_p, amp_s, amp_p, index, out):
    for m in range(index.shape[0]):
        i = index[m]
        s0 = s[i, 0]
        s1 = s[i, 1]
        s2 = s[i, 2]
        d0 = d[i, 0]
        d1 = d[i, 1]
        d2 = d[i, 2]
        # p_out = d x s
        p0 = d1 * s2 - d2 * s1
        p1 = d2 * s0 - d0 * s2
        p2 = d0 * s1 - d1 * s0
        for col in range(2):
            e0, e1, e2 = field_column(s0, s1, s2, p0, p1, p2, amp_s[i], amp_p[i], a_s[i, col],
                                      a_p[i, col], 1.0, False)
            out[m, 0, col] = e0
            out[m, 1, col] = e1
            out[m, 2, col] = e2


def child_fields(s, d, a_s, a_p, amp_s, amp_p, index):
    """Field matrices (m, 3, 2) of the children at ``index``.

    Parameters
    ----------
    s, d : (N, 3) float [1]
        s vector and the child's direction (its p vector is ``d x s``).
    a_s, a_p : (N, 2) complex [sqrt(W)]
        Incident s and p amplitudes of both field columns.
    amp_s, amp_p : (N,) complex [1]
        Power-normalised interface amplitudes of the child.
    index : (m,) int
        Rows to build.
    """
    index = np.ascontiguousarray(index, dtype=np.int64)
    out = np.empty((len(index), 3, 2), dtype=complex)
    _child_fields(s, np.ascontiguousarray(d), a_s, a_p, np.ascontiguousarray(amp_s),
                  np.ascontiguousarray(amp_p), index, out)
    return out
