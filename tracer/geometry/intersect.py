"""Ray-solid intersection: one interface, several backends, and a batched nearest hit.

A ray is ``x(t) = origin + t * direction``; ``t`` is in units of ``|direction|`` (metres
for unit directions). A ray *outside* a solid looks for its first entry, a ray *inside*
for its exit; only hits with ``t > INTERSECT_MIN_T`` count, and only faces crossed in the
right sense (entering: ``direction . n < 0``; leaving: ``> 0``), so that a ray never hits
the face it has just left. ``t = inf`` and ``face = -1`` where there is no hit.

Backends (all with :class:`IntersectionBackend`'s signature):

``halfspace``
    Convex solids as intersections of half-spaces ``n . x <= d``: entry is the largest
    ``t`` of the entering planes, exit the smallest ``t`` of the leaving planes, and the
    ray hits when entry <= exit (the slab method generalised to any planes; Kay and
    Kajiya, "Ray tracing complex scenes", SIGGRAPH 1986). Pure numpy, fully vectorised.
``triangles``
    Any closed triangulated solid, by the Moller-Trumbore test (T. Moller and B. Trumbore,
    "Fast, minimum storage ray-triangle intersection", J. Graphics Tools 2(1), 1997),
    brute force over triangles in numpy, rays in chunks. Triangles map to named faces.
``trimesh``
    trimesh's ray interface (``ray.intersects_location``; embree when installed, else its
    own triangle test with an r-tree), triangles mapped to named faces.

:func:`intersect_many` gives, for every ray, the nearest hit among many solids, with a
bounding-sphere broad phase; convex solids go through the half-space path, the others
through their own backend.
"""

from __future__ import annotations

from typing import Any, Protocol, Sequence, runtime_checkable

import numpy as np

from tracer.tolerances import INTERSECT_MIN_T, TRIANGLE_EDGE_TOL

__all__ = [
    "IntersectionBackend",
    "HalfSpaceBackend",
    "TriangleBackend",
    "TrimeshBackend",
    "BACKENDS",
    "available_backends",
    "get_backend",
    "halfspace_intersect",
    "triangle_intersect",
    "intersect_many",
]

_CHUNK = 1 << 15  # rays per block in the dense paths (keeps temporaries in cache)
_TRI_BLOCK = 1 << 20  # rays x triangles per block in the triangle path


@runtime_checkable
class IntersectionBackend(Protocol):
    """What every ray-solid intersection backend provides."""

    name: str

    def supports(self, solid: Any) -> bool:
        """Whether this backend can intersect ``solid``."""

    def intersect(
        self, solid: Any, origins: np.ndarray, directions: np.ndarray, inside: np.ndarray
    ) -> tuple[np.ndarray, np.ndarray]:
        """Entry (``inside`` False) or exit (``inside`` True) of each ray.

        Parameters
        ----------
        solid : a tracer solid
        origins, directions : (N, 3) float [m], [1]
        inside : (N,) bool

        Returns
        -------
        t : (N,) float [m]
            ``inf`` where no hit.
        face : (N,) int
            Face index into ``solid.face_names``; ``-1`` where no hit.
        """


def _prepare(origins, directions, inside):
    o = np.ascontiguousarray(np.asarray(origins, dtype=float).reshape(-1, 3))
    d = np.ascontiguousarray(np.asarray(directions, dtype=float).reshape(-1, 3))
    if o.shape != d.shape:
        o, d = np.broadcast_arrays(o, d)
        o, d = np.ascontiguousarray(o), np.ascontiguousarray(d)
    ins = np.broadcast_to(np.asarray(inside, dtype=bool), (len(o),))
    return o, d, ins


def halfspace_intersect(
    normals: np.ndarray,
    offsets: np.ndarray,
    origins: np.ndarray,
    directions: np.ndarray,
    inside: np.ndarray | bool,
    *,
    t_min: float = INTERSECT_MIN_T,
) -> tuple[np.ndarray, np.ndarray]:
    """Entry or exit of rays through the convex set ``normals @ x <= offsets``.

    Parameters
    ----------
    normals : (F, 3) float
        Outward unit normals.
    offsets : (F,) float [m]
        Plane offsets, ``n . x = d`` on the face.
    origins : (N, 3) float [m]
    directions : (N, 3) float [1]
    inside : (N,) bool or bool
        True for rays inside the solid (they find their exit).
    t_min : float [m]
        Smallest accepted ``t``.

    Returns
    -------
    t : (N,) float [m], inf where no hit
    face : (N,) int, -1 where no hit

    Examples
    --------
    A unit cube and one ray entering its -x face, one leaving through +x:

    >>> n = np.array([[1., 0, 0], [-1, 0, 0], [0, 1, 0], [0, -1, 0], [0, 0, 1], [0, 0, -1]])
    >>> d = np.full(6, 0.5)
    >>> o = np.array([[-2., 0, 0], [0, 0, 0]])
    >>> t, f = halfspace_intersect(n, d, o, [[1., 0, 0], [1, 0, 0]], [False, True])
    >>> t, f
    (array([1.5, 0.5]), array([1, 0]))
    """
    o, dvec, ins = _prepare(origins, directions, inside)
    normals = np.asarray(normals, dtype=float)
    offsets = np.asarray(offsets, dtype=float)
    return _in_blocks(o, dvec, ins, _CHUNK,
                      lambda ob, db, ib: _halfspace_block(normals, offsets, ob, db, ib, t_min))


