"""Reading quantities: "<number> <unit>" strings and bare numbers into SI floats.

See :mod:`tracer.units` for the accepted forms and the error messages.
"""

from __future__ import annotations

import math
import re
from collections.abc import Iterable

import numpy as np

from tracer.errors import UnitError

from .table import (_ARTICLE, _UNITS, SPEED_OF_LIGHT, STANDARD_DEFAULTS, _check_kind, _expected, _lookup,
                    _normalise_symbol, _to_si, accepted_units)

__all__ = ["parse", "parse_array", "length", "angle", "frequency", "wavelength", "power", "fraction",
           "temperature", "pressure", "bandwidth"]

_NUMBER = r"[+-]?(?:\d+(?:[.,_]\d*)?|\.\d+)(?:[eE][+-]?\d+)?"
_QUANTITY = re.compile(rf"^\s*(?P<num>{_NUMBER})\s*(?P<unit>.*?)\s*$")


def _describe(value: object) -> str:
    return f'"{value}"' if isinstance(value, str) else repr(value)


_UNSET = object()


def parse(value: object, kind: str, default: str | None = _UNSET) -> float:  # type: ignore[assignment]
    """Parse one quantity into an SI float.

    Parameters
    ----------
    value : str or real number
        "<number> <unit>" or a bare number (in ``default``).
    kind : str
        One of :data:`tracer.units.KINDS`.
    default : str or None, optional
        Unit of a bare number; ``None`` means a unit must be written. Omitted: the
        kind's entry in :data:`STANDARD_DEFAULTS` (mm, deg, nm, W, ...).

    Returns
    -------
    float
        The value in SI units ([m], [rad], [Hz], [W], [1], [K], [Pa]; [m] for
        ``wavelength``).

    Raises
    ------
    tracer.errors.UnitError
        Empty, non-finite, boolean or unparsable input; unknown unit; a unit of another
        kind (the message names the value, the expected kind and the accepted units).

    Examples
    --------
    >>> parse("2.8 cm", "length", "mm")
    0.028
    >>> parse("45 mm", "angle", "deg")
    Traceback (most recent call last):
    ...
    tracer.errors.UnitError: expected an angle, got "45 mm" (a length); accepted units: deg, °, rad, mrad, urad, µrad, arcmin, arcsec, degree, degrees, ′, ″; a bare number means deg
    """
    _check_kind(kind)
    if default is _UNSET:
        default = STANDARD_DEFAULTS[kind]
    if default is not None:
        allowed = accepted_units(kind)
        if default not in allowed:
            raise ValueError(f"default unit {default!r} is not {_ARTICLE[kind]} unit")
    what = _ARTICLE[kind]

    if isinstance(value, (bool, np.bool_)):
        raise UnitError(f"expected {what}, got the boolean {value!r}; {_expected(kind, default)}")
    if isinstance(value, (int, float, np.integer, np.floating)):
        number = float(value)
        if not math.isfinite(number):
            raise UnitError(f"expected {what}, got {number!r} (not a finite number)")
        if default is None:
            raise UnitError(
                f"expected {what} with a unit, got the bare number {value!r}; "
                f"{_expected(kind, None)}"
            )
        symbol = default
    elif isinstance(value, str):
        text = value.strip().replace("\u2212", "-")  # accept the Unicode minus sign
        if not text:
            raise UnitError(f"expected {what}, got an empty string; {_expected(kind, default)}")
        match = _QUANTITY.match(text)
        if match is None:
            raise UnitError(
                f"expected {what}, got {_describe(value)} (not \"<number> <unit>\"); "
                f"{_expected(kind, default)}"
            )
        num_text = match["num"].replace("_", "")
        if "," in num_text:
            raise UnitError(
                f"expected {what}, got {_describe(value)}: write the decimal point as '.'"
            )
        number = float(num_text)
        if not math.isfinite(number):
            raise UnitError(f"expected {what}, got {_describe(value)} (not a finite number)")
        symbol = _normalise_symbol(match["unit"])
        if not symbol:
            if default is None:
                raise UnitError(
                    f"expected {what} with a unit, got {_describe(value)}; "
                    f"{_expected(kind, None)}"
                )
            symbol = default
    else:
        raise UnitError(
            f"expected {what}, got {type(value).__name__} {value!r}; "
            f"write a number or a string such as \"{_example(kind)}\""
        )

    if kind == "wavelength":
        result = _parse_wavelength(number, symbol, value, default)
    else:
        unit = _UNITS[kind].get(symbol)
        if unit is None:
            hits = _lookup(symbol)
            own = [u for k, u in hits if k == kind]
            if own:
                unit = own[0]
            else:
                _raise_bad_unit(value, symbol, kind, default, hits)
        result = _to_si(number, unit)
    if kind == "temperature" and result <= 0.0:
        raise UnitError(f"expected a temperature above absolute zero, got {_describe(value)}")
    return float(result)


