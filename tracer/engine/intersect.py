"""Nearest face (or detector) along each ray.

Convex solids are intersections of half-spaces ``n . x <= d``: a ray outside enters at
the largest ``t`` of the planes it crosses inwards and leaves at the smallest ``t`` of
the planes it crosses outwards, and hits the solid when entry <= exit (the slab method
generalised to arbitrary planes; Kay and Kajiya, "Ray tracing complex scenes",
SIGGRAPH 1986). All candidate (ray, solid) pairs are clipped in one broadcasting
expression over the padded plane array (plane-major: one row per plane).

Broad phase for rays in the ambient: a slab test against each solid's axis-aligned box
(scenes of more than ``GROUP_MIN_SOLIDS`` solids first test boxes around groups of about
sqrt(S) nearby solids, then the member boxes of the groups a ray meets). Candidates are
visited nearest box first: round 0 clips each ray against its nearest candidate, the
last round against the remaining candidates whose box entry is not beyond the best hit
so far, so a ray usually clips one solid whatever the number of solids behind it. The convex solid a
ray has just left is skipped when the ray provably cannot re-enter it (see
:func:`_left_behind`). The result equals clipping every (ray, solid) pair, ties going to
the higher solid index. Rays inside a convex solid only look for
their exit among the planes they cross outwards, excluding the face they last left, so
no offset is needed after a hit. Non-convex solids go through the geometry's own
``intersect`` (trimesh), with the origin moved by ``RAY_OFFSET``.

Plane detectors are rectangles hit like faces. A one-sided detector counts rays that
travel against its normal; rays crossing it from behind pass through.
"""

from __future__ import annotations

import numpy as np

from ..detectors import inside_outline
from ..tolerances import PLANE_EPS, RAY_OFFSET
from . import hit_kernel, jit
from .compile import CompiledScene

__all__ = ["nearest_hit", "box_candidates"]

_BIG = np.finfo(float).max
#: Nearest-group-first rounds before the remaining groups are visited together (long
#: scenes: a ray that finds nothing in its nearest group tries the next one first).
_GROUP_ROUNDS = 2


def _dot(a, b):
    return a[..., 0] * b[..., 0] + a[..., 1] * b[..., 1] + a[..., 2] * b[..., 2]


def _inverse(direction):
    # a zero component becomes a tiny one of the same sign: no 0 * inf
    return 1.0 / np.where(direction == 0, 1e-300, direction)


def _slab(lo, hi, origin, inv):
    """Entry distance of rays into boxes (slab test), ``inf`` where a box is missed.

    Box-major layout: one row per box, one column per ray, so that every operation
    runs along the rays.

    Parameters
    ----------
    lo, hi : tuple of three (K, 1) or (K, m) float arrays [m]
        Box corners by axis.
    origin, inv : (m, 3) float
        Ray origins [m] and inverse directions [1/1].

    Returns
    -------
    (K, m) float [m]
        ``max(t_enter, 0)`` where the ray's half-line ``t >= 0`` meets the box.
    """
    tmin = tmax = None
    for a in range(3):
        oa = origin[:, a]
        ia = inv[:, a]
        t1 = lo[a] - oa
        t1 *= ia
        t2 = hi[a] - oa
        t2 *= ia
        if tmin is None:
            tmin = np.minimum(t1, t2)
            tmax = np.maximum(t1, t2, out=t2)
        else:
            np.maximum(tmin, np.minimum(t1, t2), out=tmin)
            np.minimum(tmax, np.maximum(t1, t2, out=t1), out=tmax)
    np.maximum(tmin, 0.0, out=tmin)
    tmin[tmax < tmin] = np.inf
    return tmin


