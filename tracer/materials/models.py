"""Refractive-index models: complex n(lambda) for vacuum wavelengths in metres.

Every model is an object with

``refractive_index(wavelength, *, extrapolate=False) -> complex128 ndarray``
    ``wavelength`` [m] is a scalar or an array of vacuum wavelengths; the result has
    the same shape (broadcast) and holds ``n + i*kappa`` with ``kappa >= 0`` for loss
    (time dependence ``exp(-i*omega*t)``). NaN wavelengths give NaN.
``name : str``, ``valid_range : (float, float) [m]``, ``reference : str``.

Outside ``valid_range`` a :class:`tracer.errors.RangeError` names the material, the
wavelength and the range, unless ``extrapolate=True`` (then the formula, or the end
values of a table, are used as they are).

Dispersion formulas are written with the wavelength in micrometres, as their sources
publish them; the conversion from metres happens once, in :meth:`IndexModel._um`.

Models
------
:class:`ConstantIndex`   n (real or complex), optionally from a loss tangent.
:class:`Cauchy`          n = A + B/lambda**2 + C/lambda**4 (lambda in um).
:class:`Sellmeier`       n**2 = A + sum_i B_i lambda**2 / (lambda**2 - C_i) (C_i in um**2).
:class:`Tabulated`       n and kappa tables, linear interpolation in wavelength.
:class:`CiddorAir`       air at any temperature, pressure, humidity and CO2 (Ciddor 1996).
:class:`RadioAir`        air at radio/microwave wavelengths (Smith and Weintraub 1953).
:func:`glass_from_code`  generic glass from a six-digit glass code (n_d, V_d).

Examples
--------
>>> m = Sellmeier(B=(0.6961663, 0.4079426, 0.8974794),
...               C=(0.0684043**2, 0.1162414**2, 9.896161**2),
...               name="silica", valid_range=(0.21e-6, 3.71e-6), reference="Malitson 1965")
>>> round(float(m.relative_index(587.6e-9).real), 4)  # as published: relative to air
1.4585
>>> m.refractive_index([500e-9, 600e-9]).shape
(2,)
"""

from __future__ import annotations

import math
import re

import numpy as np

from tracer.errors import MaterialError, RangeError
from tracer.tolerances import WAVELENGTH_RANGE_RTOL

__all__ = [
    "IndexModel",
    "ConstantIndex",
    "Cauchy",
    "Sellmeier",
    "Tabulated",
    "CiddorAir",
    "RadioAir",
    "glass_from_code",
    "parse_glass_code",
    "FRAUNHOFER_D",
    "FRAUNHOFER_F",
    "FRAUNHOFER_C",
]

#: Helium d line [m] (587.5618 nm), the reference wavelength of n_d and V_d.
FRAUNHOFER_D = 587.5618e-9
#: Hydrogen F line [m] (486.1327 nm).
FRAUNHOFER_F = 486.1327e-9
#: Hydrogen C line [m] (656.2725 nm).
FRAUNHOFER_C = 656.2725e-9


def _fmt_wl(x: float) -> str:
    if not math.isfinite(x):
        return str(x)
    if x < 10e-6:
        return f"{x * 1e9:.6g} nm"
    if x < 1e-3:
        return f"{x * 1e6:.6g} µm"
    if x < 1.0:
        return f"{x * 1e3:.6g} mm"
    return f"{x:.6g} m"


