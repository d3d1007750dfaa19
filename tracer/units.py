"""Quantity strings and numbers into SI floats, and SI floats back into readable strings.

Scene files and the command line write quantities with units ("25 mm", "45 deg",
"550 nm", "10.7 GHz", "5 mW"); inside the program every quantity is a plain SI float
(metres, radians, watts, hertz, kelvin, pascals). This module is the only place where
unit strings are read or written.

A value is either a number (``int``/``float``/NumPy scalar, not ``bool``), which means
the default unit of the call, or a string "<number> <unit>" (the space is optional).
Units are case sensitive ("mW" is a milliwatt, "MW" is refused), except that a few
unambiguous spellings such as "GHZ" or "Deg" are accepted. Both micro signs (U+00B5
MICRO SIGN and U+03BC GREEK SMALL LETTER MU) and the ASCII "u" are accepted.

Kinds
-----
``length`` [m], ``angle`` [rad], ``frequency`` [Hz], ``power`` [W], ``fraction`` [1]
("50 %", "20 ppm"), ``temperature`` [K] ("15 degC", "288.15 K"), ``pressure`` [Pa],
and ``wavelength`` [m]: a vacuum wavelength given either as a length or as a
frequency f, converted by lambda = c / f with c = 299 792 458 m/s (exact, SI 2019).

Errors are :class:`tracer.errors.UnitError` with messages written to follow a key path,
e.g. ``solids.upper.size: expected a length, got "45 deg" (an angle); ...``.

Examples
--------
>>> length("25 mm")
0.025
>>> length(3)                      # bare number: default unit mm
0.003
>>> round(angle("45 deg"), 12)
0.785398163397
>>> wavelength("550 nm")
5.5e-07
>>> round(wavelength("10.7 GHz"), 9)   # microwave: lambda = c / f
0.028017987
>>> format_length(5e-6)
'5 µm'
"""

from __future__ import annotations

import math
import re
from collections.abc import Iterable
from dataclasses import dataclass

import numpy as np

from tracer.errors import UnitError

__all__ = [
    "SPEED_OF_LIGHT",
    "KINDS",
    "STANDARD_DEFAULTS",
    "parse",
    "parse_array",
    "length",
    "angle",
    "frequency",
    "wavelength",
    "power",
    "fraction",
    "temperature",
    "pressure",
    "bandwidth",
    "accepted_units",
    "format_length",
    "format_wavelength",
    "format_angle",
    "format_frequency",
    "format_power",
    "format_quantity",
]

#: Speed of light in vacuum [m/s], exact by the definition of the metre (SI, 1983/2019).
SPEED_OF_LIGHT = 299_792_458.0

_MICRO_SIGNS = ("µ", "μ")  # U+00B5 MICRO SIGN, U+03BC GREEK SMALL LETTER MU


@dataclass(frozen=True)
class _Unit:
    """A linear (or affine, for temperature) unit: si = value * scale + offset."""

    symbol: str
    scale: float
    offset: float = 0.0


def _table(*entries: tuple[str, float] | tuple[str, float, float]) -> dict[str, _Unit]:
    out: dict[str, _Unit] = {}
    for entry in entries:
        unit = _Unit(*entry)
        out[unit.symbol] = unit
    return out


_DEG = math.pi / 180.0

# Canonical spelling first in each family: the first symbols are listed in messages.
_UNITS: dict[str, dict[str, _Unit]] = {
    "length": _table(
        ("m", 1.0), ("cm", 1e-2), ("mm", 1e-3), ("um", 1e-6), ("µm", 1e-6), ("μm", 1e-6),
        ("nm", 1e-9), ("pm", 1e-12), ("km", 1e3), ("micron", 1e-6), ("microns", 1e-6),
        ("\u00c5", 1e-10), ("\u212b", 1e-10), ("angstrom", 1e-10), ("in", 0.0254), ("inch", 0.0254),
        ("mil", 25.4e-6),
    ),
    "angle": _table(
        ("deg", _DEG), ("°", _DEG), ("rad", 1.0), ("mrad", 1e-3), ("urad", 1e-6),
        ("µrad", 1e-6), ("μrad", 1e-6), ("arcmin", _DEG / 60.0), ("arcsec", _DEG / 3600.0),
        ("degree", _DEG), ("degrees", _DEG), ("′", _DEG / 60.0), ("″", _DEG / 3600.0),
    ),
    "frequency": _table(
        ("Hz", 1.0), ("kHz", 1e3), ("MHz", 1e6), ("GHz", 1e9), ("THz", 1e12), ("PHz", 1e15),
    ),
    "power": _table(
        ("W", 1.0), ("mW", 1e-3), ("uW", 1e-6), ("µW", 1e-6), ("μW", 1e-6), ("nW", 1e-9),
        ("pW", 1e-12), ("kW", 1e3),
    ),
    "fraction": _table(("1", 1.0), ("%", 1e-2), ("ppm", 1e-6)),
    "temperature": _table(
        ("K", 1.0), ("degC", 1.0, 273.15), ("°C", 1.0, 273.15), ("℃", 1.0, 273.15),
        ("C", 1.0, 273.15),
    ),
    "pressure": _table(
        ("Pa", 1.0), ("hPa", 1e2), ("kPa", 1e3), ("MPa", 1e6), ("mbar", 1e2), ("bar", 1e5),
        ("atm", 101_325.0), ("Torr", 101_325.0 / 760.0),
    ),
}

