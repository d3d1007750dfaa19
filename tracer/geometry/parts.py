"""Shapes of opaque parts around the prisms: a tube (mount cell, lens tube) and a plate
with a hole (baffle, aperture stop, housing wall with a window).

Both are prisms of a plane region with one hole, extruded along x; they are closed
triangle meshes (:class:`tracer.geometry.meshsolid.MeshSolid`) with named planar faces.
Round outlines are regular polygons described by their width *across flats* (so that a
round bore of that diameter fits inside the polygonal bore), with ``sides`` faces
(default 32). Wall ``k`` of a round outline has its outward normal (of the region) at the
angle ``2 pi k / sides`` from +y towards +z, so that ``sides = 4`` gives a square tube
whose walls are parallel to the scene axes (usable in a 2D scene).

The registry :data:`PART_KINDS` has the same form as the prism catalog
(:data:`tracer.geometry.catalog.KINDS`) so that the scene loader reads the parameters of
both generically; a ``[parts.NAME]`` table may use either.

>>> t = tube(outer_diameter=0.03, inner_diameter=0.02, length=0.01, sides=4)
>>> t.face_names[:3], len(t.face_names)
(('front', 'back', 'outer_0'), 10)
>>> round(t.volume / ((0.03**2 - 0.02**2) * 0.01), 12)  # square tube, across flats
1.0
"""

from __future__ import annotations

import math

import numpy as np

from tracer.geometry.catalog import ParameterSpec as _P
from tracer.geometry.catalog import PrismKind
from tracer.geometry.errors import GeometryError
from tracer.geometry.meshsolid import MeshSolid

__all__ = ["tube", "plate_with_hole", "extrude_with_hole", "regular_polygon", "PART_KINDS",
           "DEFAULT_SIDES"]

#: Faces of a round outline unless ``sides`` is given.
DEFAULT_SIDES = 32


def regular_polygon(across_flats: float, sides: int) -> np.ndarray:
    """Vertices (sides, 2) [m] of a regular polygon centred on the origin, counter-clockwise.

    Edge ``k`` (vertex k to k+1) has its outward normal at the angle ``2 pi k / sides``
    from the first axis; ``across_flats`` [m] is twice the distance of every edge from
    the centre.
    """
    if sides < 3:
        raise GeometryError(f"a round outline needs at least 3 sides, got {sides}")
    r = 0.5 * across_flats / math.cos(math.pi / sides)
    ang = (np.arange(sides) - 0.5) * 2.0 * math.pi / sides
    return r * np.column_stack([np.cos(ang), np.sin(ang)])


def _ccw(p: np.ndarray) -> bool:
    x, y = p[:, 0], p[:, 1]
    return float(np.dot(x, np.roll(y, -1)) - np.dot(np.roll(x, -1), y)) > 0


