"""``[sources.NAME]``: collimated beams, point and cone sources, fans; polarisation.

Polarisation is stored as a normalised Stokes vector in the source frame (``x_axis``,
``y_axis = direction x x_axis``). Handedness (common practice, no source): *right*
circular is S3 > 0, the field turning clockwise as seen by an observer who looks
towards the source (the receiver's view); an ellipticity angle chi > 0 is right-handed.
The Stokes vector of azimuth psi, ellipticity angle chi and degree p is
``(1, p cos2chi cos2psi, p cos2chi sin2psi, p sin2chi)``.

>>> s = stokes_from_ellipse(azimuth=0.0, ellipticity=np.pi / 4)
>>> np.round(s, 12).tolist()
[1.0, 0.0, 0.0, 1.0]
"""

from __future__ import annotations

import math

import numpy as np

from .. import tolerances, units
from .context import Build
from .model import Polarization, SourceSpec
from .ranges import MAX_RAYS
from .reader import Table
from .settings import read_spectrum

__all__ = ["read_source", "read_polarization", "stokes_from_ellipse", "default_x_axis",
           "SOURCE_KINDS", "POLARIZATION_KINDS"]

SOURCE_KINDS = ("collimated", "point", "cone", "fan")
POLARIZATION_KINDS = ("unpolarized", "unpolarised", "linear", "circular", "elliptical", "stokes")


def stokes_from_ellipse(*, azimuth: float, ellipticity: float, degree: float = 1.0) -> np.ndarray:
    """Normalised Stokes vector of a polarisation ellipse.

    Parameters
    ----------
    azimuth : float [rad]
        Angle of the major axis from the frame's x axis towards its y axis.
    ellipticity : float [rad]
        Ellipticity angle chi, tan(chi) = minor/major axis, in [-pi/4, pi/4];
        positive is right-handed (S3 > 0).
    degree : float [1]
        Degree of polarisation in [0, 1].

    Returns
    -------
    (4,) float
        ``(1, p cos2chi cos2psi, p cos2chi sin2psi, p sin2chi)`` (Stokes parameters of
        an ellipse, e.g. Born and Wolf, Principles of Optics, 7th ed. 1999, Sec. 1.4.2).
    """
    c2 = math.cos(2 * ellipticity)
    return np.array([1.0, degree * c2 * math.cos(2 * azimuth), degree * c2 * math.sin(2 * azimuth),
                     degree * math.sin(2 * ellipticity)])


def default_x_axis(direction: np.ndarray) -> np.ndarray:
    """Default frame axis: z x direction normalised, or +x when direction is along z.

    >>> default_x_axis(np.array([1.0, 0, 0])).tolist()
    [0.0, 1.0, 0.0]
    """
    x = np.cross([0.0, 0.0, 1.0], direction)
    n = np.linalg.norm(x)
    if n < 1e-6:
        return np.array([1.0, 0.0, 0.0])
    return x / n


def frame_axis(t: Table, name: str, direction: np.ndarray | None, build: Build,
               *, what: str = "direction", default: np.ndarray | None = None) -> np.ndarray | None:
    """Read an optional ``x_axis`` perpendicular to ``direction`` (default: ``default``, else
    z x direction)."""
    axis = t.vector(name, None, dimension=build.dimension, unit_length=True)
    if direction is None:
        return None
    if axis is None:
        if t.has(name):
            return None
        return default_x_axis(direction) if default is None else default
    if abs(float(axis @ direction)) > 1e-6:
        t.error(name, f"expected a direction perpendicular to {what} {np.round(direction, 6).tolist()}, "
                      f"got {np.round(axis, 6).tolist()}")
        return None
    axis = axis - (axis @ direction) * direction
    return axis / np.linalg.norm(axis)


def check_in_plane(t: Table, name: str, vec: np.ndarray | None, build: Build) -> None:
    """In 2D scenes positions and directions must lie in the x-y plane (z = 0)."""
    if build.dimension == 2 and vec is not None and abs(vec[2]) > tolerances.FRAME_TOL:
        t.error(name, f"a 2D scene lies in the x-y plane: expected z = 0, got "
                      f"{np.round(vec, 9).tolist()}")


