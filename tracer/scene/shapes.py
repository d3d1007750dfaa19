"""Shapes of solids: catalog kinds (validated from their parameter specs), polygons,
polyhedra and meshes; the thin layer between the scene and :mod:`tracer.geometry`.

Catalog parameters are read generically from ``tracer.geometry.catalog.KINDS``: every
``ParameterSpec`` gives the key name, its kind (``length`` -> a positive length such as
"25 mm" or a number in the scene's length unit; ``angle`` -> "45 deg" or degrees;
``count`` -> a positive integer; ``choice`` -> one of its choices; ``bool``), whether it
is required, and its default.
"""

from __future__ import annotations


import numpy as np

from ..errors import TracerError
from .context import Build
from .problems import did_you_mean, describe_value
from .files import resolve_scene_file
from .reader import Table

__all__ = ["read_shape", "CONSTRUCTIONS", "catalog_kinds", "rotation_matrix", "place",
           "face_axes", "face_centroid_normal"]

#: Shapes that are not catalog kinds.
CONSTRUCTIONS = ("polygon", "polyhedron", "mesh")

#: Keys of the solid table that are not shape parameters (see tracer.scene.solids).
_COMMON = ("material", "kind", "position", "rotation", "pivot", "mate", "faces", "bevels", "note")


def catalog_kinds() -> dict:
    """The prism catalog registry ``name -> PrismKind`` (empty if unavailable)."""
    try:
        from ..geometry import catalog
    except ImportError:
        return {}
    return dict(getattr(catalog, "KINDS", {}))


def rotation_matrix(rx: float, ry: float, rz: float) -> np.ndarray:
    """``Rz @ Ry @ Rx`` (our convention), from :mod:`tracer.geometry.transforms`."""
    from ..geometry.transforms import rotation_matrix as rm
    return rm(rx, ry, rz)


def place(solid, rotation: np.ndarray, translation: np.ndarray):
    """The solid moved by ``x -> rotation @ x + translation``."""
    return solid.transformed(np.asarray(rotation, float), np.asarray(translation, float))


