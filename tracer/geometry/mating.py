"""Placing one solid against a face of another ("mating").

Face frame (ours): for a face with outward unit normal ``n`` the in-plane axes are
``u = normalise(z x n)`` (horizontal for the side faces of a z-extrusion; ``u = x`` when
``n`` is along +-z) and ``v = n x u``, so (u, v, n) is right-handed.

:func:`mate` turns the moving solid so that its face frame ``(u_m, v_m, n_m)`` becomes
``(-u_f, v_f, -n_f)`` (faces anti-parallel, ``v`` kept: a z-extrusion mated to another
z-extrusion keeps its z-range), puts the moving face's centroid at
``c_f + offset_u u_f + offset_v v_f + gap n_f``, then spins it by ``spin`` about the line
through that point along ``n_f`` and tilts it by ``wedge`` about the line through that
point along ``u_f`` (both right-handed). The moving face's centroid is therefore always
at distance ``gap`` from the fixed face's plane.
"""

from __future__ import annotations

import math
from typing import Any, NamedTuple

import numpy as np

from tracer.geometry.errors import GeometryError
from tracer.geometry.transforms import align_frames, axis_rotation

__all__ = ["Mated", "mate", "mate_transform"]


class Mated(NamedTuple):
    """Result of :func:`mate`: the rigid motion ``x -> rotation @ x + translation`` and the placed solid."""

    rotation: np.ndarray
    translation: np.ndarray
    solid: Any


def mate_transform(
    moving: Any,
    moving_face: str | int,
    fixed: Any,
    fixed_face: str | int,
    *,
    gap: float = 0.0,
    offset: tuple[float, float] = (0.0, 0.0),
    spin: float = 0.0,
    wedge: float = 0.0,
) -> tuple[np.ndarray, np.ndarray]:
    """Rigid motion ``(rotation (3,3), translation (3,) [m])`` of :func:`mate`."""
    g = float(gap)
    if not math.isfinite(g) or g < 0:
        raise GeometryError(f"gap must be a non-negative length, got {gap!r}")
    off = np.asarray(offset, dtype=float).reshape(-1)
    if off.shape != (2,) or not np.all(np.isfinite(off)):
        raise GeometryError(f"offset must be two lengths (u, v), got {offset!r}")
    for name, val in (("spin", spin), ("wedge", wedge)):
        if not math.isfinite(float(val)):
            raise GeometryError(f"{name} must be a finite angle, got {val!r}")
    um, vm, nm = moving.face_frame(moving_face)
    uf, vf, nf = fixed.face_frame(fixed_face)
    cm = moving.face_centroid(moving_face)
    cf = fixed.face_centroid(fixed_face)
    r_align = align_frames(np.array([um, vm, nm]), np.array([-uf, vf, -nf]))
    r = axis_rotation(uf, float(wedge)) @ axis_rotation(nf, float(spin)) @ r_align
    target = cf + off[0] * uf + off[1] * vf + g * nf
    return r, target - r @ cm


def mate(
    moving: Any,
    moving_face: str | int,
    fixed: Any,
    fixed_face: str | int,
    *,
    gap: float = 0.0,
    offset: tuple[float, float] = (0.0, 0.0),
    spin: float = 0.0,
    wedge: float = 0.0,
) -> Mated:
    """Place ``moving`` so that ``moving_face`` faces ``fixed_face`` of ``fixed``.

    Parameters
    ----------
    moving, fixed : solids
        ``moving`` in whatever frame it is given (e.g. its catalog frame).
    moving_face, fixed_face : str or int
        Face names (or indices).
    gap : float [m]
        Distance from the moving face's centroid to the fixed face's plane (>= 0).
    offset : (float, float) [m]
        Shift of the moving face's centroid along the fixed face's (u, v) axes.
    spin : float [rad]
        Rotation about the fixed face normal (right-handed about ``n_f``).
    wedge : float [rad]
        Tilt about the fixed face's ``u`` axis; the angle between the two faces.

    Returns
    -------
    Mated
        ``(rotation, translation, solid)``; ``solid = moving.transformed(rotation, translation)``.

    Examples
    --------
    >>> from tracer.geometry.catalog import build
    >>> a = build("plate", width=0.01, height=0.01, thickness=0.002)
    >>> b = mate(a, "front", a, "back", gap=1e-6).solid
    >>> round(float(b.face_centroid("front")[0]), 9)
    0.002001
    """
    r, t = mate_transform(
        moving, moving_face, fixed, fixed_face, gap=gap, offset=offset, spin=spin, wedge=wedge
    )
    return Mated(r, t, moving.transformed(r, t))
