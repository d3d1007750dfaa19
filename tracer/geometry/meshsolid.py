"""Closed triangle meshes grouped into named planar faces (:class:`MeshSolid`).

Used for non-convex extrusions and imported meshes; rays intersect it through trimesh's
ray interface when that runs here, else through the numpy triangle backend (see
:mod:`tracer.geometry.intersect`). The contract is :class:`tracer.geometry.solid.Solid`.
"""

from __future__ import annotations

from functools import cached_property

import numpy as np

from tracer.geometry import _polytope as pt
from tracer.geometry.errors import GeometryError
from tracer.geometry.intersect import get_backend
from tracer.geometry.solid import _check_names, _FacedSolid
from tracer.geometry.transforms import check_rotation
from tracer.tolerances import FACET_ANGLE_TOL, PLANARITY_TOL, PLANE_EPS

__all__ = ["MeshSolid", "DEFAULT_MESH_BACKEND"]

#: Backend used by :meth:`MeshSolid.intersect` unless the solid names its own:
#: ``"auto"`` takes trimesh's ray interface when it runs here, else ``"triangles"``.
DEFAULT_MESH_BACKEND = "auto"


class MeshSolid(_FacedSolid):
    """A closed triangle mesh whose triangles are grouped into named planar faces.

    Parameters
    ----------
    vertices : (V, 3) float [m]
    triangles : (T, 3) int
        Counter-clockwise seen from outside; the mesh must be closed.
    triangle_face : (T,) int
        Face index of each triangle (0 .. F-1, every face used).
    names : sequence of F str
    pieces : list of (normals, offsets, sign), optional
        A signed decomposition into convex pieces (for overlap tests); by default the
        signed tetrahedra from the centroid of the vertices.
    backend : str, optional
        Intersection backend (``"trimesh"``, ``"triangles"``); default
        :data:`DEFAULT_MESH_BACKEND`.

    Raises
    ------
    GeometryError
        A face whose triangles are not coplanar (within ``PLANARITY_TOL``).
    """

    def __init__(self, vertices, triangles, triangle_face, names, *, pieces=None, backend=None):
        self._vertices = np.asarray(vertices, dtype=float).reshape(-1, 3)
        self._tris = np.asarray(triangles, dtype=np.int64).reshape(-1, 3)
        self._tface = np.asarray(triangle_face, dtype=np.int64).reshape(-1)
        if len(self._tface) != len(self._tris):
            raise GeometryError(f"{len(self._tris)} triangles but {len(self._tface)} face labels")
        nf = int(self._tface.max()) + 1 if len(self._tface) else 0
        self.face_names = _check_names(names, nf)
        if set(np.unique(self._tface)) != set(range(nf)):
            raise GeometryError("every face needs at least one triangle")
        self._pieces = pieces
        self._backend = backend
        self._ray_mesh = None
        self._build_faces()

    # -- construction --------------------------------------------------------------
    def _build_faces(self):
        v, tri, tf = self._vertices, self._tris, self._tface
        a, b, c = v[tri[:, 0]], v[tri[:, 1]], v[tri[:, 2]]
        cross = np.cross(b - a, c - a)
        tri_area = 0.5 * np.linalg.norm(cross, axis=1)
        nf = len(self.face_names)
        normals = np.zeros((nf, 3))
        np.add.at(normals, tf, cross)
        norm = np.linalg.norm(normals, axis=1)
        if np.any(norm == 0):
            raise GeometryError("a face has zero area")
        normals /= norm[:, None]
        offsets = np.zeros(nf)
        areas = np.zeros(nf)
        cents = np.zeros((nf, 3))
        np.add.at(areas, tf, tri_area)
        np.add.at(cents, tf, tri_area[:, None] * (a + b + c) / 3.0)
        cents /= areas[:, None]
        offsets = np.einsum("ij,ij->i", normals, cents)
        for k in range(3):
            dev = np.abs(np.einsum("ij,ij->i", v[tri[:, k]], normals[tf]) - offsets[tf])
            if np.any(dev > PLANARITY_TOL):
                bad = self.face_names[tf[np.argmax(dev)]]
                raise GeometryError(
                    f"face {bad!r} is not planar: a vertex lies {dev.max():.3g} m off its plane "
                    f"(tolerance {PLANARITY_TOL:g} m)"
                )
        self.face_normals = normals
        self.face_offsets = offsets
        self._areas_centroids = (areas, cents)
        self.face_polygons = [self._boundary(i) for i in range(nf)]
        self.bounds = np.array([v[np.unique(tri)].min(axis=0), v[np.unique(tri)].max(axis=0)])
        self.volume = float(np.einsum("ij,ij->i", a, np.cross(b, c)).sum() / 6.0)
        if self.volume <= 0:
            raise GeometryError("the mesh encloses no volume (or is wound inside out)")

    def _boundary(self, i: int) -> np.ndarray:
        """Outer boundary loop of face ``i`` (CCW from outside), collinear vertices dropped."""
        tri = self._tris[self._tface == i]
        edges = np.concatenate([tri[:, [0, 1]], tri[:, [1, 2]], tri[:, [2, 0]]])
        fwd = {tuple(e) for e in edges.tolist()}
        bnd = [e for e in edges.tolist() if (e[1], e[0]) not in fwd]
        nxt: dict[int, list[int]] = {}
        for s, e in bnd:
            nxt.setdefault(s, []).append(e)
        loops = []
        used: set[tuple[int, int]] = set()
        for s, e in bnd:
            if (s, e) in used:
                continue
            loop = [s]
            cur, prev = e, s
            used.add((s, e))
            while cur != s and len(loop) <= len(bnd):
                loop.append(cur)
                options = [x for x in nxt.get(cur, []) if (cur, x) not in used]
                if not options:
                    break
                used.add((cur, options[0]))
                prev, cur = cur, options[0]
            loops.append(np.array(loop))
        n = self.face_normals[i]
        best = max(loops, key=lambda lp: pt.polygon_area_vector(self._vertices[lp]) @ n)
        poly = self._vertices[best]
        keep = []
        k = len(poly)
        for j in range(k):
            p0, p1, p2 = poly[j - 1], poly[j], poly[(j + 1) % k]
            if np.linalg.norm(np.cross(p1 - p0, p2 - p1)) > 1e-12 * max(
                np.linalg.norm(p1 - p0) * np.linalg.norm(p2 - p1), 1e-300
            ):
                keep.append(j)
        return poly[keep] if len(keep) >= 3 else poly

    # -- contract ------------------------------------------------------------------
    @cached_property
    def is_convex(self) -> bool:  # type: ignore[override]
        """True when every vertex lies behind every face plane and no two faces share a plane."""
        d = self._vertices @ self.face_normals.T - self.face_offsets
        if np.any(d > PLANARITY_TOL):
            return False
        cos = self.face_normals @ self.face_normals.T - 3 * np.eye(len(self.face_names))
        return not np.any(cos > np.cos(FACET_ANGLE_TOL))

    @property
    def vertices(self) -> np.ndarray:
        """(V, 3) vertices [m]."""
        return self._vertices.copy()

    def triangles(self):
        """(vertices (V,3), triangles (T,3) CCW from outside, face of each triangle (T,))."""
        return self._vertices, self._tris, self._tface

    def contains(self, points, *, tol: float = PLANE_EPS) -> np.ndarray:
        """(N,) bool: points inside (generalised winding number > 1/2).

        Winding number as the sum of the triangles' signed solid angles over 4 pi
        (A. Van Oosterom and J. Strackee, "The solid angle of a plane triangle", IEEE
        Trans. Biomed. Eng. 30(2), 1983). Points within ``tol`` [m] of a face count
        as inside.
        """
        p = np.asarray(points, dtype=float).reshape(-1, 3)
        out = np.zeros(len(p), dtype=bool)
        tri = self._vertices[self._tris]
        step = max(1, (1 << 20) // max(1, len(tri)))
        for s in range(0, len(p), step):
            q = p[s : s + step]
            a = tri[None, :, 0] - q[:, None]
            b = tri[None, :, 1] - q[:, None]
            c = tri[None, :, 2] - q[:, None]
            la, lb, lc = (np.linalg.norm(x, axis=2) for x in (a, b, c))
            num = np.einsum("ptk,ptk->pt", a, np.cross(b, c))
            den = (
                la * lb * lc
                + np.einsum("ptk,ptk->pt", a, b) * lc
                + np.einsum("ptk,ptk->pt", b, c) * la
                + np.einsum("ptk,ptk->pt", c, a) * lb
            )
            w = 2.0 * np.arctan2(num, den).sum(axis=1) / (4 * np.pi)  # Eq. 8 in Van Oosterom
            out[s : s + step] = w > 0.5
        if tol > 0:
            out |= self._near_boundary(p, tol)
        return out

    def _near_boundary(self, p, tol):
        # distance to each face plane and inside that face's triangles (2D barycentric test)
        v, tri, tf = self._vertices, self._tris, self._tface
        a, b, c = v[tri[:, 0]], v[tri[:, 1]], v[tri[:, 2]]
        n = self.face_normals[tf]
        dist = p @ n.T - np.einsum("ij,ij->i", n, a)  # (N, T)
        near = np.abs(dist) <= tol
        if not near.any():
            return np.zeros(len(p), dtype=bool)
        q = p[:, None, :] - dist[:, :, None] * n[None]
        e0, e1 = b - a, c - a
        w = q - a[None]
        d00 = np.einsum("ij,ij->i", e0, e0)
        d01 = np.einsum("ij,ij->i", e0, e1)
        d11 = np.einsum("ij,ij->i", e1, e1)
        d20 = np.einsum("ptk,tk->pt", w, e0)
        d21 = np.einsum("ptk,tk->pt", w, e1)
        den = d00 * d11 - d01 * d01
        bv = (d11 * d20 - d01 * d21) / den
        bw = (d00 * d21 - d01 * d20) / den
        inside = (bv >= -1e-9) & (bw >= -1e-9) & (bv + bw <= 1 + 1e-9)
        return np.any(near & inside, axis=1)

    def transformed(self, rotation, translation) -> "MeshSolid":
        """The solid rotated by ``rotation`` (3, 3) about the origin, then moved by ``translation`` [m]."""
        r = check_rotation(rotation)
        t = np.asarray(translation, dtype=float).reshape(3)
        pieces = None
        if self._pieces is not None:
            pieces = [(n @ r.T, d + (n @ r.T) @ t, s) for n, d, s in self._pieces]
        return MeshSolid(
            self._vertices @ r.T + t, self._tris, self._tface, self.face_names,
            pieces=pieces, backend=self._backend,
        )

    def intersect(self, origins, directions, inside):
        """Entry (``inside`` False) or exit (True) of each ray: ``(t (N,) [m], face (N,))``.

        Through trimesh's ray interface when available (or the backend named at
        construction), else the numpy triangle backend; triangles map to named faces.
        """
        name = self._backend or DEFAULT_MESH_BACKEND
        if name == "auto":
            name = "trimesh" if _trimesh_rays() else "triangles"
        return get_backend(name).intersect(self, origins, directions, inside)

    def convex_pieces(self) -> list[tuple[np.ndarray, np.ndarray, float]]:
        """Convex pieces ``(normals, offsets, sign)`` whose signed indicator sum is the solid.

        Default: the tetrahedra joining each triangle to the centroid of the vertices,
        signed by orientation (their signed indicators add up to the solid's indicator
        almost everywhere for a closed outward-wound mesh).
        """
        if self._pieces is not None:
            return list(self._pieces)
        v, tri, _ = self.triangles()
        apex = v.mean(axis=0)
        out = []
        for t in tri:
            a, b, c = v[t]
            vol = np.dot(a - apex, np.cross(b - apex, c - apex)) / 6.0
            if abs(vol) < 1e-30:
                continue
            sign = 1.0 if vol > 0 else -1.0
            out.append((*_tetra_planes(apex, a, b, c), sign))
        return out


def _tetra_planes(p0, p1, p2, p3):
    pts = np.array([p0, p1, p2, p3])
    centre = pts.mean(axis=0)
    normals, offsets = [], []
    for skip in range(4):
        q = np.delete(pts, skip, axis=0)
        n = np.cross(q[1] - q[0], q[2] - q[0])
        n /= np.linalg.norm(n)
        d = n @ q[0]
        if n @ centre > d:
            n, d = -n, -d
        normals.append(n)
        offsets.append(d)
    return np.array(normals), np.array(offsets)


_TRIMESH_RAYS: bool | None = None


def _trimesh_rays() -> bool:
    global _TRIMESH_RAYS
    if _TRIMESH_RAYS is None:
        from tracer.geometry.intersect import TrimeshBackend

        _TRIMESH_RAYS = TrimeshBackend.available()
    return _TRIMESH_RAYS
