"""``[solids.NAME]``: material, shape (catalog kind or construction), placement, faces.

Placement is either ``position`` and ``rotation`` (``[rx, ry, rz]`` in degrees,
extrinsic about the scene x, then y, then z axes, about the solid's ``pivot`` -- a local
point, the centroid of one of its faces, or ``"centroid"``; default the local origin --
then the translation: ``x = R (x_local - pivot) + pivot + position``), or a ``[solids.NAME.mate]`` table that puts one face of this solid
against a face of another (:func:`tracer.geometry.mating.mate`: the moving face's frame
(u, v, n) becomes (-u, v, -n) of the target face, its centroid goes to the target
centroid + offset_u u + offset_v v + gap n, then it spins by ``spin`` about n and tilts
by ``wedge`` about u; in a 2D scene the wedge turns about z instead, so that the solid
stays in the plane). Mated solids may mate to other
mated solids; they are placed in dependency order, and a cycle is an error.

Bevels (``[[solids.NAME.bevels]]``, :mod:`tracer.scene.bevels`) are cut on the local shape
before the faces are read, so their chamfer faces take coatings like any face; placement
(pivot centroids, mates) is measured on the shape before its bevels, so that a bevel never
moves a solid.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .. import tolerances
from ..errors import TracerError
from . import parts as part_shapes
from . import shapes
from .bevels import read_bevels
from .context import Build, split_face_ref
from .media import resolve_material
from .model import FaceTreatment, SolidSpec
from .problems import did_you_mean
from .reader import Table
from .treatments import PerSubstrate

__all__ = ["read_solids", "MateRequest", "COMMON_SOLID_KEYS"]

#: Keys every solid table may have, whatever its kind.
COMMON_SOLID_KEYS = ("material", "kind", "position", "rotation", "pivot", "mate", "faces", "bevels",
                     "note")
#: Keys a ``[parts.NAME]`` table has besides the solid keys (it has no ``mate``).
PART_KEYS = ("surface",)


@dataclass
class MateRequest:
    """A ``[solids.B.mate]`` table, read; resolved once its target solid is placed."""

    solid: str
    table: Table
    target_solid: str
    target_face: str
    face: str
    gap: float
    medium_name: str
    medium: object
    offset: np.ndarray
    spin: float
    wedge: float
    coherence: str
    gap_name: str


@dataclass
class _Pending:
    name: str
    table: Table
    local: object
    material: object
    material_name: str
    kind: str
    faces: dict
    opaque: bool = False
    nominal: object = None  # the shape before its bevels: placement (pivot, mate) uses it
    bevels: tuple = ()


def read_solids(tables: dict[str, Table], build: Build,
                parts: dict[str, Table] | None = None) -> list[tuple[MateRequest, object]]:
    """Build every solid and opaque part into ``build.solids``; returns the mated pairs.

    ``parts`` are the ``[parts.NAME]`` tables (see :mod:`tracer.scene.parts`): shaped and
    placed like solids, never mated, with a ``surface`` treatment on every face.
    """
    parts = parts or {}
    build.part_keys = set(parts)
    build.solid_keys = set(tables) | set(parts)
    pending: dict[str, _Pending] = {}
    transforms: dict[str, tuple] = {}  # placed solid -> (R, t) of its local frame
    requests: dict[str, MateRequest] = {}
    placements: dict[str, tuple] = {}
    for name, t in [*tables.items(), *parts.items()]:
        is_part = name in parts
        if is_part and name in tables:
            t.error(None, f'"{name}" names both a solid and a part: names must be unique')
            continue
        if "." in name:
            t.error(None, f'a solid name cannot contain "." (faces are written "solid.face"): "{name}"')
        material_name = t.string("material", required=not is_part)
        material = resolve_material(build, t.path("material"), material_name) if material_name else None
        t.string("note")
        kind = t.string("kind", required=True)
        local = (part_shapes.read_part_shape if is_part else shapes.read_shape)(kind, t, build) \
            if kind else None
        if kind is None:
            t.known(*t.data)
        nominal = local
        local, bevels, bevel_coatings = read_bevels(t, local, build, part=is_part)
        mate_t = t.table("mate")
        if is_part and mate_t is not None:
            t.error("mate", "a part is placed by position, rotation and pivot, not mated")
            mate_t = None
        if mate_t is not None:
            # the gap this mate declares exists for references even if the mate is broken
            # (its own problem is reported; a requirement naming it must not add another)
            gap_raw = mate_t.data.get("gap_name")
            build.mate_gap_keys.add(gap_raw if isinstance(gap_raw, str) else f"{name}.mate")
            for bad in ("position", "rotation", "pivot"):
                t.known(bad)
                if bad in t.data:
                    t.error(bad, f'a mated solid is placed by its [{t.key}.mate] table: remove "{bad}"')
            req = _read_mate(name, mate_t, build)
            if req is not None:
                requests[name] = req
        else:
            position = t.vector("position", "length", default=np.zeros(3), dimension=build.dimension)
            rotation = _read_rotation(t, build)
            pivot = _read_pivot(t, build)
            placements[name] = (position, rotation, pivot)
        faces = _read_faces(t, local, build, material, material_name, part=is_part,
                            bevel_coatings=bevel_coatings)
        if is_part:
            faces = part_shapes.part_faces(t, local, build, faces, material=material,
                                           material_name=material_name)
            if material_name is None:
                material, material_name = build.ambient, part_shapes.NO_MATERIAL
        t.finish(context=f'for a {"part" if is_part else "solid"} of kind "{kind}"' if kind else None)
        if local is None or material is None or faces is None:
            continue
        pending[name] = _Pending(name, t, local, material, material_name, kind, faces, is_part,
                                 nominal, bevels)

    # free-standing solids
    for name, (position, rotation, pivot) in placements.items():
        p = pending.get(name)
        if p is None or position is None or rotation is None or pivot is None:
            continue
        pivot = _resolve_pivot(p, pivot)
        if pivot is None:
            continue
        R = shapes.rotation_matrix(*rotation)
        shift = pivot_translation(R, pivot, position)
        try:
            placed = shapes.place(p.local, R, shift)
        except TracerError as exc:
            p.table.error("position", f"cannot place the solid there: {exc}")
            continue
        transforms[name] = (R, shift)
        _finish_solid(p, placed, build)

    # mated solids, in dependency order
    mated = []
    for name in _mate_order(requests, build):
        req = requests[name]
        p = pending.get(name)
        target = build.solids.get(req.target_solid)
        if p is None or target is None:
            continue
        placed = _apply_mate(req, p, target, build, pending.get(req.target_solid),
                             transforms.get(req.target_solid))
        if placed is not None:
            placed, transform = placed
            transforms[name] = transform
            _finish_solid(p, placed, build)
            mated.append(req)
    return mated


def _finish_solid(p: _Pending, geometry, build: Build) -> None:
    if build.dimension == 2 and not _check_2d(p, geometry):
        return
    faces = {f: p.faces.get(f, FaceTreatment("uncoated")) for f in geometry.face_names}
    build.solids[p.name] = SolidSpec(name=p.name, material=p.material, material_name=p.material_name,
                                     geometry=geometry, faces=faces, kind=p.kind, opaque=p.opaque,
                                     bevels=tuple(p.bevels))


def _check_2d(p: _Pending, geometry) -> bool:
    """A solid of a 2D scene is an extrusion along z through the plane z = 0."""
    normals = np.asarray(geometry.face_normals, dtype=float)
    nz = np.abs(normals[:, 2])
    bad = (nz > 1e-6) & (nz < 1 - 1e-6)
    if np.any(bad):
        names = [f for f, b in zip(geometry.face_names, bad) if b]
        p.table.error(None, "a 2D scene is a cross-section in the x-y plane: every face must be "
                            "parallel or perpendicular to z, but "
                            f"{', '.join(names)} {'is' if len(names) == 1 else 'are'} tilted "
                            "(rotate only about z, and use prisms extruded along z)")
        return False
    lo, hi = np.asarray(geometry.bounds, dtype=float)[:, 2]
    if not (lo < -tolerances.PLANE_EPS and hi > tolerances.PLANE_EPS):
        p.table.error(None, f"a solid of a 2D scene must straddle the plane z = 0, but it spans "
                            f"z = {lo:.6g} m to {hi:.6g} m")
        return False
    return True


def pivot_translation(rotation: np.ndarray, pivot: np.ndarray, position: np.ndarray) -> np.ndarray:
    """Translation of ``x -> R (x - pivot) + pivot + position`` [m].

    The solid turns by ``rotation`` about its local point ``pivot`` [m], then moves by
    ``position`` [m]; a zero pivot gives ``position`` exactly (turning about the origin).

    >>> from tracer.geometry.transforms import rotation_matrix
    >>> pivot_translation(rotation_matrix(rz=np.pi / 2), np.array([1.0, 0, 0]), np.zeros(3)).round(12)
    array([ 1., -1.,  0.])
    """
    pivot = np.asarray(pivot, dtype=float)
    position = np.asarray(position, dtype=float)
    if not np.any(pivot):
        return position
    return position + pivot - np.asarray(rotation, dtype=float) @ pivot


#: Named pivot for the solid's volume centroid (any other name is a face of the solid).
PIVOT_CENTROID = "centroid"


def _read_pivot(t: Table, build: Build):
    """``pivot``: a local point (lengths), a face name of the solid or ``"centroid"``."""
    if isinstance(t.data.get("pivot"), str):
        return t.string("pivot")
    return t.vector("pivot", "length", default=np.zeros(3), dimension=build.dimension)


def _resolve_pivot(p: _Pending, pivot):
    """The pivot as a local point [m] (a face name means its area centroid).

    Centroids are those of the shape before its bevels, so that a bevel never moves a
    solid (a chamfer face itself, which only the bevelled shape has, is taken from it).
    """
    if not isinstance(pivot, str):
        return np.asarray(pivot, dtype=float)
    if pivot == PIVOT_CENTROID:
        return np.asarray(_nominal(p).centroid, dtype=float)
    names = list(p.local.face_names)
    if pivot not in names:
        p.table.error("pivot", f'solid "{p.name}" has no face "{pivot}" to turn about'
                               + did_you_mean(pivot, names + [PIVOT_CENTROID])
                               + f'; expected a point [x, y, z], one of its faces or "{PIVOT_CENTROID}"')
        return None
    return np.asarray(_nominal(p, pivot).face_centroid(pivot), dtype=float)


def _nominal(p: _Pending, face: str | None = None):
    """The shape placement measures: the one before the bevels, unless it lacks ``face``."""
    shape = p.nominal if p.nominal is not None else p.local
    if face is not None and face not in shape.face_names:
        return p.local
    return shape


def _read_rotation(t: Table, build: Build):
    """``rotation = [rx, ry, rz]`` (or a single angle about z in 2D) [rad]."""
    if build.dimension == 2 and t.has("rotation") and not isinstance(t.data["rotation"], list):
        rz = t.quantity("rotation", "angle")
        return None if rz is None else (0.0, 0.0, rz)
    rot = t.quantities("rotation", "angle", length=3, default=np.zeros(3))
    if rot is None:
        return None
    if build.dimension == 2 and (abs(rot[0]) > 1e-12 or abs(rot[1]) > 1e-12):
        t.error("rotation", "a 2D scene allows rotations about z only: expected [0, 0, rz] or "
                            "a single angle")
        return None
    return tuple(float(a) for a in rot)


def _read_faces(t: Table, local, build: Build, material, material_name, *,
                part: bool = False, bevel_coatings: dict | None = None) -> dict | None:
    """``[solids.NAME.faces.FACE] coating = "..."`` (also ``[parts.NAME.faces.FACE]``), and
    the ``coating`` of each bevel for its chamfer face (``bevel_coatings``, from
    :func:`tracer.scene.bevels.read_bevels`)."""
    tables = t.tables("faces")
    names = list(local.face_names) if local is not None else None
    out, ok = {}, True
    for face, ft in tables.items():
        coating = ft.string("coating", required=True)
        ft.string("note")
        ft.finish()
        if names is not None and face not in names:
            build.problems.error(ft.key, f'solid has no face "{face}"' + did_you_mean(face, names))
            ok = False
            continue
        if coating is None:
            ok = False
            continue
        if face in (bevel_coatings or {}):
            ft.error("coating", f'the bevel {bevel_coatings[face].table.key} gives face "{face}" '
                                "its coating already: give it in one place only")
            ok = False
            continue
        treatment = _treatment(ft, coating, build, material, material_name, part)
        if treatment is None:
            ok = False
            continue
        out[face] = treatment
    for face, bc in (bevel_coatings or {}).items():
        treatment = _treatment(bc.table, bc.coating, build, material, material_name, part)
        if treatment is None:
            ok = False
            continue
        out[face] = treatment
    return out if ok and names is not None else None


def _treatment(ft: Table, coating: str, build: Build, material, material_name, part: bool):
    """The face treatment of coating name ``coating`` (the ``coating`` key of table ``ft``),
    designed for the solid's material when it depends on it; ``None`` with the problem
    recorded."""
    if coating not in build.coating_keys:
        ft.error("coating", f'unknown coating "{coating}"' + did_you_mean(coating, build.coating_keys))
        return None
    treatment = build.coatings.get(coating)
    if treatment is None:  # defined but broken: already reported
        return None
    if isinstance(treatment, PerSubstrate):
        if material is None:
            if part and material_name is None:
                ft.error("coating", f'coating "{coating}" is designed for the substrate it sits '
                                    "on, but the part has no material: give it one")
            return None
        try:
            treatment = treatment.for_substrate(material, material_name)
        except TracerError as exc:
            ft.error("coating", f'coating "{coating}" cannot be designed for {material_name}: {exc}')
            return None
    return treatment


def _read_mate(name: str, t: Table, build: Build) -> MateRequest | None:
    to = t.string("to", required=True)
    face = t.string("face", required=True)
    gap = t.quantity("gap", "length", default=0.0, nonnegative=True)
    medium_name = t.string("medium", default=build.ambient_name)
    medium = resolve_material(build, t.path("medium"), medium_name) if medium_name else None
    offset = t.quantities("offset", "length", length=2, default=np.zeros(2))
    spin = t.quantity("spin", "angle", default=0.0)
    wedge = t.quantity("wedge", "angle", default=0.0)
    coherence = t.string("coherence", default="auto", choices=("auto", "coherent", "incoherent"))
    gap_name = t.string("gap_name", default=f"{name}.mate")
    t.finish()
    target = None
    if to is not None:
        target = split_face_ref(to)
        if target is None:
            t.error("to", f'expected "solid.face", got "{to}"')
        elif target[0] == name:
            t.error("to", "a solid cannot mate to itself")
            target = None
        elif target[0] not in build.solid_keys:
            t.error("to", f'unknown solid "{target[0]}"' + did_you_mean(target[0], build.solid_keys))
            target = None
    if build.dimension == 2:
        if offset is not None and abs(offset[1]) > 0:
            t.error("offset", "a 2D scene allows an offset along the face in the x-y plane only: "
                              "expected [u, 0]")
            offset = None
        if spin is not None and not (abs(math.remainder(spin, math.pi)) < 1e-9):
            t.error("spin", "a 2D scene allows spin = 0 deg or 180 deg only")
            spin = None
    if wedge is not None and abs(wedge) >= math.pi / 4:
        t.error("wedge", "expected a small wedge angle (below 45 deg)")
        wedge = None
    if any(v is None for v in (target, face, gap, medium, offset, spin, wedge, coherence, gap_name)):
        return None
    return MateRequest(name, t, target[0], target[1], face, gap, medium_name, medium, offset,
                       spin, wedge, coherence, gap_name)


def _mate_order(requests: dict[str, MateRequest], build: Build) -> list[str]:
    """Mated solids ordered so that each comes after the solid it mates to; cycles reported."""
    order, state = [], {}

    def visit(name, stack):
        if state.get(name) == "done":
            return True
        if state.get(name) == "active":
            cycle = stack[stack.index(name):] + [name]
            requests[name].table.error("to", "mating cycle: " + " -> ".join(cycle)
                                       + " (one solid of the cycle needs a position instead)")
            return False
        state[name] = "active"
        target = requests[name].target_solid
        ok = True
        if target in requests:
            ok = visit(target, stack + [name])
        state[name] = "done"
        if ok:
            order.append(name)
        return ok

    for name in requests:
        visit(name, [])
    return order


def _apply_mate(req: MateRequest, p: _Pending, target: SolidSpec, build: Build,
                target_pending: _Pending | None = None, target_transform: tuple | None = None):
    """``(placed solid, (R, t))`` of a mated solid, or ``None`` with the problem recorded.

    The mate is measured on the shapes before their bevels (both solids' unbevelled faces,
    placed), so that a bevel never moves a solid; a chamfer face, which only the bevelled
    shape has, is measured on it.
    """
    t = req.table
    tnames = list(target.geometry.face_names)
    if req.target_face not in tnames:
        t.error("to", f'solid "{req.target_solid}" has no face "{req.target_face}"'
                      + did_you_mean(req.target_face, tnames))
        return None
    names = list(p.local.face_names)
    if req.face not in names:
        t.error("face", f'solid "{req.solid}" has no face "{req.face}"' + did_you_mean(req.face, names))
        return None
    from ..geometry.mating import mate_transform
    from ..geometry.transforms import axis_rotation
    moving = _nominal(p, req.face)
    fixed = target.geometry
    if target_pending is not None and target_transform is not None:
        shape = _nominal(target_pending, req.target_face)
        if shape is not target_pending.local:
            fixed = shapes.place(shape, *target_transform)
    wedge = req.wedge
    try:
        R, shift = mate_transform(moving, req.face, fixed, req.target_face, gap=req.gap,
                                  offset=tuple(req.offset), spin=req.spin,
                                  wedge=0.0 if build.dimension == 2 else wedge)
        if build.dimension == 2 and wedge:
            # in a cross-section the wedge turns about z (the face's v axis) instead of u
            _, vf, _ = fixed.face_frame(req.target_face)
            anchor = R @ moving.face_centroid(req.face) + shift
            W = axis_rotation(vf, wedge)
            R, shift = W @ R, W @ (shift - anchor) + anchor
    except TracerError as exc:
        t.error(None, str(exc))
        return None
    try:
        return shapes.place(p.local, R, shift), (R, shift)
    except TracerError as exc:
        t.error(None, str(exc))
        return None
