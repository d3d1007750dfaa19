"""Rigid transforms: our rotation convention, axis-angle rotations, composition.

Convention (scene placement): ``rotation = (rx, ry, rz)`` [rad] are extrinsic rotations
about the scene x, then y, then z axes, i.e. ``R = Rz @ Ry @ Rx``, about the solid's
local origin, followed by the translation: ``x_scene = R @ x_local + t``.
"""

from __future__ import annotations

import numpy as np

from tracer.geometry.errors import GeometryError
from tracer.tolerances import ROTATION_TOL

__all__ = [
    "rotation_matrix",
    "axis_rotation",
    "align_frames",
    "check_rotation",
    "compose",
    "apply",
    "rotation_angles",
]


def rotation_matrix(rx: float = 0.0, ry: float = 0.0, rz: float = 0.0) -> np.ndarray:
    """Rotation matrix ``Rz @ Ry @ Rx`` for extrinsic rotations about x, y, z.

    Parameters
    ----------
    rx, ry, rz : float [rad]
        Right-handed rotation angles about the scene x, y and z axes, applied in that order.

    Examples
    --------
    >>> import numpy as np
    >>> (rotation_matrix(rz=np.pi / 2) @ [1.0, 0, 0]).round(12)
    array([0., 1., 0.])
    >>> (rotation_matrix(rx=np.pi / 2, rz=np.pi / 2) @ [0, 1.0, 0]).round(12)  # y -> z -> z
    array([0., 0., 1.])
    """
    cx, sx = np.cos(rx), np.sin(rx)
    cy, sy = np.cos(ry), np.sin(ry)
    cz, sz = np.cos(rz), np.sin(rz)
    r_x = np.array([[1, 0, 0], [0, cx, -sx], [0, sx, cx]])
    r_y = np.array([[cy, 0, sy], [0, 1, 0], [-sy, 0, cy]])
    r_z = np.array([[cz, -sz, 0], [sz, cz, 0], [0, 0, 1]])
    return r_z @ r_y @ r_x


def rotation_angles(rotation: np.ndarray) -> tuple[float, float, float]:
    """Angles (rx, ry, rz) [rad] with ``rotation_matrix(rx, ry, rz) == rotation``.

    ``ry`` is taken in [-pi/2, pi/2]; at ``|ry| = pi/2`` (gimbal lock) ``rx = 0``.

    >>> import numpy as np
    >>> np.round(rotation_angles(rotation_matrix(0.1, -0.2, 0.3)), 12)
    array([ 0.1, -0.2,  0.3])
    """
    r = check_rotation(rotation)
    ry = float(np.arcsin(np.clip(-r[2, 0], -1.0, 1.0)))
    if abs(r[2, 0]) < 1 - 1e-12:
        rx = float(np.arctan2(r[2, 1], r[2, 2]))
        rz = float(np.arctan2(r[1, 0], r[0, 0]))
    else:
        rx = 0.0
        rz = float(np.arctan2(-r[0, 1], r[1, 1]))
    return rx, ry, rz


def axis_rotation(axis, angle: float) -> np.ndarray:
    """Right-handed rotation by ``angle`` [rad] about the unit direction ``axis`` (Rodrigues).

    >>> (axis_rotation([0, 0, 1.0], np.pi / 2) @ [1.0, 0, 0]).round(12)
    array([0., 1., 0.])
    """
    k = np.asarray(axis, dtype=float).reshape(3)
    norm = np.linalg.norm(k)
    if norm == 0:
        raise GeometryError("rotation axis must be non-zero")
    k = k / norm
    kx = np.array([[0, -k[2], k[1]], [k[2], 0, -k[0]], [-k[1], k[0], 0]])
    return np.eye(3) + np.sin(angle) * kx + (1 - np.cos(angle)) * (kx @ kx)


def align_frames(source: np.ndarray, target: np.ndarray) -> np.ndarray:
    """Rotation taking the orthonormal frame ``source`` (rows) onto ``target`` (rows)."""
    s = np.asarray(source, dtype=float)
    t = np.asarray(target, dtype=float)
    return t.T @ s


def check_rotation(rotation) -> np.ndarray:
    """``rotation`` as a (3, 3) float array; ``GeometryError`` unless proper and orthonormal."""
    r = np.asarray(rotation, dtype=float)
    if r.shape != (3, 3) or not np.all(np.isfinite(r)):
        raise GeometryError(f"a rotation must be a finite 3x3 matrix, got shape {r.shape}")
    if np.abs(r.T @ r - np.eye(3)).max() > ROTATION_TOL or np.linalg.det(r) < 0:
        raise GeometryError("the rotation matrix is not a proper rotation (orthonormal, det +1)")
    return r


def compose(first: tuple, second: tuple) -> tuple[np.ndarray, np.ndarray]:
    """``(R, t)`` of applying placement ``first`` then ``second`` (each ``(R, t)``)."""
    r1, t1 = np.asarray(first[0], float), np.asarray(first[1], float)
    r2, t2 = np.asarray(second[0], float), np.asarray(second[1], float)
    return r2 @ r1, r2 @ t1 + t2


def apply(rotation, translation, points) -> np.ndarray:
    """Points (N, 3) [m] mapped by ``x -> R x + t``."""
    return np.asarray(points, dtype=float) @ np.asarray(rotation, float).T + np.asarray(translation, float)
