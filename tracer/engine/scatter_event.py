"""Scatter events in the event loop: share a face's power, sample scattered children.

Called by :meth:`tracer.engine.tree._Tracer.step` for the rays that meet a face with a
scatter treatment (``CompiledScene.face_scatter``), after the specular split:

1. the model's :meth:`partition` scales the specular children (``keep_r``, ``keep_t``) and
   gives the scattered fractions of the parent's power per hemisphere; the face's absorbed
   power becomes parent minus specular children minus scattered power;
2. the scattered power ``P_s`` is booked where it happens (``Ledger.book_scattered``);
3. tree mode: ``scatter_rays`` directions per scattering ray and hemisphere while the path
   has fewer than ``scatter_depth`` scatter events, else one; of them the share
   ``target_share`` is aimed at the scatter targets. Each direction's weight is
   ``P_s p(w) / (n_m q(w) + n_t p_t(w))`` (balance heuristic: ``p`` the model's density,
   ``q`` the density it samples from, ``p_t`` the targets' density, ``n_m``/``n_t`` the
   numbers of model and aimed directions), unbiased for any share. Their sum differs from
   ``P_s`` by sampling noise: the difference is booked in its own account
   (``Ledger.SAMPLING``), so the ledger closes exactly;
4. Monte Carlo mode: the ray becomes one scattered child with probability ``P_s / P``
   (within the event's "absorbed" branch, :func:`mc_scatter`), carrying the parent's power.

Each direction is carried by a pair of rays with orthogonal polarisations
(:mod:`tracer.scatter.fields`), so unpolarised scatter stays unpolarised downstream. Random
numbers come from a hash of (seed, source, ray, sample stream), so results do not depend on
batch size or worker count.
"""

from __future__ import annotations

import numpy as np

from ..scatter import REFLECT_SIDE, TRANSMIT_SIDE
from ..scatter.fields import scattered_pair
from ..tolerances import SMOOTH_SURFACE_TIS_MAX
from .batch import RayBatch
from .compile import EngineError
from .montecarlo import _G, _M1, _mix, uniforms
from .paths import SCATTER_R, SCATTER_T

__all__ = ["ScatterShares", "shares", "children", "mc_scatter", "SCATTER_PURPOSE"]

#: Base of the purposes (hash salts) of scatter random numbers.
SCATTER_PURPOSE = 64


class ScatterShares:
    """Per-row results of :func:`shares` for the rows ``rows`` of a split."""

    def __init__(self, rows, power_r, power_t, frames, n1, n2, model_index):
        self.rows = rows
        self.power = (power_r, power_t)  # scattered power per hemisphere [W]
        self.frames = frames  # (e1, e2, m_r, sin_i) per row
        self.n1, self.n2 = n1, n2
        self.model_index = model_index


def _unit_rows(v):
    n = np.linalg.norm(v, axis=1)
    return v / np.where(n > 0, n, 1.0)[:, None], n


def _frames(k, normal):
    """Local frame of each scatter event: ``e1`` (tangential, towards the specular ray),
    ``e2 = m x e1`` and ``m`` the reflection hemisphere's normal; ``sin_i``."""
    c = (k * normal).sum(axis=1)
    m = -np.sign(np.where(c == 0, 1.0, c))[:, None] * normal  # towards the incident side
    tang = k - (k * m).sum(axis=1)[:, None] * m
    e1, sin_i = _unit_rows(tang)
    flat = sin_i < 1e-12
    if flat.any():  # normal incidence: any tangent
        alt = np.where(np.abs(m[flat, 0:1]) < 0.9, [[1.0, 0.0, 0.0]], [[0.0, 1.0, 0.0]])
        alt = alt - (alt * m[flat]).sum(axis=1)[:, None] * m[flat]
        e1[flat] = _unit_rows(alt)[0]
    e2 = np.cross(m, e1)
    return e1, e2, m, np.clip(sin_i, 0.0, 1.0)