def _in_blocks(o, d, ins, step, block):
    """``(t, face)`` of all rays from ``block(o, d, ins)`` run on ``step`` rays at a time."""
    t_out = np.full(len(o), np.inf)
    f_out = np.full(len(o), -1, dtype=np.int64)
    for s in range(0, len(o), step):
        sl = slice(s, s + step)
        t_out[sl], f_out[sl] = block(o[sl], d[sl], ins[sl])
    return t_out, f_out


def _halfspace_block(normals, offsets, o, d, ins, t_min):
    """(t, face) for one block of rays; entries for rays outside, exits for rays inside."""
    t_res = np.full(len(o), np.inf)
    f_res = np.full(len(o), -1, dtype=np.int64)
    if ins.all():
        return _halfspace_exit(normals, offsets, o, d, t_min)
    if not ins.any():
        return _halfspace_entry(normals, offsets, o, d, t_min)
    out = ~ins
    t_res[out], f_res[out] = _halfspace_entry(normals, offsets, o[out], d[out], t_min)
    t_res[ins], f_res[ins] = _halfspace_exit(normals, offsets, o[ins], d[ins], t_min)
    return t_res, f_res


def _plane_crossings(normals, offsets, o, d):
    """``den = d . n`` and ``num = offset - o . n`` (> 0 inside the half-space), ``(C, F)``,
    and the ray parameter ``t = num / den`` of every ray on every face plane."""
    den = d @ normals.T
    num = offsets - o @ normals.T
    with np.errstate(divide="ignore", invalid="ignore"):
        t = num / den
    return den, num, t


def _halfspace_entry(normals, offsets, o, d, t_min):
    # entry: the last entering plane (den < 0), before the first leaving one (den > 0, any t);
    # a ray parallel to a plane and outside it (den == 0, num < 0) misses
    den, num, t = _plane_crossings(normals, offsets, o, d)
    t_in = np.where(den < 0, t, -np.inf)
    f_in = np.argmax(t_in, axis=1)
    te = np.take_along_axis(t_in, f_in[:, None], axis=1)[:, 0]
    t_lv = np.where(den > 0, t, np.inf).min(axis=1)
    blocked = ((den == 0) & (num < 0)).any(axis=1)
    hit = (te > t_min) & (te <= t_lv) & ~blocked
    return np.where(hit, te, np.inf), np.where(hit, f_in, -1)


def _halfspace_exit(normals, offsets, o, d, t_min):
    # exit: the first leaving plane ahead; a plane already behind the ray (round-off after
    # a hit near an edge) is skipped
    den, _, t = _plane_crossings(normals, offsets, o, d)
    t_lv = np.where((den > 0) & (t > t_min), t, np.inf)
    f_lv = np.argmin(t_lv, axis=1)
    tx = np.take_along_axis(t_lv, f_lv[:, None], axis=1)[:, 0]
    hit = np.isfinite(tx)
    return tx, np.where(hit, f_lv, -1)