class IndexModel:
    """Base class: range checking, broadcasting and the common attributes.

    Subclasses implement ``_evaluate(wavelength_m) -> complex ndarray``.

    Attributes
    ----------
    name : str
        Catalog or user name, used in error messages.
    valid_range : (float, float) [m]
        Vacuum wavelengths over which the model is published or trusted.
    reference : str
        Published source (author, title, journal, year) or an honest statement of
        where the numbers come from.
    index_basis : {"air", "vacuum"}
        What the formula gives: the index relative to standard air (``"air"``, the
        convention of glass catalogs and glass codes) or the absolute index
        (``"vacuum"``). :meth:`refractive_index` always returns the absolute index
        (an air-referenced value times the index of standard air,
        :mod:`tracer.materials.basis`); :meth:`relative_index` the one relative to air.
    """

    #: Appended to range errors to point at a better material (e.g. radio-wave air).
    _range_hint = ""
    #: Default basis of the model's formula: ``"air"`` (relative to standard air, as glass
    #: catalogs and glass codes quote it) or ``"vacuum"`` (absolute: gases, vacuum).
    default_basis = "air"

    def __init__(self, *, name: str, valid_range: tuple[float, float], reference: str,
                 index_basis: str | None = None):
        basis = self.default_basis if index_basis is None else index_basis
        if basis not in ("air", "vacuum"):
            raise MaterialError(f"material {name!r}: index_basis must be 'air' or 'vacuum', "
                                f"got {index_basis!r}")
        self.index_basis = basis
        lo, hi = (float(valid_range[0]), float(valid_range[1]))
        if not (lo >= 0.0 and hi > lo):
            raise MaterialError(
                f"material {name!r}: valid_range must be (low, high) with 0 <= low < high "
                f"[m], got {valid_range!r}"
            )
        self._name = str(name)
        self._valid_range = (lo, hi)
        self._reference = str(reference)

    @property
    def name(self) -> str:
        return self._name

    @property
    def valid_range(self) -> tuple[float, float]:
        return self._valid_range

    @property
    def reference(self) -> str:
        return self._reference

    def __repr__(self) -> str:
        lo, hi = self._valid_range
        return f"<{type(self).__name__} {self._name!r} {_fmt_wl(lo)}–{_fmt_wl(hi)}>"

    @staticmethod
    def _um(wavelength: np.ndarray) -> np.ndarray:
        """Metres to micrometres."""
        return wavelength * 1e6

    def check_range(self, wavelength) -> None:
        """Raise :class:`RangeError` if any (non-NaN) wavelength [m] is outside the range."""
        wl = np.asarray(wavelength, dtype=float)
        lo, hi = self._valid_range
        tol = WAVELENGTH_RANGE_RTOL
        bad = (wl < lo * (1 - tol)) | (wl > hi * (1 + tol))
        if np.any(bad):
            first = float(wl[bad].flat[0])
            count = int(np.count_nonzero(bad))
            more = f" ({count} wavelengths outside)" if count > 1 else ""
            raise RangeError(
                f"material {self._name!r}: wavelength {_fmt_wl(first)}{more} is outside "
                f"its valid range {_fmt_wl(lo)} to {_fmt_wl(hi)} ({self._reference.split(';')[0]}); "
                f"choose a material valid there{self._range_hint}, or pass extrapolate=True"
            )

    def refractive_index(self, wavelength, *, extrapolate: bool = False) -> np.ndarray:
        """Absolute complex refractive index n + i*kappa at vacuum wavelength(s).

        An air-referenced model (``index_basis == "air"``) is multiplied by the index of
        standard air at the same wavelength, so that every medium of a trace shares one
        basis: a catalog glass in ``air`` meets the index ratio the catalog quotes.

        Parameters
        ----------
        wavelength : float or array_like [m]
            Vacuum wavelength(s); any shape.
        extrapolate : bool
            Evaluate outside ``valid_range`` instead of raising.

        Returns
        -------
        complex128 ndarray, same shape as ``wavelength``.

        Raises
        ------
        tracer.errors.RangeError
            A wavelength outside ``valid_range`` and ``extrapolate`` is False.
        """
        out = self.published_index(wavelength, extrapolate=extrapolate)
        if self.index_basis == "air":
            from .basis import standard_air_index

            out = np.asarray(out * standard_air_index(np.asarray(wavelength, dtype=float)),
                             dtype=np.complex128).reshape(out.shape)
        return out

    __call__ = refractive_index

    def relative_index(self, wavelength, *, extrapolate: bool = False) -> np.ndarray:
        """Complex index relative to standard air (the value glass catalogs quote) [1].

        Parameters as :meth:`refractive_index`.

        Examples
        --------
        >>> m = ConstantIndex(1.5, name="n15")
        >>> float(m.relative_index(5e-7).real), round(float(m.refractive_index(5e-7).real), 5)
        (1.5, 1.50042)
        """
        out = self.published_index(wavelength, extrapolate=extrapolate)
        if self.index_basis == "vacuum":
            from .basis import standard_air_index

            out = np.asarray(out / standard_air_index(np.asarray(wavelength, dtype=float)),
                             dtype=np.complex128).reshape(out.shape)
        return out

    def published_index(self, wavelength, *, extrapolate: bool = False) -> np.ndarray:
        """The model's formula at ``wavelength`` [m], in its own ``index_basis`` [1]:
        the value its source tabulates (relative to air for glasses, absolute for gases)."""
        wl = np.asarray(wavelength, dtype=float)
        if not extrapolate:
            self.check_range(wl)
        with np.errstate(invalid="ignore", divide="ignore"):
            out = np.asarray(self._evaluate(wl), dtype=np.complex128)
        return np.broadcast_to(out, wl.shape).copy() if out.shape != wl.shape else out

    def _evaluate(self, wavelength: np.ndarray) -> np.ndarray:  # pragma: no cover
        raise NotImplementedError