def shares(tr, sp, rows_all, *, direction, face, medium, wl_index, wavelength, parent_p):
    """Apply the scatter models to the split ``sp`` in place (step 1 of the module
    docstring) and return :class:`ScatterShares`, or ``None`` when no row scatters.

    ``rows_all`` are the split rows; arrays are over them.
    """
    cs = tr.cs
    model_of = cs.face_scatter[face]
    rows = np.nonzero(model_of >= 0)[0]
    if not rows.size:
        return None
    k, f = direction[rows], face[rows]
    normal = cs.face_normal[f]
    e1, e2, m, sin_i = _frames(k, normal)
    cos_i = np.sqrt(np.clip(1.0 - sin_i * sin_i, 0.0, None))
    med = medium[rows]
    solid = cs.face_solid[f]
    other = np.where(med == solid, -1, solid)
    wl = wavelength[rows]
    n1 = tr.ntab[med + 1, wl_index[rows]].real
    n2 = tr.ntab[other + 1, wl_index[rows]].real
    p = parent_p[rows]
    with np.errstate(divide="ignore", invalid="ignore"):
        r_spec = np.where(p > 0, sp.r_power[rows] / p, 0.0)
        t_spec = np.where(p > 0, sp.t_power[rows] * sp.t_exists[rows] / p, 0.0)
    cos_t = np.where(sp.t_exists[rows], np.abs((sp.t_dir[rows] * m).sum(axis=1)), 0.0)
    keep_r, keep_t = np.ones(len(rows)), np.ones(len(rows))
    f_r, f_t = np.zeros(len(rows)), np.zeros(len(rows))
    mi = model_of[rows]
    for j in np.unique(mi):
        sel = mi == j
        model = cs.scatter_models[j]
        if hasattr(model, "smooth_limit_tis"):
            tis = model.smooth_limit_tis(wavelength=wl[sel], n1=np.maximum(n1[sel], n2[sel]))
            if np.max(tis) > SMOOTH_SURFACE_TIS_MAX:
                raise EngineError(
                    f"coatings.{cs.scatter_names[j]}.rms_roughness: too rough for the "
                    f"smooth-surface scatter model at these wavelengths and indices "
                    f"((4 pi sigma n / lambda)^2 = {np.max(tis):.3g} > {SMOOTH_SURFACE_TIS_MAX:g}); "
                    "use a lambertian or a measured bsdf-table treatment for ground faces")
        part = model.partition(cos_i=cos_i[sel], wavelength=wl[sel], n1=n1[sel], n2=n2[sel],
                               r_spec=r_spec[sel], t_spec=t_spec[sel], cos_t=cos_t[sel])
        keep_r[sel], keep_t[sel] = part.keep_r, part.keep_t
        f_r[sel], f_t[sel] = part.scatter_r, part.scatter_t
    # no scatter into a hemisphere the light cannot enter: transmission needs a medium on the
    # far side (an opaque black face has none; TIR keeps the transmitted scatter at zero
    # through t_spec for the rough model)
    ps_r, ps_t = f_r * p, f_t * p
    # specular children: powers and amplitudes scaled (copies: the split's arrays may be shared)
    sp.r_power = sp.r_power.copy()
    sp.t_power = sp.t_power.copy()
    sp.r_power[rows] *= keep_r
    sp.t_power[rows] *= keep_t
    sr, st = np.sqrt(keep_r), np.sqrt(keep_t)
    sp.r_amp = tuple(_scaled(a, rows, sr) for a in sp.r_amp)
    sp.t_amp = tuple(_scaled(a, rows, st) for a in sp.t_amp)
    sp.absorbed = sp.absorbed.copy()
    sp.absorbed[rows] = p - sp.r_power[rows] - sp.t_power[rows] * sp.t_exists[rows] - ps_r - ps_t
    return ScatterShares(rows, ps_r, ps_t, (e1, e2, m, sin_i), n1, n2, mi)


def _scaled(a, rows, factor):
    a = np.array(a, copy=True)
    a[rows] = a[rows] * factor
    return a


def _stream(parent_stream, event, sample, side, face):
    """Hash of a scattered child's origin: its random stream key (non-zero)."""
    with np.errstate(over="ignore"):
        z = _mix(np.asarray(parent_stream, dtype=np.uint64) + _G)
        z = _mix(z ^ (np.asarray(event, dtype=np.uint64) * _M1))
        z = _mix(z ^ (np.asarray(sample, dtype=np.uint64) * _G + np.uint64(side)))
        z = _mix(z ^ np.asarray(face, dtype=np.uint64))
    return (z >> np.uint64(2)).astype(np.int64) | np.int64(1)


