"""Fresnel coefficients of one planar interface, total internal reflection included.

Quantities and conventions (ours, binding for the whole package)
-----------------------------------------------------------------
* Complex refractive index ``n + iκ`` with ``κ >= 0`` for loss; time dependence
  ``exp(-iωt)``, so a forward wave in a layer is ``exp(+i k0 q z)`` with
  ``q = n cos θ`` ("normal index", ``k0 = 2π/λ``).
* Field basis per wave: ``ŝ`` perpendicular to the plane of incidence (the same vector
  for the incident, reflected and transmitted waves), ``p̂ = k̂ × ŝ`` for each wave, so
  ``(ŝ, p̂, k̂)`` is right-handed.
* With ``c1 = cos θ1`` and ``c2 = cos θ2``::

      rs = (n1 c1 - n2 c2) / (n1 c1 + n2 c2)      ts = 2 n1 c1 / (n1 c1 + n2 c2)
      rp = (n2 c1 - n1 c2) / (n2 c1 + n1 c2)      tp = 2 n1 c1 / (n2 c1 + n1 c2)

  (Fresnel formulae, Eqs. 1.5(20)-(21) in [1] - equation numbers recalled from memory -
  written with cosines.) At normal incidence ``rp = -rs``:
  the same physical field, because ``p̂`` of the reflected wave is reversed relative to
  the incident one. This is the convention of the ``tmm`` package [2]; the tests check
  it against ``tmm`` itself.
* ``ts``, ``tp`` are the textbook ratios of field amplitudes. The power coefficients are
  (Eqs. in section 2 of [2], also valid for absorbing media)::

      Ts = Re(n2 c2) / Re(n1 c1) |ts|^2
      Tp = Re(n2 conj(c2)) / Re(n1 conj(c1)) |tp|^2

  and ``Rs = |rs|^2``, ``Rp = |rp|^2``. :func:`amplitude_factor` gives the factor
  ``sqrt(T / |t|^2)`` that turns a field ratio into an amplitude whose square is power.
* Branch of the transmitted cosine: ``q2 = n2 c2 = sqrt(n2^2 - (n1 sin θ1)^2)`` (computed as
  ``sqrt((n2^2 - n1^2) + (n1 c1)^2)``, which keeps precision near grazing incidence) is taken
  with non-negative imaginary part (a field decaying away from the face beyond the
  critical angle, or decaying in an absorbing medium); when the imaginary part is
  negligible (below :data:`tracer.tolerances.BRANCH_IMAG_TOL`) the root with
  non-negative real part (energy flowing away from the face). This is the forward-wave
  rule of ``tmm``'s ``is_forward_angle`` (Appendix D of [2]).

Angles are in radians inside the medium of incidence; every function also takes
``cos_angle=`` instead of ``angle=`` (the engine has cosines; this avoids the loss of
precision of ``arccos`` near normal incidence).

Absorbing medium of incidence
-----------------------------
For ``n1 = n + iκ`` with ``κ > 0`` the given real ``angle`` θ is the direction of the wave
read with the real part of the index: the invariant (tangential index) is taken real,
``β = n1 sin θ1 = Re(n1) sin θ``, so that the incident intensity does not vary along the
face (the plane-wave problem ``tmm`` solves [2]). The angle used in the formulas is then
the **complex** angle ``θ1`` with ``n1 sin θ1 = β``, i.e.
``n1 cos θ1 = sqrt(n1^2 - β^2) = sqrt((n1^2 - Re(n1)^2) + (Re(n1) cos θ)^2)`` on the
forward-wave branch above (the incidence medium included, as in ``tmm``'s ``list_snell``);
``θ1 = θ`` when ``κ = 0``. In ``tmm`` terms: ``coh_tmm(pol, [n1, ...], ...,
th_0=arcsin(Re(n1) sin θ / n1), ...)`` with ``th_0`` on its forward branch. Every
other medium uses the same ``β``; the critical angle is ``arcsin(Re(n2) / Re(n1))`` for a
lossless ``n2``.

In an absorbing medium of incidence the incident and reflected waves interfere in the
normal power flux, so the flux entering the face is not ``1 - R`` (as noted in [2]):
for s it is ``1 - Rs + 2 Im(q1) Im(rs) / Re(q1)`` (``q1 = n1 cos θ1``), for p
``1 - Rp + 2 Im(w1) Im(rp) / Re(w1)`` with ``w1 = q1 / n1^2`` (the Poynting flux of the
two waves, derived here; ``tmm``'s ``power_entering``). ``A = 1 - R - T`` then holds
this interference term too: of order ``Im(q1) / Re(q1) ~ κ / (n cos^2 θ)`` (large only
near grazing incidence), of either sign, zero for ``κ = 0``. ``|r|`` may exceed 1 there
(p) without any gain: ``R = |r|^2`` is not the reflected share of the flux.

References
----------
[1] M. Born and E. Wolf, *Principles of Optics*, 7th ed., Cambridge University Press,
    1999, section 1.5.
[2] S. J. Byrnes, "Multilayer optical calculations", arXiv:1603.02720, 2016 (the
    ``tmm`` package).

Examples
--------
>>> import numpy as np
>>> from tracer import fresnel
>>> c = fresnel.coefficients(n1=1.0, n2=1.5, angle=0.0)
>>> round(float(c.Rs), 4), round(float(c.Ts), 4)
(0.04, 0.96)
>>> c = fresnel.coefficients(n1=1.5168, n2=1.0, angle=np.radians(45))
>>> round(float(c.Rs), 12), float(c.Tp)
(1.0, 0.0)
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .errors import TracerError
from .tolerances import BRANCH_IMAG_TOL

__all__ = [
    "CoefficientError",
    "Coefficients",
    "coefficients",
    "cosine_of",
    "ncos_of",
    "cos_transmitted",
    "ncos_transmitted",
    "amplitude_factor",
    "power_factors",
    "critical_angle",
]


class CoefficientError(TracerError, ValueError):
    """Bad input to a coefficient calculation (angle, cosine, thickness, layer list)."""


@dataclass(frozen=True, slots=True)
class Coefficients:
    """Amplitude and power coefficients for s and p, arrays broadcast over rays.

    Attributes
    ----------
    rs, rp : complex ndarray [1]
        Reflected / incident field amplitude (convention in the module docstring).
    ts, tp : complex ndarray [1]
        Transmitted / incident field amplitude (textbook field ratio).
    Rs, Rp, Ts, Tp : float ndarray [1]
        Reflected and transmitted power fractions.
    As, Ap : float ndarray [1]
        Absorbed fraction ``1 - R - T`` (zero for a bare interface between lossless media;
        with an absorbing medium of incidence it also holds the interference term of the
        incident and reflected waves, module docstring).
    ncos_in, ncos_out : complex ndarray [1]
        ``n cos θ`` in the medium of incidence and in the exit medium (branch as in the
        module docstring; complex angle in an absorbing medium of incidence);
        ``Re(ncos_out) == 0`` means no propagating transmitted wave.
    n_in, n_out : complex ndarray [1]
        Indices of the medium of incidence and of the exit medium.
    """

    rs: np.ndarray
    rp: np.ndarray
    ts: np.ndarray
    tp: np.ndarray
    Rs: np.ndarray
    Rp: np.ndarray
    Ts: np.ndarray
    Tp: np.ndarray
    As: np.ndarray
    Ap: np.ndarray
    ncos_in: np.ndarray
    ncos_out: np.ndarray
    n_in: np.ndarray
    n_out: np.ndarray

    @property
    def ts_power(self) -> np.ndarray:
        """``ts`` scaled by :func:`amplitude_factor`, so that ``|ts_power|^2 == Ts``."""
        return self.ts * amplitude_factor(T=self.Ts, t=self.ts)

    @property
    def tp_power(self) -> np.ndarray:
        """``tp`` scaled by :func:`amplitude_factor`, so that ``|tp_power|^2 == Tp``."""
        return self.tp * amplitude_factor(T=self.Tp, t=self.tp)


def cosine_of(*, angle=None, cos_angle=None) -> np.ndarray:
    """Cosine of the angle of incidence from exactly one of ``angle`` or ``cos_angle``.

    Parameters
    ----------
    angle : array_like [rad], optional
        Angle of incidence in ``[0, π/2]``.
    cos_angle : array_like [1], optional
        Its cosine in ``[0, 1]``.

    Returns
    -------
    float ndarray [1]

    Raises
    ------
    CoefficientError
        If both or neither are given, or a cosine lies outside ``[0, 1]`` (NaN passes).
    """
    if (angle is None) == (cos_angle is None):
        raise CoefficientError("give exactly one of angle= [rad] or cos_angle= [1]")
    if angle is not None:
        a = np.asarray(angle, dtype=float)
        if np.any((a < -1e-12) | (a > np.pi / 2 + 1e-12)):
            raise CoefficientError(
                "angle of incidence must lie in [0, pi/2] rad (measured from the normal, "
                f"inside the medium of incidence); got values from {np.nanmin(a)!r} to {np.nanmax(a)!r}"
            )
        c = np.cos(a)
        return np.clip(c, 0.0, 1.0)
    c = np.asarray(cos_angle, dtype=float)
    if np.any((c < -1e-12) | (c > 1 + 1e-12)):
        raise CoefficientError(
            "cos_angle must lie in [0, 1] (cosine of the angle of incidence); "
            f"got values from {np.nanmin(c)!r} to {np.nanmax(c)!r}"
        )
    return np.clip(c, 0.0, 1.0)


def _as_index(n) -> np.ndarray:
    try:
        return np.asarray(n, dtype=np.complex128)
    except (TypeError, ValueError):
        hint = (" (an index model: evaluate it first, or use tracer.films.stack / "
                "tracer.coatings, which take a wavelength)") if hasattr(n, "refractive_index") else ""
        raise CoefficientError(f"a refractive index must be a number or an array of numbers, got {n!r}{hint}") from None


def _forward_root(z: np.ndarray) -> np.ndarray:
    """Square root of ``z`` on the forward-wave branch (module docstring)."""
    z = np.asarray(z)
    if z.ndim and not z.imag.any():
        # Lossless media (real z): sqrt(z) >= 0, or +i sqrt(-z) (decaying) - the same
        # branch as below, at a fraction of the cost of the complex square root.
        zr = z.real
        root = np.sqrt(np.abs(zr))
        q = np.zeros(z.shape, dtype=np.complex128)
        neg = zr < 0
        q.real = root
        q.imag[neg] = root[neg]
        q.real[neg] = 0.0
        return q
    q = np.sqrt(z)
    flip = q.imag < -BRANCH_IMAG_TOL
    if np.any(flip):
        q = np.where(flip, -q, q)
    return q


def _ncos2(n: np.ndarray, n_ref: np.ndarray, q_ref: np.ndarray) -> np.ndarray:
    """``(n cos θ)^2`` in a medium of index ``n`` for the real invariant ``β``.

    ``n_ref = Re(n1)`` and ``q_ref = Re(n1) cos θ`` (real) come from the medium of
    incidence, ``β^2 = n_ref^2 - q_ref^2``, and
    ``(n cos θ)^2 = n^2 - β^2 = (n^2 - n_ref^2) + q_ref^2``: written this way the result is
    exact for a medium matching the medium of incidence and keeps full relative
    precision near grazing incidence.
    """
    return (n * n - n_ref * n_ref) + q_ref * q_ref


def _ncos_in_medium(n: np.ndarray, n_ref: np.ndarray, q_ref: np.ndarray) -> np.ndarray:
    """``n cos θ`` (forward branch) for the invariant of :func:`_ncos2`."""
    return _forward_root(_ncos2(n, n_ref, q_ref))


def _incident(n1: np.ndarray, c1: np.ndarray):
    """``(n_ref, q_ref, q1)`` of the medium of incidence (module docstring).

    ``n_ref = Re(n1)``, ``q_ref = Re(n1) cos θ`` (real) fix the invariant
    ``β = Re(n1) sin θ``; ``q1 = n1 cos θ1`` is ``n1 c1`` for a lossless ``n1`` and the
    forward root of ``n1^2 - β^2`` for an absorbing one.
    """
    n_ref = n1.real
    q_ref = n_ref * c1
    q1 = n1 * c1
    lossy = n1.imag != 0
    if np.any(lossy):
        q1 = np.where(lossy, _ncos_in_medium(n1, n_ref, q_ref), q1)
    return n_ref, q_ref, q1


def ncos_of(*, n, cos_angle) -> np.ndarray:
    """``n cos θ`` in the medium of incidence (complex, forward branch).

    For an absorbing medium (``Im n > 0``) this is ``n cos θ1`` of the complex angle
    ``θ1`` with ``n sin θ1 = Re(n) sin θ`` (module docstring, "Absorbing medium of
    incidence"); for a lossless one simply ``n cos θ``.

    Parameters
    ----------
    n : array_like complex [1]
        Index of the medium of incidence.
    cos_angle : array_like [1]
        Cosine of the (real) angle of incidence.

    Examples
    --------
    >>> q = ncos_of(n=1.5 + 0.01j, cos_angle=1.0)
    >>> complex(q) == 1.5 + 0.01j
    True
    """
    n = _as_index(n)
    c = np.asarray(cos_angle, dtype=float)
    n, c = np.broadcast_arrays(n, c)
    return _incident(n, c)[2]


def ncos_transmitted(*, n1, n2, angle=None, cos_angle=None) -> np.ndarray:
    """``n2 cos θ2`` in the second medium through the invariant ``n1 sin θ1 = n2 sin θ2``.

    The invariant is ``Re(n1) sin θ`` (real) for an absorbing ``n1`` (module docstring).

    Parameters
    ----------
    n1, n2 : array_like complex [1]
        Indices of the medium of incidence and of the second medium.
    angle : array_like [rad], optional
        Angle of incidence in the first medium.
    cos_angle : array_like [1], optional
        Its cosine (instead of ``angle``).

    Returns
    -------
    complex ndarray [1]
        ``sqrt(n2^2 - (n1 sin θ1)^2)`` with non-negative imaginary part (decaying field
        beyond the critical angle or in an absorbing medium); real part >= 0 when the
        imaginary part is negligible.

    Examples
    --------
    >>> import numpy as np
    >>> q = ncos_transmitted(n1=1.5, n2=1.0, angle=np.radians(60))
    >>> bool(q.real == 0 and q.imag > 0)
    True
    """
    c1 = cosine_of(angle=angle, cos_angle=cos_angle)
    n1 = _as_index(n1)
    n2 = _as_index(n2)
    n_ref = n1.real
    return _ncos_in_medium(n2, n_ref, n_ref * c1)


def cos_transmitted(*, n1, n2, angle=None, cos_angle=None) -> np.ndarray:
    """Complex ``cos θ2`` in the second medium (``ncos_transmitted / n2``).

    Parameters as :func:`ncos_transmitted`.

    Examples
    --------
    >>> import numpy as np
    >>> c2 = cos_transmitted(n1=1.0, n2=1.5, angle=np.radians(30))
    >>> round(float(c2.real), 6), float(c2.imag)
    (0.942809, 0.0)
    """
    return ncos_transmitted(n1=n1, n2=n2, angle=angle, cos_angle=cos_angle) / _as_index(n2)


def power_factors(*, n_in, ncos_in, n_out, ncos_out) -> tuple[np.ndarray, np.ndarray]:
    """Factors ``fs, fp`` with ``Ts = fs |ts|^2`` and ``Tp = fp |tp|^2``.

    ``fs = Re(n_out c_out) / Re(n_in c_in)``,
    ``fp = Re(n_out conj(c_out)) / Re(n_in conj(c_in))`` (the power formulas of [2]
    in the module docstring). Zero where the incident power flux ``Re(n_in c_in)`` is zero
    (grazing incidence) or where no wave propagates in the exit medium.

    Parameters
    ----------
    n_in, n_out : array_like complex [1]
        Indices of the medium of incidence and of the exit medium.
    ncos_in, ncos_out : array_like complex [1]
        ``n cos θ`` in those media.

    Returns
    -------
    fs, fp : float ndarray [1]
    """
    n_in = _as_index(n_in)
    n_out = _as_index(n_out)
    q_in = _as_index(ncos_in)
    q_out = _as_index(ncos_out)
    num_s = q_out.real
    den_s = q_in.real
    if np.all(n_in.imag == 0) and np.all(n_out.imag == 0):
        # Real indices: n conj(c) = conj(n c), so the p factor equals the s factor.
        num_p, den_p = num_s, den_s
    else:
        num_p = (n_out * np.conj(q_out) / np.conj(n_out)).real
        den_p = (n_in * np.conj(q_in) / np.conj(n_in)).real
    with np.errstate(divide="ignore", invalid="ignore"):
        fs = np.where(den_s > 0, num_s / np.where(den_s > 0, den_s, 1.0), 0.0)
        fp = np.where(den_p > 0, num_p / np.where(den_p > 0, den_p, 1.0), 0.0)
    return fs, fp


def amplitude_factor(*, T, t) -> np.ndarray:
    """Factor ``sqrt(T / |t|^2)`` that makes ``|t * factor|^2 == T``; 0 where ``t == 0``.

    Parameters
    ----------
    T : array_like [1]
        Power transmittance.
    t : array_like complex [1]
        Field transmission ratio.

    Examples
    --------
    >>> c = coefficients(n1=1.0, n2=1.5, angle=0.0)
    >>> f = amplitude_factor(T=c.Ts, t=c.ts)
    >>> round(float(abs(c.ts * f) ** 2), 12) == round(float(c.Ts), 12)
    True
    """
    T = np.asarray(T, dtype=float)
    a2 = np.abs(np.asarray(t)) ** 2
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(a2 > 0, np.sqrt(np.maximum(T, 0.0) / np.where(a2 > 0, a2, 1.0)), 0.0)


def critical_angle(*, n1, n2) -> np.ndarray:
    """Critical angle ``arcsin(n2 / n1)`` [rad] from medium 1 into medium 2 (real parts).

    NaN where ``n2 >= n1`` (no total internal reflection).

    Examples
    --------
    >>> import numpy as np
    >>> round(float(np.degrees(critical_angle(n1=1.5, n2=1.0))), 3)
    41.81
    """
    n1 = np.real(_as_index(n1))
    n2 = np.real(_as_index(n2))
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = n2 / n1
    return np.where(ratio < 1, np.arcsin(np.clip(ratio, -1, 1)), np.nan)


def coefficients(*, n1, n2, angle=None, cos_angle=None) -> Coefficients:
    """Fresnel coefficients of the interface from medium ``n1`` into medium ``n2``.

    Parameters
    ----------
    n1 : array_like complex [1]
        Index of the medium of incidence.
    n2 : array_like complex [1]
        Index of the second medium.
    angle : array_like [rad], optional
        Angle of incidence inside medium 1, in ``[0, π/2]``; for an absorbing ``n1`` the
        real angle that fixes the invariant ``Re(n1) sin θ`` (module docstring).
    cos_angle : array_like [1], optional
        Its cosine (instead of ``angle``).

    Returns
    -------
    Coefficients
        All arrays broadcast to the common shape of the inputs.

    Notes
    -----
    Eqs. in the module docstring (Born and Wolf [1] section 1.5, written with cosines;
    power factors of Byrnes [2]). Beyond the critical angle ``|rs| = |rp| = 1``,
    ``Ts = Tp = 0`` and the phases follow from the decaying branch of ``n2 cos θ2``.
    At grazing incidence (``cos θ1 = 0``) on a different medium ``rs = rp = -1``; when
    both media are the same at grazing incidence (0/0) the limit ``r = 0``, ``t = 1``,
    ``T = 1`` is returned.

    Examples
    --------
    >>> import numpy as np
    >>> c = coefficients(n1=1.0, n2=1.5, angle=np.arctan(1.5))   # Brewster's angle
    >>> bool(abs(c.rp) < 1e-15)
    True
    """
    c1 = cosine_of(angle=angle, cos_angle=cos_angle)
    n1 = _as_index(n1)
    n2 = _as_index(n2)
    n1, n2, c1 = np.broadcast_arrays(n1, n2, c1)
    n_ref, q_ref, q1 = _incident(n1, c1)  # real invariant Re(n1) sin θ (module docstring)
    lossy_in = n1.imag != 0
    if np.any(lossy_in):  # complex cos θ1 of an absorbing medium of incidence
        c1 = np.where(lossy_in, q1 / np.where(lossy_in, n1, 1.0), c1)
    q2 = _ncos_in_medium(n2, n_ref, q_ref)
    c2 = q2 / n2
    den_s = q1 + q2  # n1 c1 + n2 c2
    a = n2 * c1
    b = n1 * c2
    den_p = a + b  # n2 c1 + n1 c2
    degenerate = (den_s == 0) | (den_p == 0)
    if np.any(degenerate):
        den_s = np.where(degenerate, 1.0, den_s)
        den_p = np.where(degenerate, 1.0, den_p)
    rs = (q1 - q2) / den_s  # Eq. 1.5(21a) in [1]
    ts = 2 * q1 / den_s  # Eq. 1.5(20a) in [1]
    rp = (a - b) / den_p  # Eq. 1.5(21b) in [1]
    tp = 2 * q1 / den_p  # Eq. 1.5(20b) in [1]
    if np.any(degenerate):
        rs = np.where(degenerate, 0, rs)
        rp = np.where(degenerate, 0, rp)
        ts = np.where(degenerate, 1, ts)
        tp = np.where(degenerate, 1, tp)
    fs, fp = power_factors(n_in=n1, ncos_in=q1, n_out=n2, ncos_out=q2)
    Rs = np.abs(rs) ** 2
    Rp = np.abs(rp) ** 2
    Ts = fs * np.abs(ts) ** 2
    Tp = fp * np.abs(tp) ** 2
    if np.any(degenerate):
        Ts = np.where(degenerate, 1.0, Ts)
        Tp = np.where(degenerate, 1.0, Tp)
    return Coefficients(
        rs=rs, rp=rp, ts=ts, tp=tp, Rs=Rs, Rp=Rp, Ts=Ts, Tp=Tp,
        As=1.0 - Rs - Ts, Ap=1.0 - Rp - Tp,
        ncos_in=q1, ncos_out=q2, n_in=n1, n_out=n2,
    )