def box_candidates(lo, hi, origin, direction):
    """(ray, box) pairs whose segment t >= 0 meets the box (slab test).

    Parameters
    ----------
    lo, hi : (S, 3) float [m]
    origin, direction : (N, 3) float

    Returns
    -------
    ray, box : (P,) int

    Examples
    --------
    >>> import numpy as np
    >>> lo, hi = np.array([[-1.0, -1, 1], [-1, -1, -3]]), np.array([[1.0, 1, 2], [1, 1, -2]])
    >>> r, b = box_candidates(lo, hi, np.zeros((1, 3)), np.array([[0.0, 0, 1]]))
    >>> r.tolist(), b.tolist()
    ([0], [0])
    """
    lo = np.asarray(lo, dtype=float)
    hi = np.asarray(hi, dtype=float)
    tn = _slab(tuple(lo[:, a, None] for a in range(3)), tuple(hi[:, a, None] for a in range(3)),
               np.asarray(origin, dtype=float), _inverse(np.asarray(direction, dtype=float)))
    box, ray = np.nonzero(np.isfinite(tn))
    order = np.argsort(ray, kind="stable")
    return ray[order], box[order]


def _planes(cs, solid, origin, direction):
    """``den = n . k`` and ``num = d - n . o`` for every plane of ``solid``, (P, m).

    Plane-major layout: one contiguous row per plane, so that the reductions over the
    planes are elementwise operations between rows.
    """
    g = np.take(cs.plane_tab, solid, axis=2)  # (4, P, m)
    dx, dy, dz = direction[:, 0], direction[:, 1], direction[:, 2]
    den = g[0] * dx
    den += g[1] * dy
    den += g[2] * dz
    num = g[0] * origin[:, 0]
    num += g[1] * origin[:, 1]
    num += g[2] * origin[:, 2]
    np.subtract(g[3], num, out=num)
    return den, num


def _first_index(rows, value):
    """Lowest row index ``j`` with ``rows[j] == value`` (the first arg-extremum)."""
    k = np.zeros(rows.shape[1], dtype=np.int64)
    for j in range(rows.shape[0] - 1, 0, -1):
        k[rows[j] == value] = j
    k[rows[0] == value] = 0
    return k


def _enter_convex(cs, origin, direction, solid):
    den, num = _planes(cs, solid, origin, direction)
    with np.errstate(divide="ignore", invalid="ignore"):
        t = num / den
    t_in = np.where(den < 0, t, -np.inf)
    te = t_in.max(axis=0)
    k = _first_index(t_in, te)
    t[den <= 0] = np.inf
    tx = t.min(axis=0)
    hit = (te <= tx) & (tx > PLANE_EPS) & (te > -PLANE_EPS)
    zero = den == 0
    if zero.any():  # parallel to a plane and outside it: no hit
        zero &= num < 0
        hit &= ~zero.any(axis=0)
    return np.where(hit, np.maximum(te, 0.0), np.inf), np.where(hit, cs.plane_face_t[k, solid], -1)


def _exit_convex(cs, origin, direction, solid, last_face):
    den, num = _planes(cs, solid, origin, direction)
    with np.errstate(divide="ignore", invalid="ignore"):
        t = num / den
    pf = np.take(cs.plane_face_t, solid, axis=1)  # (P, m)
    t[~((den > 0) & (pf != last_face))] = np.inf
    tt = t.min(axis=0)
    k = _first_index(t, tt)
    ok = np.isfinite(tt)
    return np.where(ok, np.maximum(tt, 0.0), np.inf), np.where(ok, pf[k, np.arange(len(k))], -1)


def _mesh(cs, s, origin, direction, inside):
    g = cs.geometries[s]
    o = origin + RAY_OFFSET * direction
    t, f = g.intersect(o, direction, np.full(len(o), inside))
    t = np.asarray(t, dtype=float)
    f = np.asarray(f, dtype=np.int64)
    ok = (f >= 0) & np.isfinite(t)
    gid = np.where(ok, cs.plane_face[s, 0] + f, -1) if cs.plane_face[s, 0] >= 0 else f
    return np.where(ok, t + RAY_OFFSET, np.inf), gid