def _draws(tr, src, ray_id, stream):
    """``draw(k)``: the k-th uniform of every sample (a hash of its stream)."""
    key = np.asarray(ray_id, dtype=np.int64) ^ stream

    def draw(k):
        return uniforms(tr.opts.seed, src, key, np.zeros(len(key), dtype=np.int64),
                        SCATTER_PURPOSE + k)
    return draw


def children(tr, b, table, sc: ScatterShares, *, idx, face, pos, ev, src, parent_nodes):
    """Tree-mode scattered children of the rows of ``sc`` (steps 2-3 of the module
    docstring): a list of :class:`RayBatch` after threshold and event-cap tests, with
    every watt booked."""
    cs, led, tree, opts = tr.cs, tr.ledger, tr.tree, tr.opts
    out = []
    rows = sc.rows
    e1, e2, m, sin_i = sc.frames
    targets = cs.scatter_targets
    for side in (REFLECT_SIDE, TRANSMIT_SIDE):
        ps = sc.power[side]
        live = np.nonzero(ps > 0)[0]
        if not live.size:
            continue
        r = rows[live]  # split rows
        led.book_scattered(src[r], face[r], ps[live])
        deep = tree.scatters[parent_nodes[r]] >= opts.scatter_depth
        n_dir = np.where(deep, 1, opts.scatter_rays)
        n_aim = np.where(deep | (targets is None), 0,
                         np.rint(opts.target_share * opts.scatter_rays)).astype(np.int64)
        n_mod = n_dir - n_aim
        rep = np.repeat(np.arange(len(live)), n_dir)
        j = np.arange(len(rep)) - np.repeat(np.cumsum(n_dir) - n_dir, n_dir)
        aimed = j >= n_mod[rep]
        lr = live[rep]
        rr = r[rep]
        rows_b = idx[rr]
        stream = _stream(b.stream[rows_b], ev[rr], j, side, face[rr])
        draw = _draws(tr, src[rr], table.ray_id[b.root[rows_b]], stream)
        hemi = m[lr] if side == REFLECT_SIDE else -m[lr]
        fe1, fe2 = e1[lr], e2[lr]
        if side == TRANSMIT_SIDE:
            fe2 = -fe2  # keep (e1, e2, normal) right-handed
        n1, n2 = sc.n1[lr], sc.n2[lr]
        s_i = sin_i[lr]
        wl = b.wavelength[rows_b]
        mi = sc.model_index[lr]
        d = np.empty((len(rep), 3))
        p_mod = np.zeros(len(rep))
        q_mod = np.zeros(len(rep))
        for k in np.unique(mi):
            model = cs.scatter_models[k]
            sel = mi == k
            ms = sel & ~aimed
            if ms.any():
                sub = np.nonzero(ms)[0]
                a, bb, g = model.sample(side, sin_i=s_i[sub], wavelength=wl[sub], n1=n1[sub],
                                        n2=n2[sub], draw=lambda q, sub=sub: draw(q)[sub])
                d[sub] = a[:, None] * fe1[sub] + bb[:, None] * fe2[sub] + g[:, None] * hemi[sub]
            if (sel & aimed).any():
                sub = np.nonzero(sel & aimed)[0]
                d[sub] = targets.sample(pos[rr[sub]], draw(10)[sub], draw(11)[sub], draw(12)[sub])
            sub = np.nonzero(sel)[0]
            a = (d[sub] * fe1[sub]).sum(axis=1)
            bb = (d[sub] * fe2[sub]).sum(axis=1)
            g = (d[sub] * hemi[sub]).sum(axis=1)
            p_mod[sub] = model.density(side, sin_i=s_i[sub], wavelength=wl[sub], n1=n1[sub],
                                       n2=n2[sub], alpha=a, beta=bb, gamma=g)
            q_mod[sub] = (p_mod[sub] if model.exact_sampling
                          else model.proposal_density(g))
        p_aim = np.zeros(len(rep))
        if targets is not None and n_aim.any():
            p_aim = targets.density(pos[rr], d)
        den = n_mod[rep] * q_mod + n_aim[rep] * p_aim
        with np.errstate(divide="ignore", invalid="ignore"):
            w = np.where(den > 0, ps[live][rep] * p_mod / den, 0.0)
        w = np.where(np.isfinite(w), w, 0.0)
        sampled = np.bincount(rep, weights=w, minlength=len(live))
        led.book(src[r], led.SAMPLING, ps[live] - sampled)
        keep = w > 0
        if not keep.any():
            continue
        out.extend(_pairs(tr, b, table, keep, w, d, stream, rows_b, rr, face, pos, ev, src,
                          parent_nodes, side, mi, fe2))
    return out


