"""Builders of the catalog prisms (plain functions; the registry is :mod:`.catalog`).

Every builder takes keyword-only lengths [m] and angles [rad] and returns a solid in its
documented local frame. Prisms with a constant cross-section lie in the x-y plane and are
extruded along z from -height/2 to +height/2, so that 2D scenes in the plane z = 0 use the
same solids. Face normals point out of the glass.

References for the shapes: W. J. Smith, "Modern Optical Engineering", 4th ed., 2008,
ch. 8 (prism systems); M. Born and E. Wolf, "Principles of Optics", 7th ed., 1999,
sec. 1.5.4 (Fresnel rhomb).
"""

from __future__ import annotations

import math
from typing import NamedTuple

import numpy as np

from tracer.geometry.errors import GeometryError
from tracer.geometry.extrude import extrude_polygon
from tracer.geometry.solid import ConvexSolid

__all__ = [
    "right_angle_prism",
    "dispersing_prism",
    "penta_prism",
    "dove_prism",
    "rhomb",
    "wedge",
    "plate",
    "corner_cube",
    "roof_prism",
    "beamsplitter_cube",
    "CubeHalves",
    "FRESNEL_RHOMB_ANGLE",
]

#: Acute angle of the Fresnel rhomb for n = 1.51: 54 deg 37 min, which gives 45 deg of
#: retardance per total internal reflection (Born and Wolf, sec. 1.5.4; value recalled
#: from memory; the other solution is 48 deg 37 min).
FRESNEL_RHOMB_ANGLE = math.radians(54 + 37 / 60)


def _positive(name: str, value: float) -> float:
    v = float(value)
    if not math.isfinite(v) or v <= 0:
        raise GeometryError(f"{name} must be a positive length, got {value!r}")
    return v


def right_angle_prism(*, leg: float, height: float | None = None):
    """Right-angle (45-45-90) prism.

    Frame: the right-angle edge along z through the origin; ``leg_a`` on the x axis
    (from (0,0) to (leg,0), normal -y), ``leg_b`` on the y axis (normal -x),
    ``hypotenuse`` from (leg,0) to (0,leg) (normal (1,1,0)/sqrt 2); ``top``/``bottom``
    at z = +-height/2.

    Parameters
    ----------
    leg : float [m]
    height : float [m], default ``leg``
    """
    leg = _positive("leg", leg)
    h = leg if height is None else _positive("height", height)
    return extrude_polygon(
        [[0.0, 0.0], [leg, 0.0], [0.0, leg]], height=h, side_names=["leg_a", "hypotenuse", "leg_b"]
    )


def dispersing_prism(
    *, apex_angle: float, side: float | None = None, base: float | None = None, height: float | None = None
):
    """Isosceles dispersing prism.

    Frame: ``base`` on the x axis centred on the origin (normal -y), apex on +y;
    ``entrance`` is the left face (normal towards -x, +y), ``exit`` the right one.

    Parameters
    ----------
    apex_angle : float [rad]
        Angle between entrance and exit faces, in (0, pi).
    side : float [m]
        Length of the entrance and exit faces (give this or ``base``).
    base : float [m]
        Length of the base.
    height : float [m], default the larger of side and base
    """
    a = float(apex_angle)
    if not 0 < a < math.pi:
        raise GeometryError(f"apex_angle must lie between 0 and 180 deg, got {math.degrees(a):g} deg")
    if (side is None) == (base is None):
        raise GeometryError("give exactly one of side and base for a dispersing prism")
    if side is not None:
        s = _positive("side", side)
        b = 2 * s * math.sin(a / 2)
    else:
        b = _positive("base", base)
        s = b / (2 * math.sin(a / 2))
    h = max(s, b) if height is None else _positive("height", height)
    apex_y = s * math.cos(a / 2)
    return extrude_polygon(
        [[-b / 2, 0.0], [b / 2, 0.0], [0.0, apex_y]], height=h, side_names=["base", "exit", "entrance"]
    )


