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
from .interface_kernel import field_column
from .jit import njit

__all__ = ["assemble"]


@njit
def _assemble(ii, pos, t_origin, r_dir, t_dir, s, a_s, a_p, r_amp_s, r_amp_p, t_amp_s, t_amp_p,
              wavelength, wl_index, medium, root, opl, fi, t_medium, t_face, ev,
              kl_r, node_r, pow_r, gain_r, kl_t, node_t, pow_t, gain_t, use_gain,
              o_origin, o_dir, o_wl, o_wli, o_field, o_power, o_medium, o_node, o_events,
              o_last, o_root, o_opl):
    nr = kl_r.shape[0]
    for o in range(nr + kl_t.shape[0]):
        reflected = o < nr
        m = o if reflected else o - nr
        # the child's own quantities (scalars: no array views per ray)
        if reflected:
            i = kl_r[m]
            x0, x1, x2 = pos[i, 0], pos[i, 1], pos[i, 2]
            d0, d1, d2 = r_dir[i, 0], r_dir[i, 1], r_dir[i, 2]
            amp_s, amp_p, pw, node = r_amp_s[i], r_amp_p[i], pow_r[m], node_r[m]
            g = gain_r[i] if use_gain else 1.0
            med, last = medium[ii[i]], fi[i]
        else:
            i = kl_t[m]
            x0, x1, x2 = t_origin[i, 0], t_origin[i, 1], t_origin[i, 2]
            d0, d1, d2 = t_dir[i, 0], t_dir[i, 1], t_dir[i, 2]
            amp_s, amp_p, pw, node = t_amp_s[i], t_amp_p[i], pow_t[m], node_t[m]
            g = gain_t[i] if use_gain else 1.0
            med, last = t_medium[i], t_face[i]
        j = ii[i]
        o_origin[o, 0] = x0
        o_origin[o, 1] = x1
        o_origin[o, 2] = x2
        o_dir[o, 0] = d0
        o_dir[o, 1] = d1
        o_dir[o, 2] = d2
        s0 = s[i, 0]
        s1 = s[i, 1]
        s2 = s[i, 2]
        p0 = d1 * s2 - d2 * s1  # p_out = d x s
        p1 = d2 * s0 - d0 * s2
        p2 = d0 * s1 - d1 * s0
        for col in range(2):
            e0, e1, e2 = field_column(s0, s1, s2, p0, p1, p2, amp_s, amp_p, a_s[i, col],
                                      a_p[i, col], g, use_gain)
            o_field[o, 0, col] = e0
            o_field[o, 1, col] = e1
            o_field[o, 2, col] = e2
        o_wl[o] = wavelength[j]
        o_wli[o] = wl_index[j]
        o_power[o] = pw
        o_medium[o] = med
        o_node[o] = node
        o_events[o] = ev[i]
        o_last[o] = last
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
    out.stream = np.concatenate([b.stream[ii[kl_r]], b.stream[ii[kl_t]]])
    return out