def _parse_wavelength(number: float, symbol: str, value: object, default: str | None) -> float:
    hits = _lookup(symbol)
    for kind, unit in hits:
        if kind == "length":
            result = _to_si(number, unit)
            break
        if kind == "frequency":
            f = _to_si(number, unit)
            if f <= 0.0:
                raise UnitError(f"expected a positive frequency, got {_describe(value)}")
            result = SPEED_OF_LIGHT / f  # lambda = c / f (vacuum)
            break
    else:
        _raise_bad_unit(value, symbol, "wavelength", default, hits)
    if result <= 0.0:
        raise UnitError(f"expected a positive wavelength, got {_describe(value)}")
    return result


def _example(kind: str) -> str:
    return {
        "length": "25 mm", "angle": "45 deg", "frequency": "10.7 GHz", "power": "5 mW",
        "fraction": "50 %", "temperature": "20 degC", "pressure": "101325 Pa",
        "wavelength": "550 nm",
    }[kind]


def _raise_bad_unit(value, symbol, kind, default, hits) -> None:
    what = _ARTICLE[kind]
    if hits:
        other = _ARTICLE[hits[0][0]]
        raise UnitError(
            f"expected {what}, got {_describe(value)} ({other}); {_expected(kind, default)}"
        )
    raise UnitError(
        f"expected {what}, got {_describe(value)} (unknown unit {symbol!r}); "
        f"{_expected(kind, default)}"
    )


def parse_array(values: object, kind: str, default: str | None, *, size: int | None = None
                ) -> np.ndarray:
    """Parse a sequence of quantities (mixed numbers and strings) into a float array [SI].

    Parameters
    ----------
    values : sequence of str or number
        E.g. ``[0, "5 mm", 2.5]``.
    kind, default : see :func:`parse`.
    size : int, optional
        Required length; a different length raises :class:`UnitError`.

    Returns
    -------
    (N,) float ndarray

    Examples
    --------
    >>> parse_array([0, "5 mm", 2.5], "length", "mm")
    array([0.    , 0.005 , 0.0025])
    """
    if isinstance(values, (str, bytes)) or not isinstance(values, Iterable):
        raise UnitError(
            f"expected a list of {_plural(kind)}, got {_describe(values)}"
        )
    items = list(values)
    if size is not None and len(items) != size:
        raise UnitError(
            f"expected a list of {size} {_plural(kind)}, got {len(items)} values {items!r}"
        )
    out = np.empty(len(items), dtype=float)
    for i, item in enumerate(items):
        try:
            out[i] = parse(item, kind, default)
        except UnitError as exc:
            raise UnitError(f"[{i}]: {exc}") from None
    return out


def _plural(kind: str) -> str:
    return {"length": "lengths", "angle": "angles", "frequency": "frequencies",
            "power": "powers", "fraction": "fractions", "temperature": "temperatures",
            "pressure": "pressures", "wavelength": "wavelengths"}[kind]