#: The kinds :func:`parse` understands.
KINDS = (*_UNITS, "wavelength")

_ARTICLE = {
    "length": "a length",
    "angle": "an angle",
    "frequency": "a frequency",
    "power": "a power",
    "fraction": "a fraction",
    "temperature": "a temperature",
    "pressure": "a pressure",
    "wavelength": "a wavelength (length or frequency)",
}

# Spellings accepted whatever their case, when that is unambiguous (see module doc).
_FOLDED: dict[str, tuple[str, str]] = {}


def _build_folded() -> None:
    counts: dict[str, int] = {}
    for table in _UNITS.values():
        for symbol in table:
            counts[symbol.lower()] = counts.get(symbol.lower(), 0) + 1
    for kind, table in _UNITS.items():
        for symbol in table:
            if len(symbol) >= 3 and counts[symbol.lower()] == 1:
                _FOLDED[symbol.lower()] = (kind, symbol)


_build_folded()

_NUMBER = r"[+-]?(?:\d+(?:[.,_]\d*)?|\.\d+)(?:[eE][+-]?\d+)?"
_QUANTITY = re.compile(rf"^\s*(?P<num>{_NUMBER})\s*(?P<unit>.*?)\s*$")


def _describe(value: object) -> str:
    return f'"{value}"' if isinstance(value, str) else repr(value)


def accepted_units(kind: str) -> list[str]:
    """Unit symbols accepted for ``kind`` (canonical spellings first).

    >>> accepted_units("angle")[:4]
    ['deg', '°', 'rad', 'mrad']
    """
    _check_kind(kind)
    if kind == "wavelength":
        return [*_UNITS["length"], *_UNITS["frequency"]]
    return list(_UNITS[kind])


def _short_list(kind: str) -> str:
    if kind == "wavelength":
        units = ["m", "mm", "um", "µm", "nm", "GHz", "THz", "MHz", "Hz"]
    else:
        units = [u for u in _UNITS[kind]
                 if u not in ("\u03bcm", "\u03bcrad", "\u03bcW", "\u212b", "\u2103")]
    return ", ".join(units)


def _check_kind(kind: str) -> None:
    if kind not in KINDS:
        raise ValueError(f"unknown quantity kind {kind!r}; known kinds: {', '.join(KINDS)}")


def _lookup(symbol: str) -> list[tuple[str, _Unit]]:
    """Every (kind, unit) the symbol may mean."""
    hits = [(kind, table[symbol]) for kind, table in _UNITS.items() if symbol in table]
    if not hits and symbol.lower() in _FOLDED:
        kind, canonical = _FOLDED[symbol.lower()]
        hits = [(kind, _UNITS[kind][canonical])]
    return hits


def _normalise_symbol(symbol: str) -> str:
    symbol = " ".join(symbol.split())
    if symbol in ("deg C", "° C", "degrees C"):
        return "degC"
    return symbol


def _expected(kind: str, default: str | None) -> str:
    text = f"accepted units: {_short_list(kind)}"
    if default is not None:
        text += f"; a bare number means {default}"
    return text


def _to_si(number: float, unit: _Unit) -> float:
    return number * unit.scale + unit.offset


#: Unit of a bare number when :func:`parse` is not told one.
STANDARD_DEFAULTS = {"length": "mm", "angle": "deg", "frequency": "GHz", "power": "W",
                     "fraction": "1", "temperature": "degC", "pressure": "Pa",
                     "wavelength": "nm"}

_UNSET = object()


