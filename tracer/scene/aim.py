"""``[sources.NAME.aim]``: place a source by the angle of incidence at a face point.

Instead of ``position`` and ``direction``, an aimed source names a face, a point on it,
a signed angle of incidence and the plane of incidence; the loader computes where the
source sits and where it points, so that a Brewster, minimum-deviation or TIR-margin
set-up needs no hand trigonometry.

Geometry (our convention). Let ``n`` be the face's outward unit normal, ``m = -n`` the
inward normal (the way light entering the solid travels at normal incidence) and ``p``
the unit normal of the plane of incidence (which must contain ``n``). The central ray's
direction is ``m`` turned by the angle ``theta`` right-handed about ``p``::

    d = cos(theta) m + sin(theta) (p x m)

A named plane ``"ab"`` (``"xy"``, ``"yz"``, ``"zx"`` and their reversals) has the normal
``a x b``: in the plane ``"xy"`` a positive angle turns the ray from the inward normal the
way x turns into y (counter-clockwise seen from +z); ``"yx"`` reverses the sign. The
source sits at ``point - distance d``, so that its central ray meets the face at the
point after ``distance``.

``angle_inside`` gives the refracted angle inside the solid instead; the outside angle
follows from Snell's law with the real parts of the ambient's and the solid's indices at
the source's wavelength, ``n_out sin(theta) = n_in sin(theta_inside)`` (Snell's law,
e.g. Born and Wolf, Principles of Optics, 7th ed. 1999, sec. 1.5.1).

>>> import numpy as np
>>> aim_direction(np.array([-1.0, 0, 0]), np.array([0, 0, 1.0]), np.pi / 6).round(12).tolist()
[0.866025403784, 0.5, 0.0]
"""

from __future__ import annotations

import math

import numpy as np

from .. import tolerances, units
from ..errors import TracerError
from .context import Build, resolve_face
from .model import AimSpec
from .reader import Table

__all__ = ["read_aim", "aim_direction", "PLANES", "plane_normal"]

_AXES = {"x": np.array([1.0, 0.0, 0.0]), "y": np.array([0.0, 1.0, 0.0]), "z": np.array([0.0, 0.0, 1.0])}

#: Named planes of incidence: ``"ab"`` has the normal ``a x b``.
PLANES = ("xy", "yz", "zx", "yx", "zy", "xz")


def plane_normal(name: str) -> np.ndarray:
    """Unit normal ``a x b`` of the named plane ``"ab"``.

    >>> plane_normal("xy").tolist(), plane_normal("xz").tolist()
    ([0.0, 0.0, 1.0], [0.0, -1.0, 0.0])
    """
    return np.cross(_AXES[name[0]], _AXES[name[1]])


def aim_direction(normal: np.ndarray, plane: np.ndarray, angle: float) -> np.ndarray:
    """Direction of a ray meeting a face of outward normal ``normal`` at ``angle``.

    Parameters
    ----------
    normal : (3,) float
        Outward unit normal of the face.
    plane : (3,) float
        Unit normal of the plane of incidence, perpendicular to ``normal``.
    angle : float [rad]
        Signed angle of incidence from the inward normal, right-handed about ``plane``.

    Returns
    -------
    (3,) float
        ``cos(angle) m + sin(angle) (plane x m)`` with ``m = -normal`` (unit).
    """
    m = -np.asarray(normal, dtype=float)
    d = math.cos(angle) * m + math.sin(angle) * np.cross(plane, m)
    return d / np.linalg.norm(d)


def _read_plane(t: Table, build: Build) -> np.ndarray | None:
    raw = t.raw("plane")
    if raw is None:
        if build.dimension == 2:
            return plane_normal("xy")
        t.error(None, 'missing key "plane": expected the plane of incidence, one of '
                      + ", ".join(f'"{p}"' for p in PLANES) + ", or 3 numbers normal to it")
        return None
    if isinstance(raw, str):
        name = t.string("plane", choices=PLANES)
        if name is None:
            return None
        p = plane_normal(name)
    else:
        p = t.vector("plane", None, dimension=3, unit_length=True)
        if p is None:
            return None
    if build.dimension == 2 and abs(abs(p[2]) - 1.0) > tolerances.FRAME_TOL:
        t.error("plane", 'a 2D scene traces rays in the x-y plane: expected plane = "xy" (or "yx" '
                         f"for the opposite sign of the angle), got {raw!r}")
        return None
    return p