def _pairs(tr, b, table, keep, w, d, stream, rows_b, rr, face, pos, ev, src, parent_nodes, side,
           mi, hint):
    """The polarisation pairs of the kept samples, after threshold and event cap."""
    cs, led, tree, opts = tr.cs, tr.ledger, tr.tree, tr.opts
    ks = np.nonzero(keep)[0]
    depol = np.array([cs.scatter_models[k].depolarization for k in mi[ks]])
    f1, f2 = scattered_pair(b.field[rows_b[ks]], d[ks], hint[ks])
    parent = b.power[rows_b[ks]]
    kind = SCATTER_R if side == REFLECT_SIDE else SCATTER_T
    fk = face[rr[ks]]
    nodes = tree.extend(parent_nodes[rr[ks]], fk, np.full(len(ks), kind))
    if side == REFLECT_SIDE:
        medium = b.medium[rows_b[ks]]
    else:
        solid = cs.face_solid[fk]
        medium = np.where(b.medium[rows_b[ks]] == solid, -1, solid)
    thr = opts.power_threshold * table.power[b.root[rows_b[ks]]]
    out = []
    for share, fld in ((1.0 - depol / 2.0, f1), (depol / 2.0, f2)):
        pw = w[ks] * share
        has = pw > 0
        weak = has & (pw < thr)
        if weak.any():
            led.book(src[rr[ks[weak]]], led.DISCARDED, pw[weak])
            led.book_untraced(src[rr[ks[weak]]], fk[weak], pw[weak])
        cut = has & ~weak & (ev[rr[ks]] >= opts.max_events)
        if cut.any():
            led.book(src[rr[ks[cut]]], led.CUT, pw[cut])
            led.book_untraced(src[rr[ks[cut]]], fk[cut], pw[cut])
        go = has & ~weak & ~cut
        if not go.any():
            continue
        g = np.nonzero(go)[0]
        j = rows_b[ks[g]]
        with np.errstate(divide="ignore", invalid="ignore"):
            scale = np.sqrt(np.where(parent[g] > 0, pw[g] / parent[g], 0.0))
        out.append(RayBatch(
            origin=pos[rr[ks[g]]], direction=d[ks[g]], wavelength=b.wavelength[j],
            wl_index=b.wl_index[j], field=fld[g] * scale[:, None, None], power=pw[g],
            medium=medium[g], node=nodes[g], events=ev[rr[ks[g]]], last_face=fk[g],
            root=b.root[j], opl=b.opl[j], stream=stream[ks[g]],
        ))
    return out


