"""Writing quantities: SI floats back into readable strings ("25 mm", "45°", "5 mW")."""

from __future__ import annotations

import math

from .table import _UNITS, _check_kind

__all__ = ["format_length", "format_wavelength", "format_angle", "format_frequency", "format_power",
           "format_quantity"]


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
