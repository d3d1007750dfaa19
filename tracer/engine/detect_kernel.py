"""Compiled polarisation of detector hits: Jones matrix, Stokes vector and Mueller matrix.

The compiled twin of what :meth:`tracer.engine.tree.Recorder.detect` computes with
:func:`tracer.polarization.detector_jones`, :func:`tracer.polarization.coherency_to_stokes`
and :func:`tracer.polarization.mueller_from_jones` (the reference, used when
:func:`tracer.engine.jit.compiled` is false), one hit at a time:

* the ray's right-handed transverse frame ``x' = x_axis`` made transverse to ``k``
  (the world axis least aligned with ``k`` where ``x_axis`` is parallel to it),
  ``y' = k x x'`` (right-handed about the propagation direction, whichever side of the
  detector the ray comes from: free space is the identity);
* ``Jones[a, k] = out_a . M[:, k]``, the coherency ``J C J^H`` with the source
  coherency ``C``, the Stokes vector ``(Jxx + Jyy, Jxx - Jyy, 2 Re Jxy, 2 Im Jxy)`` and
  the Mueller matrix ``Re(A (T kron T*) A^-1)`` (our Stokes convention,
  :mod:`tracer.polarization.jones`).

``tests/test_detect_kernel.py`` compares it with those functions.
"""

from __future__ import annotations

import math

import numpy as np

from .. import polarization as pol
from ..polarization.jones import _A, _A_INV
from ..tolerances import NORMAL_INCIDENCE_SIN
from .interface_kernel import perpendicular
from .jit import njit

__all__ = ["hit_polarization", "hit_polarization_reference"]


def hit_polarization_reference(field, direction, x_axis, coherency):
    """The numpy reference of :func:`hit_polarization` (per-hit ``x_axis`` and
    ``coherency``): the same three arrays from :mod:`tracer.polarization`."""
    jones = pol.detector_jones(field, x_axis, directions=direction)
    coh = jones @ coherency @ np.conj(np.swapaxes(jones, -1, -2))
    stokes = pol.coherency_to_stokes(coh)
    mueller = pol.mueller_from_jones(jones)
    return jones, stokes, mueller.reshape(len(jones), 16)


@njit
def _hits(field, direction, det, det_x, coherency, root, A, A_inv, jones, stokes, mueller):
    K = np.empty((4, 4), dtype=np.complex128)
    AK = np.empty((4, 4), dtype=np.complex128)
    for n in range(field.shape[0]):
        d = det[n]
        k0 = direction[n, 0]
        k1 = direction[n, 1]
        k2 = direction[n, 2]
        kn = math.sqrt(k0 * k0 + k1 * k1 + k2 * k2)
        k0 /= kn
        k1 /= kn
        k2 /= kn
        r0 = det_x[d, 0]
        r1 = det_x[d, 1]
        r2 = det_x[d, 2]
        c = r0 * k0 + r1 * k1 + r2 * k2
        x0 = r0 - c * k0
        x1 = r1 - c * k1
        x2 = r2 - c * k2
        nx = math.sqrt(x0 * x0 + x1 * x1 + x2 * x2)
        nref = math.sqrt(r0 * r0 + r1 * r1 + r2 * r2)
        if nx <= NORMAL_INCIDENCE_SIN * max(nref, 1e-300):
            # x_axis along k: the fallback of tracer.polarization.transverse_frame
            x0, x1, x2 = perpendicular(k0, k1, k2)
            nx = math.sqrt(x0 * x0 + x1 * x1 + x2 * x2)
        x0 /= nx
        x1 /= nx
        x2 /= nx
        y0 = k1 * x2 - k2 * x1
        y1 = k2 * x0 - k0 * x2
        y2 = k0 * x1 - k1 * x0
        # Jones matrix in (x', y')
        for col in range(2):
            f0 = field[n, 0, col]
            f1 = field[n, 1, col]
            f2 = field[n, 2, col]
            jones[n, 0, col] = x0 * f0 + x1 * f1 + x2 * f2
            jones[n, 1, col] = y0 * f0 + y1 * f1 + y2 * f2
        # coherency J C J^H
        r = root[n]
        T00 = jones[n, 0, 0]
        T01 = jones[n, 0, 1]
        T10 = jones[n, 1, 0]
        T11 = jones[n, 1, 1]
        C00 = coherency[r, 0, 0]
        C01 = coherency[r, 0, 1]
        C10 = coherency[r, 1, 0]
        C11 = coherency[r, 1, 1]
        a00 = T00 * C00 + T01 * C10
        a01 = T00 * C01 + T01 * C11
        a10 = T10 * C00 + T11 * C10
        a11 = T10 * C01 + T11 * C11
        jxx = (a00 * T00.conjugate() + a01 * T01.conjugate()).real
        jyy = (a10 * T10.conjugate() + a11 * T11.conjugate()).real
        jxy = a00 * T10.conjugate() + a01 * T11.conjugate()
        stokes[n, 0] = jxx + jyy
        stokes[n, 1] = jxx - jyy
        stokes[n, 2] = 2.0 * jxy.real
        stokes[n, 3] = 2.0 * jxy.imag
        # Mueller matrix Re(A (T kron T*) A^-1)
        for i in range(2):
            for j in range(2):
                for kk in range(2):
                    for ll in range(2):
                        K[2 * i + j, 2 * kk + ll] = (jones[n, i, kk]
                                                     * jones[n, j, ll].conjugate())
        for a in range(4):
            for b in range(4):
                acc = 0j
                for q in range(4):
                    acc += A[a, q] * K[q, b]
                AK[a, b] = acc
        for a in range(4):
            for b in range(4):
                acc = 0j
                for q in range(4):
                    acc += AK[a, q] * A_inv[q, b]
                mueller[n, 4 * a + b] = acc.real


def hit_polarization(field, direction, det, det_x, coherency, root):
    """Jones (n, 2, 2), Stokes (n, 4) and Mueller (n, 16) of detector hits.

    Parameters
    ----------
    field : (n, 3, 2) complex [sqrt(W)]
        Field matrices of the hits.
    direction : (n, 3) float [1]
    det : (n,) int
        Plane detector of each hit (rows of ``det_x``).
    det_x : (D, 3) float [1]
        Detector x axes.
    coherency : (M, 2, 2) complex
        Source coherency table; hit ``i`` uses row ``root[i]``.
    root : (n,) int

    Returns
    -------
    jones, stokes, mueller
        See the module docstring; Stokes in watts (the hits' powers), Mueller of the
        field matrix (power-normalised amplitudes).
    """
    n = len(det)
    jones = np.empty((n, 2, 2), dtype=complex)
    stokes = np.empty((n, 4))
    mueller = np.empty((n, 16))
    c = np.ascontiguousarray
    _hits(c(field, dtype=np.complex128), c(direction, dtype=np.float64), c(det, dtype=np.int64),
          c(det_x, dtype=np.float64), c(coherency, dtype=np.complex128),
          c(root, dtype=np.int64), _A, _A_INV, jones, stokes, mueller)
    return jones, stokes, mueller