def _left_behind(cs, origin, direction, last_face):
    """Per ray, the convex solid it has just left and provably cannot re-enter, else -1.

    A ray that left (or was reflected off) face ``f`` of a convex solid lies on the
    outer side of ``f``'s plane: the solid's exit distance along the ray is at most the
    distance ``t_f`` to that plane, and :func:`_enter_convex` reports no hit when it is
    below ``PLANE_EPS``. ``t_f`` is computed here with the same arithmetic, so skipping
    the solid changes no result.
    """
    skip = np.full(len(origin), -1, dtype=np.int64)
    i = np.nonzero(last_face >= 0)[0]
    if not len(i):
        return skip
    f = last_face[i]
    s = cs.face_solid[f]
    ok = s >= 0
    i, f, s = i[ok], f[ok], s[ok]
    ok = cs.convex[s]
    i, f, s = i[ok], f[ok], s[ok]
    if not len(i):
        return skip
    j = cs.face_local[f]
    nx, ny, nz = cs.plane_nx[s, j], cs.plane_ny[s, j], cs.plane_nz[s, j]
    d, o = direction[i], origin[i]
    den = nx * d[:, 0]
    den += ny * d[:, 1]
    den += nz * d[:, 2]
    num = nx * o[:, 0]
    num += ny * o[:, 1]
    num += nz * o[:, 2]
    num = cs.plane_d[s, j] - num
    with np.errstate(divide="ignore", invalid="ignore"):
        tf = num / den
    gone = (den > 0) & (tf <= PLANE_EPS)
    skip[i[gone]] = s[gone]
    return skip


