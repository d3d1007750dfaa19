"""Compiled nearest-hit kernel: convex solids and plane detectors, one ray at a time.

The same queries as the numpy reference in :mod:`tracer.engine.intersect`, written as a
per-ray loop compiled by numba (:func:`tracer.engine.jit.njit`), with the reference's
rules and order of floating-point operations:

- a ray inside a convex solid leaves through the nearest plane it crosses outwards
  (``den = n . k > 0``), the plane of the face it last left excluded;
- a ray in the ambient enters the nearest convex solid: the largest ``t`` of the planes
  it crosses inwards against the smallest of those it crosses outwards (the slab method
  generalised to planes; T. L. Kay and J. T. Kajiya, "Ray tracing complex scenes",
  SIGGRAPH 1986), ties between solids going to the higher solid index. Candidates are
  the solids whose axis-aligned box the ray meets, visited nearest box first (boxes of
  groups of solids first in large scenes); the loop stops at the first box whose entry
  lies beyond the best hit, so a ray clips one or two solids whatever the number of
  solids behind them;
- plane detectors (rectangles, one- or two-sided) are hit like faces, nearest first.

Non-convex (mesh) solids are not handled here: :func:`tracer.engine.intersect.nearest_hit`
merges their hits, found through the numpy path, with the kernel's best solid.
"""

from __future__ import annotations

import numpy as np

from ..tolerances import PLANE_EPS
from .jit import njit

__all__ = ["KernelScene", "kernel_scene", "solid_hits", "detector_hits"]

_NONE = np.zeros(0, dtype=np.int64)


class KernelScene:
    """The arrays of a compiled scene, packed for the kernels (built once per scene).

    Attributes
    ----------
    planes : (S, P, 4) float
        ``nx, ny, nz, d`` of each plane ``n . x <= d`` [1], [m].
    pface : (S, P) int
        Global face id of each plane, -1 padding.
    nplanes : (S,) int
        Planes in use per solid (padding comes last and never bounds a solid).
    convex : (S,) bool
    box : (S, 6) float [m]
        Bounding box ``lo_x, lo_y, lo_z, hi_x, hi_y, hi_z`` of each solid.
    gbox : (G, 6) float [m]; mbox : (G, 6, K) float [m]; gmem : (G, K) int; nmem : (G,) int
        Groups of convex solids (the compiled scene's groups, or one group of all
        solids): the box around each group's members, the member boxes by coordinate,
        the member solids (-1 padding) and their number. G = 0 when there is no convex
        solid.
    det_* : detector arrays; ``det_off = n . position`` [m].
    meshes : list of int
        The non-convex solids (left to the numpy path).
    """

    def __init__(self, cs):
        f8 = np.float64
        self.planes = np.ascontiguousarray(
            np.concatenate([cs.plane_n, cs.plane_d[..., None]], axis=2), dtype=f8)
        self.pface = np.ascontiguousarray(cs.plane_face, dtype=np.int64)
        self.nplanes = np.ascontiguousarray((cs.plane_face >= 0).sum(axis=1), dtype=np.int64)
        self.convex = np.ascontiguousarray(cs.convex, dtype=np.bool_)
        self.box = np.ascontiguousarray(np.hstack([cs.box_lo, cs.box_hi]).reshape(-1, 6), dtype=f8)
        box = np.hstack([cs.box_lo, cs.box_hi]).reshape(-1, 6).astype(f8)
        self.box = box
        if cs.group_members is not None:
            groups = [m[m >= 0] for m in np.asarray(cs.group_members)]
        else:  # one group of every solid
            groups = [np.arange(len(box))]
        groups = [m[self.convex[m]] for m in groups]
        groups = [m for m in groups if len(m)]
        G = len(groups)
        K = max([len(m) for m in groups] + [1])
        self.gmem = np.full((G, K), -1, dtype=np.int64)
        self.nmem = np.array([len(m) for m in groups], dtype=np.int64)
        self.mbox = np.zeros((G, 6, K))  # coordinate-major: the box loop runs in SIMD lanes
        self.gbox = np.zeros((G, 6))
        for g, m in enumerate(groups):
            self.gmem[g, :len(m)] = m
            self.mbox[g, :, :len(m)] = box[m].T
            self.gbox[g] = np.concatenate([box[m, :3].min(axis=0), box[m, 3:].max(axis=0)])
        self.face_solid = np.ascontiguousarray(cs.face_solid, dtype=np.int64)
        self.face_local = np.ascontiguousarray(cs.face_local, dtype=np.int64)
        D = len(cs.detector_names)
        dn = np.ascontiguousarray(cs.det_normal[:D], dtype=f8).reshape(-1, 3)
        dp = np.ascontiguousarray(cs.det_position[:D], dtype=f8).reshape(-1, 3)
        self.det_pos = dp
        self.det_normal = dn
        # the reference's n . p: products summed left to right
        self.det_off = np.ascontiguousarray(dp[:, 0] * dn[:, 0] + dp[:, 1] * dn[:, 1]
                                            + dp[:, 2] * dn[:, 2])
        self.det_x = np.ascontiguousarray(cs.det_x[:D], dtype=f8).reshape(-1, 3)
        self.det_y = np.ascontiguousarray(cs.det_y[:D], dtype=f8).reshape(-1, 3)
        self.det_half = np.ascontiguousarray(cs.det_half[:D], dtype=f8).reshape(-1, 2)
        self.det_two = np.ascontiguousarray(cs.det_two_sided[:D], dtype=np.bool_).reshape(-1)
        self.det_round = np.ascontiguousarray(cs.det_round[:D], dtype=np.bool_).reshape(-1)
        self.n_faces = int(cs.n_faces)
        self.meshes = [int(s) for s in np.nonzero(~self.convex)[0]]


