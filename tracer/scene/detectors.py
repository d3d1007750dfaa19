"""``[detectors.NAME]``: rectangular planes (free or on a face) and the far-field sphere.

A plane detector counts rays that cross it travelling against its ``normal``: the
normal points towards the light it detects. A detector ``on_face = "solid.face"`` is
centred on the face centroid, just outside the face (``tolerances.DETECTOR_FACE_OFFSET``),
and by default detects the light leaving the solid through that face (its normal is the
face's inward normal); ``detects = "incoming"`` turns it round. Its default size covers
the face.
"""

from __future__ import annotations

import numpy as np

from .. import tolerances
from .context import Build, resolve_face
from .model import DetectorSpec
from .ranges import MAX_PIXELS
from .reader import Table
from .sources import check_in_plane, frame_axis

__all__ = ["read_detector", "DETECTOR_KINDS", "face_frame"]

DETECTOR_KINDS = ("plane", "far_field")


def face_frame(geometry, index: int):
    """Centroid (3,), outward normal (3,) and vertices (k, 3) of one face of a solid."""
    poly = np.asarray(geometry.face_polygons[index], dtype=float)
    normal = np.asarray(geometry.face_normals[index], dtype=float)
    return _polygon_centroid(poly, normal), normal, poly


def _polygon_centroid(poly: np.ndarray, normal: np.ndarray) -> np.ndarray:
    """Area centroid of a planar polygon (vertex mean when degenerate)."""
    if len(poly) < 3:
        return poly.mean(axis=0)
    o = poly[0]
    total, acc = 0.0, np.zeros(3)
    for a, b in zip(poly[1:-1], poly[2:]):
        area = 0.5 * float(np.cross(a - o, b - o) @ normal)
        total += area
        acc += area * (o + a + b) / 3.0
    if abs(total) < 1e-30:
        return poly.mean(axis=0)
    return acc / total


def _pixels(t: Table, default):
    value = t.raw("pixels")
    if value is None:
        return default
    if (not isinstance(value, list) or len(value) != 2
            or not all(isinstance(v, int) and not isinstance(v, bool) and 1 <= v <= 100_000
                       for v in value)):
        t.error("pixels", f"expected two integers [nx, ny] between 1 and 100000, got {value!r}")
        return None
    if value[0] * value[1] > MAX_PIXELS:
        t.error("pixels", f"expected at most {MAX_PIXELS} pixels in all (nx * ny; each map of a "
                          f"detector holds several values per pixel), got {value[0]} x {value[1]}")
        return None
    return (int(value[0]), int(value[1]))


def read_detector(name: str, t: Table, build: Build) -> DetectorSpec | None:
    """One ``[detectors.NAME]`` table."""
    dim = build.dimension
    kind = t.string("kind", default="plane", choices=DETECTOR_KINDS)
    two_sided = t.boolean("two_sided", default=False)
    if kind == "far_field":
        axis = t.vector("axis", None, default=np.array([0.0, 0.0, 1.0]), dimension=dim,
                        unit_length=True)
        x_axis = frame_axis(t, "x_axis", axis, build, what="axis")
        pixels = _pixels(t, (72, 36))
        t.finish(context="for a far_field detector")
        if axis is None or x_axis is None or pixels is None:
            return None
        return DetectorSpec(name=name, kind="far_field", position=np.zeros(3), normal=axis,
                            x_axis=x_axis, size=(0.0, 0.0), pixels=pixels, two_sided=True)
    if kind is None:
        t.known(*[k for k in t.data])
        return None

    on_face = t.raw("on_face")
    pixels = _pixels(t, (64, 1) if dim == 2 else (64, 64))
    if on_face is not None:
        face = resolve_face(t, "on_face", on_face, build)
        detects = t.string("detects", default="outgoing", choices=("outgoing", "incoming"))
        t.known("position", "normal")
        for bad in ("position", "normal"):
            if bad in t.data:
                t.error(bad, "a detector on_face takes its position and normal from the face; "
                             f'remove "{bad}" or "on_face"')
        if face is None or detects is None:
            t.known("x_axis", "width", "height")
            t.finish()
            return None
        solid, face_name, index = face
        centre, outward, poly = face_frame(build.solids[solid].geometry, index)
        position = centre + tolerances.DETECTOR_FACE_OFFSET * outward
        normal = -outward if detects == "outgoing" else outward
        x_axis = frame_axis(t, "x_axis", normal, build, what="the face normal")
        outline, diameter = _outline(t)
        width = t.quantity("width", "length", positive=True) if diameter is None else diameter
        height = t.quantity("height", "length", positive=True) if diameter is None else diameter
        if x_axis is not None and outline == "rectangle":
            y_axis = np.cross(normal, x_axis)
            rel = poly - centre
            if width is None and not t.has("width"):
                width = 2.0 * float(np.max(np.abs(rel @ x_axis)))
            if height is None and not t.has("height"):
                height = 2.0 * float(np.max(np.abs(rel @ y_axis)))
        on_face_ref = f"{solid}.{face_name}"
    else:
        t.known("detects")
        if "detects" in t.data:
            t.error("detects", 'applies to detectors with on_face only')
        position = t.vector("position", "length", required=True, dimension=dim)
        normal = t.vector("normal", None, required=True, dimension=dim, unit_length=True)
        x_axis = frame_axis(t, "x_axis", normal, build, what="normal")
        outline, diameter = _outline(t)
        if diameter is not None:
            width = height = diameter
        else:
            width = t.quantity("width", "length", required=outline == "rectangle",
                               positive=True)
            height = t.quantity("height", "length", required=dim == 3 and outline == "rectangle",
                                positive=True)
        if height is None and dim == 2 and not t.has("height"):
            height = width
        check_in_plane(t, "position", position, build)
        check_in_plane(t, "normal", normal, build)
        on_face_ref = None
    if dim == 2 and x_axis is not None:
        check_in_plane(t, "x_axis", x_axis, build)
    t.finish(context="for a plane detector")
    if any(v is None for v in (position, normal, x_axis, width, height, pixels, two_sided,
                               outline)):
        return None
    if not (width > 0 and height > 0):
        t.error(None, "the detector has no area (width and height must be positive)")
        return None
    return DetectorSpec(name=name, kind="plane", position=position, normal=normal,
                        x_axis=x_axis, size=(width, height), pixels=pixels,
                        two_sided=two_sided, on_face=on_face_ref, outline=outline)


#: Outlines of a plane detector: a ``width`` x ``height`` rectangle, or a disk of
#: ``diameter`` (pixels cover its bounding square).
OUTLINES = ("rectangle", "circle")


def _outline(t: Table):
    """``outline`` and, for a circle, its ``diameter`` [m] (None otherwise)."""
    outline = t.string("outline", default="rectangle", choices=OUTLINES)
    if outline is None:  # already reported
        t.known("diameter")
        return None, None
    if outline != "circle":
        t.known("diameter")
        if "diameter" in t.data:
            t.error("diameter", 'applies to outline = "circle"; a rectangle takes width and height')
        return outline, None
    for bad in ("width", "height"):
        t.known(bad)
        if bad in t.data:
            t.error(bad, 'a circular detector takes "diameter", not width and height')
    return outline, t.quantity("diameter", "length", required=True, positive=True)
