"""Polarisation states: Stokes vectors and 2x2 coherency matrices, our convention.

Stokes parameters in a transverse basis ``(x, y)`` with ``x x y = k``:
``S0 = |Ex|^2 + |Ey|^2``, ``S1 = |Ex|^2 - |Ey|^2``, ``S2 = 2 Re(Ex Ey*)``,
``S3 = 2 Im(Ex Ey*)``; with time dependence ``exp(-i omega t)``, S3 > 0 is right-handed
(clockwise for an observer looking towards the source; common practice, no source).
See :mod:`tracer.polarization` for the derivation.

References
----------
.. [1] D. Goldstein, "Polarized Light", 2nd ed., Marcel Dekker (2003), ch. 4-5.
.. [2] J. D. Jackson, "Classical Electrodynamics", 3rd ed., Wiley (1999), Sec. 7.2.

(Bibliographic details recalled from memory.)
"""

from __future__ import annotations

import numpy as np

from tracer.errors import TracerError
from tracer.tolerances import STOKES_DOP_TOL

__all__ = [
    "PolarizationError",
    "stokes_to_coherency",
    "coherency_to_stokes",
    "linear",
    "circular",
    "elliptical",
    "unpolarised",
    "partial",
    "validate_stokes",
    "degree_of_polarization",
]


class PolarizationError(TracerError, ValueError):
    """A polarisation state or argument is not physical (e.g. DOP > 1)."""


PolarizationError.__module__ = "tracer.polarization"  # its public home


# ---------------------------------------------------------------------------
# Stokes <-> coherency
# ---------------------------------------------------------------------------


def stokes_to_coherency(stokes):
    """Coherency matrix of a Stokes vector, in the basis (x, y).

    Parameters
    ----------
    stokes : (..., 4) float [W or 1]
        Stokes vectors (S0, S1, S2, S3), our convention (module docstring).

    Returns
    -------
    (..., 2, 2) complex
        ``J = 1/2 [[S0 + S1, S2 + i S3], [S2 - i S3, S0 - S1]]``, ``J_ij = <E_i E_j*>``.

    Examples
    --------
    >>> stokes_to_coherency([1.0, 0.0, 0.0, 0.0]).real
    array([[0.5, 0. ],
           [0. , 0.5]])
    """
    s = np.asarray(stokes, dtype=float)
    if s.shape[-1:] != (4,):
        raise PolarizationError(f"Stokes vectors need a last axis of length 4, got shape {s.shape}")
    s0, s1, s2, s3 = s[..., 0], s[..., 1], s[..., 2], s[..., 3]
    J = np.empty(s.shape[:-1] + (2, 2), dtype=complex)
    J[..., 0, 0] = 0.5 * (s0 + s1)
    J[..., 0, 1] = 0.5 * (s2 + 1j * s3)
    J[..., 1, 0] = 0.5 * (s2 - 1j * s3)
    J[..., 1, 1] = 0.5 * (s0 - s1)
    return J


def coherency_to_stokes(coherency):
    """Stokes vector of a coherency matrix in the basis (x, y).

    Parameters
    ----------
    coherency : (..., 2, 2) complex [W or 1]
        ``J_ij = <E_i E_j*>``.

    Returns
    -------
    (..., 4) float
        (S0, S1, S2, S3) with ``S2 = 2 Re J_xy`` and ``S3 = 2 Im J_xy``.

    Examples
    --------
    >>> coherency_to_stokes(stokes_to_coherency([1.0, 0.0, 0.6, 0.8]))
    array([1. , 0. , 0.6, 0.8])
    """
    J = np.asarray(coherency, dtype=complex)
    if J.shape[-2:] != (2, 2):
        raise PolarizationError(f"coherency matrices need last axes (2, 2), got shape {J.shape}")
    jxx = J[..., 0, 0].real
    jyy = J[..., 1, 1].real
    jxy = J[..., 0, 1]
    return np.stack([jxx + jyy, jxx - jyy, 2.0 * jxy.real, 2.0 * jxy.imag], axis=-1)


# ---------------------------------------------------------------------------
# Named states (normalised S0 = 1)
# ---------------------------------------------------------------------------


def linear(angle):
    """Stokes vector of linear polarisation at ``angle`` from x towards y.

    Parameters
    ----------
    angle : float [rad]

    Examples
    --------
    >>> linear(0.0)
    array([1., 1., 0., 0.])
    """
    a = np.asarray(angle, dtype=float)
    one = np.ones_like(a)
    return np.stack([one, np.cos(2 * a), np.sin(2 * a), np.zeros_like(a)], axis=-1)


