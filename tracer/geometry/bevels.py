"""Ground bevels: small symmetric chamfers on the edges of convex solids.

A bevel on the edge shared by faces ``a`` and ``b`` cuts the solid with one more
half-space ``m . x <= d``. With the faces' outward unit normals ``n_a``, ``n_b`` and
``phi`` the angle between them (the solid's interior angle at the edge is ``pi - phi``):

- ``m = (n_a + n_b) / |n_a + n_b|``, so the chamfer face makes equal angles with both
  faces (a bisecting chamfer; for a 90 deg edge, 45 deg to each);
- the chamfer is ``width`` wide measured *across the chamfer face* (perpendicular to the
  edge); its plane lies ``h = (width / 2) tan(phi / 2)`` inside the edge;
- each named face loses a strip ``s = width / (2 cos(phi / 2))`` along the edge (the
  equal legs of the isosceles triangle the cut removes from the cross-section).

For a 90 deg edge ``h = width / 2``, ``s = width / sqrt 2`` and the removed cross-section
is ``width**2 / 4``; for the 60 deg edge of an equilateral prism the removed triangle is
equilateral with side ``width``. (Plane geometry; common practice, no source.)

The chamfer face is named ``bevel_<a>_<b>`` (:func:`bevel_face_name`), in the order the
faces were given. Lengths in metres throughout.

>>> from tracer.geometry.catalog import build
>>> prism = build("right_angle_prism", leg=0.02, height=0.01)
>>> cut = bevelled(prism, [Bevel(("leg_a", "leg_b"), 0.001)])
>>> cut.face_names[-1], round(cut.face_area("bevel_leg_a_leg_b") / 0.01, 12)
('bevel_leg_a_leg_b', 0.001)
>>> round((prism.volume - cut.volume) / (0.001**2 * 0.01 / 4), 9)
1.0
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Sequence

import numpy as np

from tracer.geometry import _polytope as pt
from tracer.geometry.errors import GeometryError
from tracer.tolerances import PLANARITY_TOL, VERTEX_MERGE_TOL
from tracer.units import format_length

__all__ = [
    "Bevel",
    "BevelError",
    "BEVEL_MIN_WIDTH",
    "bevel_face_name",
    "chamfer_plane",
    "chamfer_leg",
    "shared_edge",
    "max_width",
    "bevelled",
]

#: Smallest bevel width [m]: a thousand vertex-merge distances, so that the corners of
#: the chamfer face never merge with the edge's own vertices (1 um).
BEVEL_MIN_WIDTH = 1000 * VERTEX_MERGE_TOL


@dataclass(frozen=True)
class Bevel:
    """One bevel: the edge between ``faces`` (two face names) and its ``width`` [m].

    ``width`` is measured across the chamfer face, perpendicular to the edge.
    """

    faces: tuple[str, str]
    width: float

    @property
    def face(self) -> str:
        """Name of the chamfer face, ``bevel_<a>_<b>``."""
        return bevel_face_name(*self.faces)


class BevelError(GeometryError):
    """A bevel that cannot be cut; ``index`` is the bevel's position in the list given to
    :func:`bevelled` (``None`` when the bevels fail together) and ``key`` the bevel key
    at fault (``"edge"``, ``"width"`` or ``None``)."""

    def __init__(self, message: str, *, index: int | None = None, key: str | None = None):
        super().__init__(message)
        self.index = index
        self.key = key


def bevel_face_name(face_a: str, face_b: str) -> str:
    """Name of the chamfer face on the edge between ``face_a`` and ``face_b``.

    >>> bevel_face_name("leg_a", "hypotenuse")
    'bevel_leg_a_hypotenuse'
    """
    return f"bevel_{face_a}_{face_b}"


def chamfer_plane(normal_a, offset_a, normal_b, offset_b, *, width):
    """Plane ``m . x = d`` of the symmetric chamfer of width ``width`` on the edge of two
    planes ``n_a . x = d_a`` and ``n_b . x = d_b``.

    Parameters
    ----------
    normal_a, normal_b : (..., 3) float
        Outward unit normals of the two faces (not parallel).
    offset_a, offset_b : (...,) float [m]
        Plane offsets.
    width : (...,) float [m]
        Width of the chamfer face, across it (perpendicular to the edge).

    Returns
    -------
    m : (..., 3) float
        Outward unit normal of the chamfer, ``(n_a + n_b) / |n_a + n_b|``.
    d : (...,) float [m]
        Its offset: the edge's ``m . x`` less ``h = (width / 2) tan(phi / 2)``.

    >>> m, d = chamfer_plane([1.0, 0, 0], 0.0, [0, 1.0, 0], 0.0, width=np.sqrt(2))
    >>> m.round(12).tolist(), round(float(d), 12)
    ([0.707106781187, 0.707106781187, 0.0], -0.707106781187)
    """
    na = np.asarray(normal_a, dtype=float)
    nb = np.asarray(normal_b, dtype=float)
    s = na + nb
    norm = np.linalg.norm(s, axis=-1)  # = 2 cos(phi / 2)
    m = s / norm[..., None]
    cos_phi = np.clip(np.einsum("...i,...i->...", na, nb), -1.0, 1.0)
    # tan(phi / 2) = sqrt((1 - cos phi) / (1 + cos phi))
    tan_half = np.sqrt((1.0 - cos_phi) / (1.0 + cos_phi))
    d_edge = (np.asarray(offset_a, dtype=float) + np.asarray(offset_b, dtype=float)) / norm
    return m, d_edge - 0.5 * np.asarray(width, dtype=float) * tan_half


def chamfer_leg(normal_a, normal_b, *, width):
    """Strip each face loses along the edge, ``s = width / (2 cos(phi / 2))`` [m].

    Parameters
    ----------
    normal_a, normal_b : (..., 3) float
        Outward unit normals of the two faces.
    width : (...,) float [m]
        Width of the chamfer face.

    >>> round(float(chamfer_leg([1.0, 0, 0], [0, 1.0, 0], width=1.0)), 12)  # 1 / sqrt 2
    0.707106781187
    """
    s = np.asarray(normal_a, dtype=float) + np.asarray(normal_b, dtype=float)
    return np.asarray(width, dtype=float) / np.linalg.norm(s, axis=-1)


def _on_plane(points: np.ndarray, normal: np.ndarray, offset: float) -> np.ndarray:
    return np.abs(points @ normal - offset) <= PLANARITY_TOL


def shared_edge(solid, face_a: str, face_b: str) -> np.ndarray | None:
    """End points ``(2, 3)`` [m] of the edge faces ``face_a`` and ``face_b`` share, or
    ``None`` when they meet in a point or not at all."""
    ia, ib = solid.face_index(face_a), solid.face_index(face_b)
    poly = np.asarray(solid.face_polygons[ia], dtype=float)
    on = poly[_on_plane(poly, solid.face_normals[ib], solid.face_offsets[ib])]
    if len(on) < 2:
        return None
    direction = np.cross(solid.face_normals[ia], solid.face_normals[ib])
    if np.linalg.norm(direction) < 1e-12:
        return None
    t = on @ direction
    ends = np.array([on[np.argmin(t)], on[np.argmax(t)]])
    if np.linalg.norm(ends[1] - ends[0]) <= VERTEX_MERGE_TOL:
        return None
    return ends


def max_width(solid, face_a: str, face_b: str) -> float:
    """Width [m] at which the chamfer reaches another edge of ``face_a`` or ``face_b``.

    Every vertex of the two faces off the shared edge lies at some distance from the
    edge line; the strip ``s`` cut from each face must stay below the nearest, so the
    width stays below ``2 cos(phi / 2)`` times that distance. Raises
    :class:`BevelError` when the faces share no edge.
    """
    return min(_face_limits(solid, face_a, face_b).values())


def _face_limits(solid, face_a: str, face_b: str) -> dict[str, float]:
    """``{face: width [m] at which the chamfer reaches another edge of that face}``."""
    ends = shared_edge(solid, face_a, face_b)
    if ends is None:
        raise BevelError(f'faces "{face_a}" and "{face_b}" do not share an edge (they meet in '
                         "a point or not at all)", key="edge")
    ia, ib = solid.face_index(face_a), solid.face_index(face_b)
    axis = (ends[1] - ends[0]) / np.linalg.norm(ends[1] - ends[0])
    scale = float(np.linalg.norm(solid.face_normals[ia] + solid.face_normals[ib]))  # 2 cos(phi/2)
    out = {}
    for name, i in ((face_a, ia), (face_b, ib)):
        rel = np.asarray(solid.face_polygons[i], dtype=float) - ends[0]
        dist = np.linalg.norm(rel - np.outer(rel @ axis, axis), axis=1)
        off = dist > PLANARITY_TOL
        out[name] = float(dist[off].min()) * scale if off.any() else np.inf
    return out


def bevelled(solid, bevels: Sequence[Bevel]):
    """The convex ``solid`` with every bevel of ``bevels`` cut.

    Each bevel is checked against ``solid`` as given (so the order of the bevels does not
    matter: the result is the solid intersected with every chamfer half-space): its two
    faces exist, are different and share an edge, its width is at least
    :data:`BEVEL_MIN_WIDTH` and below :func:`max_width`, and no two bevels name the same
    edge. Faces keep their names and order; the chamfer faces follow, in the order of
    ``bevels``. Bevels on neighbouring edges meet in a mitre.

    Parameters
    ----------
    solid : ConvexSolid
    bevels : sequence of Bevel

    Raises
    ------
    BevelError
        Naming the bevel (``index``) and key at fault; with ``index`` ``None`` when the
        bevels together remove a whole face.
    """
    bevels = list(bevels)
    if not bevels:
        return solid
    if not getattr(solid, "is_convex", False) or not hasattr(solid, "convex_pieces") \
            or len(solid.convex_pieces()) != 1:
        raise BevelError("bevels can only be cut on a convex solid (a catalog prism, a convex "
                         "polygon or a polyhedron), not on a mesh or a non-convex outline")
    from tracer.geometry.solid import ConvexSolid

    names = list(solid.face_names)
    seen: dict[frozenset, int] = {}
    rows = []
    for i, bv in enumerate(bevels):
        a, b = bv.faces
        for f in (a, b):
            if f not in names:
                raise BevelError(f'no face "{f}" on this solid; its faces are {", ".join(names)}',
                                 index=i, key="edge")
        if a == b:
            raise BevelError(f'an edge lies between two different faces, got "{a}" twice',
                             index=i, key="edge")
        pair = frozenset((a, b))
        if pair in seen:
            raise BevelError(f'the edge between "{a}" and "{b}" is bevelled twice (bevels '
                             f"{seen[pair]} and {i})", index=i, key="edge")
        seen[pair] = i
        w = float(bv.width)
        if not np.isfinite(w) or w < BEVEL_MIN_WIDTH:
            raise BevelError(f"expected a width of at least {format_length(BEVEL_MIN_WIDTH)}, got "
                             f"{format_length(w) if np.isfinite(w) else w}", index=i, key="width")
        try:
            limits = _face_limits(solid, a, b)
        except BevelError as exc:
            raise BevelError(str(exc), index=i, key="edge") from None
        short = min(limits, key=limits.get)
        if w >= limits[short] - 10 * PLANARITY_TOL:
            raise BevelError(
                f"a {format_length(w)} bevel is too wide for the edge between \"{a}\" and "
                f"\"{b}\": it would reach the far edge of face \"{short}\" and eat the face; "
                f"expected a width below {format_length(limits[short])}", index=i, key="width")
        rows.append((names.index(a), names.index(b), w))
    ia, ib, w = (np.array(c) for c in zip(*rows))
    n, d = solid.face_normals, solid.face_offsets
    m, dm = chamfer_plane(n[ia], d[ia], n[ib], d[ib], width=w.astype(float))
    normals = np.vstack([n, m])
    offsets = np.concatenate([d, dm])
    all_names = names + [bv.face for bv in bevels]
    clash = [bv.face for bv in bevels if bv.face in names]
    if clash:
        raise BevelError(f'the solid already has a face named "{clash[0]}"',
                         index=[bv.face for bv in bevels].index(clash[0]), key="edge")
    _, polys = pt.halfspace_polygons(normals, offsets)
    gone = [all_names[k] for k, p in enumerate(polys) if len(p) < 3]
    if gone:
        raise BevelError(f"the bevels together remove face{'s' if len(gone) > 1 else ''} "
                         f"{', '.join(gone)} entirely: make them narrower")
    return ConvexSolid(normals, offsets, all_names, polygons=polys)
