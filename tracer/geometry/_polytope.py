"""Small planar-polygon and half-space helpers shared by the solids (internal).

All lengths in metres. A plane is ``n . x = d`` with unit ``n``; a half-space is
``n . x <= d`` (``n`` points out of the solid).
"""

from __future__ import annotations

import itertools

import numpy as np

from tracer.tolerances import PLANE_EPS, VERTEX_MERGE_TOL

__all__ = [
    "plane_frame",
    "polygon_area_vector",
    "polygon_area_centroid",
    "merge_points",
    "order_on_plane",
    "halfspace_vertices",
    "halfspace_polygons",
    "halfspace_volume",
]


def plane_frame(normal: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """In-plane axes (u, v) of a plane with unit ``normal``, so that (u, v, n) is right-handed.

    ``u = normalise(z x n)`` (horizontal for a face whose normal lies in the x-y plane) and
    ``v = n x u``; when ``n`` is (anti)parallel to z, ``u = x`` (projected).

    >>> u, v = plane_frame(np.array([1.0, 0.0, 0.0]))
    >>> u.round(12), v.round(12)
    (array([0., 1., 0.]), array([0., 0., 1.]))
    """
    n = np.asarray(normal, dtype=float)
    u = np.cross([0.0, 0.0, 1.0], n)
    norm = np.linalg.norm(u)
    if norm < 1e-9:
        u = np.array([1.0, 0.0, 0.0]) - n[0] * n
        norm = np.linalg.norm(u)
    u = u / norm
    v = np.cross(n, u)
    return u, v


def polygon_area_vector(points: np.ndarray) -> np.ndarray:
    """Area vector (normal times area, right-hand rule over the vertex order) [m^2]."""
    p = np.asarray(points, dtype=float)
    q = np.roll(p, -1, axis=0)
    return 0.5 * np.cross(p, q).sum(axis=0)


def polygon_area_centroid(points: np.ndarray, normal: np.ndarray) -> tuple[float, np.ndarray]:
    """Area [m^2] and area centroid [m] of a planar simple polygon (convex or not)."""
    p = np.asarray(points, dtype=float)
    a = p[1:-1] - p[0]
    b = p[2:] - p[0]
    tri = 0.5 * np.cross(a, b) @ np.asarray(normal, dtype=float)  # signed triangle areas
    area = tri.sum()
    if abs(area) == 0.0:
        return 0.0, p.mean(axis=0)
    cents = (p[0] + p[1:-1] + p[2:]) / 3.0
    return float(abs(area)), (tri[:, None] * cents).sum(axis=0) / area


def merge_points(points: np.ndarray, tol: float = VERTEX_MERGE_TOL) -> tuple[np.ndarray, np.ndarray]:
    """Merge points closer than ``tol`` [m]; returns (unique points, index of each input)."""
    p = np.asarray(points, dtype=float).reshape(-1, 3)
    n = len(p)
    label = np.full(n, -1, dtype=np.int64)
    reps: list[int] = []
    if n == 0:
        return p.copy(), label
    # sort along a generic direction so that only near neighbours need comparing
    key = p @ np.array([0.5773502691896258, 0.5773502691896257, 0.5773502691896258])
    order = np.argsort(key, kind="stable")
    ks = key[order]
    for pos, i in enumerate(order):
        if label[i] >= 0:
            continue
        label[i] = len(reps)
        reps.append(i)
        hi = np.searchsorted(ks, ks[pos] + 2 * tol, side="right")
        cand = order[pos + 1 : hi]
        if len(cand):
            close = np.linalg.norm(p[cand] - p[i], axis=1) <= tol
            free = cand[close & (label[cand] < 0)]
            label[free] = label[i]
    return p[np.array(reps)], label


def order_on_plane(points: np.ndarray, normal: np.ndarray) -> np.ndarray:
    """Order the vertices of a convex planar polygon CCW seen from the side ``normal`` points to."""
    p = np.asarray(points, dtype=float)
    u, v = plane_frame(normal)
    c = p.mean(axis=0)
    ang = np.arctan2((p - c) @ v, (p - c) @ u)
    return p[np.argsort(ang, kind="stable")]


def halfspace_vertices(
    normals: np.ndarray, offsets: np.ndarray, *, tol: float = PLANE_EPS
) -> np.ndarray:
    """Vertices of the bounded convex set ``normals @ x <= offsets`` (merged), (V, 3) [m]."""
    normals = np.asarray(normals, dtype=float)
    offsets = np.asarray(offsets, dtype=float)
    f = len(normals)
    if f < 4:
        return np.zeros((0, 3))
    idx = np.array(list(itertools.combinations(range(f), 3)), dtype=np.int64)
    a = normals[idx]
    b = offsets[idx]
    det = np.linalg.det(a)
    ok = np.abs(det) > 1e-12
    if not ok.any():
        return np.zeros((0, 3))
    x = np.linalg.solve(a[ok], b[ok][:, :, None])[:, :, 0]
    feasible = np.all(x @ normals.T <= offsets + tol, axis=1)
    pts, _ = merge_points(x[feasible], tol=max(tol, VERTEX_MERGE_TOL))
    return pts


def halfspace_polygons(
    normals: np.ndarray, offsets: np.ndarray, *, tol: float = PLANE_EPS
) -> tuple[np.ndarray, list[np.ndarray]]:
    """Vertices and the CCW (seen from outside) polygon of each plane of a convex set.

    A plane that does not touch the set in a polygon (redundant, or meeting it in an edge
    or a point) gets an empty ``(0, 3)`` array.
    """
    normals = np.asarray(normals, dtype=float)
    offsets = np.asarray(offsets, dtype=float)
    verts = halfspace_vertices(normals, offsets, tol=tol)
    polys: list[np.ndarray] = []
    for i, (n, d) in enumerate(zip(normals, offsets)):
        dup = (normals[:i] @ n > 1 - 1e-12) & (np.abs(offsets[:i] - d) <= tol)
        if dup.any():  # the same plane twice: one face only
            polys.append(np.zeros((0, 3)))
            continue
        on = verts[np.abs(verts @ n - d) <= 10 * tol] if len(verts) else verts
        if len(on) < 3:
            polys.append(np.zeros((0, 3)))
            continue
        poly = order_on_plane(on, n)
        area = polygon_area_vector(poly) @ n
        polys.append(poly if area > (tol * tol) else np.zeros((0, 3)))
    return verts, polys


def halfspace_volume(normals: np.ndarray, offsets: np.ndarray, *, tol: float = PLANE_EPS) -> float:
    """Volume of the bounded convex set ``normals @ x <= offsets`` [m^3] (0 when empty or flat).

    Sum over faces of area times plane offset over three (divergence theorem).
    """
    normals = np.asarray(normals, dtype=float)
    offsets = np.asarray(offsets, dtype=float)
    _, polys = halfspace_polygons(normals, offsets, tol=tol)
    vol = 0.0
    for n, d, poly in zip(normals, offsets, polys):
        if len(poly) >= 3:
            vol += (polygon_area_vector(poly) @ n) * d / 3.0
    return max(vol, 0.0)
