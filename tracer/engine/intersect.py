"""Nearest face (or detector) along each ray.

Convex solids are intersections of half-spaces ``n . x <= d``: a ray outside enters at
the largest ``t`` of the planes it crosses inwards and leaves at the smallest ``t`` of
the planes it crosses outwards, and hits the solid when entry <= exit (the slab method
generalised to arbitrary planes; Kay and Kajiya, "Ray tracing complex scenes",
SIGGRAPH 1986). All candidate (ray, solid) pairs are clipped in one broadcasting
expression over the padded plane array. A slab test against each solid's axis-aligned
box chooses the candidate pairs (broad phase), so the cost grows with the solids a ray
can reach, not with all solids in the scene. Rays inside a convex solid only look for
their exit among the planes they cross outwards, excluding the face they last left, so
no offset is needed after a hit. Non-convex solids go through the geometry's own
``intersect`` (trimesh), with the origin moved by ``RAY_OFFSET``.

Plane detectors are rectangles hit like faces. A one-sided detector counts rays that
travel against its normal; rays crossing it from behind pass through.
"""

from __future__ import annotations

import numpy as np

from ..tolerances import PLANE_EPS, RAY_OFFSET
from .compile import CompiledScene

__all__ = ["nearest_hit", "box_candidates"]


def _dot(a, b):
    return a[..., 0] * b[..., 0] + a[..., 1] * b[..., 1] + a[..., 2] * b[..., 2]


def box_candidates(lo, hi, origin, direction):
    """(ray, box) pairs whose segment t >= 0 meets the box (slab test).

    Parameters
    ----------
    lo, hi : (S, 3) float [m]
    origin, direction : (N, 3) float

    Returns
    -------
    ray, box : (P,) int
    """
    # a zero component becomes a tiny one of the same sign: no 0 * inf
    safe = np.where(direction == 0, 1e-300, direction)
    inv = 1.0 / safe
    tmin = np.full((len(origin), len(lo)), -np.inf)
    tmax = np.full((len(origin), len(lo)), np.inf)
    for a in range(3):
        t1 = (lo[None, :, a] - origin[:, None, a]) * inv[:, None, a]
        t2 = (hi[None, :, a] - origin[:, None, a]) * inv[:, None, a]
        np.maximum(tmin, np.minimum(t1, t2), out=tmin)
        np.minimum(tmax, np.maximum(t1, t2), out=tmax)
    hit = tmax >= np.maximum(tmin, 0.0)
    return np.nonzero(hit)


def _enter_convex(cs, origin, direction, solid):
    pn = cs.plane_n[solid]
    pd = cs.plane_d[solid]
    den = _dot(pn, direction[:, None, :])
    num = pd - _dot(pn, origin[:, None, :])
    with np.errstate(divide="ignore", invalid="ignore"):
        t = num / den
    t_in = np.where(den < 0, t, -np.inf)
    t_out = np.where(den > 0, t, np.inf)
    k = np.argmax(t_in, axis=1)
    rows = np.arange(len(solid))
    te = t_in[rows, k]
    tx = t_out.min(axis=1)
    miss = ((den == 0) & (num < 0)).any(axis=1)
    hit = (~miss) & (te <= tx) & (tx > PLANE_EPS) & (te > -PLANE_EPS)
    return np.where(hit, np.maximum(te, 0.0), np.inf), np.where(hit, cs.plane_face[solid, k], -1)


def _exit_convex(cs, origin, direction, solid, last_face):
    pn = cs.plane_n[solid]
    pd = cs.plane_d[solid]
    den = _dot(pn, direction[:, None, :])
    num = pd - _dot(pn, origin[:, None, :])
    with np.errstate(divide="ignore", invalid="ignore"):
        t = num / den
    pf = cs.plane_face[solid]
    t = np.where((den > 0) & (pf != last_face[:, None]), t, np.inf)
    k = np.argmin(t, axis=1)
    rows = np.arange(len(solid))
    tt = t[rows, k]
    ok = np.isfinite(tt)
    return np.where(ok, np.maximum(tt, 0.0), np.inf), np.where(ok, pf[rows, k], -1)