class _Entry:
    """Nearest entry of rays in the ambient into any solid (ordered broad phase).

    Candidates (boxes, or groups of boxes) are visited nearest box first: round 0 tests
    the nearest candidate of every ray, round 1 every other candidate whose box entry
    is not beyond the best hit so far (groups: two nearest-first rounds, then the rest).
    A solid further than the best hit cannot win, so the result equals testing every
    candidate; ties (equal distance) go to the higher solid index.
    """

    def __init__(self, cs, origin, direction, last_face):
        self.cs = cs
        self.o = origin
        self.d = direction
        self.inv = _inverse(direction)
        n = len(origin)
        self.skip = _left_behind(cs, origin, direction, last_face)
        self.t = np.full(n, np.inf)
        self.solid = np.full(n, -1, dtype=np.int64)
        self.face = np.full(n, -1, dtype=np.int64)
        axes = cs.__dict__.get("_box_axes")
        if axes is None:  # per-axis contiguous corners, computed once per compiled scene
            axes = tuple(tuple(np.ascontiguousarray(b[:, a]) for a in range(3))
                         for b in (cs.box_lo, cs.box_hi, cs.group_lo, cs.group_hi)
                         if b is not None)
            cs.__dict__["_box_axes"] = axes
        self.lo, self.hi = axes[0], axes[1]
        self.glo, self.ghi = (axes[2], axes[3]) if len(axes) == 4 else (None, None)

    def run(self):
        cs = self.cs
        rays = np.arange(len(self.o))
        if cs.group_members is None:
            tn = _slab(tuple(a[:, None] for a in self.lo), tuple(a[:, None] for a in self.hi),
                       self.o, self.inv)
            sk = np.nonzero(self.skip >= 0)[0]
            tn[self.skip[sk], sk] = np.inf
            self._rounds(rays, None, tn, self._narrow, unique=True)
        else:
            tg = _slab(tuple(a[:, None] for a in self.glo), tuple(a[:, None] for a in self.ghi),
                       self.o, self.inv)
            self._rounds(rays, None, tg, self._members, unique=True, nearest=_GROUP_ROUNDS)
        return self.t, self.face

    def _rounds(self, rays, items, tn, visit, unique, nearest=1):
        """Visit the candidates ``items`` (K, m) (None: the rows) of ``rays``, nearest first.

        ``tn`` (K, m) holds the box entry distance of every candidate row for every ray
        column (``inf``: missed). ``nearest`` rounds visit the nearest
        remaining candidate of each ray whose box entry is not beyond the ray's best hit;
        a last round visits all candidates still in reach at once.
        """
        for r in range(nearest + 1):
            if not len(rays):
                return
            # misses are inf: compare with the largest finite float where nothing is hit yet
            reach = np.minimum(self.t[rays], _BIG)
            if r == nearest:
                j, i = np.nonzero(tn <= reach)
                if len(i):
                    visit(rays[i], j if items is None else items[j, i], False)
                return
            t0 = tn.min(axis=0)
            h = np.flatnonzero(t0 <= reach)  # rays with a candidate still in reach
            if not len(h):
                return
            first = _first_index(tn, t0)[h]  # nearest box (lowest index on ties)
            visit(rays[h], first if items is None else items[first, h], unique)
            if tn.shape[0] == 1:
                return
            tn[first, h] = np.inf
            if r + 1 < nearest and len(h) < len(rays):
                # only these rays can have candidates in reach in the next rounds
                rays, tn = rays[h], tn[:, h]
                items = None if items is None else items[:, h]

    def _members(self, rays, groups, unique):
        cs = self.cs
        mem = np.take(cs.group_members_t, groups, axis=1)  # (K, m)
        tn = _slab(np.take(cs.member_lo, groups, axis=2), np.take(cs.member_hi, groups, axis=2),
                   self.o[rays], self.inv[rays])
        tn[(mem < 0) | (mem == self.skip[rays])] = np.inf
        self._rounds(rays, mem, tn, self._narrow, unique)

    def _narrow(self, rays, solid, unique):
        cs = self.cs
        cv = cs.convex[solid]
        if cv.all():
            t, f = _enter_convex(cs, self.o[rays], self.d[rays], solid)
        else:
            t = np.full(len(rays), np.inf)
            f = np.full(len(rays), -1, dtype=np.int64)
            if cv.any():
                t[cv], f[cv] = _enter_convex(cs, self.o[rays[cv]], self.d[rays[cv]], solid[cv])
            for sm in np.unique(solid[~cv]):
                sel = np.nonzero(solid == sm)[0]
                t[sel], f[sel] = _mesh(cs, int(sm), self.o[rays[sel]], self.d[rays[sel]], False)
        self._offer(rays, solid, t, f, unique)

    def _offer(self, rays, solid, t, f, unique):
        ok = t < np.inf
        if not ok.all():
            rays, solid, t, f = rays[ok], solid[ok], t[ok], f[ok]
        if not len(rays):
            return
        if not unique:
            # best candidate per ray: smallest t, then highest solid index
            order = np.lexsort((-solid, t, rays))
            rs = rays[order]
            keep = order[np.r_[True, rs[1:] != rs[:-1]]]
            rays, solid, t, f = rays[keep], solid[keep], t[keep], f[keep]
        bt = self.t[rays]
        better = (t < bt) | ((t == bt) & (solid > self.solid[rays]))
        r = rays[better]
        self.t[r] = t[better]
        self.solid[r] = solid[better]
        self.face[r] = f[better]


