"""Solids bounded by named planar faces.

Two kinds share one contract (:class:`Solid`); :class:`MeshSolid` lives in
:mod:`tracer.geometry.meshsolid` and is re-exported here:

:class:`ConvexSolid`
    An intersection of half-spaces ``n_i . x <= d_i``, one named face per plane; rays
    intersect it through the half-space backend.
:class:`MeshSolid`
    A closed, outward-wound triangle mesh whose triangles are grouped into named planar
    faces (non-convex extrusions, imported meshes); rays intersect it through a triangle
    backend (trimesh's ray interface when it runs here, else numpy).

Conventions: lengths in metres; ``face_normals`` are outward unit vectors; face ``i``
lies in the plane ``face_normals[i] . x = face_offsets[i]``; ``face_polygons[i]`` is the
boundary of face ``i``, counter-clockwise seen from outside (its right-hand normal is the
outward normal); ``face_centroid`` is the area centroid.
"""

from __future__ import annotations

from functools import cached_property
from typing import Protocol, Sequence, runtime_checkable

import numpy as np

from tracer.geometry import _polytope as pt
from tracer.geometry.errors import GeometryError
from tracer.geometry.intersect import halfspace_intersect
from tracer.geometry.transforms import check_rotation
from tracer.tolerances import FACET_ANGLE_TOL, PLANARITY_TOL, PLANE_EPS

__all__ = ["Solid", "ConvexSolid", "MeshSolid"]


@runtime_checkable
class Solid(Protocol):
    """The contract every solid meets (used by the engine and the scene loader)."""

    face_names: tuple[str, ...]
    face_normals: np.ndarray  # (F, 3) outward unit
    face_offsets: np.ndarray  # (F,) [m]
    face_polygons: list[np.ndarray]  # (k, 3) [m], CCW seen from outside
    bounds: np.ndarray  # (2, 3) [m]
    volume: float  # [m^3]
    is_convex: bool

    def transformed(self, rotation: np.ndarray, translation: np.ndarray) -> "Solid": ...

    def contains(self, points: np.ndarray) -> np.ndarray: ...

    def to_trimesh(self): ...

    def face_index(self, name: str) -> int: ...

    def face_centroid(self, index: int) -> np.ndarray: ...

    def face_area(self, index: int) -> float: ...

    def triangles(self) -> tuple[np.ndarray, np.ndarray, np.ndarray]: ...

    def intersect(
        self, origins: np.ndarray, directions: np.ndarray, inside: np.ndarray
    ) -> tuple[np.ndarray, np.ndarray]: ...


def _check_names(names: Sequence[str], count: int) -> tuple[str, ...]:
    names = tuple(str(n) for n in names)
    if len(names) != count:
        raise GeometryError(f"{count} faces but {len(names)} face names were given: {names}")
    seen: set[str] = set()
    dup = [n for n in names if n in seen or seen.add(n)]
    if dup:
        raise GeometryError(f"face names must be unique; repeated: {sorted(set(dup))}")
    return names


