"""Physical ranges of scene values: one table, checked at load with the key path.

A value can be well typed and finite and still absurd (an index of 1e308, a detector
1e300 m away, a source of 1e-300 W): the engine would then overflow, divide by zero or
split rays without end. Every quantity kind has a range here, with its unit and the
reason for its bounds; :class:`tracer.scene.reader.Table` checks it for every quantity it
reads, and the section readers check the plain numbers listed here (indices, the power
threshold, pixel counts). The bounds are generous: anything a real bench, antenna range
or thin film needs lies well inside them (engineering choice, no source).

>>> RANGES["length"].text()
'magnitude at most 10 km; non-zero values at least 1 pm'
>>> check_quantity("length", 2e300) is not None
True
>>> check_quantity("length", 0.025) is None
True
"""

from __future__ import annotations

import math
from dataclasses import dataclass

__all__ = ["Range", "RANGES", "INDEX_REAL", "INDEX_IMAG", "LOSS_TANGENT", "POWER_THRESHOLD_MIN",
           "SOURCE_POWER", "MAX_PIXELS", "MAX_RAYS", "check_quantity", "check_index",
           "threshold_problem", "describe_si"]


@dataclass(frozen=True)
class Range:
    """Allowed magnitudes of one kind of value.

    Attributes
    ----------
    unit : str
        SI unit of the bounds.
    largest : float
        Largest magnitude allowed [unit].
    smallest : float
        Smallest non-zero magnitude allowed [unit] (0: any).
    reason : str
        Why these bounds.
    shown : tuple of str
        The bounds as written in messages (largest, smallest).
    """

    unit: str
    largest: float
    smallest: float
    reason: str
    shown: tuple[str, str]

    def text(self) -> str:
        """The range in words, for messages."""
        out = f"magnitude at most {self.shown[0]}"
        if self.smallest > 0:
            out += f"; non-zero values at least {self.shown[1]}"
        return out


#: Range of every quantity kind a scene reads (bounds in SI units).
RANGES: dict[str, Range] = {
    "length": Range("m", 1e4, 1e-12,
                    "a bench, a building or an antenna range fits in 10 km; 1 pm is below any "
                    "film or gap thickness, so smaller non-zero values are typing mistakes",
                    ("10 km", "1 pm")),
    "angle": Range("rad", 2 * math.pi, 0.0,
                   "angles are read modulo nothing: more than a full turn is a mistake",
                   ("360 deg", "")),
    "power": Range("W", 1e9, 1e-30,
                   "1 GW is beyond any continuous source; below 1e-30 W the relative power "
                   "threshold underflows into subnormal numbers",
                   ("1 GW", "1e-30 W")),
    "wavelength": Range("m", 1e3, 1e-9,
                        "from 1 nm (extreme ultraviolet) to 1 km (300 kHz radio)",
                        ("1 km", "1 nm")),
    "frequency": Range("Hz", 3e17, 3e5,
                       "the frequencies of the wavelength range, 300 kHz to 300 PHz",
                       ("300 PHz", "300 kHz")),
    "fraction": Range("1", 1e6, 0.0, "a ratio beyond a million is a mistake", ("1e6", "")),
}

#: Real part of a refractive index [1]: metals in the visible go down to ~0.05, and no
#: material exceeds a few tens (water at radio frequencies ~9, titanates ~ tens).
INDEX_REAL = (1e-3, 100.0)
#: Extinction coefficient kappa [1]: metals in the far infrared reach ~100; 1e4 leaves room
#: for good conductors at radio frequencies.
INDEX_IMAG = (0.0, 1e4)
#: Dielectric loss tangent [1]: up to conductor-like media.
LOSS_TANGENT = (0.0, 1e4)
#: Smallest relative power threshold [1]: 1e-15 is about the double-precision round-off of a
#: ray's power; below it children are kept that no result can resolve, and the ray tree
#: grows without useful end.
POWER_THRESHOLD_MIN = 1e-15
#: Power of one source [W]: positive (a source of no power makes every ray's threshold
#: zero, so nothing is ever discarded) and within the power range.
SOURCE_POWER = (1e-30, 1e9)
#: Largest number of pixels of one detector map (nx * ny): 4 Mi pixels is 32 MiB per map,
#: and a detector keeps several maps (irradiance, Stokes, per path).
MAX_PIXELS = 4 * 1024 * 1024
#: Largest geometric rays per spectral line of one source (scene key and ``--rays``).
MAX_RAYS = 100_000_000


def describe_si(kind: str, value: float) -> str:
    """An SI value with its unit, for messages.

    >>> describe_si("length", -2e-6)
    '-2e-06 m'
    """
    return f"{value:.6g} {RANGES[kind].unit}" if kind in RANGES else f"{value:.6g}"


def check_quantity(kind: str, si: float, *, zero_allowed: bool = True) -> str | None:
    """What is wrong with the SI value ``si`` of ``kind`` (``None`` when in range);
    ``zero_allowed`` only changes the wording (the caller checks the sign)."""
    r = RANGES.get(kind)
    if r is None:
        return None
    mag = abs(si)
    if mag > r.largest:
        return (f"expected a {kind} of magnitude at most {r.shown[0]} ({r.reason}), "
                f"got {describe_si(kind, si)}")
    if 0 < mag < r.smallest:
        zero = "zero or " if zero_allowed else ""
        return (f"expected a {kind} of {zero}magnitude at least {r.shown[1]} ({r.reason}), "
                f"got {describe_si(kind, si)}")
    return None


def check_index(n: complex) -> str | None:
    """What is wrong with a refractive index ``n + i kappa`` (``None`` when plausible)."""
    re, im = float(n.real), float(n.imag)
    if not (math.isfinite(re) and math.isfinite(im)):
        return f"expected a finite refractive index, got {n!r}"
    if not INDEX_REAL[0] <= re <= INDEX_REAL[1]:
        return (f"expected a refractive index with real part between {INDEX_REAL[0]:g} and "
                f"{INDEX_REAL[1]:g} (metals in the visible reach ~0.05, no material a hundred), "
                f"got {re:.6g}")
    if not INDEX_IMAG[0] <= im <= INDEX_IMAG[1]:
        return (f"expected an extinction coefficient k between {INDEX_IMAG[0]:g} and "
                f"{INDEX_IMAG[1]:g}, got {im:.6g}")
    return None


def threshold_problem(value) -> str | None:
    """What is wrong with a ``power_threshold`` value (``None`` when acceptable).

    Accepted: ``"auto"`` or a number ``t`` with ``1e-15 <= t < 1``.

    >>> threshold_problem(1) is not None, threshold_problem(0) is not None
    (True, True)
    >>> threshold_problem(1e-6) is None, threshold_problem("auto") is None
    (True, True)
    """
    expected = (f'expected "auto" or a fraction t with {POWER_THRESHOLD_MIN:g} <= t < 1 (children '
                f"below t times their source ray's power are discarded; 0 or less than "
                f"{POWER_THRESHOLD_MIN:g} would keep splitting rays far below round-off, 1 or "
                f"more would discard every child)")
    if value == "auto" and isinstance(value, str):
        return None
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        return expected
    if not math.isfinite(value) or not POWER_THRESHOLD_MIN <= value < 1:
        return expected
    return None