class ConstantIndex(IndexModel):
    """A wavelength-independent index, real or complex.

    Parameters
    ----------
    n : complex
        ``n + i*kappa``, ``kappa >= 0``.
    name, reference : str
    valid_range : (float, float) [m]
        Default: every wavelength (0, inf).

    Examples
    --------
    >>> ConstantIndex(1.5, name="n15").refractive_index([4e-7, 8e-7])
    array([1.5+0.j, 1.5+0.j])
    """

    def __init__(self, n: complex, *, name: str = "constant",
                 valid_range: tuple[float, float] = (0.0, math.inf),
                 reference: str = "constant index (user value)", index_basis: str | None = None):
        super().__init__(name=name, valid_range=valid_range, reference=reference,
                         index_basis=index_basis)
        value = complex(n)
        if not (math.isfinite(value.real) and math.isfinite(value.imag)) or value.real <= 0:
            raise MaterialError(f"material {name!r}: index must be finite with a positive real "
                                f"part, got {n!r}")
        if value.imag < 0:
            raise MaterialError(f"material {name!r}: extinction coefficient must be >= 0 "
                                f"(loss), got {n!r}")
        self.n = value

    @classmethod
    def from_loss_tangent(cls, n: float, loss_tangent: float, **kwargs) -> "ConstantIndex":
        """Dielectric of real index ``n`` and loss tangent tan(delta) = eps''/eps'.

        The complex permittivity is eps = n**2 (1 + i tan(delta)) and the complex index
        its square root with non-negative imaginary part (exp(-i omega t) convention),
        so kappa ~= n tan(delta) / 2 for small losses.

        >>> m = ConstantIndex.from_loss_tangent(1.44, 1e-4, name="d")
        >>> round(float(m.n.imag / (1.44 * 1e-4 / 2)), 6)
        1.0
        """
        if loss_tangent < 0:
            raise MaterialError(f"loss tangent must be >= 0, got {loss_tangent!r}")
        eps = complex(n) ** 2 * (1 + 1j * loss_tangent)
        return cls(np.sqrt(eps), **kwargs)

    def _evaluate(self, wavelength):
        return np.full(wavelength.shape, self.n, dtype=np.complex128)


class Cauchy(IndexModel):
    """Cauchy's dispersion formula n = A + B/lambda**2 + C/lambda**4, lambda in micrometres.

    Parameters
    ----------
    A : float [1]
    B : float [um**2]
    C : float [um**4]
    kappa : float [1]
        Optional constant extinction coefficient.
    name, valid_range [m], reference
        See :class:`IndexModel`.

    Notes
    -----
    Cauchy's empirical formula (A. L. Cauchy, 1836), with the wavelength in um as in
    common practice; it describes normal dispersion away from absorption bands only.
    """

    def __init__(self, A: float, B: float = 0.0, C: float = 0.0, *, kappa: float = 0.0,
                 name: str = "cauchy", valid_range: tuple[float, float] = (0.3e-6, 2.5e-6),
                 reference: str = "Cauchy formula (user coefficients)",
                 index_basis: str | None = None):
        super().__init__(name=name, valid_range=valid_range, reference=reference,
                         index_basis=index_basis)
        self.A, self.B, self.C, self.kappa = float(A), float(B), float(C), float(kappa)
        if self.kappa < 0:
            raise MaterialError(f"material {name!r}: kappa must be >= 0, got {kappa!r}")

    def _evaluate(self, wavelength):
        lam2 = self._um(wavelength) ** 2
        n = self.A + self.B / lam2 + self.C / lam2**2
        return n + 1j * self.kappa