class _FacedSolid:
    """Shared face bookkeeping (names, areas, centroids, triangulation)."""

    face_names: tuple[str, ...]
    face_normals: np.ndarray
    face_offsets: np.ndarray
    face_polygons: list[np.ndarray]

    def face_index(self, name: str) -> int:
        """Index of the face called ``name`` (``GeometryError`` with the known names if absent)."""
        try:
            return self.face_names.index(name)
        except ValueError:
            raise GeometryError(
                f"no face {name!r} on this solid; its faces are {', '.join(self.face_names)}"
            ) from None

    def _face(self, index_or_name) -> int:
        if isinstance(index_or_name, str):
            return self.face_index(index_or_name)
        i = int(index_or_name)
        if not -len(self.face_names) <= i < len(self.face_names):
            raise GeometryError(f"face index {i} out of range (solid has {len(self.face_names)} faces)")
        return i % len(self.face_names)

    def face_area(self, index: int | str) -> float:
        """Area of face ``index`` (or name) [m^2]."""
        return float(self._areas_centroids[0][self._face(index)])

    def face_centroid(self, index: int | str) -> np.ndarray:
        """Area centroid of face ``index`` (or name) [m], (3,)."""
        return self._areas_centroids[1][self._face(index)].copy()

    def face_frame(self, index: int | str) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """In-plane axes (u, v) and outward normal n of a face, (u, v, n) right-handed.

        ``u = normalise(z x n)`` (so ``u`` lies in the x-y plane for side faces of an
        extrusion along z), ``v = n x u``; for a face whose normal is along +-z, ``u`` is x.
        """
        n = self.face_normals[self._face(index)]
        u, v = pt.plane_frame(n)
        return u, v, n.copy()

    def face_facing(self, direction) -> int:
        """Index of the face whose outward normal is closest to ``direction``."""
        d = np.asarray(direction, dtype=float).reshape(3)
        return int(np.argmax(self.face_normals @ (d / np.linalg.norm(d))))

    @property
    def face_areas(self) -> np.ndarray:
        """(F,) face areas [m^2]."""
        return self._areas_centroids[0].copy()

    @property
    def face_centroids(self) -> np.ndarray:
        """(F, 3) face area centroids [m]."""
        return self._areas_centroids[1].copy()

    @cached_property
    def centroid(self) -> np.ndarray:
        """Volume centroid of the solid [m], (3,)."""
        v, tri, _ = self.triangles()
        a, b, c = v[tri[:, 0]], v[tri[:, 1]], v[tri[:, 2]]
        w = np.einsum("ij,ij->i", a, np.cross(b, c)) / 6.0  # signed tetra volumes from the origin
        return ((a + b + c) / 4.0 * w[:, None]).sum(axis=0) / w.sum()

    def to_trimesh(self):
        """The solid as a ``trimesh.Trimesh`` (outward-wound; vertices merged)."""
        import trimesh

        v, tri, _ = self.triangles()
        return trimesh.Trimesh(vertices=v, faces=tri, process=False)

    def _trimesh_for_rays(self):
        if getattr(self, "_ray_mesh", None) is None:
            self._ray_mesh = self.to_trimesh()
        return self._ray_mesh

    def __repr__(self) -> str:
        return f"{type(self).__name__}(faces={list(self.face_names)}, volume={self.volume:.6g} m^3)"