def read_polarization(t: Table | None) -> Polarization | None:
    """The ``polarization`` table of a source (unpolarised when absent)."""
    if t is None:
        return Polarization()
    kind = t.string("kind", required=True, choices=POLARIZATION_KINDS)
    degree_keys = ("linear", "circular", "elliptical")
    degree = 1.0
    if kind in degree_keys:
        degree = t.number("degree", default=1.0, minimum=0.0, maximum=1.0)
    out = None
    if kind in ("unpolarized", "unpolarised"):
        out = Polarization()
    elif kind == "linear":
        ang = t.quantity("angle", "angle", required=True)
        if ang is not None and degree is not None:
            out = Polarization(stokes_from_ellipse(azimuth=ang, ellipticity=0.0, degree=degree),
                               f"linear {units.format_angle(ang)}")
    elif kind == "circular":
        hand = t.string("handedness", required=True, choices=("right", "left"))
        if hand and degree is not None:
            chi = math.pi / 4 if hand == "right" else -math.pi / 4
            out = Polarization(stokes_from_ellipse(azimuth=0.0, ellipticity=chi, degree=degree),
                               f"circular {hand}")
    elif kind == "elliptical":
        psi = t.quantity("azimuth", "angle", required=True)
        chi = t.quantity("ellipticity", "angle", required=True)
        if chi is not None and abs(chi) > math.pi / 4 + 1e-12:
            t.error("ellipticity", "expected an ellipticity angle between -45 deg and 45 deg "
                                   f"(positive: right-handed), got {units.format_angle(chi)}")
            chi = None
        if psi is not None and chi is not None and degree is not None:
            out = Polarization(stokes_from_ellipse(azimuth=psi, ellipticity=chi, degree=degree),
                               f"elliptical azimuth {units.format_angle(psi)}, "
                               f"ellipticity {units.format_angle(chi)}")
    elif kind == "stokes":
        s = t.numbers("stokes", required=True, length=4)
        if s is not None:
            if not s[0] > 0:
                t.error("stokes", f"expected S0 > 0, got {s.tolist()}")
            elif np.linalg.norm(s[1:]) > s[0] * (1 + tolerances.STOKES_DOP_TOL):
                t.error("stokes", "expected a physical Stokes vector with "
                                  f"S1^2 + S2^2 + S3^2 <= S0^2, got {s.tolist()}")
            else:
                s = s / s[0]
                norm = np.linalg.norm(s[1:])
                if norm > 1:
                    s[1:] /= norm
                out = Polarization(s, f"stokes {np.round(s, 6).tolist()}")
    t.finish(context=f'for polarization kind "{kind}"' if kind else None)
    return out