def extrude_with_hole(outer, hole, *, length: float, outer_names, hole_names,
                      front: str = "front", back: str = "back") -> MeshSolid:
    """Extrude a region with one hole along x, from x = 0 to x = ``length``.

    Parameters
    ----------
    outer, hole : (k, 2), (m, 2) float [m]
        Outline and hole as (y, z) vertices in either orientation; the hole must lie
        strictly inside the outline.
    length : float [m]
    outer_names, hole_names : sequences of k and m str
        Names of the walls (edge i from vertex i to i + 1).
    front, back : str
        Names of the faces at x = 0 (normal -x) and x = ``length`` (normal +x).

    Returns
    -------
    MeshSolid
    """
    import mapbox_earcut
    import shapely

    outer = np.asarray(outer, dtype=float)
    hole = np.asarray(hole, dtype=float)
    if not shapely.Polygon(outer).contains(shapely.Polygon(hole)) or \
            shapely.Polygon(outer).exterior.intersects(shapely.Polygon(hole).exterior):
        raise GeometryError("the hole must lie inside the outline, clear of its edges")
    outer_names, hole_names = list(outer_names), list(hole_names)
    if _ccw(outer) is False:
        outer, outer_names = outer[::-1], _reversed_edges(outer_names)
    if _ccw(hole):
        hole, hole_names = hole[::-1], _reversed_edges(hole_names)
    k, m = len(outer), len(hole)
    ring = np.vstack([outer, hole])  # outline CCW, hole CW (earcut's convention)
    cap = mapbox_earcut.triangulate_float64(ring, np.array([k, k + m], dtype=np.uint32))
    cap = cap.reshape(-1, 3).astype(np.int64)
    a, b, c = ring[cap[:, 0]], ring[cap[:, 1]], ring[cap[:, 2]]
    cw = ((b - a)[:, 0] * (c - a)[:, 1] - (b - a)[:, 1] * (c - a)[:, 0]) < 0
    cap[cw] = cap[cw][:, ::-1]
    n = k + m
    # (u, v, w) = (y, z, x) is a cyclic relabelling: orientation is kept
    uvw = np.vstack([np.column_stack([ring, np.zeros(n)]),
                     np.column_stack([ring, np.full(n, float(length))])])
    verts = uvw[:, [2, 0, 1]]
    tris, owner = [], []
    names = [front, back] + outer_names + hole_names
    tris += cap[:, ::-1].tolist()  # x = 0, seen from -x
    owner += [0] * len(cap)
    tris += (cap + n).tolist()  # x = length, seen from +x
    owner += [1] * len(cap)
    for start, count, first in ((0, k, 2), (k, m, 2 + k)):
        for i in range(count):
            p, q = start + i, start + (i + 1) % count
            tris += [[p, q, n + q], [p, n + q, n + p]]
            owner += [first + i, first + i]
    pieces = []
    for t in cap:  # convex pieces: one triangular prism per cap triangle
        tri = ring[t]
        e = np.roll(tri, -1, axis=0) - tri
        out = np.column_stack([e[:, 1], -e[:, 0]])
        out /= np.linalg.norm(out, axis=1)[:, None]
        nrm = np.vstack([np.column_stack([np.zeros(3), out]), [[-1.0, 0, 0]], [[1.0, 0, 0]]])
        d = np.concatenate([np.einsum("ij,ij->i", out, tri), [0.0, float(length)]])
        pieces.append((nrm, d, 1.0))
    return MeshSolid(verts, np.array(tris), np.array(owner), names, pieces=pieces)


def _reversed_edges(names: list) -> list:
    # reversing vertices v0..v(k-1) turns edge i (v_i -> v_i+1) into edge k-2-i (mod k)
    k = len(names)
    return [names[(k - 2 - j) % k] for j in range(k)]


def _positive(name: str, value: float) -> float:
    v = float(value)
    if not math.isfinite(v) or v <= 0:
        raise GeometryError(f"{name}: must be a positive length, got {value!r}")
    return v


def tube(*, outer_diameter: float, inner_diameter: float, length: float,
         sides: int = DEFAULT_SIDES) -> MeshSolid:
    """A tube along x (mount cell, lens tube, housing barrel).

    Frame: the axis is the x axis, ``front`` at x = 0 (normal -x), ``back`` at
    x = ``length``; walls ``outer_k`` and ``inner_k`` (k = 0 .. sides-1), wall k facing the
    direction at ``2 pi k / sides`` from +y towards +z (``inner_k`` faces the axis from
    that side).

    Parameters
    ----------
    outer_diameter, inner_diameter : float [m]
        Across flats of the polygonal outline and bore; inner < outer.
    length : float [m]
    sides : int
        Faces of each round outline (4: a square tube).
    """
    do = _positive("outer_diameter", outer_diameter)
    di = _positive("inner_diameter", inner_diameter)
    L = _positive("length", length)
    if di >= do:
        raise GeometryError(f"inner_diameter ({di:g} m) must be smaller than outer_diameter ({do:g} m)")
    # edge k of the bore polygon is the wall on the side 2 pi k / sides of the axis
    inner = regular_polygon(di, sides)
    inner_names = [f"inner_{j}" for j in range(sides)]
    return extrude_with_hole(regular_polygon(do, sides), inner, length=L,
                             outer_names=[f"outer_{j}" for j in range(sides)],
                             hole_names=inner_names)


