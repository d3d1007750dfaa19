"""Quantities in a scene file: which unit a bare number means, per kind.

The scene's ``length_unit`` (default ``mm``) applies to bare numbers given for lengths
(positions, sizes, vertices); bare angles are degrees; powers and wavelengths must carry
their unit ("5 mW", "550 nm", "10.7 GHz"); fractions may be bare (0.01) or "1 %".

>>> q = SceneUnits("mm")
>>> q.parse("length", 2.5)
0.0025
>>> q.expected("power")
'a power with its unit, such as "5 mW"'
"""

from __future__ import annotations

from .. import units

__all__ = ["SceneUnits", "LENGTH_UNITS"]

#: Units a scene may choose as ``length_unit``.
LENGTH_UNITS = ("m", "cm", "mm", "um", "µm", "nm", "in")

_EXAMPLE = {"length": "25 mm", "angle": "45 deg", "power": "5 mW", "wavelength": "550 nm",
            "fraction": "0.01 or \"1 %\"", "frequency": "10.7 GHz"}
_PLURAL = {"length": "lengths", "angle": "angles", "power": "powers",
           "wavelength": "wavelengths", "fraction": "fractions", "frequency": "frequencies"}


class SceneUnits:
    """Quantity parser bound to one scene's default length unit."""

    def __init__(self, length_unit: str = "mm"):
        self.length_unit = length_unit
        self.defaults = {"length": length_unit, "angle": "deg", "power": None,
                         "wavelength": None, "fraction": "1", "frequency": None}

    def parse(self, kind: str, value) -> float:
        """SI value of ``value``; raises :class:`tracer.errors.UnitError`."""
        return units.parse(value, kind, self.defaults[kind])

    def expected(self, kind: str) -> str:
        """What a value of ``kind`` looks like, for messages."""
        default = self.defaults[kind]
        if kind == "fraction":
            return "a fraction such as 0.01 or \"1 %\""
        article = "an" if kind[0] in "aeiou" else "a"
        if default is None:
            return f'{article} {kind} with its unit, such as "{_EXAMPLE[kind]}"'
        return f'{article} {kind} such as "{_EXAMPLE[kind]}" or a number in {default}'

    def expected_plural(self, kind: str) -> str:
        """Plural form of :meth:`expected`."""
        default = self.defaults[kind]
        if default is None:
            return f'{_PLURAL[kind]} with units (such as "{_EXAMPLE[kind]}")'
        return f'{_PLURAL[kind]} (such as "{_EXAMPLE[kind]}" or numbers in {default})'

    def show(self, kind: str, value: float) -> str:
        """Readable text of an SI value of ``kind``."""
        return units.format_quantity(value, kind)
