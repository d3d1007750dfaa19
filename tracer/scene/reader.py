"""Typed, strict access to one TOML table, recording problems instead of raising.

:class:`Table` wraps a parsed TOML table and its dotted key path. Each accessor reads one
key, checks its type (and unit, sign, choices), records a problem naming the key path
and what was expected when it is wrong, and returns ``None`` then; a builder checks for
``None`` and simply does not build what depends on it, so that one mistake gives one
message. :meth:`Table.finish` reports every key that no accessor asked for, with a
"did you mean".

>>> from tracer.scene.problems import Problems
>>> problems = Problems("x.toml")
>>> t = Table({"rays": 0, "colour": "red"}, "sources.lamp", problems)
>>> t.integer("rays", minimum=1) is None
True
>>> t.string("color", default="blue")
'blue'
>>> t.finish()
>>> for p in problems.errors: print(p)
x.toml: sources.lamp.rays: expected an integer >= 1, got 0 (an integer)
x.toml: sources.lamp.colour: unknown key "colour"; did you mean "color"? (known: color, rays)
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from ..errors import TracerError
from .problems import Problems, describe_value, did_you_mean
from .ranges import check_quantity

__all__ = ["Table", "join"]


def join(path: str, name: str) -> str:
    """Dotted key path of ``name`` inside ``path`` (quoted when it needs quotes).

    >>> join("solids", "upper")
    'solids.upper'
    >>> join("solids", "my prism")
    'solids."my prism"'
    """
    name = str(name)
    if not name or not all(c.isalnum() or c in "_-" for c in name):
        name = '"' + name.replace('"', '\\"') + '"'
    return f"{path}.{name}" if path else name


def _is_number(value) -> bool:
    return isinstance(value, (int, float)) and not isinstance(value, bool)


_UNSET = object()


def _shown(value) -> str:
    """A quantity as the file wrote it: ``"-2 um"`` or ``-2``."""
    return f'"{value}"' if isinstance(value, str) else repr(value)


def _is_zero(default) -> bool:
    """Whether a default value is zero (a number, or an array of zeros)."""
    if default is None or isinstance(default, (bool, str)):
        return False
    try:
        arr = np.asarray(default, dtype=float)
    except (TypeError, ValueError):
        return False
    return arr.size > 0 and bool(np.all(arr == 0))


class Table:
    """One TOML table with its key path and the problem collector.

    Parameters
    ----------
    data : dict
        The parsed table (anything else records a type problem and acts as empty).
    key : str
        Dotted key path of the table (``""`` for the document).
    problems : Problems
        Where problems go.
    units : object, optional
        Parser of quantities (see :mod:`tracer.scene.quantities`); needed by the
        quantity accessors only.
    """

    def __init__(self, data: Any, key: str, problems: Problems, units=None):
        self.key = key
        self.problems = problems
        self.units = units
        if not isinstance(data, dict):
            problems.error(key, f"expected a table, got {describe_value(data)}")
            data = {}
        self.data = data
        self._known: set[str] = set()

    def _asked(self, name: str, kind: str | None = None, default=_UNSET) -> None:
        """Record in ``problems.read`` that the loader asked for ``name`` (and as what).

        The record is ``(kind, zero_default)``: ``kind`` is the quantity kind
        (``length``, ``angle``, ...) or ``number``, ``integer``, ``string``, ``boolean``,
        ``table`` (``None`` when read unchecked), and ``zero_default`` whether a value
        left out of the file means zero. It tells which keys of a table exist in the
        format, present or left at their defaults (used to check the key paths of
        ``[tolerances]``).
        """
        read = getattr(self.problems, "read", None)
        if read is None:
            return
        path = self.path(name)
        zero = None if default is _UNSET else _is_zero(default)
        old_kind, old_zero = read.get(path, (None, False))
        read[path] = (kind if kind is not None else old_kind, zero if zero is not None else old_zero)

    # ------------------------------------------------------------------ basics
    def path(self, name: str) -> str:
        """Key path of ``name`` in this table (an index suffix such as ``[2]`` is kept)."""
        name = str(name)
        if name.endswith("]") and "[" in name:
            base, _, index = name.partition("[")
            return join(self.key, base) + "[" + index
        return join(self.key, name)

    def error(self, name: str | None, message: str) -> None:
        """Record a problem at ``name`` (``None``: the table itself)."""
        self.problems.error(self.path(name) if name else self.key, message)

    def note(self, name: str | None, message: str) -> None:
        """Record a note at ``name`` (``None``: the table itself)."""
        self.problems.note(self.path(name) if name else self.key, message)

    def known(self, *names: str) -> None:
        """Declare keys as allowed without reading them."""
        self._known.update(names)
        for name in names:
            self._asked(name)

    def has(self, name: str) -> bool:
        """Whether the key is present (declares it known)."""
        self._known.add(name)
        self._asked(name)
        return name in self.data

    def raw(self, name: str, default=None):
        """The value as parsed, unchecked (declares it known)."""
        self._known.add(name)
        self._asked(name)
        return self.data.get(name, default)

    def _fetch(self, name, required, expected, kind=None, default=_UNSET):
        """(present, value); records a missing-key problem when required."""
        self._known.add(name)
        self._asked(name, kind, default)
        if name in self.data:
            return True, self.data[name]
        if required:
            self.error(None, f'missing key "{name}": expected {expected}')
        return False, None

    def _bad(self, name, expected, value) -> None:
        self.error(name, f"expected {expected}, got {describe_value(value)}")

    def finish(self, *, context: str | None = None) -> None:
        """Report every key that was not read or declared."""
        known = sorted(self._known)
        for name in self.data:
            if name not in self._known:
                where = f" {context}" if context else ""
                self.error(name, f'unknown key "{name}"{where}' + did_you_mean(name, known))

    # ------------------------------------------------------------------ plain types
    def string(self, name: str, *, required: bool = False, default: str | None = None,
               choices=None, nonempty: bool = True) -> str | None:
        """A string, optionally one of ``choices`` (a sequence or a mapping of aliases)."""
        expected = "a string" if not choices else "one of " + ", ".join(f'"{c}"' for c in choices)
        present, value = self._fetch(name, required, expected, "string")
        if not present:
            return default
        if not isinstance(value, str):
            self._bad(name, expected, value)
            return None
        if nonempty and not value.strip():
            self.error(name, f"expected {expected}, got an empty string")
            return None
        if choices is not None and value not in choices:
            self.error(name, f'unknown value "{value}"' + did_you_mean(value, list(choices)))
            return None
        if isinstance(choices, dict):
            return choices[value]
        return value

    def boolean(self, name: str, *, required: bool = False, default: bool | None = None):
        """``true`` or ``false``."""
        present, value = self._fetch(name, required, "true or false", "boolean")
        if not present:
            return default
        if not isinstance(value, bool):
            self._bad(name, "true or false", value)
            return None
        return value

    def integer(self, name: str, *, required: bool = False, default: int | None = None,
                minimum: int | None = None, maximum: int | None = None):
        """An integer within optional bounds."""
        expected = "an integer"
        if minimum is not None:
            expected += f" >= {minimum}"
        if maximum is not None:
            expected += f"{' and' if minimum is not None else ''} <= {maximum}"
        present, value = self._fetch(name, required, expected, "integer")
        if not present:
            return default
        if isinstance(value, bool) or not isinstance(value, int):
            self._bad(name, expected, value)
            return None
        if (minimum is not None and value < minimum) or (maximum is not None and value > maximum):
            self._bad(name, expected, value)
            return None
        return value

    def number(self, name: str, *, required: bool = False, default: float | None = None,
               minimum: float | None = None, maximum: float | None = None,
               exclusive_minimum: bool = False, what: str = "a number") -> float | None:
        """A finite number (integers accepted) within optional bounds."""
        expected = what
        if minimum is not None:
            expected += f" {'>' if exclusive_minimum else '>='} {minimum:g}"
        if maximum is not None:
            expected += f"{' and' if minimum is not None else ''} <= {maximum:g}"
        present, value = self._fetch(name, required, expected, "number", default)
        if not present:
            return default
        if not _is_number(value) or not math.isfinite(value):
            self._bad(name, expected, value)
            return None
        value = float(value)
        if minimum is not None and (value < minimum or (exclusive_minimum and value == minimum)):
            self._bad(name, expected, value)
            return None
        if maximum is not None and value > maximum:
            self._bad(name, expected, value)
            return None
        return value

    def numbers(self, name: str, *, required: bool = False, length: int | None = None,
                minimum: float | None = None, nonempty: bool = True, default=None):
        """An array of finite numbers as a float ndarray."""
        expected = "an array of numbers" + (f" with {length} items" if length else "")
        present, value = self._fetch(name, required, expected, "number", default)
        if not present:
            return default
        if (not isinstance(value, list) or (length is not None and len(value) != length)
                or (nonempty and not value)):
            self._bad(name, expected, value)
            return None
        if self._bad_items(name, value):
            return None
        arr = np.asarray(value, dtype=float)
        if minimum is not None and np.any(arr < minimum):
            self.error(name, f"expected every item >= {minimum:g}, got {value}")
            return None
        return arr

    def _bad_items(self, name: str, value: list, *, largest: float = 1e300) -> bool:
        """Record a problem for every item of ``value`` that is not a finite number of
        magnitude at most ``largest`` (each named ``name[i]``); whether there was one."""
        bad = False
        for i, v in enumerate(value):
            if not _is_number(v) or not math.isfinite(v):
                self.error(f"{name}[{i}]", f"expected a finite number, got {describe_value(v)}")
                bad = True
            elif abs(v) > largest:
                self.error(f"{name}[{i}]", f"expected a number of magnitude at most {largest:g}, "
                                           f"got {describe_value(v)}")
                bad = True
        return bad

    def strings(self, name: str, *, required: bool = False, default=None, nonempty: bool = True):
        """An array of strings (a single string is accepted as one item)."""
        expected = "an array of strings"
        present, value = self._fetch(name, required, expected, "string")
        if not present:
            return default
        if isinstance(value, str):
            value = [value]
        if not isinstance(value, list) or not all(isinstance(v, str) for v in value) or (
                nonempty and not value):
            self._bad(name, expected, value)
            return None
        return list(value)

    # ------------------------------------------------------------------ sub-tables
    def table(self, name: str, *, required: bool = False) -> "Table | None":
        """A sub-table as a :class:`Table` (``None`` when absent or not a table)."""
        present, value = self._fetch(name, required, "a table", "table")
        if not present:
            return None
        if not isinstance(value, dict):
            self._bad(name, "a table", value)
            return None
        return Table(value, self.path(name), self.problems, self.units)

    def tables(self, name: str) -> dict[str, "Table"]:
        """Named sub-tables ``[name.X]`` as ``{X: Table}`` (empty when absent)."""
        present, value = self._fetch(name, False, "a table of named tables", "table")
        if not present:
            return {}
        if not isinstance(value, dict):
            self._bad(name, f"a table of named tables such as [{name}.example]", value)
            return {}
        out = {}
        for key, item in value.items():
            path = join(self.path(name), key)
            if not isinstance(item, dict):
                self.problems.error(path, f"expected a table [{path}], got {describe_value(item)}")
                continue
            out[key] = Table(item, path, self.problems, self.units)
        return out

    # ------------------------------------------------------------------ quantities
    def quantity(self, name: str, kind: str, *, required: bool = False, default=None,
                 positive: bool = False, nonnegative: bool = False,
                 maximum: float | None = None) -> float | None:
        """A physical quantity of ``kind`` (length, angle, power, wavelength) in SI."""
        expected = self.units.expected(kind)
        present, value = self._fetch(name, required, expected, kind, default)
        if not present:
            return default
        return self._convert(name, value, kind, positive=positive, nonnegative=nonnegative,
                             maximum=maximum)

    def _convert(self, name, value, kind, *, positive=False, nonnegative=False, maximum=None,
                 item: str = ""):
        expected = self.units.expected(kind)
        label = f"{name}{item}"
        if isinstance(value, bool) or not isinstance(value, (int, float, str)):
            self.error(label, f"expected {expected}, got {describe_value(value)}")
            return None
        try:
            si = float(self.units.parse(kind, value))
        except TracerError as exc:
            self.error(label, str(exc))
            return None
        except (ValueError, TypeError, ArithmeticError) as exc:  # defensive: never a traceback
            self.error(label, f"could not read {describe_value(value)} as {kind}: {exc}")
            return None
        if not math.isfinite(si):
            self.error(label, f"expected a finite {kind}, got {describe_value(value)}")
            return None
        if (positive and si <= 0) or (nonnegative and si < 0):
            sign = "negative" if si < 0 else "zero"
            want = "positive" if positive else "non-negative"
            self.error(label, f"expected a {want} {kind}, got a {sign} {kind} ({_shown(value)})")
            return None
        out_of_range = check_quantity(kind, si, zero_allowed=not positive)
        if out_of_range is not None:
            self.error(label, f"{out_of_range} (from {_shown(value)})")
            return None
        if maximum is not None and si > maximum:
            self.error(label, f"expected a {kind} of at most {self.units.show(kind, maximum)}, "
                              f"got {describe_value(value)}")
            return None
        return si

    def quantities(self, name: str, kind: str, *, required: bool = False, default=None,
                   length: int | tuple[int, ...] | None = None, positive: bool = False,
                   nonnegative: bool = False, allow_single: bool = False):
        """An array of quantities (numbers or unit strings) as a float ndarray in SI."""
        lengths = (length,) if isinstance(length, int) else length
        expected = f"an array of {self.units.expected_plural(kind)}"
        if lengths:
            expected += f" with {' or '.join(str(n) for n in lengths)} items"
        present, value = self._fetch(name, required, expected, kind, default)
        if not present:
            return default
        if allow_single and not isinstance(value, list):
            value = [value]
        if not isinstance(value, list) or not value or (lengths and len(value) not in lengths):
            self._bad(name, expected, value)
            return None
        out = [self._convert(name, v, kind, positive=positive, nonnegative=nonnegative,
                             item=f"[{i}]") for i, v in enumerate(value)]
        if any(v is None for v in out):
            return None
        return np.asarray(out, dtype=float)

    def vector(self, name: str, kind: str | None, *, required: bool = False, default=None,
               dimension: int = 3, unit_length: bool = False) -> np.ndarray | None:
        """A 3-vector (2 items allowed in 2D scenes, z = 0): positions or directions.

        ``kind`` is ``"length"`` for positions, ``None`` for plain numbers (directions,
        normalised when ``unit_length``).
        """
        sizes = (2, 3) if dimension == 2 else (3,)
        if kind is None:
            expected = f"an array of {' or '.join(map(str, sizes))} numbers"
            present, value = self._fetch(name, required, expected, "number", default)
            if not present:
                return default
            if not isinstance(value, list) or len(value) not in sizes:
                self._bad(name, expected, value)
                return None
            if self._bad_items(name, value):
                return None
            vec = np.asarray(value, dtype=float)
        else:
            vec = self.quantities(name, kind, required=required, length=sizes)
            self._asked(name, kind, default)
            if vec is None:
                return default if not self.has(name) else None
        if vec.size == 2:
            vec = np.append(vec, 0.0)
        if unit_length:
            big = float(np.max(np.abs(vec)))
            if big > 0:  # scale first: huge components must not overflow the norm
                vec = vec / big
            norm = float(np.linalg.norm(vec))
            if not norm > 0:
                self.error(name, "expected a non-zero direction vector")
                return None
            vec = vec / norm
        return vec

    def choice_map(self, name: str, mapping: dict, **kw):
        """A string mapped through ``mapping`` (keys are the accepted spellings)."""
        return self.string(name, choices=mapping, **kw)