def penta_prism(*, aperture: float, height: float | None = None):
    """Penta prism: 90 deg deviation from two reflections on faces at 45 deg to each other.

    Interior angles 90 deg (entrance/exit) and four of 112.5 deg; the reflectors are
    ``aperture / cos(22.5 deg)`` long and the bevel ``(2 - sqrt 2) aperture``, the
    smallest that pass the full square aperture (the axial path in glass is then
    ``(2 + sqrt 2) aperture``; Smith, ch. 8).

    Frame: ``entrance`` on the x axis from (0,0) to (a,0) (normal -y, light enters going
    +y), ``exit`` on x = a from (a,0) to (a,a) (normal +x, light leaves going +x),
    ``reflector_a`` from (a,a) to (0, sqrt2 a) (first reflection), ``bevel`` from there
    to ((1 - sqrt2) a, a), ``reflector_b`` back to the origin.

    Parameters
    ----------
    aperture : float [m]
        Length of the entrance and exit faces.
    height : float [m], default ``aperture``
    """
    a = _positive("aperture", aperture)
    h = a if height is None else _positive("height", height)
    r2 = math.sqrt(2.0)
    verts = [[0.0, 0.0], [a, 0.0], [a, a], [0.0, r2 * a], [(1 - r2) * a, a]]
    return extrude_polygon(
        verts, height=h, side_names=["entrance", "exit", "reflector_a", "bevel", "reflector_b"]
    )


def dove_prism(
    *, aperture: float, length: float, base_angle: float = math.radians(45.0), depth: float | None = None
):
    """Dove prism (image-rotating; light enters a slanted end, totally reflects at the base).

    Frame: ``base`` (the long, TIR face) on the x axis from (-L/2,0) to (L/2,0) (normal
    -y); ``upper`` the short parallel face at y = aperture; ``entrance`` the slanted end
    at -x, ``exit`` at +x; ``top``/``bottom`` at z = +-depth/2.

    Parameters
    ----------
    aperture : float [m]
        Distance between base and upper face.
    length : float [m]
        Length of the base; must exceed ``2 aperture / tan(base_angle)``.
    base_angle : float [rad], default 45 deg
        Angle between base and each slanted end, in (0, 90 deg).
    depth : float [m], default ``aperture``
    """
    a = _positive("aperture", aperture)
    length = _positive("length", length)
    beta = float(base_angle)
    if not 0 < beta < math.pi / 2:
        raise GeometryError(f"base_angle must lie in (0, 90) deg, got {math.degrees(beta):g} deg")
    run = a / math.tan(beta)
    if length <= 2 * run:
        raise GeometryError(
            f"length {length:g} m too short: a Dove prism with aperture {a:g} m and base angle "
            f"{math.degrees(beta):g} deg needs a base longer than {2 * run:g} m"
        )
    d = a if depth is None else _positive("depth", depth)
    h2 = length / 2
    verts = [[-h2, 0.0], [h2, 0.0], [h2 - run, a], [-h2 + run, a]]
    return extrude_polygon(verts, height=d, side_names=["base", "exit", "upper", "entrance"])


