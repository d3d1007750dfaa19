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

from tracer.errors import UnitError  # noqa: F401 - tracer.units.UnitError, as before the split

from .formatting import (format_angle, format_frequency, format_length, format_power, format_quantity,
                         format_wavelength)
from .parsing import (angle, bandwidth, fraction, frequency, length, parse, parse_array, power, pressure,
                      temperature, wavelength)
from .table import KINDS, SPEED_OF_LIGHT, STANDARD_DEFAULTS, accepted_units

from . import formatting as _formatting
from . import parsing as _parsing
from . import table as _table

__all__ = [*_table.__all__, *_parsing.__all__, *_formatting.__all__]