class Sellmeier(IndexModel):
    """Sellmeier's formula n**2 = A + sum_i B_i lambda**2 / (lambda**2 - C_i).

    lambda in micrometres, ``C_i`` in um**2 (the squares of the resonance wavelengths:
    sources that list resonance wavelengths L_i are entered as ``C_i = L_i**2``).
    ``A = 1`` gives the usual form ``n**2 - 1 = sum ...``.

    Parameters
    ----------
    B : sequence of float [1]
    C : sequence of float [um**2]
    A : float [1]
        Constant term (1 for the usual form).
    name, valid_range [m], reference
        See :class:`IndexModel`; give the range the coefficients were fitted over
        (default: unrestricted).

    Notes
    -----
    W. Sellmeier, Annalen der Physik und Chemie 143, 271 (1871). Where n**2 < 0 (inside
    an absorption band, far outside any valid range) the principal square root gives a
    purely imaginary index; no range ever reaches that.
    """

    def __init__(self, B, C, *, A: float = 1.0, name: str = "sellmeier",
                 valid_range: tuple[float, float] = (0.0, math.inf),
                 reference: str = "Sellmeier formula (user coefficients)",
                 index_basis: str | None = None):
        super().__init__(name=name, valid_range=valid_range, reference=reference,
                         index_basis=index_basis)
        self.B = tuple(float(b) for b in B)
        self.C = tuple(float(c) for c in C)
        self.A = float(A)
        if len(self.B) != len(self.C) or not self.B:
            raise MaterialError(f"material {name!r}: Sellmeier needs as many B as C terms "
                                f"(at least one), got {len(self.B)} and {len(self.C)}")

    def _evaluate(self, wavelength):
        lam2 = self._um(wavelength) ** 2
        n2 = np.full(lam2.shape, self.A, dtype=float)
        for b, c in zip(self.B, self.C):
            n2 = n2 + b * lam2 / (lam2 - c)
        return np.sqrt(n2.astype(np.complex128))


class Tabulated(IndexModel):
    """Tabulated n and kappa against vacuum wavelength, linearly interpolated.

    n and kappa are interpolated separately and linearly in wavelength between
    neighbouring table rows (no smoothing, so the result is exactly the table at the
    tabulated wavelengths). The valid range is the span of the table; with
    ``extrapolate=True`` the end values are held constant beyond it.

    Parameters
    ----------
    wavelength : (N,) float [m]
        Strictly increasing, N >= 2.
    n : (N,) float [1]
    kappa : (N,) float [1], optional
        Extinction coefficient (>= 0); zero if omitted.
    name, reference : str

    Examples
    --------
    >>> t = Tabulated([500e-9, 600e-9], [1.0, 2.0], [3.0, 5.0], name="t", reference="test",
    ...               index_basis="vacuum")
    >>> t.refractive_index(550e-9)
    array(1.5+4.j)
    """

    def __init__(self, wavelength, n, kappa=None, *, name: str = "table",
                 reference: str = "tabulated n, k (user values)", index_basis: str | None = None):
        wl = np.asarray(wavelength, dtype=float)
        nn = np.asarray(n, dtype=float)
        kk = np.zeros_like(nn) if kappa is None else np.asarray(kappa, dtype=float)
        if wl.ndim != 1 or wl.size < 2 or nn.shape != wl.shape or kk.shape != wl.shape:
            raise MaterialError(f"material {name!r}: tables must be 1-D of equal length >= 2")
        if np.any(np.diff(wl) <= 0):
            raise MaterialError(f"material {name!r}: table wavelengths must increase strictly")
        if np.any(kk < 0) or np.any(nn <= 0) or not np.all(np.isfinite(np.r_[wl, nn, kk])):
            raise MaterialError(f"material {name!r}: n must be > 0 and kappa >= 0, finite")
        super().__init__(name=name, valid_range=(wl[0], wl[-1]), reference=reference,
                         index_basis=index_basis)
        self.wavelengths, self.n, self.kappa = wl, nn, kk

    def _evaluate(self, wavelength):
        flat = wavelength.ravel()
        n = np.interp(flat, self.wavelengths, self.n)
        k = np.interp(flat, self.wavelengths, self.kappa)
        return (n + 1j * k).reshape(wavelength.shape)