def _positive(result: float, value: object, what: str) -> float:
    if not result > 0.0:
        raise UnitError(f"expected a positive {what}, got {_describe(value)}")
    return result


def length(value: object, *, default: str | None = "mm", positive: bool = False) -> float:
    """A length [m]; bare numbers in ``default`` (mm unless told).

    >>> length("5 um"), length("5 µm"), length("5 μm")
    (5e-06, 5e-06, 5e-06)
    """
    result = parse(value, "length", default)
    return _positive(result, value, "length") if positive else result


def angle(value: object, *, default: str | None = "deg") -> float:
    """An angle [rad]; bare numbers in ``default`` (degrees unless told).

    >>> round(angle("30 arcmin") * 180 / math.pi, 12)
    0.5
    """
    return parse(value, "angle", default)


def frequency(value: object, *, default: str | None = "GHz") -> float:
    """A frequency [Hz]; bare numbers in ``default`` (GHz unless told).

    >>> frequency("0.3 THz")
    300000000000.0
    """
    return parse(value, "frequency", default)


def wavelength(value: object, *, default: str | None = "nm") -> float:
    """A vacuum wavelength [m], written as a length or as a frequency (lambda = c / f).

    Always positive. Bare numbers in ``default`` (nm unless told; may be a frequency
    unit such as "GHz").

    >>> wavelength("0.55 um")
    5.5e-07
    >>> round(wavelength("300 MHz"), 12)
    0.999308193333
    """
    return parse(value, "wavelength", default)


def power(value: object, *, default: str | None = "W", nonnegative: bool = True) -> float:
    """A power [W]; bare numbers in ``default`` (W unless told). Negative refused by default.

    >>> power("5 mW"), power("2 uW")
    (0.005, 2e-06)
    """
    result = parse(value, "power", default)
    if nonnegative and result < 0.0:
        raise UnitError(f"expected a non-negative power, got {_describe(value)}")
    return result


def fraction(value: object, *, default: str | None = "1") -> float:
    """A dimensionless fraction [1]: "50 %" -> 0.5, "20 ppm" -> 2e-5, 0.3 -> 0.3.

    >>> fraction("50 %")
    0.5
    """
    return parse(value, "fraction", default)


def temperature(value: object, *, default: str | None = "degC") -> float:
    """A thermodynamic temperature [K]; "15 degC", "15 °C", "288.15 K"; bare numbers in °C.

    >>> temperature("15 degC")
    288.15
    """
    return parse(value, "temperature", default)


def pressure(value: object, *, default: str | None = "Pa") -> float:
    """A pressure [Pa]; "101.325 kPa", "1013.25 hPa", "1 atm".

    >>> pressure("1013.25 hPa")
    101325.0
    """
    return parse(value, "pressure", default)


def bandwidth(value: object, *, center: float, default: str | None = "nm") -> float:
    """A spectral full width as a wavelength interval [m].

    Written as a length ("1 nm") it is taken as is; written as a frequency ("10 MHz")
    it is converted at the centre wavelength by d_lambda = lambda**2 * d_f / c
    (first order in d_f / f).

    Parameters
    ----------
    value : str or number
    center : float [m]
        Centre vacuum wavelength.
    default : str
        Unit of a bare number.

    >>> round(bandwidth("1 GHz", center=1e-6) * 1e12, 6)   # picometres
    3.335641
    """
    try:
        result = parse(value, "length", default if default in _UNITS["length"] else None)
    except UnitError as as_length:
        try:
            df = parse(value, "frequency",
                       default if default in _UNITS["frequency"] else None)
        except UnitError:
            raise as_length from None
        result = center**2 * df / SPEED_OF_LIGHT  # d_lambda = lambda^2 d_f / c
    if result < 0:
        raise UnitError(f"expected a non-negative bandwidth, got {_describe(value)}")
    return result