def rhomb(
    *,
    aperture: float,
    angle: float | None = None,
    length: float | None = None,
    height: float | None = None,
    style: str = "lateral",
):
    """Parallelogram rhomb: lateral displacement prism or Fresnel rhomb retarder.

    A ray entering ``entrance`` at normal incidence meets ``reflector_a`` and then
    ``reflector_b`` at an angle of incidence equal to the acute ``angle``, and leaves
    ``exit`` at normal incidence, parallel to its input and displaced.

    Frame: ``reflector_a`` on the x axis from (0,0) to (L,0) (normal -y); ``exit`` from
    (L,0) to (L + s cos a, s sin a); ``reflector_b`` the parallel long face; ``entrance``
    from (s cos a, s sin a) back to the origin (normal (-sin a, cos a)).

    Parameters
    ----------
    aperture : float [m]
        Length ``s`` of the entrance and exit faces.
    angle : float [rad], optional
        Acute angle ``a`` of the parallelogram; default 45 deg for ``style="lateral"``,
        :data:`FRESNEL_RHOMB_ANGLE` for ``style="fresnel"``.
    length : float [m], optional
        Length ``L`` of the reflecting faces; default ``2 s sin(a)^2 / cos(a)``, for which
        the axial ray passes through the centre of the rhomb.
    height : float [m], default ``aperture``
    style : {"lateral", "fresnel"}
    """
    s = _positive("aperture", aperture)
    if style not in ("lateral", "fresnel"):
        raise GeometryError(f"rhomb style must be 'lateral' or 'fresnel', got {style!r}")
    a = (math.radians(45.0) if style == "lateral" else FRESNEL_RHOMB_ANGLE) if angle is None else float(angle)
    if not 0 < a < math.pi / 2:
        raise GeometryError(f"rhomb angle must lie in (0, 90) deg, got {math.degrees(a):g} deg")
    L = 2 * s * math.sin(a) ** 2 / math.cos(a) if length is None else _positive("length", length)
    h = s if height is None else _positive("height", height)
    c, sn = s * math.cos(a), s * math.sin(a)
    verts = [[0.0, 0.0], [L, 0.0], [L + c, sn], [c, sn]]
    return extrude_polygon(verts, height=h, side_names=["reflector_a", "exit", "reflector_b", "entrance"])


def wedge(
    *,
    aperture: float,
    thickness: float,
    angle: float,
    height: float | None = None,
    thickness_at: str = "centre",
):
    """Optical wedge: a plate whose back face is tilted by ``angle`` about z.

    Frame: ``front`` in the plane x = 0 (normal -x), centred on the origin, spanning
    y in [-aperture/2, aperture/2]; ``back`` is the plane ``x = t_c + y tan(angle)``
    (thicker towards +y); ``side_a`` at y = -aperture/2 (thin end), ``side_b`` at
    +aperture/2; ``top``/``bottom`` at z = +-height/2.

    Parameters
    ----------
    aperture : float [m]
    thickness : float [m]
        At the centre (``thickness_at="centre"``) or at the thin end (``"thin_end"``).
    angle : float [rad]
        Wedge angle, in [0, 90 deg).
    height : float [m], default ``aperture``
    thickness_at : {"centre", "thin_end"}
    """
    a = _positive("aperture", aperture)
    t = _positive("thickness", thickness)
    w = float(angle)
    if not 0 <= w < math.pi / 2:
        raise GeometryError(f"wedge angle must lie in [0, 90) deg, got {math.degrees(w):g} deg")
    if thickness_at not in ("centre", "thin_end"):
        raise GeometryError(f"thickness_at must be 'centre' or 'thin_end', got {thickness_at!r}")
    tc = t if thickness_at == "centre" else t + a / 2 * math.tan(w)
    thin = tc - a / 2 * math.tan(w)
    if thin <= 0:
        raise GeometryError(
            f"wedge too steep: thickness {tc:g} m at the centre and angle {math.degrees(w):g} deg "
            f"leave no glass at the thin end (aperture {a:g} m)"
        )
    h = a if height is None else _positive("height", height)
    verts = [[0.0, -a / 2], [thin, -a / 2], [tc + a / 2 * math.tan(w), a / 2], [0.0, a / 2]]
    return extrude_polygon(verts, height=h, side_names=["side_a", "back", "side_b", "front"])


def plate(*, width: float, height: float, thickness: float):
    """Plane-parallel plate.

    Frame: ``front`` in the plane x = 0 (normal -x) centred on the origin, ``back`` at
    x = thickness; ``side_a``/``side_b`` at y = -+width/2; ``top``/``bottom`` at
    z = +-height/2.

    Parameters
    ----------
    width : float [m]
        Extent along y.
    height : float [m]
        Extent along z.
    thickness : float [m]
        Extent along x.
    """
    w = _positive("width", width)
    t = _positive("thickness", thickness)
    h = _positive("height", height)
    verts = [[0.0, -w / 2], [t, -w / 2], [t, w / 2], [0.0, w / 2]]
    return extrude_polygon(verts, height=h, side_names=["side_a", "back", "side_b", "front"])