def circular(handedness):
    """Stokes vector of circular polarisation.

    Parameters
    ----------
    handedness : "right" or "left"
        Right-handed (S3 = +1) rotates clockwise as seen by an observer looking towards
        the source (module docstring).

    Examples
    --------
    >>> circular("right")
    array([1., 0., 0., 1.])
    """
    h = str(handedness).strip().lower()
    if h in ("right", "r", "rhc", "rcp"):
        return np.array([1.0, 0.0, 0.0, 1.0])
    if h in ("left", "l", "lhc", "lcp"):
        return np.array([1.0, 0.0, 0.0, -1.0])
    raise PolarizationError(f"circular handedness must be 'right' or 'left', got {handedness!r}")


def elliptical(azimuth, ellipticity):
    """Stokes vector of a fully polarised elliptical state.

    Parameters
    ----------
    azimuth : float [rad]
        Orientation psi of the major axis, from x towards y.
    ellipticity : float [rad]
        Ellipticity angle chi, ``tan(chi) = b / a``, in [-pi/4, pi/4]; chi > 0 is
        right-handed (S3 > 0).

    Returns
    -------
    (..., 4) float
        ``(1, cos 2chi cos 2psi, cos 2chi sin 2psi, sin 2chi)``.

    Examples
    --------
    >>> np.round(elliptical(0.0, np.pi / 4), 12)
    array([1., 0., 0., 1.])
    """
    psi = np.asarray(azimuth, dtype=float)
    chi = np.asarray(ellipticity, dtype=float)
    if np.any(np.abs(chi) > np.pi / 4 + STOKES_DOP_TOL):
        raise PolarizationError(
            f"ellipticity angle must lie in [-pi/4, pi/4] rad (|b/a| <= 1), got {ellipticity!r}"
        )
    psi, chi = np.broadcast_arrays(psi, chi)
    return np.stack(
        [
            np.ones_like(psi),
            np.cos(2 * chi) * np.cos(2 * psi),
            np.cos(2 * chi) * np.sin(2 * psi),
            np.sin(2 * chi),
        ],
        axis=-1,
    )


def unpolarised():
    """Stokes vector of unpolarised light, ``(1, 0, 0, 0)``."""
    return np.array([1.0, 0.0, 0.0, 0.0])


def validate_stokes(stokes, *, where="Stokes vector"):
    """Check that Stokes vectors are physical; return them as float arrays.

    Parameters
    ----------
    stokes : (..., 4) float
    where : str
        Names the offending input in the error message.

    Raises
    ------
    PolarizationError
        When the shape is wrong, a value is not finite, S0 <= 0, or the degree of
        polarisation exceeds 1 (beyond ``STOKES_DOP_TOL``).
    """
    s = np.asarray(stokes, dtype=float)
    if s.shape[-1:] != (4,):
        raise PolarizationError(f"{where}: expected 4 values (S0, S1, S2, S3), got shape {s.shape}")
    if not np.all(np.isfinite(s)):
        raise PolarizationError(f"{where}: values must be finite, got {s.tolist()}")
    if np.any(s[..., 0] <= 0):
        raise PolarizationError(f"{where}: S0 must be positive, got {s.tolist()}")
    dop = np.sqrt(np.sum(s[..., 1:] ** 2, axis=-1)) / s[..., 0]
    if np.any(dop > 1 + STOKES_DOP_TOL):
        raise PolarizationError(
            f"{where}: degree of polarisation sqrt(S1^2+S2^2+S3^2)/S0 = {np.max(dop):.6g} "
            "exceeds 1; expected S1^2 + S2^2 + S3^2 <= S0^2"
        )
    return s


def partial(stokes):
    """A validated Stokes vector, normalised to S0 = 1.

    Parameters
    ----------
    stokes : (4,) float
        Any physical Stokes vector (S0 > 0, DOP <= 1).

    Examples
    --------
    >>> partial([2.0, 1.0, 0.0, 0.0])
    array([1. , 0.5, 0. , 0. ])
    >>> partial([1.0, 1.0, 1.0, 0.0])  # doctest: +ELLIPSIS
    Traceback (most recent call last):
    ...
    tracer.polarization.PolarizationError: Stokes vector: degree of polarisation ...
    """
    s = validate_stokes(stokes)
    return s / s[..., :1]


def degree_of_polarization(state):
    """Degree of polarisation of Stokes vectors or coherency matrices.

    Parameters
    ----------
    state : (..., 4) float or (..., 2, 2) complex
        Stokes vectors, or 2x2 coherency matrices.

    Returns
    -------
    (...) float [1]
        ``sqrt(S1^2 + S2^2 + S3^2) / S0``; NaN where S0 = 0.

    Examples
    --------
    >>> float(degree_of_polarization([1.0, 0.3, 0.4, 0.0]))
    0.5
    """
    a = np.asarray(state)
    if a.shape[-2:] == (2, 2):
        s = coherency_to_stokes(a)
    elif a.shape[-1:] == (4,):
        s = a.astype(float)
    else:
        raise PolarizationError(f"expected (..., 4) Stokes or (..., 2, 2) coherency, got {a.shape}")
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.sqrt(np.sum(s[..., 1:] ** 2, axis=-1)) / np.where(s[..., 0] > 0, s[..., 0], np.nan)