def _read_point(t: Table, build: Build) -> np.ndarray | None:
    """Offset (u, v) [m] from the face centroid (default 0, 0)."""
    if not t.has("point"):
        return np.zeros(2)
    lengths = (1, 2) if build.dimension == 2 else (2,)
    pt = t.quantities("point", "length", length=lengths)
    if pt is None:
        return None
    if pt.size == 1:
        pt = np.append(pt, 0.0)
    if build.dimension == 2 and abs(pt[1]) > 0:
        t.error("point", "a 2D scene traces rays in the x-y plane: expected the point [u] or [u, 0] "
                         "(v runs along z)")
        return None
    return pt


def _inside_polygon(uv: np.ndarray, poly: np.ndarray) -> tuple[bool, float]:
    """(inside, distance to the boundary [m]) of point ``uv`` for the 2D polygon ``poly``."""
    x, y = uv
    inside = False
    dist = math.inf
    k = len(poly)
    for i in range(k):
        (x1, y1), (x2, y2) = poly[i], poly[(i + 1) % k]
        if (y1 > y) != (y2 > y) and x < x1 + (y - y1) * (x2 - x1) / (y2 - y1):
            inside = not inside
        e = np.array([x2 - x1, y2 - y1])
        L2 = float(e @ e)
        s = 0.0 if L2 == 0 else min(1.0, max(0.0, float(((x - x1) * e[0] + (y - y1) * e[1]) / L2)))
        dist = min(dist, math.hypot(x - (x1 + s * e[0]), y - (y1 + s * e[1])))
    return inside, dist


def _outside_angle(t: Table, build: Build, solid, inside_angle: float, wavelength: float):
    """The outside angle [rad] refracting to ``inside_angle`` at the face, or ``None``."""
    try:
        n_out = float(np.real(np.asarray(build.ambient.refractive_index(wavelength))).ravel()[0])
        n_in = float(np.real(np.asarray(solid.material.refractive_index(wavelength))).ravel()[0])
    except (TracerError, ValueError, ArithmeticError) as exc:
        t.error("angle_inside", f"cannot evaluate the indices at {units.format_wavelength(wavelength)}: {exc}")
        return None
    s = n_in / n_out * math.sin(inside_angle)
    if abs(s) >= 1.0:
        limit = math.asin(min(1.0, n_out / n_in))
        t.error("angle_inside", f"no ray from outside refracts to {units.format_angle(inside_angle)} inside "
                                f"{solid.material_name} (n = {n_in:.6g} against the ambient's "
                                f"{n_out:.6g} at {units.format_wavelength(wavelength)}): expected an angle "
                                f"below {units.format_angle(limit)} in magnitude")
        return None
    return math.asin(s)


def _read_wavelength(t: Table, spectrum, needed: bool) -> float | None:
    """The wavelength of an ``angle_inside`` conversion [m]."""
    if t.has("wavelength"):
        wl = t.quantity("wavelength", "wavelength", positive=True)
        if wl is not None and not needed:
            t.error("wavelength", 'aim.wavelength sets the wavelength of "angle_inside" only: '
                                  "remove it, or give angle_inside instead of angle")
            return None
        return wl
    if not needed or spectrum is None:
        return None
    wls = np.asarray(spectrum.wavelengths, dtype=float)
    if wls.size != 1:
        t.error(None, 'missing key "wavelength": the source has several wavelengths ('
                      + ", ".join(units.format_wavelength(w) for w in wls)
                      + '); expected the wavelength at which "angle_inside" holds')
        return None
    return float(wls[0])