def parse(value: object, kind: str, default: str | None = _UNSET) -> float:  # type: ignore[assignment]
    """Parse one quantity into an SI float.

    Parameters
    ----------
    value : str or real number
        "<number> <unit>" or a bare number (in ``default``).
    kind : str
        One of :data:`KINDS`.
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


# ---------------------------------------------------------------- formatting

def _fmt_number(x: float, digits: int) -> str:
    text = f"{x:.{digits}g}"
    if "e" in text:
        mantissa, exponent = text.split("e")
        text = f"{mantissa}e{int(exponent)}"
    return text


def _pick(x: float, ladder: tuple[tuple[str, float], ...], digits: int) -> str:
    if x == 0.0:
        return f"0 {ladder[-1][0] if ladder[-1][1] == 1.0 else ladder[0][0]}"
    if not math.isfinite(x):
        return f"{x} {[s for s, f in ladder if f == 1.0][0]}"
    mag = abs(x)
    for symbol, factor in ladder:
        if mag >= factor * (1 - 5e-13):
            return f"{_fmt_number(x / factor, digits)} {symbol}"
    symbol, factor = ladder[-1]
    return f"{_fmt_number(x / factor, digits)} {symbol}"


_LENGTH_LADDER = (("m", 1.0), ("mm", 1e-3), ("µm", 1e-6), ("nm", 1e-9), ("pm", 1e-12))
_POWER_LADDER = (("kW", 1e3), ("W", 1.0), ("mW", 1e-3), ("µW", 1e-6), ("nW", 1e-9),
                 ("pW", 1e-12))
_FREQ_LADDER = (("PHz", 1e15), ("THz", 1e12), ("GHz", 1e9), ("MHz", 1e6), ("kHz", 1e3),
                ("Hz", 1.0))


def format_length(x: float, *, digits: int = 6) -> str:
    """A length [m] as a readable string in m, mm, µm, nm or pm.

    >>> format_length(0.025), format_length(5e-6), format_length(1.5), format_length(0.0)
    ('25 mm', '5 µm', '1.5 m', '0 m')
    """
    return _pick(float(x), _LENGTH_LADDER, digits)


def format_wavelength(x: float, *, digits: int = 6) -> str:
    """A vacuum wavelength [m]: nm below 10 µm, else the length ladder.

    >>> format_wavelength(5.5e-7), format_wavelength(1.064e-6), format_wavelength(0.028)
    ('550 nm', '1064 nm', '28 mm')
    """
    x = float(x)
    if 0.0 < abs(x) < 10e-6:
        return f"{_fmt_number(x / 1e-9, digits)} nm"
    return _pick(x, _LENGTH_LADDER, digits)


def format_angle(x: float, *, digits: int = 6, unit: str = "deg") -> str:
    """An angle [rad] in degrees ("45°"), or in another angle unit ("rad", "arcsec", ...).

    >>> format_angle(math.pi / 4)
    '45°'
    >>> format_angle(1e-5, unit="arcsec")
    '2.06265 arcsec'
    """
    table = _UNITS["angle"]
    if unit not in table:
        raise ValueError(f"unknown angle unit {unit!r}")
    value = _fmt_number(float(x) / table[unit].scale, digits)
    if unit in ("deg", "°"):
        return f"{value}°"
    return f"{value} {unit}"


def format_frequency(x: float, *, digits: int = 6) -> str:
    """A frequency [Hz] in Hz, kHz, MHz, GHz, THz or PHz.

    >>> format_frequency(10.7e9)
    '10.7 GHz'
    """
    return _pick(float(x), _FREQ_LADDER, digits)


def format_power(x: float, *, digits: int = 6) -> str:
    """A power [W] in kW, W, mW, µW, nW or pW.

    >>> format_power(0.005), format_power(2e-6)
    ('5 mW', '2 µW')
    """
    return _pick(float(x), _POWER_LADDER, digits)


def format_quantity(x: float, kind: str, *, digits: int = 6) -> str:
    """Format an SI value of ``kind`` (length, wavelength, angle, frequency, power, ...).

    >>> format_quantity(0.5, "fraction")
    '50 %'
    """
    if kind == "length":
        return format_length(x, digits=digits)
    if kind == "wavelength":
        return format_wavelength(x, digits=digits)
    if kind == "angle":
        return format_angle(x, digits=digits)
    if kind == "frequency":
        return format_frequency(x, digits=digits)
    if kind == "power":
        return format_power(x, digits=digits)
    if kind == "fraction":
        return f"{_fmt_number(float(x) * 100.0, digits)} %"
    if kind == "temperature":
        return f"{_fmt_number(float(x), digits)} K"
    if kind == "pressure":
        return f"{_fmt_number(float(x), digits)} Pa"
    _check_kind(kind)
    raise AssertionError(kind)
