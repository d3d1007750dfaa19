"""Straight extrusion of a simple polygon into a solid with named faces.

Local frame: the polygon lies in the x-y plane and is extruded along z symmetrically,
from ``z = -height/2`` (face ``bottom``, normal -z) to ``z = +height/2`` (face ``top``,
normal +z), so that rays in the plane z = 0 (2D scenes) stay inside the solid's z-range.
Side face ``side_i`` is the one on the edge from vertex ``i`` to vertex ``i+1`` (cyclic),
whatever the polygon's orientation. A convex polygon gives a :class:`ConvexSolid`, a
non-convex one a :class:`MeshSolid` (caps triangulated by ear clipping, mapbox-earcut).
"""

from __future__ import annotations

from typing import Sequence

import numpy as np
import shapely

from tracer.geometry.errors import GeometryError
from tracer.geometry.solid import ConvexSolid, MeshSolid
from tracer.tolerances import VERTEX_MERGE_TOL

__all__ = ["extrude_polygon", "check_polygon"]


def check_polygon(vertices, *, where: str = "polygon") -> np.ndarray:
    """Validate a simple 2D polygon and return it as a (k, 2) float array [m].

    Raises
    ------
    GeometryError
        Fewer than 3 vertices, non-finite values, repeated or collinear consecutive
        vertices, a self-intersecting (not simple) outline, or zero area.

    Examples
    --------
    >>> check_polygon([[0, 0], [1, 0], [1, 1], [1, 2]])
    Traceback (most recent call last):
    ...
    tracer.geometry.errors.GeometryError: polygon: vertices 1, 2, 3 are collinear; remove vertex 2
    """
    p = np.asarray(vertices, dtype=float)
    if p.ndim != 2 or p.shape[1] != 2 or len(p) < 3:
        raise GeometryError(f"{where}: expected at least 3 vertices as (x, y) pairs, got shape {p.shape}")
    if not np.all(np.isfinite(p)):
        raise GeometryError(f"{where}: vertices must be finite numbers")
    k = len(p)
    scale = float(np.ptp(p, axis=0).max())
    for i in range(k):
        if np.linalg.norm(p[(i + 1) % k] - p[i]) <= VERTEX_MERGE_TOL:
            raise GeometryError(f"{where}: vertices {i} and {(i + 1) % k} coincide")
    for i in range(k):
        a, b, c = p[i - 1], p[i], p[(i + 1) % k]
        e1, e2 = b - a, c - b
        cross = e1[0] * e2[1] - e1[1] * e2[0]
        if abs(cross) <= 1e-12 * np.linalg.norm(e1) * np.linalg.norm(e2):
            raise GeometryError(
                f"{where}: vertices {(i - 1) % k}, {i}, {(i + 1) % k} are collinear; remove vertex {i}"
            )
    ring = shapely.LinearRing(p)
    if not ring.is_simple:
        raise GeometryError(f"{where}: the outline crosses itself (not a simple polygon)")
    poly = shapely.Polygon(p)
    if not poly.is_valid:
        raise GeometryError(f"{where}: invalid polygon ({shapely.is_valid_reason(poly)})")
    if poly.area <= (VERTEX_MERGE_TOL * scale):
        raise GeometryError(f"{where}: the polygon has no area")
    return p


def _is_convex(p: np.ndarray) -> bool:
    e = np.roll(p, -1, axis=0) - p
    cross = e[:, 0] * np.roll(e, -1, axis=0)[:, 1] - e[:, 1] * np.roll(e, -1, axis=0)[:, 0]
    return bool(np.all(cross > 0) or np.all(cross < 0))


