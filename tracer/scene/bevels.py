"""``[[solids.NAME.bevels]]``: ground bevels on the edges of a convex solid.

Each item of the array is one symmetric chamfer (:mod:`tracer.geometry.bevels`)::

    [[solids.lower.bevels]]
    edge = ["leg_a", "hypotenuse"]   # the two faces that share the edge
    width = "0.3 mm"                 # across the chamfer face, perpendicular to the edge
    coating = "ground"               # optional; default: bare glass (Fresnel only)

The chamfer face is named ``bevel_<a>_<b>`` (faces in the order of ``edge``) and is a face
like any other: ``[solids.NAME.faces.bevel_a_b]`` may give its coating instead of the
bevel's own ``coating`` key (not both). Bevels are cut on convex solids only (catalog
prisms, convex ``polygon`` outlines, ``polyhedron``); meshes, non-convex outlines and
``[parts.NAME]`` are refused. In a 2D scene only edges along z can be bevelled.
"""

from __future__ import annotations

from dataclasses import dataclass

from ..geometry.bevels import Bevel, BevelError, bevelled
from .context import Build
from .problems import describe_value, did_you_mean
from .reader import Table

__all__ = ["read_bevels", "BevelCoating", "BEVEL_KEYS"]

#: Keys of one ``[[solids.NAME.bevels]]`` item.
BEVEL_KEYS = ("edge", "width", "coating", "note")

_EXPECTED = ('an array of tables [[solids.NAME.bevels]], each with edge = ["face_a", "face_b"] '
             'and width = "0.3 mm"')


@dataclass(frozen=True)
class BevelCoating:
    """The ``coating`` key of one bevel: its table and the coating name."""

    table: Table
    coating: str


def read_bevels(t: Table, local, build: Build, *, part: bool = False):
    """Cut the bevels of solid table ``t`` from its local shape ``local``.

    Returns ``(solid, bevels, coatings)``: the bevelled local solid (``local`` itself
    without bevels; ``None`` when a bevel fails, with the problem recorded at its key
    path), the :class:`Bevel` tuple, and ``{chamfer face: BevelCoating}`` for the bevels
    that name a coating.
    """
    raw = t.raw("bevels")
    if raw is None or raw == []:  # an empty array: no bevels
        return local, (), {}
    where = t.path("bevels")
    if part:
        t.error("bevels", "bevels are cut on glass solids ([solids.NAME]); a part is not "
                          "bevelled: remove the bevels or make it a solid")
        return local, (), {}
    if not isinstance(raw, list):
        t.error("bevels", f"expected {_EXPECTED}, got {describe_value(raw)}")
        return None, (), {}
    items, ok = [], True
    for i, item in enumerate(raw):
        bt = Table(item, f"{where}[{i}]", build.problems, build.units)
        if not isinstance(item, dict):
            ok = False
            continue
        edge = bt.strings("edge", required=True)
        width = bt.quantity("width", "length", required=True, positive=True)
        coating = bt.string("coating")
        bt.string("note")
        bt.finish(context="for a bevel")
        if edge is not None and len(edge) != 2:
            bt.error("edge", f'expected the two faces that share the edge, ["face_a", "face_b"], '
                             f"got {len(edge)} name{'s' if len(edge) != 1 else ''}")
            edge = None
        if edge is None or width is None or (coating is None and bt.has("coating")):
            ok = False
            continue
        items.append((bt, Bevel((edge[0], edge[1]), width), coating))
    if local is None:
        return None, (), {}
    kind = t.data.get("kind")
    if kind == "mesh" or not (getattr(local, "is_convex", False) and hasattr(local, "convex_pieces")
                              and len(local.convex_pieces()) == 1):
        what = "a mesh (its faces are the file's facets)" if kind == "mesh" else "not convex"
        t.error("bevels", f"bevels are cut on convex solids only (catalog prisms, convex "
                          f'polygons, polyhedra), and this solid of kind "{kind}" is {what}')
        return None, (), {}
    if not ok:
        return None, (), {}
    names = list(local.face_names)
    for bt, bv, _ in items:
        missing = [f for f in bv.faces if f not in names]
        for f in missing:
            bt.error("edge", f'solid has no face "{f}"' + did_you_mean(f, names))
        ok = ok and not missing
        if not missing and build.dimension == 2:
            caps = [f for f in bv.faces if abs(local.face_normals[names.index(f)][2]) > 1e-6]
            if caps:
                bt.error("edge", "a 2D scene is a cross-section in the x-y plane: only edges along z "
                                 f'can be bevelled, but "{caps[0]}" is a cap of the extrusion')
                ok = False
    if not ok:
        return None, (), {}
    bevels = tuple(bv for _, bv, _ in items)
    try:
        solid = bevelled(local, bevels)
    except BevelError as exc:
        if exc.index is None:
            t.error("bevels", str(exc))
        else:
            items[exc.index][0].error(exc.key, str(exc))
        return None, (), {}
    coatings = {bv.face: BevelCoating(bt, c) for bt, bv, c in items if c is not None}
    return solid, bevels, coatings