# ----------------------------------------------------------------------------- air

class CiddorAir(IndexModel):
    """Phase index of moist air, Ciddor's equations.

    Parameters
    ----------
    temperature : float [K]
        Valid -40 to +100 degC.
    pressure : float [Pa]
        Valid 10 to 140 kPa (the range stated in [2]).
    humidity : float [1]
        Relative humidity as a fraction 0..1.
    co2 : float [1]
        CO2 mole fraction (450e-6 = 450 ppm, Ciddor's standard air).
    name : str

    Notes
    -----
    With sigma = 1/lambda [um**-1]:

    - standard air (15 degC, 101 325 Pa, dry, 450 ppm CO2), Eq. 1 in [1]:
      (n_as - 1) 1e8 = k1/(k0 - sigma**2) + k3/(k2 - sigma**2),
      k0 = 238.0185, k1 = 5 792 105, k2 = 57.362, k3 = 167 917 [um**-2];
    - CO2 content x_c [ppm], Eq. 2 in [1]:
      n_axs - 1 = (n_as - 1) (1 + 0.534e-6 (x_c - 450));
    - water vapour at 20 degC, 1333 Pa, Eq. 3 in [1]:
      (n_ws - 1) 1e8 = 1.022 (295.235 + 2.6422 sigma**2 - 0.032380 sigma**4
      + 0.004028 sigma**6);
    - densities from the BIPM 1981/91 equation of state of moist air (Eq. 4, with the
      compressibility Z of Eq. 12 in [1]), molar masses M_a = 1e-3 (28.9635 +
      12.011e-6 (x_c - 400)) kg/mol, M_w = 0.018015 kg/mol, R = 8.314510 J/(mol K);
    - n - 1 = (rho_a / rho_axs)(n_axs - 1) + (rho_w / rho_ws)(n_ws - 1), Eq. 5 in [1].

    The water mole fraction is x_w = f h p_sv / p with the enhancement factor
    f = 1.00062 + 3.14e-8 p + 5.6e-7 t**2 and the saturation vapour pressure
    p_sv = exp(A T**2 + B T + C + D/T) (A = 1.2378847e-5, B = -1.9121316e-2,
    C = 33.93711047, D = -6.3431645e3), as in [1] and [2]; below 0 degC the vapour
    pressure over ice, log10 p_sv = -2663.5/T + 12.537, is used as in [2].

    The valid wavelength range is 0.3 to 1.69 um [1].

    References
    ----------
    [1] P. E. Ciddor, "Refractive index of air: new equations for the visible and near
        infrared", Applied Optics 35(9), 1566-1573 (1996).
    [2] J. A. Stone and J. H. Zimmerman, "Index of refraction of air", NIST Engineering
        Metrology Toolbox (documentation of the Ciddor calculation).
    """

    _range_hint = ' (for millimetre and longer waves, "air-radio")'
    _K0, _K1, _K2, _K3 = 238.0185, 5792105.0, 57.362, 167917.0
    _W = (295.235, 2.6422, -0.032380, 0.004028)
    _R = 8.314510
    _MW = 0.018015

    default_basis = "vacuum"  # absolute index

    def __init__(self, *, temperature: float = 288.15, pressure: float = 101325.0,
                 humidity: float = 0.0, co2: float = 450e-6, name: str = "air"):
        t = temperature - 273.15
        if not (-40.0 <= t <= 100.0 and 10e3 <= pressure <= 140e3 and 0.0 <= humidity <= 1.0
                and 0.0 <= co2 <= 2000e-6):
            raise MaterialError(
                f"material {name!r}: Ciddor's equations hold for -40..100 degC, 10..140 kPa, "
                f"humidity 0..1 and CO2 0..2000 ppm; got {t:.6g} degC, {pressure:.6g} Pa, "
                f"humidity {humidity:.6g}, CO2 {co2 * 1e6:.6g} ppm"
            )
        super().__init__(
            name=name, valid_range=(0.3e-6, 1.69e-6),
            reference=("P. E. Ciddor, Refractive index of air: new equations for the visible "
                       "and near infrared, Applied Optics 35, 1566-1573 (1996); "
                       f"{t:.6g} degC, {pressure:.6g} Pa, relative humidity {humidity:.6g}, "
                       f"CO2 {co2 * 1e6:.6g} ppm"),
        )
        self.temperature, self.pressure = float(temperature), float(pressure)
        self.humidity, self.co2 = float(humidity), float(co2)

    @staticmethod
    def _compressibility(T, p, xw):
        """Compressibility of moist air, Eq. 12 in [1] (BIPM 1981/91)."""
        t = T - 273.15
        a0, a1, a2 = 1.58123e-6, -2.9331e-8, 1.1043e-10
        b0, b1 = 5.707e-6, -2.051e-8
        c0, c1 = 1.9898e-4, -2.376e-6
        d, e = 1.83e-11, -0.765e-8
        pt = p / T
        return (1 - pt * (a0 + a1 * t + a2 * t**2 + (b0 + b1 * t) * xw + (c0 + c1 * t) * xw**2)
                + pt**2 * (d + e * xw**2))

    def water_mole_fraction(self) -> float:
        """Mole fraction of water vapour x_w [1] at this temperature, pressure, humidity."""
        T, p, h = self.temperature, self.pressure, self.humidity
        t = T - 273.15
        if t >= 0.0:
            psv = math.exp(1.2378847e-5 * T**2 - 1.9121316e-2 * T + 33.93711047
                           - 6.3431645e3 / T)
        else:
            psv = 10.0 ** (-2663.5 / T + 12.537)
        f = 1.00062 + 3.14e-8 * p + 5.6e-7 * t**2
        return f * h * psv / p

    def _evaluate(self, wavelength):
        sigma2 = 1.0 / self._um(wavelength) ** 2
        n_as = 1e-8 * (self._K1 / (self._K0 - sigma2) + self._K3 / (self._K2 - sigma2))  # Eq. 1
        xc = self.co2 * 1e6
        n_axs = n_as * (1 + 0.534e-6 * (xc - 450.0))  # Eq. 2
        w0, w1, w2, w3 = self._W
        n_ws = 1e-8 * 1.022 * (w0 + w1 * sigma2 + w2 * sigma2**2 + w3 * sigma2**3)  # Eq. 3
        ma = 1e-3 * (28.9635 + 12.011e-6 * (xc - 400.0))
        mw, R = self._MW, self._R
        Z = self._compressibility
        rho_axs = 101325.0 * ma / (Z(288.15, 101325.0, 0.0) * R * 288.15)  # Eq. 4, dry std
        rho_ws = 1333.0 * mw / (Z(293.15, 1333.0, 1.0) * R * 293.15)  # Eq. 4, vapour std
        T, p = self.temperature, self.pressure
        xw = self.water_mole_fraction()
        zm = Z(T, p, xw)
        rho_a = p * ma * (1 - xw) / (zm * R * T)
        rho_w = p * mw * xw / (zm * R * T)
        n = 1.0 + (rho_a / rho_axs) * n_axs + (rho_w / rho_ws) * n_ws  # Eq. 5
        return n + 0j