def kernel_scene(cs) -> KernelScene:
    """The :class:`KernelScene` of ``cs``, built on first use and kept with it."""
    ks = cs.__dict__.get("_hit_kernel")
    if ks is None:
        ks = KernelScene(cs)
        cs.__dict__["_hit_kernel"] = ks
    return ks


# Helpers take and return scalars only: numba counts references to the arrays passed to
# a call, and those atomic counts inside the ray loop would cost more than the geometry.

@njit
def _slab(lx, ly, lz, hx, hy, hz, ox, oy, oz, ix, iy, iz):
    """``max(t_enter, 0)`` into box ``lo, hi`` [m], ``inf`` where missed.

    The reference's arithmetic (``(lo - o) * inv`` per axis), written with selects so
    that a loop over boxes vectorises.
    """
    t1 = (lx - ox) * ix
    t2 = (hx - ox) * ix
    tmin = t1 if t1 < t2 else t2
    tmax = t1 if t1 > t2 else t2
    t1 = (ly - oy) * iy
    t2 = (hy - oy) * iy
    lo = t1 if t1 < t2 else t2
    hi = t1 if t1 > t2 else t2
    tmin = lo if lo > tmin else tmin
    tmax = hi if hi < tmax else tmax
    t1 = (lz - oz) * iz
    t2 = (hz - oz) * iz
    lo = t1 if t1 < t2 else t2
    hi = t1 if t1 > t2 else t2
    tmin = lo if lo > tmin else tmin
    tmax = hi if hi < tmax else tmax
    tmin = tmin if tmin > 0.0 else 0.0
    return np.inf if tmax < tmin else tmin


@njit
def _plane(nx, ny, nz, d, ox, oy, oz, dx, dy, dz):
    """``den = n . k`` and ``num = d - n . o`` summed left to right, as the reference."""
    return nx * dx + ny * dy + nz * dz, d - (nx * ox + ny * oy + nz * oz)


