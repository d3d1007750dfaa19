"""Finding facing faces (gap candidates) and overlapping solids.

A gap candidate is a face A of one solid and a face B of another that face each other:
their outward normals are anti-parallel within ``max_angle``, B's polygon projected onto
A's plane overlaps A's polygon (shapely intersection in A's face frame), and B's plane
lies at a distance between 0 and ``max_separation`` in front of A at the centre of that
overlap (the "footprint"), measured along A's normal.

Overlap of interiors is decided by volume: each solid is a signed sum of convex pieces
(itself when convex, triangular prisms for extrusions, signed tetrahedra for meshes), and
the volume of the intersection is the signed sum of the pieces' pairwise intersection
volumes (each a convex polytope from the union of both half-space sets).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any, Mapping

import numpy as np
import shapely

from tracer.geometry import _polytope as pt
from tracer.tolerances import (
    GAP_MAX_ANGLE,
    GAP_MAX_SEPARATION,
    GAP_MIN_OVERLAP_AREA,
    OVERLAP_MIN_VOLUME,
    PLANE_EPS,
)

__all__ = ["GapCandidate", "find_gaps", "face_overlap", "overlap_volume", "overlapping_solids"]


@dataclass(frozen=True)
class GapCandidate:
    """Two facing faces.

    Attributes
    ----------
    solid_a, face_a, solid_b, face_b : str
        Names; A comes first in the input mapping.
    separation : float [m]
        Distance from the footprint centre on A's face to B's plane along A's normal.
    angle : float [rad]
        Angle between A's normal and B's reversed normal.
    overlap_area : float [m^2]
        Area of the footprint (A's polygon intersected with B's projected polygon).
    point : (3,) float [m]
        Footprint centre on A's face.
    """

    solid_a: str
    face_a: str
    solid_b: str
    face_b: str
    separation: float
    angle: float
    overlap_area: float
    point: np.ndarray


def face_overlap(solid_a: Any, face_a: int | str, solid_b: Any, face_b: int | str):
    """Footprint of two faces: ``(area [m^2], centre (3,) [m] on A's plane)``.

    B's polygon is projected along A's normal onto A's plane and intersected with A's.
    """
    ia, ib = solid_a._face(face_a), solid_b._face(face_b)
    u, v, _ = solid_a.face_frame(ia)
    origin = solid_a.face_centroid(ia)
    pa = solid_a.face_polygons[ia] - origin
    pb = solid_b.face_polygons[ib] - origin
    poly_a = shapely.Polygon(np.column_stack([pa @ u, pa @ v]))
    poly_b = shapely.Polygon(np.column_stack([pb @ u, pb @ v]))
    if not poly_b.is_valid:
        poly_b = poly_b.buffer(0)
    inter = poly_a.intersection(poly_b)
    if inter.is_empty or inter.area <= 0:
        return 0.0, origin
    c = inter.centroid
    return float(inter.area), origin + c.x * u + c.y * v


def _boxes_near(ba, bb, margin):
    return bool(np.all(ba[0] <= bb[1] + margin) and np.all(bb[0] <= ba[1] + margin))


def find_gaps(
    solids: Mapping[str, Any],
    *,
    max_separation: float = GAP_MAX_SEPARATION,
    max_angle: float = GAP_MAX_ANGLE,
    min_overlap: float = GAP_MIN_OVERLAP_AREA,
) -> list[GapCandidate]:
    """Facing face pairs of different solids, in input order.

    Parameters
    ----------
    solids : mapping name -> solid
    max_separation : float [m]
    max_angle : float [rad]
    min_overlap : float [m^2]
        Smallest footprint area.

    Examples
    --------
    >>> from tracer.geometry.catalog_prisms import beamsplitter_cube
    >>> h = beamsplitter_cube(size=0.01, gap=5e-6)
    >>> [(g.face_a, g.face_b, round(g.separation, 12)) for g in find_gaps({"a": h.first, "b": h.second})]
    [('hypotenuse', 'hypotenuse', 5e-06)]
    """
    names = list(solids)
    cos_max = np.cos(max_angle)
    out: list[GapCandidate] = []
    for i, na in enumerate(names):
        a = solids[na]
        for nb in names[i + 1 :]:
            b = solids[nb]
            if not _boxes_near(np.asarray(a.bounds), np.asarray(b.bounds), max_separation + PLANE_EPS):
                continue
            cos = -(a.face_normals @ b.face_normals.T)  # (Fa, Fb)
            for fa, fb in np.argwhere(cos >= cos_max):
                area, point = face_overlap(a, int(fa), b, int(fb))
                if area < min_overlap:
                    continue
                na_, nb_ = a.face_normals[fa], b.face_normals[fb]
                sep = (b.face_offsets[fb] - nb_ @ point) / (nb_ @ na_)
                if not -PLANE_EPS <= sep <= max_separation:
                    continue
                out.append(
                    GapCandidate(
                        na, a.face_names[fa], nb, b.face_names[fb], max(float(sep), 0.0),
                        float(np.arccos(np.clip(cos[fa, fb], -1.0, 1.0))), area, point,
                    )
                )
    return out


def _piece_box(piece):
    v = pt.halfspace_vertices(piece[0], piece[1])
    if len(v) == 0:
        return None
    return np.array([v.min(axis=0), v.max(axis=0)])


def overlap_volume(a: Any, b: Any) -> float:
    """Volume shared by the interiors of two solids [m^3].

    Examples
    --------
    >>> from tracer.geometry.catalog import build
    >>> import numpy as np
    >>> p = build("plate", width=1.0, height=1.0, thickness=1.0)
    >>> round(overlap_volume(p, p.transformed(np.eye(3), [0.5, 0.5, 0.0])), 12)
    0.25
    """
    ba, bb = np.asarray(a.bounds), np.asarray(b.bounds)
    if not _boxes_near(ba, bb, -PLANE_EPS):
        return 0.0
    pa = [(p, _piece_box(p)) for p in a.convex_pieces()]
    pb = [(p, _piece_box(p)) for p in b.convex_pieces()]
    total = 0.0
    for (na, da, sa), boxa in pa:
        if boxa is None or not _boxes_near(boxa, bb, 0.0):
            continue
        for (nb, db, sb), boxb in pb:
            if boxb is None or not _boxes_near(boxa, boxb, -PLANE_EPS):
                continue
            vol = pt.halfspace_volume(np.vstack([na, nb]), np.concatenate([da, db]))
            total += sa * sb * vol
    return float(max(total, 0.0))


def overlapping_solids(
    solids: Mapping[str, Any], *, min_volume: float = OVERLAP_MIN_VOLUME
) -> list[tuple[str, str, float]]:
    """Pairs ``(name_a, name_b, shared volume [m^3])`` whose interiors overlap by more than ``min_volume``.

    Solids that only touch (a shared face, a zero-thickness joint) do not overlap.
    """
    names = list(solids)
    out = []
    for i, na in enumerate(names):
        for nb in names[i + 1 :]:
            vol = overlap_volume(solids[na], solids[nb])
            if vol > min_volume:
                out.append((na, nb, vol))
    return out
