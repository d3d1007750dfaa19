"""The unit tables: every accepted symbol of every kind of quantity, with its SI scale.

Used by :mod:`tracer.units.parsing` (reading) and :mod:`tracer.units.formatting` (writing).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

__all__ = ["SPEED_OF_LIGHT", "KINDS", "STANDARD_DEFAULTS", "accepted_units"]

#: Speed of light in vacuum [m/s], exact by the definition of the metre (SI, 1983/2019).
SPEED_OF_LIGHT = 299_792_458.0


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
