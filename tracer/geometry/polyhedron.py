"""Convex polyhedra from a cloud of vertices (their convex hull, coplanar facets merged).

Faces are named ``face_0, face_1, ...`` in the order they are found (deterministic for a
given vertex list); :meth:`ConvexSolid.face_facing` finds a face by direction. Points that
lie within ``PLANARITY_TOL`` of a hull plane belong to that face, so a face given by
slightly rounded coordinates is still one face (its plane is the least-squares fit).
"""

from __future__ import annotations

import itertools
from typing import Sequence

import numpy as np

from tracer.geometry import _polytope as pt
from tracer.geometry.errors import GeometryError
from tracer.geometry.solid import ConvexSolid
from tracer.tolerances import PLANARITY_TOL, VERTEX_MERGE_TOL

__all__ = ["convex_polyhedron", "hull_planes"]

_BRUTE_FORCE_MAX = 64  # up to this many points, candidate planes from all vertex triples


def hull_planes(points, *, tol: float = PLANARITY_TOL, where: str = "polyhedron"):
    """Outward unit normals (F, 3) and offsets (F,) [m] of the convex hull's faces.

    Parameters
    ----------
    points : (N, 3) float [m]
    tol : float [m]
        Points this close to a hull plane lie on that face.
    """
    p, _ = pt.merge_points(np.asarray(points, dtype=float).reshape(-1, 3), VERTEX_MERGE_TOL)
    if len(p) < 4:
        raise GeometryError(f"{where}: a solid needs at least 4 distinct vertices, got {len(p)}")
    if not np.all(np.isfinite(p)):
        raise GeometryError(f"{where}: vertices must be finite numbers")
    centred = p - p.mean(axis=0)
    sv = np.linalg.svd(centred, compute_uv=False)
    if sv[-1] <= tol * np.sqrt(len(p)):
        raise GeometryError(f"{where}: the vertices are (nearly) coplanar; they enclose no volume")
    if len(p) <= _BRUTE_FORCE_MAX:
        trip = np.array(list(itertools.combinations(range(len(p)), 3)), dtype=np.int64)
    else:
        import trimesh  # convex hull of many points (uses scipy's qhull)

        try:
            hull = trimesh.convex.convex_hull(p)
            trip = np.asarray(hull.faces, dtype=np.int64)
            hull_v = np.asarray(hull.vertices)
        except Exception as exc:  # noqa: BLE001
            raise GeometryError(
                f"{where}: convex hull of {len(p)} points needs scipy ({exc}); "
                f"give at most {_BRUTE_FORCE_MAX} vertices"
            ) from exc
        p = hull_v
    a, b, c = p[trip[:, 0]], p[trip[:, 1]], p[trip[:, 2]]
    n = np.cross(b - a, c - a)
    norm = np.linalg.norm(n, axis=1)
    scale = np.ptp(p, axis=0).max()
    ok = norm > 1e-9 * scale * scale
    n = n[ok] / norm[ok, None]
    d = np.einsum("ij,ij->i", n, a[ok])
    s = p @ n.T - d  # (P, T)
    below = np.all(s <= tol, axis=0)
    above = np.all(s >= -tol, axis=0)
    n = np.vstack([n[below], -n[above]])
    d = np.concatenate([d[below], -d[above]])
    support = np.abs(p @ n.T - d) <= tol  # (P, K) points on each candidate plane
    seen: dict[bytes, int] = {}
    normals, offsets = [], []
    for k in range(len(n)):
        key = np.packbits(support[:, k]).tobytes()
        if key in seen or support[:, k].sum() < 3:
            continue
        seen[key] = k
        q = p[support[:, k]]
        centre = q.mean(axis=0)
        _, _, vt = np.linalg.svd(q - centre)
        m = vt[-1]
        if m @ n[k] < 0:
            m = -m
        normals.append(m)
        offsets.append(m @ centre)
    return np.array(normals), np.array(offsets)


def convex_polyhedron(
    vertices, *, names: Sequence[str] | None = None, where: str = "polyhedron"
) -> ConvexSolid:
    """The convex hull of ``vertices`` as a :class:`ConvexSolid`.

    Parameters
    ----------
    vertices : (N, 3) float [m]
        Points; interior points are ignored.
    names : sequence of str, optional
        Names for the faces in the order found (default ``face_0 ...``).
    where : str
        Prefix for error messages.

    Examples
    --------
    A unit cube given by its corners (plus a point inside) has six faces:

    >>> import itertools, numpy as np
    >>> pts = np.array(list(itertools.product([0, 1.0], repeat=3)) + [[0.5, 0.5, 0.5]])
    >>> cube = convex_polyhedron(pts)
    >>> len(cube.face_names), round(cube.volume, 12)
    (6, 1.0)
    """
    n, d = hull_planes(vertices, where=where)
    labels = [f"face_{i}" for i in range(len(n))] if names is None else list(names)
    if len(labels) != len(n):
        raise GeometryError(f"{where}: the hull has {len(n)} faces but {len(labels)} names were given")
    return ConvexSolid(n, d, labels)