def triangle_intersect(
    vertices: np.ndarray,
    triangles: np.ndarray,
    triangle_face: np.ndarray,
    origins: np.ndarray,
    directions: np.ndarray,
    inside: np.ndarray | bool,
    *,
    t_min: float = INTERSECT_MIN_T,
) -> tuple[np.ndarray, np.ndarray]:
    """Entry or exit of rays through a closed, outward-wound triangle mesh.

    Parameters
    ----------
    vertices : (V, 3) float [m]
    triangles : (T, 3) int
        Counter-clockwise seen from outside.
    triangle_face : (T,) int
        Named face of each triangle.
    origins, directions, inside : as in :func:`halfspace_intersect`.

    Returns
    -------
    t : (N,) float [m], inf where no hit
    face : (N,) int, -1 where no hit
    """
    o, dvec, ins = _prepare(origins, directions, inside)
    tri = np.asarray(vertices, dtype=float)[np.asarray(triangles, dtype=np.int64)]
    v0 = tri[:, 0]
    e1 = tri[:, 1] - v0
    e2 = tri[:, 2] - v0
    normal = np.cross(e1, e2)
    tface = np.asarray(triangle_face, dtype=np.int64)
    step = max(1, _TRI_BLOCK // max(1, len(tri)))
    return _in_blocks(o, dvec, ins, step,
                      lambda ob, db, ib: _triangle_block(v0, e1, e2, normal, tface, ob, db, ib, t_min))


def _triangle_block(v0, e1, e2, normal, tface, o, d, ins, t_min):
    # Moller-Trumbore (Eqs. in [Moller and Trumbore 1997]), all rays x all triangles
    pvec = np.cross(d[:, None, :], e2[None, :, :])  # (C, T, 3)
    det = np.einsum("ctk,tk->ct", pvec, e1)
    with np.errstate(divide="ignore", invalid="ignore"):
        inv = 1.0 / det
        tvec = o[:, None, :] - v0[None, :, :]
        u = np.einsum("ctk,ctk->ct", tvec, pvec) * inv
        qvec = np.cross(tvec, e1[None, :, :])
        v = np.einsum("ck,ctk->ct", d, qvec) * inv
        t = np.einsum("ctk,tk->ct", qvec, e2) * inv
        facing = d @ normal.T  # < 0: entering, > 0: leaving
        sense = np.where(ins[:, None], facing > 0, facing < 0)
        eps = TRIANGLE_EDGE_TOL
        ok = sense & (det != 0) & (u >= -eps) & (v >= -eps) & (u + v <= 1 + eps) & (t > t_min)
    t = np.where(ok, t, np.inf)
    k = np.argmin(t, axis=1)
    tb = t[np.arange(len(o)), k]
    hit = np.isfinite(tb)
    return tb, np.where(hit, tface[k], -1)


class HalfSpaceBackend:
    """Convex solids as half-space sets (see :func:`halfspace_intersect`)."""

    name = "halfspace"

    def supports(self, solid: Any) -> bool:
        return bool(solid.is_convex)

    def intersect(self, solid, origins, directions, inside):
        if not solid.is_convex:
            raise ValueError("the half-space backend needs a convex solid")
        return halfspace_intersect(solid.face_normals, solid.face_offsets, origins, directions, inside)


class TriangleBackend:
    """Any closed solid through its triangles, in numpy (see :func:`triangle_intersect`)."""

    name = "triangles"

    def supports(self, solid: Any) -> bool:
        return True

    def intersect(self, solid, origins, directions, inside):
        v, tri, tface = solid.triangles()
        return triangle_intersect(v, tri, tface, origins, directions, inside)


class TrimeshBackend:
    """trimesh's ray interface (embree when installed, else its triangle test + r-tree)."""

    name = "trimesh"

    def supports(self, solid: Any) -> bool:
        return True

    @staticmethod
    def available() -> bool:
        """Whether trimesh's ray engine can run here (it needs ``rtree`` or ``embreex``)."""
        try:
            import trimesh

            m = trimesh.creation.box()
            m.ray.intersects_id(np.zeros((1, 3)) - 2.0, np.ones((1, 3)))
        except Exception:  # noqa: BLE001 - any import/engine failure means unavailable
            return False
        return True

    def intersect(self, solid, origins, directions, inside):
        o, dvec, ins = _prepare(origins, directions, inside)
        mesh = solid._trimesh_for_rays()
        _, tface = solid.triangles()[1:]
        n = len(o)
        t_best = np.full(n, np.inf)
        f_best = np.full(n, -1, dtype=np.int64)
        if n == 0:
            return t_best, f_best
        tri_idx, ray_idx, loc = mesh.ray.intersects_id(
            o, dvec, multiple_hits=True, return_locations=True
        )
        if len(ray_idx) == 0:
            return t_best, f_best
        dd = dvec[ray_idx]
        t = np.einsum("ij,ij->i", loc - o[ray_idx], dd) / np.einsum("ij,ij->i", dd, dd)
        facing = np.einsum("ij,ij->i", dd, mesh.face_normals[tri_idx])
        ok = (t > INTERSECT_MIN_T) & np.where(ins[ray_idx], facing > 0, facing < 0)
        ray_idx, tri_idx, t = ray_idx[ok], tri_idx[ok], t[ok]
        order = np.lexsort((t, ray_idx))
        ray_idx, tri_idx, t = ray_idx[order], tri_idx[order], t[order]
        first = np.ones(len(ray_idx), dtype=bool)
        first[1:] = ray_idx[1:] != ray_idx[:-1]
        t_best[ray_idx[first]] = t[first]
        f_best[ray_idx[first]] = tface[tri_idx[first]]
        return t_best, f_best


BACKENDS: dict[str, IntersectionBackend] = {
    "halfspace": HalfSpaceBackend(),
    "triangles": TriangleBackend(),
    "trimesh": TrimeshBackend(),
}


def available_backends() -> list[str]:
    """Names of the backends that run in this environment."""
    names = ["halfspace", "triangles"]
    if TrimeshBackend.available():
        names.append("trimesh")
    return names


def get_backend(name: str) -> IntersectionBackend:
    """The backend called ``name`` (``halfspace``, ``triangles`` or ``trimesh``)."""
    try:
        return BACKENDS[name]
    except KeyError:
        from tracer.geometry.errors import GeometryError

        raise GeometryError(
            f"unknown intersection backend {name!r}; expected one of {sorted(BACKENDS)}"
        ) from None


def _sphere_candidates(o, d, centres, radii2):
    """(C, S) bool: rays whose line meets each bounding sphere ahead of (or around) them."""
    a = np.einsum("ij,ij->i", d, d)[:, None]
    b = d @ centres.T  # becomes d . (o - c)
    np.subtract(np.einsum("ij,ij->i", d, o)[:, None], b, out=b)
    cc = o @ centres.T  # becomes |o - c|^2 - r^2
    cc *= -2.0
    cc += np.einsum("ij,ij->i", o, o)[:, None]
    cc += np.einsum("ij,ij->i", centres, centres) - radii2
    disc = b * b
    disc -= a * cc
    hit = disc >= 0
    hit &= (b < 0) | (cc < 0)
    return hit


def intersect_many(
    solids: Sequence[Any],
    origins: np.ndarray,
    directions: np.ndarray,
    current: np.ndarray | int | None = None,
    *,
    t_min: float = INTERSECT_MIN_T,
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Nearest hit of every ray among many solids.

    A ray inside solid ``current[i]`` looks for its exit from that solid and for the entry
    into any other solid (whichever is nearer); a ray with ``current[i] = -1`` is in the
    surrounding medium and looks for the nearest entry.

    Parameters
    ----------
    solids : sequence of solids
    origins : (N, 3) float [m]
    directions : (N, 3) float [1]
    current : (N,) int or int or None
        Index into ``solids`` of the solid each ray is in; -1 (or None) for none.
    t_min : float [m]

    Returns
    -------
    t : (N,) float [m]
        Distance to the nearest hit (inf where none).
    solid : (N,) int
        Index of the solid hit (-1 where none).
    face : (N,) int
        Face index within that solid (-1 where none).

    Notes
    -----
    Broad phase: each solid's bounding sphere (centre of its box, half its diagonal) is
    tested against all rays of a block at once (three small matrix products), and only
    the rays that meet it are passed to the solid's narrow phase.

    Examples
    --------
    >>> from tracer.geometry.catalog import build
    >>> a = build("plate", width=0.01, height=0.01, thickness=0.002)
    >>> b = a.transformed(np.eye(3), [0.01, 0.0, 0.0])
    >>> t, s, f = intersect_many([a, b], [[-1.0, 0, 0]], [[1.0, 0, 0]])
    >>> round(float(t[0]), 12), int(s[0]), a.face_names[f[0]]
    (1.0, 0, 'front')
    """
    o, d, _ = _prepare(origins, directions, False)
    n = len(o)
    cur = np.broadcast_to(
        np.asarray(-1 if current is None else current, dtype=np.int64), (n,)
    )
    t_best = np.full(n, np.inf)
    s_best = np.full(n, -1, dtype=np.int64)
    f_best = np.full(n, -1, dtype=np.int64)
    if n == 0 or len(solids) == 0:
        return t_best, s_best, f_best
    bounds = np.array([np.asarray(s.bounds, dtype=float) for s in solids])
    centres = 0.5 * (bounds[:, 0] + bounds[:, 1])
    radii2 = (0.5 * np.linalg.norm(bounds[:, 1] - bounds[:, 0], axis=1) * (1 + 1e-9) + 1e-12) ** 2
    planes = [
        (np.asarray(s.face_normals, float), np.asarray(s.face_offsets, float)) if s.is_convex else None
        for s in solids
    ]
    for start in range(0, n, _CHUNK):
        sl = slice(start, start + _CHUNK)
        ob, db, cb = o[sl], d[sl], cur[sl]
        cand = _sphere_candidates(ob, db, centres, radii2)
        tb, sb, fb = t_best[sl], s_best[sl], f_best[sl]
        for k, solid in enumerate(solids):
            col = cand[:, k] | (cb == k)
            idx = np.flatnonzero(col)
            if len(idx) == 0:
                continue
            ins = cb[idx] == k
            if planes[k] is not None:
                t, f = _halfspace_block(planes[k][0], planes[k][1], ob[idx], db[idx], ins, t_min)
            else:
                t, f = solid.intersect(ob[idx], db[idx], ins)
            better = t < tb[idx]
            if better.any():
                w = idx[better]
                tb[w] = t[better]
                sb[w] = k
                fb[w] = f[better]
    return t_best, s_best, f_best