def mc_scatter(tr, b, table, sc: ScatterShares, *, idx, face, pos, ev, src, parent_nodes,
               which, parent_p, absorbed):
    """Monte Carlo mode (step 4): among the rows of ``sc`` whose choice was "absorbed"
    (``which == 2``), the ones that scatter instead, with probability
    ``P_s / (P - specular children)``; returns (scattered row mask over the split rows,
    list of one-ray children batches). The children carry the parent's power (times the
    importance ratio ``p/q`` for a model that does not sample its own density)."""
    cs, tree, opts = tr.cs, tr.tree, tr.opts
    rows = sc.rows
    e1, e2, m, sin_i = sc.frames
    chose_absorb = which[rows] == 2
    ps_r, ps_t = sc.power
    # the scatter share of the "absorbed" branch: P_s / (P - R' - T'), where the face's
    # absorbed power (after :func:`shares`) is P - R' - T' - P_s
    rest = ps_r + ps_t + np.maximum(absorbed[rows], 0.0)
    with np.errstate(divide="ignore", invalid="ignore"):
        prob = np.where(rest > 0, (ps_r + ps_t) / rest, 0.0)
    rid = table.ray_id[b.root[idx[rows]]]
    u = uniforms(opts.seed, src[rows], rid ^ b.stream[idx[rows]], ev[rows] - 1, SCATTER_PURPOSE - 1)
    hit = chose_absorb & (u < prob)
    scattered = np.zeros(len(which), dtype=bool)
    if not hit.any():
        return scattered, []
    h = np.nonzero(hit)[0]
    scattered[rows[h]] = True
    u2 = uniforms(opts.seed, src[rows[h]], rid[h] ^ b.stream[idx[rows[h]]], ev[rows[h]] - 1,
                  SCATTER_PURPOSE - 2)
    side_t = u2 * (ps_r[h] + ps_t[h]) >= ps_r[h]
    out = []
    for side in (REFLECT_SIDE, TRANSMIT_SIDE):
        sel = h[side_t] if side == TRANSMIT_SIDE else h[~side_t]
        if not sel.size:
            continue
        r = rows[sel]
        rows_b = idx[r]
        stream = _stream(b.stream[rows_b], ev[r], 0, side, face[r])
        draw = _draws(tr, src[r], table.ray_id[b.root[rows_b]], stream)
        hemi = m[sel] if side == REFLECT_SIDE else -m[sel]
        fe1, fe2 = e1[sel], (e2[sel] if side == REFLECT_SIDE else -e2[sel])
        mi = sc.model_index[sel]
        d = np.empty((len(sel), 3))
        gain = np.ones(len(sel))
        for k in np.unique(mi):
            model = cs.scatter_models[k]
            q = np.nonzero(mi == k)[0]
            a, bb, g = model.sample(side, sin_i=sin_i[sel[q]], wavelength=b.wavelength[rows_b[q]],
                                    n1=sc.n1[sel[q]], n2=sc.n2[sel[q]],
                                    draw=lambda z, q=q: draw(z)[q])
            d[q] = a[:, None] * fe1[q] + bb[:, None] * fe2[q] + g[:, None] * hemi[q]
            if not model.exact_sampling:
                dens = model.density(side, sin_i=sin_i[sel[q]], wavelength=b.wavelength[rows_b[q]],
                                     n1=sc.n1[sel[q]], n2=sc.n2[sel[q]], alpha=a, beta=bb, gamma=g)
                with np.errstate(divide="ignore", invalid="ignore"):
                    gain[q] = np.where(model.proposal_density(g) > 0,
                                       dens / model.proposal_density(g), 0.0)
        depol = np.array([cs.scatter_models[k].depolarization for k in mi])
        f1, f2 = scattered_pair(b.field[rows_b], d, fe2)
        second = draw(13) < depol / 2.0
        fld = np.where(second[:, None, None], f2, f1) * np.sqrt(gain)[:, None, None]
        kind = SCATTER_R if side == REFLECT_SIDE else SCATTER_T
        nodes = tree.extend(parent_nodes[r], face[r], np.full(len(r), kind))
        if side == REFLECT_SIDE:
            medium = b.medium[rows_b]
        else:
            solid = cs.face_solid[face[r]]
            medium = np.where(b.medium[rows_b] == solid, -1, solid)
        tr.ledger.book_scattered(src[r], face[r], parent_p[r] * gain)
        tr.ledger.book(src[r], tr.ledger.SAMPLING, parent_p[r] * (1.0 - gain))
        ok = gain > 0
        out.append(RayBatch(
            origin=pos[r][ok], direction=d[ok], wavelength=b.wavelength[rows_b][ok],
            wl_index=b.wl_index[rows_b][ok], field=fld[ok], power=(parent_p[r] * gain)[ok],
            medium=medium[ok], node=nodes[ok], events=ev[r][ok], last_face=face[r][ok],
            root=b.root[rows_b][ok], opl=b.opl[rows_b][ok], stream=stream[ok],
        ))
    return scattered, out