def face_axes(normal: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """In-plane axes (u, v) of a face: u = z x n normalised (x when n is along z), v = n x u.

    >>> [a.round(12).tolist() for a in face_axes(np.array([1.0, 0, 0]))]
    [[0.0, 1.0, 0.0], [0.0, 0.0, 1.0]]
    """
    n = np.asarray(normal, float)
    u = np.cross([0.0, 0.0, 1.0], n)
    if np.linalg.norm(u) < 1e-9:
        u = np.array([1.0, 0.0, 0.0]) - n[0] * n
    u = u / np.linalg.norm(u)
    return u, np.cross(n, u)


def face_centroid_normal(solid, index: int) -> tuple[np.ndarray, np.ndarray]:
    """Area centroid [m] and outward unit normal of face ``index``."""
    centroid = getattr(solid, "face_centroid", None)
    if centroid is not None:
        c = np.asarray(centroid(index), float)
    else:
        c = np.asarray(solid.face_polygons[index], float).mean(axis=0)
    return c, np.asarray(solid.face_normals[index], float)


# ---------------------------------------------------------------------------- shapes

def read_shape(kind: str, t: Table, build: Build, extra_kinds: dict | None = None):
    """The solid in its local frame, or ``None`` with problems recorded.

    ``extra_kinds`` are registry entries accepted besides the prism catalog (the part
    shapes of :mod:`tracer.geometry.parts`, for ``[parts.NAME]``).
    """
    try:
        if kind == "polygon":
            return _polygon(t, build)
        if kind == "polyhedron":
            return _polyhedron(t, build)
        if kind == "mesh":
            return _mesh(t, build)
        kinds = {**catalog_kinds(), **(extra_kinds or {})}
        if kind in kinds:
            return _catalog(kind, kinds[kind], t, build)
    except TracerError as exc:
        message = str(exc)
        prefix = f"{t.key}: "
        while message.startswith(prefix):  # the geometry names the table too: say it once
            message = message[len(prefix):]
        t.error(None, message)
        return None
    except ImportError as exc:
        package = (exc.name or "trimesh").split(".")[0]
        t.error(None, f"building this solid needs the optional package {package!r}, which is not "
                      f"installed: pip install {package}")
        return None
    except (ValueError, TypeError, ArithmeticError, IndexError, KeyError) as exc:
        t.error(None, f"could not build the solid: {exc}")
        return None
    t.error("kind", f'unknown kind "{kind}"' + did_you_mean(kind, [*kinds, *CONSTRUCTIONS]))
    t.known(*t.data)
    return None


def _catalog(kind: str, spec, t: Table, build: Build):
    params = {}
    ok = True
    for p in spec.parameters:
        name, pkind = p.name, p.kind
        required = bool(getattr(p, "required", False))
        default = getattr(p, "default", None)
        if name in _COMMON:  # pragma: no cover - a catalog bug, not a user error
            raise TracerError(f"catalog kind {kind!r} has a parameter named {name!r}, which is reserved")
        if not t.has(name):
            if required:
                doc = getattr(p, "doc", "")
                t.error(None, f'missing key "{name}" for kind "{kind}": expected '
                              f'{_expected(pkind, p, build)}' + (f" ({doc})" if doc else ""))
                ok = False
            continue
        if pkind == "length":
            value = t.quantity(name, "length", positive=True)
        elif pkind == "angle":
            value = t.quantity(name, "angle")
        elif pkind == "count":
            value = t.integer(name, minimum=int(getattr(p, "minimum", 1) or 1), maximum=10_000)
        elif pkind == "choice":
            value = t.string(name, choices=tuple(getattr(p, "choices", ()) or ()))
        elif pkind == "bool":
            value = t.boolean(name)
        else:
            value = t.raw(name)
        if value is None:
            ok = False
        else:
            params[name] = value
        del default
    if not ok:
        return None
    return spec.build(**params)


def _expected(pkind: str, p, build: Build) -> str:
    if pkind in ("length", "angle"):
        return build.units.expected(pkind)
    if pkind == "count":
        return "a positive integer"
    if pkind == "choice":
        return "one of " + ", ".join(f'"{c}"' for c in (getattr(p, "choices", ()) or ()))
    if pkind == "bool":
        return "true or false"
    return "a value"


def _points(t: Table, name: str, width: int, build: Build) -> np.ndarray | None:
    """An array of points, each an array of ``width`` lengths."""
    raw = t.raw(name)
    if raw is None:
        t.error(None, f'missing key "{name}": expected an array of [{", ".join("xyz"[:width])}] points')
        return None
    if not isinstance(raw, list) or not raw:
        t.error(name, f"expected an array of [{', '.join('xyz'[:width])}] points, got {describe_value(raw)}")
        return None
    out, ok = [], True
    for i, item in enumerate(raw):
        if not isinstance(item, list) or len(item) != width:
            t.error(f"{name}", f"item [{i}]: expected {width} coordinates, got {describe_value(item)}")
            ok = False
            continue
        row = []
        for j, v in enumerate(item):
            row.append(t._convert(name, v, "length", item=f"[{i}][{j}]"))
        if any(r is None for r in row):
            ok = False
        out.append(row)
    if not ok:
        return None
    return np.asarray(out, dtype=float)


def _polygon(t: Table, build: Build):
    from ..geometry.extrude import extrude_polygon
    vertices = _points(t, "vertices", 2, build)
    height = t.quantity("height", "length", positive=True, required=build.dimension == 3)
    names = t.strings("side_names")
    if vertices is None or (height is None and (build.dimension == 3 or t.has("height"))):
        return None
    if height is None:  # 2D: a slab as deep as the outline is wide
        height = float(np.ptp(vertices, axis=0).max())
    if names is not None and len(names) != len(vertices):
        t.error("side_names", f"expected {len(vertices)} names (one per edge, edge i from vertex i "
                              f"to i+1), got {len(names)}")
        return None
    if names is not None and len(set(names)) != len(names):
        t.error("side_names", "expected unique names")
        return None
    if names is not None and ({"top", "bottom"} & set(names)):
        t.error("side_names", '"top" and "bottom" name the caps of the extrusion')
        return None
    return extrude_polygon(vertices, height=height, side_names=names, where=t.key)


def _polyhedron(t: Table, build: Build):
    from ..geometry.polyhedron import convex_polyhedron
    vertices = _points(t, "vertices", 3, build)
    names = t.strings("face_names")
    if vertices is None or (names is None and t.has("face_names")):
        return None
    return convex_polyhedron(vertices, names=names, where=t.key)


def _mesh(t: Table, build: Build):
    from ..geometry.mesh import load_mesh
    from .quantities import LENGTH_UNITS
    path = t.string("path", required=True)
    unit_name = t.string("unit", default=build.units.length_unit, choices=LENGTH_UNITS)
    labels_t = t.table("labels")
    labels, ok = {}, True
    if labels_t is not None:
        for key in list(labels_t.data):
            ids = labels_t.raw(key)
            good_int = isinstance(ids, int) and not isinstance(ids, bool) and ids >= 0
            good_list = isinstance(ids, list) and ids and all(
                isinstance(i, int) and not isinstance(i, bool) and i >= 0 for i in ids)
            if not (good_int or good_list):
                labels_t.error(key, "expected a facet number (renames facet face_N) or an array of "
                                    f"triangle numbers (integers >= 0), got {describe_value(ids)}")
                ok = False
                continue
            labels[key] = ids
    if path is None or unit_name is None or not ok:
        return None
    expected = "a closed triangle mesh such as STL, OBJ or PLY"
    file = resolve_scene_file(t, build, "path", path, what="mesh file", expected=expected)
    if file is None:
        return None
    unreadable = (f'mesh file "{path}" is missing or unreadable (relative paths are taken from the '
                  f"scene file's folder; expected {expected})")
    from .. import units
    from ..geometry.errors import GeometryError
    scale = units.parse(f"1 {unit_name}", "length", None)
    try:
        return load_mesh(file, unit=scale, labels=labels or None, where=t.key)
    except GeometryError as exc:
        message = str(exc)
        if "could not read" in message or "not found" in message or "no triangles" in message:
            t.error("path", unreadable)
            return None
        raise