def nearest_hit(cs: CompiledScene, origin, direction, medium, last_face):
    """Distance to and global id of the nearest face or detector of each ray.

    Uses the compiled kernel (:mod:`tracer.engine.hit_kernel`) when
    :func:`tracer.engine.jit.compiled` says so, else the numpy reference; both give the
    same faces and distances.

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
    if jit.compiled():
        return _nearest_hit_compiled(cs, origin, direction, medium, last_face)
    return _nearest_hit_numpy(cs, origin, direction, medium, last_face)


def _nearest_hit_compiled(cs, origin, direction, medium, last_face):
    """:func:`nearest_hit` through the kernel; non-convex solids through :func:`_mesh`."""
    origin = np.ascontiguousarray(origin, dtype=np.float64)
    direction = np.ascontiguousarray(direction, dtype=np.float64)
    medium = np.ascontiguousarray(medium, dtype=np.int64)
    last_face = np.ascontiguousarray(last_face, dtype=np.int64)
    n = len(origin)
    t = np.empty(n)
    face = np.empty(n, dtype=np.int64)
    if n == 0:
        return t, face
    ks = hit_kernel.kernel_scene(cs)
    solid = np.empty(n, dtype=np.int64)
    hit_kernel.solid_hits(origin, direction, medium, last_face, ks.planes, ks.pface,
                          ks.nplanes, ks.convex, ks.gbox, ks.mbox, ks.gmem, ks.nmem,
                          ks.face_solid, ks.face_local, t, face, solid)
    if ks.meshes:
        _merge_meshes(cs, ks, origin, direction, medium, t, face, solid)
    if len(cs.detector_names):
        hit_kernel.detector_hits(origin, direction, medium, ks.det_pos, ks.det_normal, ks.det_off,
                                 ks.det_x, ks.det_y, ks.det_half, ks.det_two, ks.det_round,
                                 ks.n_faces, t,
                                 face)
    return t, face


def _merge_meshes(cs, ks, origin, direction, medium, t, face, solid):
    """Hits of non-convex solids (numpy path) merged into the kernel's convex hits in place.

    Rays inside a mesh solid get its exit; rays in the ambient whose path meets a mesh's
    box before their best convex hit try that mesh, ties going to the higher solid index.
    """
    for sm in ks.meshes:
        jj = np.nonzero(medium == sm)[0]
        if len(jj):
            t[jj], face[jj] = _mesh(cs, sm, origin[jj], direction[jj], True)
    oi = np.nonzero(medium < 0)[0]
    if not len(oi):
        return
    o, d = origin[oi], direction[oi]
    inv = _inverse(d)
    for sm in ks.meshes:
        lo, hi = ks.box[sm, :3], ks.box[sm, 3:]
        tn = _slab(tuple(lo[a:a + 1, None] for a in range(3)),
                   tuple(hi[a:a + 1, None] for a in range(3)), o, inv)[0]
        sel = np.nonzero(tn <= t[oi])[0]
        if not len(sel):
            continue
        tm, fm = _mesh(cs, sm, o[sel], d[sel], False)
        r = oi[sel]
        better = (tm < np.inf) & ((tm < t[r]) | ((tm == t[r]) & (sm > solid[r])))
        rb = r[better]
        t[rb] = tm[better]
        face[rb] = fm[better]
        solid[rb] = sm


def _nearest_hit_numpy(cs, origin, direction, medium, last_face):
    """:func:`nearest_hit` in numpy (the reference of the compiled kernel)."""
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
        t[oi], face[oi] = _Entry(cs, origin[oi], direction[oi], last_face[oi]).run()
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
        ri, di = np.nonzero(ok)
        if len(ri):
            tp = td[ri, di]
            rel = np.empty((len(ri), 3))
            for a in range(3):  # per component: long loops
                np.add(origin[ri, a], tp * direction[ri, a], out=rel[:, a])
                rel[:, a] -= cs.det_position[di, a]
            u = _dot(rel, cs.det_x[di])
            v = _dot(rel, cs.det_y[di])
            inb = inside_outline(u, v, cs.det_half[di], cs.det_round[di])
            ri, di, tp = ri[inb], di[inb], tp[inb]
            if D > 1 and len(ri):  # nearest detector per ray (lowest index on ties)
                order = np.lexsort((di, tp, ri))
                rs = ri[order]
                first = order[np.r_[True, rs[1:] != rs[:-1]]]
                ri, di, tp = ri[first], di[first], tp[first]
            # ties with a face the detector lies on: rays inside meet the face first
            # (they must still cross it), rays outside meet the detector first
            slack = np.where(inside[ri], -PLANE_EPS, PLANE_EPS)
            better = tp <= t[ri] + slack
            rb = ri[better]
            t[rb] = np.maximum(tp[better], 0.0)
            face[rb] = cs.n_faces + di[better]
    return t, face