def plate_with_hole(*, width: float, height: float, thickness: float,
                    hole_diameter: float | None = None, hole_width: float | None = None,
                    hole_height: float | None = None, sides: int = DEFAULT_SIDES) -> MeshSolid:
    """A plate with a central hole (baffle, aperture stop, wall with a window).

    Frame as :func:`tracer.geometry.catalog_prisms.plate`: ``front`` in x = 0 (normal -x)
    centred on the origin, ``back`` at x = ``thickness``, ``side_a``/``side_b`` at
    y = -+width/2, ``top``/``bottom`` at z = +-height/2; the hole's walls ``hole_k``
    (round hole of ``hole_diameter`` across flats with ``sides`` walls, wall k facing the
    axis from the direction ``2 pi k / sides`` from +y towards +z; or a rectangular hole
    ``hole_width`` x ``hole_height`` with walls ``hole_0`` (+y side), ``hole_1`` (+z),
    ``hole_2`` (-y), ``hole_3`` (-z)).

    Parameters
    ----------
    width, height, thickness : float [m]
    hole_diameter : float [m], optional
    hole_width, hole_height : float [m], optional
        Give either ``hole_diameter`` or both of these.
    sides : int
    """
    w, h = _positive("width", width), _positive("height", height)
    t = _positive("thickness", thickness)
    rect = hole_width is not None or hole_height is not None
    if rect == (hole_diameter is not None) or (rect and (hole_width is None or hole_height is None)):
        raise GeometryError("give either hole_diameter or both hole_width and hole_height")
    if rect:
        hw, hh = _positive("hole_width", hole_width) / 2, _positive("hole_height", hole_height) / 2
        # region normals of edges: -y, -z, +y, +z faces of the hole (walls face the axis)
        hole = np.array([[hw, -hh], [hw, hh], [-hw, hh], [-hw, -hh]])
        names = ["hole_0", "hole_1", "hole_2", "hole_3"]
    else:
        hole = regular_polygon(_positive("hole_diameter", hole_diameter), sides)
        names = [f"hole_{j}" for j in range(sides)]
    outer = np.array([[-w / 2, -h / 2], [w / 2, -h / 2], [w / 2, h / 2], [-w / 2, h / 2]])
    return extrude_with_hole(outer, hole, length=t, outer_names=["bottom", "side_b", "top", "side_a"],
                             hole_names=names)


def _doc(fn) -> str:
    return (fn.__doc__ or "").strip()


#: Part shapes (besides the prism catalog, ``polygon``, ``polyhedron`` and ``mesh``).
PART_KINDS: dict[str, PrismKind] = {
    "tube": PrismKind(
        "tube",
        (_P("outer_diameter", "length", True, doc="across flats of the outline [m]"),
         _P("inner_diameter", "length", True, doc="across flats of the bore [m]"),
         _P("length", "length", True, doc="extent along x [m]"),
         _P("sides", "count", default=DEFAULT_SIDES, doc="walls of each round outline (4: square)")),
        (), _doc(tube), tube),
    "plate_with_hole": PrismKind(
        "plate_with_hole",
        (_P("width", "length", True, doc="extent along y [m]"),
         _P("height", "length", True, doc="extent along z [m]"),
         _P("thickness", "length", True, doc="extent along x [m]"),
         _P("hole_diameter", "length", doc="across flats of a round hole [m]"),
         _P("hole_width", "length", doc="extent of a rectangular hole along y [m]"),
         _P("hole_height", "length", doc="extent of a rectangular hole along z [m]"),
         _P("sides", "count", default=DEFAULT_SIDES, doc="walls of a round hole")),
        (), _doc(plate_with_hole), plate_with_hole),
}
