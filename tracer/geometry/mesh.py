"""Closed triangle meshes (STL, OBJ, PLY via trimesh) as solids with named planar faces.

A mesh is accepted when, after merging vertices closer than ``VERTEX_MERGE_TOL`` and
dropping zero-area triangles, every edge belongs to exactly two triangles that traverse
it in opposite directions (closed, manifold, consistently wound). An inside-out mesh is
turned outward. Triangles are grouped into planar facets: edge-neighbours whose normals
agree within ``FACET_ANGLE_TOL`` and that lie in one plane within ``PLANARITY_TOL``
(a lone triangle is a facet of its own). Facets are named ``face_0, face_1, ...`` in the
order of their first triangle, or by a label map. A convex mesh becomes a
:class:`ConvexSolid` (half-space intersection), any other a :class:`MeshSolid`.
"""

from __future__ import annotations

import os
from typing import Mapping, Sequence

import numpy as np

from tracer.geometry import _polytope as pt
from tracer.geometry.errors import GeometryError
from tracer.geometry.solid import ConvexSolid, MeshSolid
from tracer.tolerances import FACET_ANGLE_TOL, PLANARITY_TOL, VERTEX_MERGE_TOL

__all__ = ["mesh_solid", "load_mesh", "group_facets", "check_closed"]


def check_closed(triangles: np.ndarray, *, where: str = "mesh", vertices=None) -> None:
    """Raise ``GeometryError`` unless the triangles form a closed, consistently wound surface."""
    tri = np.asarray(triangles, dtype=np.int64)
    directed = np.concatenate([tri[:, [0, 1]], tri[:, [1, 2]], tri[:, [2, 0]]])
    und = np.sort(directed, axis=1)
    uniq, counts = np.unique(und, axis=0, return_counts=True)

    def at(edge):
        if vertices is None:
            return f"vertices {edge[0]} and {edge[1]}"
        a, b = np.asarray(vertices)[edge]
        return f"({', '.join(f'{x:.6g}' for x in a)}) - ({', '.join(f'{x:.6g}' for x in b)})"

    if np.any(counts == 1):
        open_edges = uniq[counts == 1]
        raise GeometryError(
            f"{where}: not watertight: {len(open_edges)} edges belong to a single triangle "
            f"(a hole in the surface), e.g. the edge {at(open_edges[0])}"
        )
    if np.any(counts > 2):
        bad = uniq[counts > 2]
        raise GeometryError(
            f"{where}: not a manifold: {len(bad)} edges are shared by more than two triangles, "
            f"e.g. the edge {at(bad[0])}"
        )
    _, dcounts = np.unique(directed, axis=0, return_counts=True)
    if np.any(dcounts > 1):
        raise GeometryError(
            f"{where}: inconsistent winding: neighbouring triangles run through a shared edge "
            "in the same direction (some triangles are flipped)"
        )


def group_facets(vertices: np.ndarray, triangles: np.ndarray) -> np.ndarray:
    """(T,) facet label of each triangle: edge-connected coplanar triangles share a label.

    Labels are numbered in the order of each facet's first triangle.
    """
    v = np.asarray(vertices, dtype=float)
    tri = np.asarray(triangles, dtype=np.int64)
    a, b, c = v[tri[:, 0]], v[tri[:, 1]], v[tri[:, 2]]
    n = np.cross(b - a, c - a)
    n /= np.linalg.norm(n, axis=1)[:, None]
    d = np.einsum("ij,ij->i", n, a)
    parent = np.arange(len(tri))

    def find(i):
        while parent[i] != i:
            parent[i] = parent[parent[i]]
            i = parent[i]
        return i

    directed = np.concatenate([tri[:, [0, 1]], tri[:, [1, 2]], tri[:, [2, 0]]])
    owner = np.tile(np.arange(len(tri)), 3)
    key = np.sort(directed, axis=1)
    order = np.lexsort((key[:, 1], key[:, 0]))
    ks, ow = key[order], owner[order]
    same = np.all(ks[1:] == ks[:-1], axis=1)
    t1, t2 = ow[:-1][same], ow[1:][same]
    cos_tol = np.cos(FACET_ANGLE_TOL)
    coplanar = np.einsum("ij,ij->i", n[t1], n[t2]) >= cos_tol
    # the far vertices of the second triangle must lie on the first's plane
    far = np.max(np.abs(np.einsum("tkj,tj->tk", v[tri[t2]], n[t1]) - d[t1][:, None]), axis=1)
    coplanar &= far <= PLANARITY_TOL
    for i, j in zip(t1[coplanar], t2[coplanar]):
        ri, rj = find(i), find(j)
        if ri != rj:
            parent[max(ri, rj)] = min(ri, rj)
    roots = np.array([find(i) for i in range(len(tri))])
    _, first, labels = np.unique(roots, return_index=True, return_inverse=True)
    rank = np.argsort(np.argsort(first))
    return rank[labels]