class RadioAir(IndexModel):
    """Dry air at radio and microwave wavelengths, non-dispersive.

    N = (n - 1) 1e6 = 77.6 p / T with p in hPa and T in K (Smith and Weintraub [1],
    dry term; the same constant is used in ITU-R Recommendation P.453 [2]).

    Parameters
    ----------
    temperature : float [K]
    pressure : float [Pa]
    name : str

    Notes
    -----
    Valid from 1 mm to 1 km of wavelength (the dry term holds to about 0.5 % below
    ~100 GHz [2]; the 60 GHz oxygen band is neglected). Humidity is not modelled: the
    wet term of [1] would add 3.73e5 e/T**2 (e the vapour pressure in hPa).

    References
    ----------
    [1] E. K. Smith and S. Weintraub, "The constants in the equation for atmospheric
        refractive index at radio frequencies", Proc. IRE 41, 1035-1037 (1953).
    [2] ITU-R Recommendation P.453, "The radio refractive index: its formula and
        refractivity data".
    """

    default_basis = "vacuum"  # absolute index

    def __init__(self, *, temperature: float = 288.15, pressure: float = 101325.0,
                 name: str = "air-radio"):
        super().__init__(
            name=name, valid_range=(1e-3, 1e3),
            reference=("E. K. Smith and S. Weintraub, The constants in the equation for "
                       "atmospheric refractive index at radio frequencies, Proc. IRE 41, "
                       f"1035-1037 (1953), dry term; {temperature - 273.15:.6g} degC, "
                       f"{pressure:.6g} Pa"),
        )
        if not (temperature > 0 and pressure >= 0):
            raise MaterialError(f"material {name!r}: need temperature > 0 K and pressure >= 0")
        self.temperature, self.pressure = float(temperature), float(pressure)
        self.n = 1.0 + 77.6e-6 * (self.pressure / 100.0) / self.temperature

    def _evaluate(self, wavelength):
        return np.full(wavelength.shape, self.n, dtype=np.complex128)