def read_aim(t: Table, build: Build, spectrum) -> tuple[np.ndarray, np.ndarray, AimSpec] | None:
    """``(position [m], direction, AimSpec)`` of an ``aim`` table, or ``None`` with problems."""
    face_ref = t.string("face", required=True)
    point = _read_point(t, build)
    plane = _read_plane(t, build)
    distance = t.quantity("distance", "length", required=True, positive=True)
    has_out, has_in = t.has("angle"), t.has("angle_inside")
    angle = inside = None
    ok = True
    if has_out == has_in:
        t.error(None, 'expected exactly one of "angle" (outside the solid) and "angle_inside" '
                      "(the refracted ray inside it)" + (", not both" if has_out else ""))
        ok = False
    key = "angle" if has_out else "angle_inside"
    if has_out or has_in:
        value = t.quantity(key, "angle")
        if value is not None and not abs(value) < math.pi / 2:
            t.error(key, f"expected an angle of incidence between -90 deg and 90 deg (exclusive), "
                         f"got {units.format_angle(value)}")
            value = None
        if has_out:
            angle = value
        else:
            inside = value
    wavelength = _read_wavelength(t, spectrum, needed=has_in and not has_out)
    t.finish(context="for an aim")
    if not ok or face_ref is None:
        return None
    resolved = resolve_face(t, "face", face_ref, build)
    if resolved is None or point is None or plane is None or distance is None:
        return None
    solid_name, face, index = resolved
    solid = build.solids[solid_name]
    g = solid.geometry
    u, v, n = (np.asarray(a, dtype=float) for a in g.face_frame(index))

    # the plane of incidence must contain the face normal
    c = float(plane @ n)
    if abs(c) > 1 - 1e-6:
        t.error("plane", f"the plane of incidence is parallel to face {face_ref} (its normal is along the "
                         f"face normal {np.round(n, 9).tolist()}): expected a plane that contains the "
                         "face normal")
        return None
    if abs(c) > tolerances.FRAME_TOL:
        hint = plane - c * n
        hint = hint / np.linalg.norm(hint)
        t.error("plane", f"the plane of incidence must contain the normal {np.round(n, 9).tolist()} of face "
                         f"{face_ref}, but it is {units.format_angle(math.asin(min(1.0, abs(c))))} "
                         f"off it; the nearest such plane has the normal {np.round(hint, 9).tolist()}")
        return None
    plane = plane - c * n
    plane = plane / np.linalg.norm(plane)

    if inside is not None:
        if wavelength is None:
            return None
        angle = _outside_angle(t, build, solid, inside, wavelength)
    if angle is None:
        return None

    # the point, on the face
    centroid = np.asarray(g.face_centroid(index), dtype=float)
    target = centroid + point[0] * u + point[1] * v
    poly = np.asarray(g.face_polygons[index], dtype=float)
    poly_uv = np.stack([(poly - centroid) @ u, (poly - centroid) @ v], axis=1)
    inside_face, edge = _inside_polygon(point, poly_uv)
    if not inside_face or edge <= tolerances.PLANE_EPS:
        lo, hi = poly_uv.min(axis=0), poly_uv.max(axis=0)
        where = "on the edge of" if edge <= tolerances.PLANE_EPS else "outside"
        t.error("point" if t.has("point") else "face",
                f"the point [{units.format_length(point[0])}, {units.format_length(point[1])}] "
                f"(u, v from the centroid) lies {where} face {face_ref}, which spans u from "
                f"{units.format_length(lo[0])} to {units.format_length(hi[0])} and v from "
                f"{units.format_length(lo[1])} to {units.format_length(hi[1])}")
        return None

    direction = aim_direction(n, plane, angle)
    position = target - distance * direction
    if not _clear_path(t, build, position, direction, distance, solid_name, index, face_ref):
        return None
    spec = AimSpec(face=face_ref, point=target, angle=float(angle), plane_normal=plane,
                   distance=float(distance), angle_inside=inside,
                   wavelength=wavelength if inside is not None else None)
    return position, direction, spec


def _clear_path(t, build, position, direction, distance, solid_name, face_index, face_ref) -> bool:
    """The central ray runs through the ambient from the source to the aimed point."""
    names = list(build.solids)
    for name in names:
        g = build.solids[name].geometry
        try:
            if bool(np.asarray(g.contains(position[None, :])).any()):
                t.error("distance", f"the source would sit inside solid \"{name}\" "
                                    f"({units.format_length(distance)} back from {face_ref}): "
                                    "shorten aim.distance so that it starts in the ambient")
                return False
        except (TracerError, ValueError):  # a geometry that cannot answer: the hit test decides
            pass
    from ..geometry.intersect import intersect_many
    solids = [build.solids[n].geometry for n in names]
    tt, si, fi = intersect_many(solids, position[None, :], direction[None, :], -1)
    t_hit, s_hit, f_hit = float(tt[0]), int(si[0]), int(fi[0])
    if s_hit < 0:  # pragma: no cover - the point is on the face, so the ray meets it
        t.error("face", f"the aimed ray does not meet {face_ref}")
        return False
    hit_name = names[s_hit]
    slack = tolerances.PLANE_EPS + 1e-12 * distance
    if hit_name == solid_name and f_hit == face_index and abs(t_hit - distance) <= slack:
        return True
    face = build.solids[hit_name].geometry.face_names[f_hit]
    if t_hit < distance - slack:
        t.error("distance", f"the aimed ray meets {hit_name}.{face} {units.format_length(t_hit)} from the "
                            f"source, before it reaches {face_ref} at {units.format_length(distance)}: "
                            "shorten aim.distance or move the point")
    else:  # pragma: no cover - defensive
        t.error("face", f"the aimed ray meets {hit_name}.{face} instead of {face_ref}")
    return False
