"""Orthonormal frames built from an axis and a reference ``x_axis``.

Sources (``direction``, ``x_axis``) and detectors (``normal``, ``x_axis``) both declare a
frame by an axis and a second vector that is made perpendicular to it; this module does
that once, with the checks and messages both need.
"""

from __future__ import annotations

import numpy as np

from tracer.tolerances import AXIS_PARALLEL_SIN

__all__ = ["axis_frame"]


def axis_frame(axis, x_axis, *, error, axis_name, axis_shown, x_expected, parallel_to=None):
    """Unit ``axis`` a, ``x_axis`` x made perpendicular to a, and ``y = a x x``.

    Parameters
    ----------
    axis : (3,) float [1]
        Any non-zero length.
    x_axis : (3,) float [1]
        Any length; its component along ``axis`` is removed.
    error : callable
        ``error(message)`` returns the exception to raise.
    axis_name : str
        What ``axis`` is called in messages ("normal", "direction").
    axis_shown : list
        How ``axis`` is quoted in the zero-length message.
    x_expected : str
        What ``x_axis`` should be, for the message when it is parallel to ``axis``.
    parallel_to : str, optional
        How that message names ``axis`` (default ``axis_name``).

    Returns
    -------
    a, x, y : (3,) float [1]

    Raises
    ------
    TracerError
        ``error(...)`` when ``axis`` is zero or not finite, or ``x_axis`` is (nearly)
        parallel to it (sine below ``AXIS_PARALLEL_SIN``).

    Examples
    --------
    >>> a, x, y = axis_frame([0, 0, 2.0], [1.0, 0, 1], error=ValueError, axis_name="normal",
    ...                      axis_shown=[0, 0, 2.0], x_expected="a direction in the plane")
    >>> x.tolist(), y.tolist()
    ([1.0, 0.0, 0.0], [0.0, 1.0, 0.0])
    """
    a = np.asarray(axis, dtype=float).reshape(3)
    na = np.linalg.norm(a)
    if not np.isfinite(na) or na == 0:
        raise error(f"{axis_name} must be a non-zero 3-vector, got {axis_shown}")
    a = a / na
    x = np.asarray(x_axis, dtype=float).reshape(3)
    x0 = np.linalg.norm(x)
    x = x - np.dot(x, a) * a
    nx = np.linalg.norm(x)
    if not np.isfinite(nx) or nx <= AXIS_PARALLEL_SIN * max(x0, 1e-300):
        raise error(
            f"x_axis {np.asarray(x_axis).tolist()} is parallel to {parallel_to or axis_name} "
            f"{np.asarray(axis).tolist()}; expected {x_expected}"
        )
    x = x / nx
    return a, x, np.cross(a, x)