def mesh_solid(
    vertices,
    triangles,
    *,
    labels: Mapping[str, int | Sequence[int]] | None = None,
    where: str = "mesh",
    convex: bool | None = None,
):
    """A closed triangle mesh as a solid with named planar faces.

    Parameters
    ----------
    vertices : (V, 3) float [m]
    triangles : (T, 3) int
    labels : mapping name -> int or sequence of int, optional
        ``name: i`` renames automatic facet ``i`` (``face_i``); ``name: [t0, t1, ...]``
        declares a face made of those triangles (they must be coplanar, else
        ``GeometryError``). Remaining triangles form automatic facets ``face_i``.
    where : str
        Prefix for error messages (file name, key path).
    convex : bool, optional
        Force (True) or refuse (False) the :class:`ConvexSolid` form; default: convex
        meshes become ConvexSolid.

    Examples
    --------
    >>> import trimesh
    >>> box = trimesh.creation.box(extents=[1, 2, 3])
    >>> s = mesh_solid(box.vertices, box.faces)
    >>> type(s).__name__, len(s.face_names), round(s.volume, 12)
    ('ConvexSolid', 6, 6.0)
    """
    v = np.asarray(vertices, dtype=float).reshape(-1, 3)
    tri = np.asarray(triangles, dtype=np.int64).reshape(-1, 3)
    if len(tri) < 4:
        raise GeometryError(f"{where}: a closed mesh needs at least 4 triangles, got {len(tri)}")
    if not np.all(np.isfinite(v)):
        raise GeometryError(f"{where}: vertices must be finite numbers")
    if tri.min() < 0 or tri.max() >= len(v):
        raise GeometryError(f"{where}: triangle vertex index out of range")
    v, remap = pt.merge_points(v, VERTEX_MERGE_TOL)
    tri = remap[tri]
    original = np.arange(len(tri))
    a, b, c = v[tri[:, 0]], v[tri[:, 1]], v[tri[:, 2]]
    area = 0.5 * np.linalg.norm(np.cross(b - a, c - a), axis=1)
    keep = (area > VERTEX_MERGE_TOL**2) & (tri[:, 0] != tri[:, 1]) & (tri[:, 1] != tri[:, 2]) & (
        tri[:, 2] != tri[:, 0]
    )
    tri, original = tri[keep], original[keep]
    check_closed(tri, where=where, vertices=v)
    a, b, c = v[tri[:, 0]], v[tri[:, 1]], v[tri[:, 2]]
    vol = np.einsum("ij,ij->i", a, np.cross(b, c)).sum() / 6.0
    if vol == 0:
        raise GeometryError(f"{where}: the mesh encloses no volume")
    if vol < 0:
        tri = tri[:, ::-1].copy()
    used = np.unique(tri)
    lut = np.full(len(v), -1)
    lut[used] = np.arange(len(used))
    v, tri = v[used], lut[tri]

    face_of = np.full(len(tri), -1, dtype=np.int64)
    names: list[str] = []
    renames: dict[int, str] = {}
    pos_of = {int(o): i for i, o in enumerate(original)}
    for name, spec in (labels or {}).items():
        if isinstance(spec, (int, np.integer)):
            renames[int(spec)] = str(name)
            continue
        idx = []
        for t in spec:
            if int(t) not in pos_of:
                raise GeometryError(f"{where}: face {name!r}: no triangle {t} (or it has zero area)")
            idx.append(pos_of[int(t)])
        idx = np.array(idx, dtype=np.int64)
        if np.any(face_of[idx] >= 0):
            raise GeometryError(f"{where}: face {name!r} shares triangles with another declared face")
        face_of[idx] = len(names)
        names.append(str(name))
    rest = np.flatnonzero(face_of < 0)
    if len(rest):
        auto = group_facets(v, tri[rest])
        count = int(auto.max()) + 1
        bad = [k for k in renames if not 0 <= k < count]
        if bad:
            raise GeometryError(f"{where}: label map names facets {bad}, but the mesh has facets 0..{count - 1}")
        base = len(names)
        face_of[rest] = auto + base
        names += [renames.get(k, f"face_{k}") for k in range(count)]
    solid = MeshSolid(v, tri, face_of, names)
    if convex is False or (convex is None and not solid.is_convex):
        return solid
    if not solid.is_convex:
        raise GeometryError(f"{where}: the mesh is not convex")
    return ConvexSolid(solid.face_normals, solid.face_offsets, solid.face_names)


def load_mesh(
    path: str | os.PathLike,
    *,
    unit: float = 1.0,
    labels: Mapping[str, int | Sequence[int]] | None = None,
    where: str | None = None,
    convex: bool | None = None,
):
    """Read a closed mesh file (STL, OBJ, PLY, ... anything trimesh reads) as a solid.

    Parameters
    ----------
    path : path of the file
    unit : float [m]
        Length of one file unit in metres (1e-3 for a file in millimetres).
    labels, convex : see :func:`mesh_solid`.
    where : str, optional
        Prefix for error messages; default the file name.
    """
    import trimesh

    where = where or os.fspath(path)
    if not os.path.isfile(path):
        raise GeometryError(f"{where}: mesh file not found")
    u = float(unit)
    if not np.isfinite(u) or u <= 0:
        raise GeometryError(f"{where}: unit must be a positive length, got {unit!r}")
    try:
        mesh = trimesh.load(os.fspath(path), force="mesh", process=False)
    except Exception as exc:  # noqa: BLE001 - any reader failure is a user-file problem
        raise GeometryError(f"{where}: could not read the mesh ({exc})") from exc
    if not hasattr(mesh, "faces") or len(mesh.faces) == 0:
        raise GeometryError(f"{where}: the file holds no triangles")
    return mesh_solid(np.asarray(mesh.vertices) * u, np.asarray(mesh.faces), labels=labels, where=where, convex=convex)