# ------------------------------------------------------------------ generic glasses

_CODE = re.compile(r"^\s*(?:glass:)?\s*(\d{3})[.\-]?(\d{3})(?:[./]\d+)?\s*$", re.IGNORECASE)


def parse_glass_code(code: str | int) -> tuple[float, float]:
    """Six-digit glass code "NNNVVV" -> (n_d, V_d).

    n_d = 1 + NNN/1000 and V_d = VVV/10 (the usual international glass code; a trailing
    density part such as "517642.251" is ignored).

    >>> parse_glass_code("517642")
    (1.517, 64.2)
    >>> parse_glass_code("620.364")
    (1.62, 36.4)
    """
    text = str(code)
    match = _CODE.match(text)
    if match is None:
        raise MaterialError(
            f"glass code {text!r} is not six digits NNNVVV (n_d = 1.NNN, V_d = VV.V), "
            "e.g. \"517642\""
        )
    nd = 1.0 + int(match[1]) / 1000.0
    vd = int(match[2]) / 10.0
    if vd <= 0:
        raise MaterialError(f"glass code {text!r}: Abbe number must be positive")
    return nd, vd


def glass_from_code(code: str | int, *, name: str | None = None,
                    valid_range: tuple[float, float] = (0.38e-6, 1.1e-6)) -> Cauchy:
    """A generic glass with the given n_d and Abbe number V_d: a two-term Cauchy fit.

    n(lambda) = A + B / lambda**2 (lambda in um), with B and A chosen so that

    - n(d) = n_d at the helium d line, 587.5618 nm, and
    - n(F) - n(C) = (n_d - 1) / V_d between the hydrogen F (486.1327 nm) and
      C (656.2725 nm) lines (the definition of the Abbe number V_d),

    i.e. B = (n_d - 1) / (V_d (1/lambda_F**2 - 1/lambda_C**2)), A = n_d - B/lambda_d**2.
    The model reproduces n_d and V_d exactly; elsewhere it is approximate (two terms
    cannot follow a real glass's partial dispersion; expect errors of order 1e-3 near
    the ends of the default range, 0.38-1.1 um; common practice, no source). It is a
    generic stand-in for a glass of that code, not any manufacturer's glass.

    Parameters
    ----------
    code : str or int
        "NNNVVV", e.g. "517642" for n_d = 1.517, V_d = 64.2.
    name : str, optional
        Defaults to "glass:NNNVVV".
    valid_range : (float, float) [m]

    Examples
    --------
    >>> g = glass_from_code("517642")
    >>> nd, nf, nc = g.refractive_index([FRAUNHOFER_D, FRAUNHOFER_F, FRAUNHOFER_C]).real
    >>> round(float(nd), 12), round(float((nd - 1) / (nf - nc)), 10)
    (1.517, 64.2)
    """
    nd, vd = parse_glass_code(code)
    digits = f"{round((nd - 1) * 1000):03d}{round(vd * 10):03d}"
    lf, lc, ld = (FRAUNHOFER_F * 1e6, FRAUNHOFER_C * 1e6, FRAUNHOFER_D * 1e6)
    B = (nd - 1.0) / (vd * (1.0 / lf**2 - 1.0 / lc**2))
    A = nd - B / ld**2
    return Cauchy(
        A, B, name=name or f"glass:{digits}", valid_range=valid_range,
        reference=(f"generic glass n_d = {nd:.3f}, V_d = {vd:.1f} (glass code {digits}); "
                   "two-term Cauchy through n_d at 587.56 nm with n_F - n_C = (n_d - 1)/V_d "
                   "(486.13/656.27 nm); approximate away from the d line"),
    )
