"""Sweep axes: which scene value changes and the values it takes.

An :class:`Axis` is a key path (see :mod:`tracer.sweep.keypath`) and the values it
takes, written as the scene file would write them (``"0.2 um"``, ``"45.5 deg"``, a bare
number). :func:`range_axis` spaces ``count`` values evenly from ``start`` to ``stop``
(both included) in the unit of ``start`` (``stop`` may use another unit of the same
kind); :func:`list_axis` takes the values as given. Several axes make a grid
(:func:`grid`): every combination, the first axis varying slowest.

>>> a = range_axis("solids.upper.mate.gap", "0.1 um", "0.3 um", 3)
>>> a.values
('0.1 um', '0.2 um', '0.3 um')
>>> a.numbers, a.unit
((0.1, 0.2, 0.3), 'um')
>>> [p["x"] for p in grid([list_axis("x", [1, 2]), list_axis("y", [5])])]
[1, 2]
"""

from __future__ import annotations

import itertools
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from ..errors import TracerError
from .keypath import _fmt, parse, quantity_kind, split_quantity

__all__ = ["Axis", "AxisError", "range_axis", "list_axis", "grid", "parse_value", "parse_values"]


class AxisError(TracerError, ValueError):
    """A sweep axis is malformed (count, units, values)."""


@dataclass(frozen=True)
class Axis:
    """One swept value.

    Attributes
    ----------
    path : str
        Key path of the value in the scene file.
    values : tuple
        The values, as written into the file.
    numbers : tuple of float or None
        The values as numbers in ``unit`` (``None`` where a value is not a number or a
        quantity, e.g. a string choice).
    unit : str
        Common unit of the values (``""`` for bare numbers or mixed units).
    """

    path: str
    values: tuple
    numbers: tuple
    unit: str = ""

    @property
    def label(self) -> str:
        """``path [unit]`` for tables and plots."""
        return f"{self.path} [{self.unit}]" if self.unit else self.path

    def __len__(self) -> int:
        return len(self.values)


def _numbers_and_unit(values) -> tuple[tuple, str]:
    nums, unit_seen = [], set()
    for v in values:
        try:
            n, u = split_quantity(v)
        except TracerError:
            nums.append(None)
            continue
        nums.append(n)
        unit_seen.add(u)
    if len(unit_seen) == 1:
        return tuple(nums), unit_seen.pop()
    if len(unit_seen) > 1:  # mixed units: express in the first one's unit where possible
        first = next(split_quantity(v)[1] for v, n in zip(values, nums) if n is not None)
        kind = quantity_kind(first)
        if kind is None:
            return tuple(None for _ in values), ""
        from .. import units

        scale = units.parse(f"1 {first}", kind, None)
        out = []
        for v in values:
            try:
                out.append(units.parse(v, kind, first) / scale)
            except TracerError:
                out.append(None)
        return tuple(out), first
    return tuple(nums), ""


def range_axis(path: str, start, stop, count: int) -> Axis:
    """``count`` evenly spaced values from ``start`` to ``stop`` (both included).

    Parameters
    ----------
    path : str
        Key path.
    start, stop : number or str
        Numbers, or quantities with units (``"0.1 um"``); the values are written in
        the unit of ``start``.
    count : int
        Number of values (>= 1; 1 gives ``start`` alone).

    Raises
    ------
    AxisError
    """
    parse(path)
    if isinstance(count, bool) or int(count) != count or count < 1:
        raise AxisError(f"{path}: count must be a positive whole number, got {count!r}")
    count = int(count)
    try:
        a, ua = split_quantity(start)
        b, ub = split_quantity(stop)
    except TracerError as exc:
        raise AxisError(f"{path}: {exc}") from None
    if ub != ua:
        if not ua or not ub:
            raise AxisError(f"{path}: give both ends with a unit or both without "
                            f"(got {start!r} and {stop!r})")
        kind = quantity_kind(ua)
        if kind is None or quantity_kind(ub) != kind:
            raise AxisError(f"{path}: {start!r} and {stop!r} are not the same kind of quantity")
        from .. import units

        b = units.parse(stop, kind, None) / units.parse(f"1 {ua}", kind, None)
    nums = np.linspace(a, b, count) if count > 1 else np.array([a])
    integral = (isinstance(start, int) and isinstance(stop, int) and not ua
                and np.allclose(nums, np.round(nums)))
    if integral:
        values = tuple(int(round(x)) for x in nums)
        numbers = tuple(float(v) for v in values)
    else:
        numbers = tuple(_fmt(float(x)) for x in nums)
        values = tuple(f"{x!r} {ua}" if ua else x for x in numbers)
    return Axis(path=path, values=values, numbers=numbers, unit=ua)


def list_axis(path: str, values: Sequence) -> Axis:
    """The values given, in order.

    >>> list_axis("a", ["1 mm", "2 mm"]).numbers
    (1.0, 2.0)
    """
    parse(path)
    values = tuple(values)
    if not values:
        raise AxisError(f"{path}: expected at least one value")
    numbers, unit = _numbers_and_unit(values)
    return Axis(path=path, values=values, numbers=numbers, unit=unit)


def grid(axes: Sequence[Axis]) -> list[dict]:
    """Every combination of the axes' values, as ``{path: value}`` (first axis slowest)."""
    axes = list(axes)
    if not axes:
        return [{}]
    paths = [a.path for a in axes]
    if len(set(paths)) != len(paths):
        dup = next(p for p in paths if paths.count(p) > 1)
        raise AxisError(f"{dup}: varied twice")
    return [dict(zip(paths, combo)) for combo in itertools.product(*(a.values for a in axes))]


def parse_value(text: str):
    """A command-line value: an int, a float, ``true``/``false``, else the string.

    >>> parse_value("3"), parse_value("0.5"), parse_value("0.2 um"), parse_value("true")
    (3, 0.5, '0.2 um', True)
    """
    t = text.strip()
    if t.lower() in ("true", "false"):
        return t.lower() == "true"
    for conv in (int, float):
        try:
            return conv(t)
        except ValueError:
            pass
    if len(t) >= 2 and t[0] == t[-1] and t[0] in "\"'":
        return t[1:-1]
    return t


def parse_values(text: str) -> list:
    """``"v1,v2,..."`` into values (:func:`parse_value` each).

    >>> parse_values("0.1 um, 0.2 um,0.5 um")
    ['0.1 um', '0.2 um', '0.5 um']
    """
    parts = [p for p in text.split(",")]
    if not any(p.strip() for p in parts):
        raise AxisError(f"expected comma-separated values, got {text!r}")
    return [parse_value(p) for p in parts if p.strip()]