class ConvexSolid(_FacedSolid):
    """A convex solid: the intersection of half-spaces, one named face per plane.

    Parameters
    ----------
    normals : (F, 3) float
        Outward normals (normalised here).
    offsets : (F,) float [m]
        ``n . x = d`` on each face (for the given, possibly unnormalised, normals).
    names : sequence of F str
        Face names, unique.
    polygons : list of (k, 3) float [m], optional
        Face boundaries when already known (CCW seen from outside); computed from the
        planes when omitted.

    Raises
    ------
    GeometryError
        Planes that do not bound a solid, a plane that is not a face (redundant, or
        touching only in an edge), two faces in one plane.

    Examples
    --------
    >>> import numpy as np
    >>> n = np.vstack([np.eye(3), -np.eye(3)])
    >>> cube = ConvexSolid(n, np.full(6, 0.5), ["px", "py", "pz", "mx", "my", "mz"])
    >>> round(cube.volume, 12), cube.face_area("px"), cube.contains([[0, 0, 0], [1, 0, 0]])
    (1.0, 1.0, array([ True, False]))
    """

    is_convex = True

    def __init__(self, normals, offsets, names, *, polygons=None):
        n = np.asarray(normals, dtype=float).reshape(-1, 3)
        d = np.asarray(offsets, dtype=float).reshape(-1)
        if len(n) != len(d):
            raise GeometryError(f"{len(n)} normals but {len(d)} offsets")
        norm = np.linalg.norm(n, axis=1)
        if np.any(norm == 0) or not np.all(np.isfinite(n)) or not np.all(np.isfinite(d)):
            raise GeometryError("face normals must be finite and non-zero")
        self.face_normals = n / norm[:, None]
        self.face_offsets = d / norm
        self.face_names = _check_names(names, len(n))
        cosines = self.face_normals @ self.face_normals.T - np.eye(len(n)) * 3
        same = np.argwhere(
            (cosines > np.cos(FACET_ANGLE_TOL))
            & (np.abs(self.face_offsets[:, None] - self.face_offsets[None, :]) <= PLANARITY_TOL)
        )
        if len(same):
            i, j = same[0]
            raise GeometryError(
                f"faces {self.face_names[i]!r} and {self.face_names[j]!r} lie in one plane; "
                "a convex solid needs one face per plane (merge them, or drop collinear vertices)"
            )
        if polygons is None:
            _, polys = pt.halfspace_polygons(self.face_normals, self.face_offsets)
        else:
            polys = [np.asarray(p, dtype=float).reshape(-1, 3) for p in polygons]
            if len(polys) != len(n):
                raise GeometryError(f"{len(n)} faces but {len(polys)} polygons")
        empty = [self.face_names[i] for i, p in enumerate(polys) if len(p) < 3]
        if empty:
            raise GeometryError(
                f"planes {empty} do not bound a face of the solid (redundant, or the planes "
                "do not enclose a bounded volume)"
            )
        self.face_polygons = polys
        self._areas_centroids = self._compute_areas()
        closure = (self._areas_centroids[0][:, None] * self.face_normals).sum(axis=0)
        scale = self._areas_centroids[0].sum()
        if np.linalg.norm(closure) > 1e-6 * scale:
            raise GeometryError("the planes do not enclose a bounded solid (its faces do not close)")
        allv = np.vstack(polys)
        self.bounds = np.array([allv.min(axis=0), allv.max(axis=0)])
        self.volume = float((self._areas_centroids[0] * self.face_offsets).sum() / 3.0)
        if self.volume <= 0:
            raise GeometryError("the planes enclose no volume")

    def _compute_areas(self):
        areas = np.empty(len(self.face_polygons))
        cents = np.empty((len(self.face_polygons), 3))
        for i, (poly, nrm) in enumerate(zip(self.face_polygons, self.face_normals)):
            areas[i], cents[i] = pt.polygon_area_centroid(poly, nrm)
        return areas, cents

    @cached_property
    def vertices(self) -> np.ndarray:
        """(V, 3) distinct vertices [m]."""
        v, _ = pt.merge_points(np.vstack(self.face_polygons))
        return v

    def contains(self, points, *, tol: float = PLANE_EPS) -> np.ndarray:
        """(N,) bool: points inside or on the boundary (within ``tol`` [m])."""
        p = np.asarray(points, dtype=float).reshape(-1, 3)
        return np.all(p @ self.face_normals.T <= self.face_offsets + tol, axis=1)

    def transformed(self, rotation, translation) -> "ConvexSolid":
        """The solid rotated by ``rotation`` (3, 3) about the origin, then moved by ``translation`` [m]."""
        r = check_rotation(rotation)
        t = np.asarray(translation, dtype=float).reshape(3)
        n = self.face_normals @ r.T
        d = self.face_offsets + n @ t
        polys = [p @ r.T + t for p in self.face_polygons]
        return ConvexSolid(n, d, self.face_names, polygons=polys)

    def triangles(self):
        """(vertices (V,3), triangles (T,3) CCW from outside, face of each triangle (T,))."""
        if getattr(self, "_tri", None) is None:
            verts, tris, owner = [], [], []
            base = 0
            for i, poly in enumerate(self.face_polygons):
                k = len(poly)
                verts.append(poly)
                fan = np.column_stack([np.zeros(k - 2, int), np.arange(1, k - 1), np.arange(2, k)])
                tris.append(fan + base)
                owner.append(np.full(k - 2, i))
                base += k
            v, label = pt.merge_points(np.vstack(verts))
            tri = label[np.vstack(tris)]
            self._tri = (v, tri, np.concatenate(owner))
        return self._tri

    def intersect(self, origins, directions, inside):
        """Entry (``inside`` False) or exit (True) of each ray: ``(t (N,) [m], face (N,))``.

        ``t`` is inf and ``face`` -1 where there is no hit (half-space backend).
        """
        return halfspace_intersect(self.face_normals, self.face_offsets, origins, directions, inside)

    def convex_pieces(self) -> list[tuple[np.ndarray, np.ndarray, float]]:
        """Convex pieces ``(normals, offsets, sign)`` whose signed sum is the solid."""
        return [(self.face_normals, self.face_offsets, 1.0)]


from tracer.geometry.meshsolid import MeshSolid  # noqa: E402  (re-export; it builds on _FacedSolid)