def corner_cube(*, size: float):
    """Trihedral corner-cube retroreflector: a tetrahedron cut from a cube corner.

    Frame: the corner (apex) at the origin; ``reflector_a`` in the plane x = 0 (normal
    -x), ``reflector_b`` in y = 0, ``reflector_c`` in z = 0; ``entrance`` is the plane
    x + y + z = size, normal (1,1,1)/sqrt 3 (along the cube diagonal). A ray entering
    the front reflects once on each reflector and leaves antiparallel to its input.

    Parameters
    ----------
    size : float [m]
        Length of the three mutually perpendicular edges.
    """
    s = _positive("size", size)
    n = np.array([[-1.0, 0, 0], [0, -1.0, 0], [0, 0, -1.0], np.ones(3) / math.sqrt(3)])
    d = np.array([0.0, 0.0, 0.0, s / math.sqrt(3)])
    return ConvexSolid(n, d, ["reflector_a", "reflector_b", "reflector_c", "entrance"])


def roof_prism(*, leg: float, height: float | None = None):
    """Roof (Amici) prism: a right-angle prism whose hypotenuse is a 90 deg roof.

    Frame as :func:`right_angle_prism` (``leg_a`` on y = 0, ``leg_b`` on x = 0); the
    roof ridge is the hypotenuse line x + y = leg in the plane z = 0; ``roof_a`` (normal
    (1/2, 1/2, 1/sqrt2)) faces +z and ``roof_b`` -z, at 90 deg to each other; ``top`` and
    ``bottom`` at z = +-height/2 (height must be below sqrt2 * leg so that they exist).

    Parameters
    ----------
    leg : float [m]
    height : float [m], default ``leg``
    """
    L = _positive("leg", leg)
    h = L if height is None else _positive("height", height)
    if h >= math.sqrt(2) * L * (1 - 1e-9):
        raise GeometryError(f"roof prism height {h:g} m must be below sqrt(2) x leg = {math.sqrt(2) * L:g} m")
    r = 1 / math.sqrt(2)
    n = np.array(
        [[0, -1.0, 0], [0.5, 0.5, r], [-1.0, 0, 0], [0.5, 0.5, -r], [0, 0, 1.0], [0, 0, -1.0]]
    )
    d = np.array([0.0, L / 2, 0.0, L / 2, h / 2, h / 2])
    return ConvexSolid(n, d, ["leg_a", "roof_a", "leg_b", "roof_b", "top", "bottom"])


class CubeHalves(NamedTuple):
    """The two placed halves of a beam-splitter cube and the faces that form the joint."""

    first: ConvexSolid
    second: ConvexSolid
    face_first: str
    face_second: str


def beamsplitter_cube(*, size: float, gap: float = 0.0, height: float | None = None) -> CubeHalves:
    """Two right-angle prisms mated hypotenuse to hypotenuse.

    Frame: the cube's centre at the origin when ``gap`` = 0; ``first`` has its right
    angle at (-size/2, -size/2) (legs facing -x and -y), ``second`` is turned by 180 deg
    about z and moved ``gap`` along the first hypotenuse's normal (1,1,0)/sqrt 2. The joint
    (coating or cement as a gap) is ``first.hypotenuse`` | ``second.hypotenuse``.

    Parameters
    ----------
    size : float [m]
        Edge of the cube.
    gap : float [m]
        Separation of the two hypotenuses (0 for an optically contacted cube).
    height : float [m], default ``size``

    Examples
    --------
    >>> halves = beamsplitter_cube(size=0.01)
    >>> round(halves.first.volume + halves.second.volume, 15)
    1e-06
    """
    from tracer.geometry.mating import mate

    s = _positive("size", size)
    g = float(gap)
    if not math.isfinite(g) or g < 0:
        raise GeometryError(f"gap must be a non-negative length, got {gap!r}")
    first = right_angle_prism(leg=s, height=height).transformed(np.eye(3), [-s / 2, -s / 2, 0.0])
    second = mate(right_angle_prism(leg=s, height=height), "hypotenuse", first, "hypotenuse", gap=g).solid
    return CubeHalves(first, second, "hypotenuse", "hypotenuse")