def read_source(name: str, t: Table, build: Build) -> SourceSpec | None:
    """One ``[sources.NAME]`` table."""
    dim = build.dimension
    kind = t.string("kind", required=True, choices=SOURCE_KINDS)
    spectrum_t = t.table("spectrum")
    spectrum = read_spectrum(spectrum_t) if spectrum_t is not None else build.spectrum
    aim = None
    if t.has("aim"):
        position, direction, aim, x_default = _read_aimed(t, build, spectrum)
    else:
        position = t.vector("position", "length", required=True, dimension=dim)
        isotropic_ok = kind == "point"
        direction = t.vector("direction", None, required=not isotropic_ok, dimension=dim,
                             unit_length=True)
        if direction is None and isotropic_ok and not t.has("direction"):
            direction = np.array([1.0, 0.0, 0.0])
        x_default = None
    check_in_plane(t, "position", position, build)
    check_in_plane(t, "direction", direction, build)
    x_axis = frame_axis(t, "x_axis", direction, build, default=x_default,
                        what="direction" if aim is None else "the aimed direction")
    check_in_plane(t, "x_axis", x_axis, build)
    power = t.quantity("power", "power", required=True, positive=True)
    rays = t.integer("rays", default=100, minimum=1, maximum=MAX_RAYS)
    sampling = t.string("sampling", default="grid", choices=("grid", "random"))
    polarization = read_polarization(t.table("polarization"))

    aperture, size, half_angle, model_kind = "circle", (0.0, 0.0), 0.0, kind
    if kind == "collimated":
        if dim == 2:
            ap = t.string("aperture", default="line", choices=("line",))
            width = t.quantity("width", "length", required=True, positive=True)
            t.known("height", "diameter")
            for bad in ("height", "diameter"):
                if bad in t.data:
                    t.error(bad, "a 2D collimated source has a line aperture: give only width")
            aperture, size = "rectangle", (width or 0.0, 0.0)
            ok = ap is not None and width is not None
        else:
            ap = t.string("aperture", default="circle", choices=("circle", "rectangle"))
            if ap == "circle":
                d = t.quantity("diameter", "length", required=True, positive=True)
                t.known("width", "height")
                size, ok = (d or 0.0, d or 0.0), d is not None
            elif ap == "rectangle":
                w = t.quantity("width", "length", required=True, positive=True)
                h = t.quantity("height", "length", required=True, positive=True)
                t.known("diameter")
                size, ok = (w or 0.0, h or 0.0), w is not None and h is not None
            else:
                t.known("diameter", "width", "height")
                ok = False
            aperture = ap or "circle"
        t.known("half_angle")
        if "half_angle" in t.data:
            t.error("half_angle", "a collimated source has no half_angle (use kind = \"cone\")")
    elif kind in ("point", "cone", "fan"):
        if dim == 2 and kind in ("point", "cone"):
            t.error("kind", f'a 2D scene traces rays in the x-y plane: use kind = "fan" instead of "{kind}"')
        default = math.pi if kind == "point" else None
        half = t.quantity("half_angle", "angle", required=default is None, default=default,
                          positive=True, maximum=math.pi)
        ok = half is not None
        half_angle = half or 0.0
        model_kind = "point" if kind in ("point", "cone") else "fan"
        t.known("aperture", "diameter", "width", "height")
        for bad in ("aperture", "diameter", "width", "height"):
            if bad in t.data:
                t.error(bad, f'a {kind} source starts at one point: "{bad}" applies to '
                             'kind = "collimated" only')
    else:
        t.known("aperture", "diameter", "width", "height", "half_angle")
        ok = False
    t.finish(context=f'for a {kind} source' if kind else None)
    if not ok or any(v is None for v in (position, direction, x_axis, power, rays, sampling,
                                         spectrum, polarization)):
        return None
    return SourceSpec(name=name, kind=model_kind, position=position, direction=direction,
                      x_axis=x_axis, power=power, rays=rays, spectrum=spectrum,
                      polarization=polarization, aperture=aperture, size=tuple(size),
                      half_angle=half_angle, sampling=sampling, aim=aim)


def _read_aimed(t: Table, build: Build, spectrum):
    """``(position, direction, AimSpec, default x_axis)`` of a source with an ``aim`` table.

    The default ``x_axis`` of an aimed source lies in the plane of incidence
    (``plane x direction``), so that linear polarisation at 0 deg is p and 90 deg is s at
    the aimed face.
    """
    from .aim import read_aim
    for bad in ("position", "direction"):
        if t.has(bad):
            t.error(bad, f'an aimed source is placed by its [{t.key}.aim] table: give either '
                         f'"position" and "direction" or the aim table, not both (remove "{bad}")')
    aim_t = t.table("aim")
    if aim_t is None or spectrum is None:
        return None, None, None, None
    got = read_aim(aim_t, build, spectrum)
    if got is None:
        return None, None, None, None
    position, direction, aim = got
    x = np.cross(aim.plane_normal, direction)
    return position, direction, aim, x / np.linalg.norm(x)