def _mesh(cs, s, origin, direction, inside):
    g = cs.geometries[s]
    o = origin + RAY_OFFSET * direction
    t, f = g.intersect(o, direction, np.full(len(o), inside))
    t = np.asarray(t, dtype=float)
    f = np.asarray(f, dtype=np.int64)
    ok = (f >= 0) & np.isfinite(t)
    gid = np.where(ok, cs.plane_face[s, 0] + f, -1) if cs.plane_face[s, 0] >= 0 else f
    return np.where(ok, t + RAY_OFFSET, np.inf), gid


def nearest_hit(cs: CompiledScene, origin, direction, medium, last_face):
    """Distance to and global id of the nearest face or detector of each ray.

    Parameters
    ----------
    cs : CompiledScene
    origin, direction : (N, 3) float [m], [1]
    medium : (N,) int
        -1 ambient, else the solid the ray travels in.
    last_face : (N,) int
        Face the ray last left (-1 none).

    Returns
    -------
    t : (N,) float [m]
        ``inf`` where nothing is hit.
    face : (N,) int
        Global face id (detectors after the solid faces), -1 where nothing is hit.
    """
    n = len(origin)
    t = np.full(n, np.inf)
    face = np.full(n, -1, dtype=np.int64)
    if n == 0:
        return t, face
    inside = medium >= 0
    # rays inside a solid: exit --------------------------------------------------
    if inside.any():
        ii = np.nonzero(inside)[0]
        s = medium[ii]
        cv = cs.convex[s]
        if cv.any():
            jj = ii[cv]
            t[jj], face[jj] = _exit_convex(cs, origin[jj], direction[jj], s[cv], last_face[jj])
        if (~cv).any():
            for sm in np.unique(s[~cv]):
                jj = ii[s == sm]
                t[jj], face[jj] = _mesh(cs, int(sm), origin[jj], direction[jj], True)
    # rays in the ambient: entry into the nearest solid -----------------------------
    out = ~inside
    if out.any() and cs.n_solids:
        oi = np.nonzero(out)[0]
        r, b = box_candidates(cs.box_lo, cs.box_hi, origin[oi], direction[oi])
        if len(r):
            cvp = cs.convex[b]
            tp = np.full(len(r), np.inf)
            fp = np.full(len(r), -1, dtype=np.int64)
            if cvp.any():
                rr = oi[r[cvp]]
                tp[cvp], fp[cvp] = _enter_convex(cs, origin[rr], direction[rr], b[cvp])
            if (~cvp).any():
                for sm in np.unique(b[~cvp]):
                    sel = np.nonzero(b == sm)[0]
                    rr = oi[r[sel]]
                    tp[sel], fp[sel] = _mesh(cs, int(sm), origin[rr], direction[rr], False)
            rays = oi[r]
            best = np.full(n, np.inf)
            np.minimum.at(best, rays, tp)
            win = np.isfinite(tp) & (tp == best[rays])
            t[rays[win]] = tp[win]
            face[rays[win]] = fp[win]
    # plane detectors ------------------------------------------------------------
    D = len(cs.detector_names)
    if D:
        dn = cs.det_normal
        den = direction @ dn.T  # (n, D)
        with np.errstate(divide="ignore", invalid="ignore"):
            td = (_dot(cs.det_position[None], dn[None]) - origin @ dn.T) / den
        front = den < 0
        ok = (front | cs.det_two_sided[None]) & (den != 0)
        tol = np.where(inside, PLANE_EPS, -PLANE_EPS)[:, None]
        ok &= td > tol
        if ok.any():
            td = np.where(ok, td, np.inf)
            pts = origin[:, None, :] + np.where(ok, td, 0.0)[..., None] * direction[:, None, :]
            rel = pts - cs.det_position[None]
            u = _dot(rel, cs.det_x[None])
            v = _dot(rel, cs.det_y[None])
            ok &= (np.abs(u) <= cs.det_half[None, :, 0]) & (np.abs(v) <= cs.det_half[None, :, 1])
            td = np.where(ok, td, np.inf)
            k = np.argmin(td, axis=1)
            tk = td[np.arange(n), k]
            # ties with a face the detector lies on: rays inside meet the face first
            # (they must still cross it), rays outside meet the detector first
            slack = np.where(inside, -PLANE_EPS, PLANE_EPS)
            better = np.isfinite(tk) & (tk <= t + slack)
            t[better] = np.maximum(tk[better], 0.0)
            face[better] = cs.n_faces + k[better]
    return t, face