@njit
def solid_hits(origin, direction, medium, last_face, planes, pface, nplanes, convex, gbox,
               mbox, gmem, nmem, face_solid, face_local, t_out, face_out, solid_out):
    """Nearest convex-solid face of every ray, written into ``t_out, face_out, solid_out``.

    Rays inside a convex solid get their exit: the nearest plane crossed outwards
    (``den > 0``), the plane of the face last left excluded. Rays in the ambient get
    their entry into the nearest convex solid (the largest ``t`` of the planes crossed
    inwards against the smallest of those crossed outwards; no hit where the ray is
    parallel to a plane and outside it, or where a ``t`` is nan, as the reference's
    max/min propagate nan), ties going to the higher solid index, and that solid's index
    in ``solid_out``. Rays inside a non-convex solid are left at ``inf, -1``.
    ``gbox, mbox, gmem, nmem``: the groups of :class:`KernelScene`.
    """
    n = origin.shape[0]
    G = gbox.shape[0]
    K = gmem.shape[1]
    ct = np.empty(max(K, 1))
    gt = np.empty(max(G, 1))
    for i in range(n):
        ox = origin[i, 0]
        oy = origin[i, 1]
        oz = origin[i, 2]
        dx = direction[i, 0]
        dy = direction[i, 1]
        dz = direction[i, 2]
        med = medium[i]
        last = last_face[i]
        t = np.inf
        f = -1
        b = -1
        if med >= 0:
            if convex[med]:  # exit ------------------------------------------------
                k = -1
                for j in range(nplanes[med]):
                    den, num = _plane(planes[med, j, 0], planes[med, j, 1], planes[med, j, 2],
                                      planes[med, j, 3], ox, oy, oz, dx, dy, dz)
                    if den > 0 and pface[med, j] != last:
                        tj = num / den
                        if tj < t:
                            t = tj
                            k = j
                        elif tj != tj:  # the reference's min is nan: no exit
                            k = -2
                            break
                if k < 0 or t == -np.inf:
                    t = np.inf
                else:
                    t = t if t >= 0.0 else 0.0
                    f = pface[med, k]
        elif G > 0:  # entry -----------------------------------------------------------
            # the convex solid just left, when the ray provably cannot re-enter it
            skip = -1
            if last >= 0:
                sl = face_solid[last]
                if sl >= 0 and convex[sl]:
                    j = face_local[last]
                    den, num = _plane(planes[sl, j, 0], planes[sl, j, 1], planes[sl, j, 2],
                                      planes[sl, j, 3], ox, oy, oz, dx, dy, dz)
                    if den > 0 and num / den <= PLANE_EPS:
                        skip = sl
            # a zero component becomes a tiny one of the same sign: no 0 * inf
            ix = 1.0 / (dx if dx != 0 else 1e-300)
            iy = 1.0 / (dy if dy != 0 else 1e-300)
            iz = 1.0 / (dz if dz != 0 else 1e-300)
            for g in range(G):
                gt[g] = _slab(gbox[g, 0], gbox[g, 1], gbox[g, 2], gbox[g, 3], gbox[g, 4],
                              gbox[g, 5], ox, oy, oz, ix, iy, iz)
            while True:  # groups nearest box first, while a box entry is within the best hit
                m = 0
                for g in range(1, G):
                    m = g if gt[g] < gt[m] else m
                if gt[m] > t or gt[m] == np.inf:
                    break
                gt[m] = np.inf
                nc = nmem[m]
                for c in range(nc):  # member boxes (no branch: the loop vectorises)
                    tb = _slab(mbox[m, 0, c], mbox[m, 1, c], mbox[m, 2, c], mbox[m, 3, c],
                               mbox[m, 4, c], mbox[m, 5, c], ox, oy, oz, ix, iy, iz)
                    ct[c] = np.inf if gmem[m, c] == skip else tb
                while True:  # members nearest box first
                    q = 0
                    for c in range(1, nc):
                        q = c if ct[c] < ct[q] else q
                    if ct[q] > t or ct[q] == np.inf:
                        break
                    ct[q] = np.inf
                    s = gmem[m, q]
                    te = -np.inf
                    tx = np.inf
                    k = 0
                    for j in range(nplanes[s]):
                        den, num = _plane(planes[s, j, 0], planes[s, j, 1], planes[s, j, 2],
                                          planes[s, j, 3], ox, oy, oz, dx, dy, dz)
                        tj = num / den
                        if den < 0:
                            if tj > te:
                                te = tj
                                k = j
                            elif tj != tj:
                                k = -1
                        elif den > 0:
                            if tj < tx:
                                tx = tj
                            elif tj != tj:
                                k = -1
                        elif den != 0 or num < 0:  # nan, or parallel and outside
                            k = -1
                        # a miss, or (entry beyond the best hit) no better than one
                        if k < 0 or te > tx or te > t:
                            k = -1
                            break
                    if k >= 0 and tx > PLANE_EPS and te > -PLANE_EPS:
                        te = te if te >= 0.0 else 0.0
                        if te < t or (te == t and s > b):
                            t = te
                            f = pface[s, k]
                            b = s
        t_out[i] = t
        face_out[i] = f
        solid_out[i] = b


@njit
def detector_hits(origin, direction, medium, det_pos, det_normal, det_off, det_x, det_y,
                  det_half, det_two, det_round, n_faces, t_out, face_out):
    """Let the nearest plane detector of each ray replace its face hit where it comes first.

    A ray inside a solid must be more than ``PLANE_EPS`` short of the detector, a ray
    outside may be up to ``PLANE_EPS`` beyond it; on a tie with the face hit (a detector
    on a face) rays inside meet the face first, rays outside the detector.
    """
    n = origin.shape[0]
    D = det_pos.shape[0]
    if D == 0:
        return
    for i in range(n):
        ox = origin[i, 0]
        oy = origin[i, 1]
        oz = origin[i, 2]
        dx = direction[i, 0]
        dy = direction[i, 1]
        dz = direction[i, 2]
        inside = medium[i] >= 0
        tol = PLANE_EPS if inside else -PLANE_EPS
        bt = np.inf
        bd = -1
        for k in range(D):
            nx = det_normal[k, 0]
            ny = det_normal[k, 1]
            nz = det_normal[k, 2]
            den = dx * nx + dy * ny + dz * nz
            if den == 0 or not (den < 0 or det_two[k]):
                continue
            td = (det_off[k] - (ox * nx + oy * ny + oz * nz)) / den
            if not td > tol:
                continue
            rx = (ox + td * dx) - det_pos[k, 0]
            ry = (oy + td * dy) - det_pos[k, 1]
            rz = (oz + td * dz) - det_pos[k, 2]
            u = rx * det_x[k, 0] + ry * det_x[k, 1] + rz * det_x[k, 2]
            v = rx * det_y[k, 0] + ry * det_y[k, 1] + rz * det_y[k, 2]
            if det_round[k]:
                a = u / det_half[k, 0]
                c = v / det_half[k, 1]
                inb = a * a + c * c <= 1.0
            else:
                inb = abs(u) <= det_half[k, 0] and abs(v) <= det_half[k, 1]
            if inb and td < bt:
                bt = td
                bd = k
        if bd >= 0:
            slack = -PLANE_EPS if inside else PLANE_EPS
            if bt <= t_out[i] + slack:
                t_out[i] = bt if bt >= 0.0 else 0.0
                face_out[i] = n_faces + bd
