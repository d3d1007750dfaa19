"""Compiled assembly of the next ray batch from an interface event.

The event loop keeps, for each parent ray that met an interface, its reflected and
its transmitted child where they survive the power threshold and the event cap.
:func:`assemble` writes the surviving children of both kinds (reflected first, then
transmitted, as the numpy reference in :mod:`tracer.engine.tree` concatenates them)
straight into one new :class:`~tracer.engine.batch.RayBatch`, building each child's
field matrix on the way (the construction of
:func:`tracer.engine.interface_kernel.child_fields`), instead of gathering every
quantity per child kind and concatenating.
"""

from __future__ import annotations

import numpy as np

from .batch import RayBatch
from .jit import njit

__all__ = ["assemble"]


@njit
def _column(s0, s1, s2, p0, p1, p2, amp_s, amp_p, a_s, a_p, g, use_gain):
    # scalars only: array arguments to a helper cost reference counting per call
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
def _assemble(ii, pos, t_origin, r_dir, t_dir, s, a_s, a_p, r_amp_s, r_amp_p, t_amp_s, t_amp_p,
              wavelength, wl_index, medium, root, opl, fi, t_medium, t_face, ev,
              kl_r, node_r, pow_r, gain_r, kl_t, node_t, pow_t, gain_t, use_gain,
              o_origin, o_dir, o_wl, o_wli, o_field, o_power, o_medium, o_node, o_events,
              o_last, o_root, o_opl):
    nr = kl_r.shape[0]
    for m in range(nr):
        i = kl_r[m]
        j = ii[i]
        for a in range(3):
            o_origin[m, a] = pos[i, a]
            o_dir[m, a] = r_dir[i, a]
        g = gain_r[i] if use_gain else 1.0
        s0 = s[i, 0]
        s1 = s[i, 1]
        s2 = s[i, 2]
        d0 = r_dir[i, 0]
        d1 = r_dir[i, 1]
        d2 = r_dir[i, 2]
        p0 = d1 * s2 - d2 * s1  # p_out = d x s
        p1 = d2 * s0 - d0 * s2
        p2 = d0 * s1 - d1 * s0
        for col in range(2):
            e0, e1, e2 = _column(s0, s1, s2, p0, p1, p2, r_amp_s[i], r_amp_p[i],
                                 a_s[i, col], a_p[i, col], g, use_gain)
            o_field[m, 0, col] = e0
            o_field[m, 1, col] = e1
            o_field[m, 2, col] = e2
        o_wl[m] = wavelength[j]
        o_wli[m] = wl_index[j]
        o_power[m] = pow_r[m]
        o_medium[m] = medium[j]
        o_node[m] = node_r[m]
        o_events[m] = ev[i]
        o_last[m] = fi[i]
        o_root[m] = root[j]
        o_opl[m] = opl[j]
    for m in range(kl_t.shape[0]):
        i = kl_t[m]
        j = ii[i]
        o = nr + m
        for a in range(3):
            o_origin[o, a] = t_origin[i, a]
            o_dir[o, a] = t_dir[i, a]
        g = gain_t[i] if use_gain else 1.0
        s0 = s[i, 0]
        s1 = s[i, 1]
        s2 = s[i, 2]
        d0 = t_dir[i, 0]
        d1 = t_dir[i, 1]
        d2 = t_dir[i, 2]
        p0 = d1 * s2 - d2 * s1  # p_out = d x s
        p1 = d2 * s0 - d0 * s2
        p2 = d0 * s1 - d1 * s0
        for col in range(2):
            e0, e1, e2 = _column(s0, s1, s2, p0, p1, p2, t_amp_s[i], t_amp_p[i],
                                 a_s[i, col], a_p[i, col], g, use_gain)
            o_field[o, 0, col] = e0
            o_field[o, 1, col] = e1
            o_field[o, 2, col] = e2
        o_wl[o] = wavelength[j]
        o_wli[o] = wl_index[j]
        o_power[o] = pow_t[m]
        o_medium[o] = t_medium[i]
        o_node[o] = node_t[m]
        o_events[o] = ev[i]
        o_last[o] = t_face[i]
        o_root[o] = root[j]
        o_opl[o] = opl[j]


_NONE_I = np.zeros(0, dtype=np.int64)
_NONE_F = np.zeros(0)


def assemble(b, ii, fi, pos, sp, ev, reflected, transmitted, gains=None):
    """The next batch: surviving reflected then transmitted children.

    Parameters
    ----------
    b : RayBatch
        The parents' batch.
    ii : (M,) int
        Rays of ``b`` that met an interface (the rows of the split ``sp``).
    fi : (M,) int
        The face each of them met.
    pos : (M, 3) float [m]
        Hit points of the rays ``ii`` (the reflected children start there).
    sp : tracer.engine.interact.Split
    ev : (M,) int
        Event count of the children.
    reflected, transmitted : tuple (kl, node, power) or None
        Split rows of the surviving children, their path-tree nodes and powers [W].
    gains : (r_gain, t_gain) of (M,) float, optional
        Amplitude gains of the children (Monte Carlo mode).
    """
    kl_r, node_r, pow_r = reflected if reflected is not None else (_NONE_I, _NONE_I, _NONE_F)
    kl_t, node_t, pow_t = transmitted if transmitted is not None else (_NONE_I, _NONE_I, _NONE_F)
    n = len(kl_r) + len(kl_t)
    out = RayBatch(origin=np.empty((n, 3)), direction=np.empty((n, 3)), wavelength=np.empty(n),
                   wl_index=np.empty(n, dtype=np.int64), field=np.empty((n, 3, 2), complex),
                   power=np.empty(n), medium=np.empty(n, dtype=np.int64),
                   node=np.empty(n, dtype=np.int64), events=np.empty(n, dtype=np.int64),
                   last_face=np.empty(n, dtype=np.int64), root=np.empty(n, dtype=np.int64),
                   opl=np.empty(n))
    use_gain = gains is not None
    g_r, g_t = gains if use_gain else (_NONE_F, _NONE_F)
    i64 = np.int64
    c = np.ascontiguousarray
    _assemble(c(ii, dtype=i64), c(pos), c(sp.t_origin), c(sp.r_dir), c(sp.t_dir), c(sp.s),
              c(sp.a_s), c(sp.a_p), c(sp.r_amp[0]), c(sp.r_amp[1]), c(sp.t_amp[0]),
              c(sp.t_amp[1]), c(b.wavelength), c(b.wl_index, dtype=i64), c(b.medium, dtype=i64),
              c(b.root, dtype=i64), c(b.opl), c(fi, dtype=i64), c(sp.t_medium, dtype=i64),
              c(sp.t_face, dtype=i64), c(ev, dtype=i64),
              c(kl_r, dtype=i64), c(node_r, dtype=i64), c(pow_r, dtype=np.float64), c(g_r),
              c(kl_t, dtype=i64), c(node_t, dtype=i64), c(pow_t, dtype=np.float64), c(g_t),
              use_gain, out.origin, out.direction, out.wavelength, out.wl_index, out.field,
              out.power, out.medium, out.node, out.events, out.last_face, out.root, out.opl)
    return out