def extrude_polygon(
    vertices,
    *,
    height: float,
    side_names: Sequence[str] | None = None,
    top: str = "top",
    bottom: str = "bottom",
    where: str = "polygon",
):
    """Extrude a simple polygon in the x-y plane along z, centred on z = 0.

    Parameters
    ----------
    vertices : (k, 2) float [m]
        Outline in either orientation; no holes, no repeated or collinear neighbours.
    height : float [m]
        Extent along z (from -height/2 to +height/2).
    side_names : sequence of k str, optional
        Names of the side faces (edge i from vertex i to i+1); default ``side_0 ...``.
    top, bottom : str
        Names of the +z and -z faces.
    where : str
        Prefix for error messages (e.g. the scene key path).

    Returns
    -------
    ConvexSolid or MeshSolid

    Examples
    --------
    >>> s = extrude_polygon([[0, 0], [2, 0], [2, 1], [1, 1], [1, 2], [0, 2]], height=1.0)
    >>> type(s).__name__, round(s.volume, 12), s.face_names[:2]
    ('MeshSolid', 3.0, ('side_0', 'side_1'))
    """
    p = check_polygon(vertices, where=where)
    h = float(height)
    if not np.isfinite(h) or h <= 0:
        raise GeometryError(f"{where}: height must be a positive length, got {height!r}")
    k = len(p)
    names = [f"side_{i}" for i in range(k)] if side_names is None else list(side_names)
    if len(names) != k:
        raise GeometryError(f"{where}: {k} edges but {len(names)} side names")
    names += [top, bottom]
    ccw = shapely.Polygon(p).exterior.is_ccw
    q = p if ccw else p[::-1]  # CCW copy for caps
    lo = np.column_stack([p, np.full(k, -h / 2)])
    hi = np.column_stack([p, np.full(k, h / 2)])
    sides = []
    for i in range(k):
        j = (i + 1) % k
        quad = np.array([lo[i], lo[j], hi[j], hi[i]])
        sides.append(quad if ccw else quad[::-1])
    top_poly = np.column_stack([q, np.full(k, h / 2)])
    bot_poly = np.column_stack([q[::-1], np.full(k, -h / 2)])
    if _is_convex(p):
        e = np.roll(p, -1, axis=0) - p
        out = np.column_stack([e[:, 1], -e[:, 0]]) * (1.0 if ccw else -1.0)
        out /= np.linalg.norm(out, axis=1)[:, None]
        normals = np.vstack([np.column_stack([out, np.zeros(k)]), [[0, 0, 1.0]], [[0, 0, -1.0]]])
        offsets = np.concatenate([np.einsum("ij,ij->i", out, p), [h / 2, h / 2]])
        return ConvexSolid(normals, offsets, names, polygons=sides + [top_poly, bot_poly])
    return _extrude_mesh(p, h, names, ccw)


def _extrude_mesh(p: np.ndarray, h: float, names: list[str], ccw: bool) -> MeshSolid:
    import mapbox_earcut

    k = len(p)
    cap = mapbox_earcut.triangulate_float64(p, np.array([k], dtype=np.uint32)).reshape(-1, 3)
    cap = cap.astype(np.int64)
    a, b, c = p[cap[:, 0]], p[cap[:, 1]], p[cap[:, 2]]
    cw = ((b - a)[:, 0] * (c - a)[:, 1] - (b - a)[:, 1] * (c - a)[:, 0]) < 0
    cap[cw] = cap[cw][:, ::-1]  # make every cap triangle CCW in x-y
    verts = np.vstack([np.column_stack([p, np.full(k, -h / 2)]), np.column_stack([p, np.full(k, h / 2)])])
    tris, owner = [], []
    for i in range(k):
        j = (i + 1) % k
        quad = [[i, j, k + j], [i, k + j, k + i]]
        if not ccw:
            quad = [t[::-1] for t in quad]
        tris += quad
        owner += [i, i]
    tris += (cap + k).tolist()  # top, CCW seen from +z
    owner += [k] * len(cap)
    tris += cap[:, ::-1].tolist()  # bottom, CCW seen from -z
    owner += [k + 1] * len(cap)
    pieces = []
    for t in cap:  # convex decomposition: one triangular prism per cap triangle
        tri2 = p[t]
        e = np.roll(tri2, -1, axis=0) - tri2
        out = np.column_stack([e[:, 1], -e[:, 0]])
        out /= np.linalg.norm(out, axis=1)[:, None]
        n = np.vstack([np.column_stack([out, np.zeros(3)]), [[0, 0, 1.0]], [[0, 0, -1.0]]])
        d = np.concatenate([np.einsum("ij,ij->i", out, tri2), [h / 2, h / 2]])
        pieces.append((n, d, 1.0))
    return MeshSolid(verts, np.array(tris), np.array(owner), names, pieces=pieces)
