"""The K-correlation (ABC) power spectral density of an isotropic rough surface.

The two-dimensional, isotropic PSD of surface height [m^4] in the form of Church, Takacs &
Leonard [1]::

    PSD(f) = A / (1 + (B f)^2)^((C + 1) / 2)

with ``f`` the spatial frequency [1/m], ``B`` [m] the correlation length, ``C > 1`` the
slope exponent (the PSD falls as ``f^-(C+1)`` beyond ``1/B``) and ``A`` [m^4] fixed by
the RMS roughness, since ``sigma^2 = int_0^inf PSD(f) 2 pi f df = 2 pi A / (B^2 (C - 1))``.
The radial distribution ``PSD(f) 2 pi f / sigma^2`` has the closed-form cumulative
``1 - (1 + B^2 f^2)^((1 - C) / 2)``, so spatial frequencies can be drawn exactly by
inversion (:func:`sample_frequency`).

References
----------
[1] E. L. Church, P. Z. Takacs, T. A. Leonard, "The prediction of BRDFs from surface
    profile measurements", Proc. SPIE 1165, 136 (1989).
"""

from __future__ import annotations

import numpy as np

__all__ = ["amplitude", "psd", "band_variance", "sample_frequency"]


def amplitude(*, rms_roughness, correlation_length, exponent):
    """``A`` [m^4] of the K-correlation PSD with RMS roughness ``sigma`` over all frequencies.

    Parameters
    ----------
    rms_roughness : float [m]
    correlation_length : float [m]
        ``B``.
    exponent : float [1]
        ``C`` (> 1).

    >>> a = amplitude(rms_roughness=1e-9, correlation_length=1e-5, exponent=2.0)
    >>> bool(np.isclose(band_variance(np.inf, amplitude=a, correlation_length=1e-5,
    ...                               exponent=2.0), 1e-18))
    True
    """
    return rms_roughness**2 * correlation_length**2 * (exponent - 1.0) / (2.0 * np.pi)


def psd(f, *, amplitude, correlation_length, exponent):
    """K-correlation PSD [m^4] at spatial frequency ``f`` [1/m] (Eq. of [1], module docstring)."""
    f = np.asarray(f, dtype=float)
    return amplitude / (1.0 + (correlation_length * f) ** 2) ** ((exponent + 1.0) / 2.0)


def band_variance(f_max, *, amplitude, correlation_length, exponent):
    """Height variance [m^2] from spatial frequencies below ``f_max`` [1/m] (closed form)."""
    f_max = np.asarray(f_max, dtype=float)
    b2 = correlation_length**2
    tail = (1.0 + b2 * f_max**2) ** ((1.0 - exponent) / 2.0)
    return 2.0 * np.pi * amplitude / (b2 * (exponent - 1.0)) * (1.0 - tail)


def sample_frequency(u, *, correlation_length, exponent):
    """Spatial frequencies [1/m] drawn from the radial distribution ``PSD(f) 2 pi f / sigma^2``.

    Parameters
    ----------
    u : array of float in [0, 1)
        Uniform numbers (one per sample).

    >>> f = sample_frequency(np.array([0.0, 0.5]), correlation_length=1e-5, exponent=3.0)
    >>> float(f[0]), bool(np.isclose(f[1], 1e5))
    (0.0, True)
    """
    u = np.asarray(u, dtype=float)
    # inverse of 1 - (1 + B^2 f^2)^((1 - C)/2)
    g = (1.0 - u) ** (2.0 / (1.0 - exponent)) - 1.0
    return np.sqrt(np.clip(g, 0.0, None)) / correlation_length
