"""Scene values by their TOML key path, in the raw parsed document.

A key path names one value of a scene file the way the file's own tables do:
dotted keys, with ``[i]`` for an item of an array (0-based) and double quotes around a
key that itself contains dots or brackets::

    solids.upper.mate.gap
    sources.beam.direction[0]
    solids.p.rotation[2]
    coatings.ar.layers[0].thickness
    gaps."lower.hypotenuse/upper.hypotenuse".thickness

:func:`get_value` reads the value, :func:`set_value` replaces it (in place) and
:func:`with_values` returns a changed deep copy. Every failure raises
:class:`KeyPathError` naming the path, the part that failed and what exists there.

Quantities keep their unit: :func:`add_quantity` adds a perturbation (``"5 um"``,
``"0.1 deg"`` or a bare number) to a nominal value written as a string with a unit or
as a bare number in the scene's default unit of that kind, and writes the result back
in the nominal's own unit, so that the scene loader reads it as it would read the
file.

>>> doc = {"solids": {"p": {"rotation": [0, 0, "10 deg"]}}}
>>> get_value(doc, "solids.p.rotation[2]")
'10 deg'
>>> set_value(doc, "solids.p.rotation[2]", "12 deg")
>>> doc["solids"]["p"]["rotation"]
[0, 0, '12 deg']
>>> parse("coatings.ar.layers[0].thickness")
('coatings', 'ar', 'layers', 0, 'thickness')
>>> add_quantity("10 mm", "5 um")
'10.005 mm'
>>> add_quantity(2.5, "100 um", length_unit="mm")
2.6
"""

from __future__ import annotations

import copy
import difflib
import math
import re
from collections.abc import Iterable, Mapping

from .. import units
from ..errors import TracerError

__all__ = [
    "KeyPathError",
    "parse",
    "format_path",
    "get_value",
    "set_value",
    "with_values",
    "split_quantity",
    "quantity_kind",
    "add_quantity",
    "to_si",
    "scene_defaults",
]

_NAME = re.compile(r'\s*(?:"((?:[^"\\]|\\.)*)"|([A-Za-z0-9_\-]+))\s*')
_INDEX = re.compile(r"\s*\[\s*(-?\d+)\s*\]\s*")
_NUMBER = re.compile(r"^\s*(?P<num>[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?)\s*(?P<unit>.*?)\s*$")

#: Kinds tried, in order, to find what a unit string measures.
_KINDS = ("length", "angle", "power", "fraction", "frequency", "temperature", "pressure")


class KeyPathError(TracerError, KeyError):
    """A key path is malformed or does not lead to a value of the document."""

    def __str__(self) -> str:  # KeyError would quote the message
        return str(self.args[0]) if self.args else ""


def parse(path: str) -> tuple[str | int, ...]:
    """Split a key path into keys (str) and array indices (int).

    Parameters
    ----------
    path : str
        E.g. ``"solids.p.rotation[2]"``.

    Returns
    -------
    tuple of str and int

    Raises
    ------
    KeyPathError
        For an empty or malformed path.

    >>> parse('gaps."a.b".thickness')
    ('gaps', 'a.b', 'thickness')
    """
    if not isinstance(path, str) or not path.strip():
        raise KeyPathError(f"key path {path!r}: expected dotted keys such as \"solids.upper.mate.gap\"")
    parts: list[str | int] = []
    pos, n = 0, len(path)
    expect_name = True
    while pos < n:
        if expect_name:
            m = _NAME.match(path, pos)
            if not m or m.end() == pos:
                raise KeyPathError(f"key path {path!r}: expected a key at character {pos + 1}")
            parts.append(m.group(1).replace('\\"', '"') if m.group(1) is not None else m.group(2))
            pos = m.end()
            expect_name = False
            continue
        m = _INDEX.match(path, pos)
        if m:
            parts.append(int(m.group(1)))
            pos = m.end()
            continue
        if path[pos] == ".":
            pos += 1
            expect_name = True
            if pos >= n:
                raise KeyPathError(f"key path {path!r}: ends with a dot")
            continue
        raise KeyPathError(f"key path {path!r}: unexpected {path[pos]!r} at character {pos + 1}")
    return tuple(parts)


def format_path(parts: Iterable[str | int]) -> str:
    """Join keys and indices back into a key path.

    >>> format_path(("gaps", "a.b", "thickness", 0))
    'gaps."a.b".thickness[0]'
    """
    out = ""
    for p in parts:
        if isinstance(p, int):
            out += f"[{p}]"
            continue
        key = p if re.fullmatch(r"[A-Za-z0-9_\-]+", p) else '"' + p.replace('"', '\\"') + '"'
        out += ("." if out else "") + key
    return out


def _hint(key, options) -> str:
    options = [str(o) for o in options]
    close = difflib.get_close_matches(str(key), options, n=1)
    hint = f'; did you mean "{close[0]}"?' if close else ""
    shown = ", ".join(options[:12]) + (", ..." if len(options) > 12 else "")
    return f"{hint} (there: {shown or 'nothing'})"


def _walk(doc, parts, path, *, upto):
    cur = doc
    for i, key in enumerate(parts[:upto]):
        where = format_path(parts[:i]) or "the document"
        if isinstance(key, int):
            if not isinstance(cur, list):
                raise KeyPathError(f"key path {path!r}: {where} is not an array, cannot take [{key}]")
            if not -len(cur) <= key < len(cur):
                raise KeyPathError(f"key path {path!r}: {where} has {len(cur)} items, "
                                   f"no item [{key}]")
            cur = cur[key]
        else:
            if not isinstance(cur, Mapping):
                raise KeyPathError(f"key path {path!r}: {where} is a value, not a table; "
                                   f'cannot take "{key}"')
            if key not in cur:
                raise KeyPathError(f'key path {path!r}: {where} has no key "{key}"'
                                   + _hint(key, list(cur)))
            cur = cur[key]
    return cur


def get_value(doc: Mapping, path: str):
    """The value at ``path`` in the parsed document ``doc``.

    Raises
    ------
    KeyPathError
        Naming the path and the first part that does not exist.
    """
    parts = parse(path)
    return _walk(doc, parts, path, upto=len(parts))


def set_value(doc: dict, path: str, value, *, create: bool = True) -> None:
    """Replace the value at ``path`` in ``doc`` (in place).

    Parameters
    ----------
    doc : dict
        The parsed document (as :mod:`tomllib` gives; the scene keeps it as
        ``Scene.raw``).
    path : str
        Key path of the value.
    value
        The new value, as the file would write it (a number, a string with a unit, a
        list ...).
    create : bool
        Allow a missing last key in an existing table (a value left at its default in
        the file, such as ``mate.gap``) and, for ``KEY[i]`` with ``KEY`` missing, an
        array of zeros (e.g. ``rotation[2]`` of a solid written without rotation).
        Missing tables on the way are always an error.

    Raises
    ------
    KeyPathError
    """
    parts = parse(path)
    last = parts[-1]
    if isinstance(last, int) and len(parts) >= 2 and isinstance(parts[-2], str):
        parent = _walk(doc, parts, path, upto=len(parts) - 2)
        if isinstance(parent, dict) and parts[-2] not in parent and create and last >= 0:
            parent[parts[-2]] = [0] * (3 if last < 3 else last + 1)
    parent = _walk(doc, parts, path, upto=len(parts) - 1)
    where = format_path(parts[:-1]) or "the document"
    if isinstance(last, int):
        if not isinstance(parent, list):
            raise KeyPathError(f"key path {path!r}: {where} is not an array, cannot set [{last}]")
        if not -len(parent) <= last < len(parent):
            raise KeyPathError(f"key path {path!r}: {where} has {len(parent)} items, no item [{last}]")
        parent[last] = value
        return
    if not isinstance(parent, dict):
        raise KeyPathError(f'key path {path!r}: {where} is a value, not a table; cannot set "{last}"')
    if last not in parent and not create:
        raise KeyPathError(f'key path {path!r}: {where} has no key "{last}"' + _hint(last, list(parent)))
    if isinstance(parent.get(last), dict) and not isinstance(value, dict):
        raise KeyPathError(f"key path {path!r} names a table, not a value; name one of its keys"
                           + _hint("", list(parent[last])).replace("; did you mean", ""))
    parent[last] = value


def with_values(doc: Mapping, values: Mapping[str, object]) -> dict:
    """A deep copy of ``doc`` with every ``{path: value}`` of ``values`` set.

    >>> doc = {"a": {"b": 1}}
    >>> with_values(doc, {"a.b": 2}), doc
    ({'a': {'b': 2}}, {'a': {'b': 1}})
    """
    out = copy.deepcopy(dict(doc))
    for path, value in values.items():
        set_value(out, path, value)
    return out


# ---------------------------------------------------------------------------
# quantities with units, as the file writes them
# ---------------------------------------------------------------------------


def split_quantity(value) -> tuple[float, str]:
    """``"10 mm"`` -> ``(10.0, "mm")``; a bare number -> ``(number, "")``.

    Raises
    ------
    TracerError
        When ``value`` is neither a number nor "<number> <unit>".

    >>> split_quantity("0.2 um"), split_quantity(3)
    ((0.2, 'um'), (3.0, ''))
    """
    if isinstance(value, bool):
        raise units.UnitError(f"expected a number or a quantity such as \"5 um\", got {value!r}")
    if isinstance(value, (int, float)):
        return float(value), ""
    if isinstance(value, str):
        m = _NUMBER.match(value)
        if m:
            return float(m.group("num")), m.group("unit")
    raise units.UnitError(f"expected a number or a quantity such as \"5 um\", got {value!r}")


def quantity_kind(unit: str) -> str | None:
    """Which kind of quantity a unit symbol measures (``"um"`` -> ``"length"``), or None.

    >>> quantity_kind("deg"), quantity_kind("mW"), quantity_kind("")
    ('angle', 'power', None)
    """
    if not unit:
        return None
    for kind in _KINDS:
        try:
            units.parse(f"1 {unit}", kind, None)
            return kind
        except TracerError:
            continue
    return None


def scene_defaults(length_unit: str = "mm") -> dict[str, str | None]:
    """The unit a bare number means in a scene file, per kind (see the scene format)."""
    return {"length": length_unit, "angle": "deg", "fraction": "1", "power": None,
            "frequency": None, "temperature": None, "pressure": None}


def _unit_scale(unit: str, kind: str) -> float:
    return units.parse(f"1 {unit}", kind, None)


def to_si(value, kind: str, *, length_unit: str = "mm") -> float:
    """SI value of a scene quantity (bare numbers in the scene default of ``kind``).

    >>> to_si("5 um", "length"), to_si(2, "length", length_unit="mm")
    (5e-06, 0.002)
    """
    return units.parse(value, kind, scene_defaults(length_unit).get(kind))


def _fmt(x: float) -> float:
    """Round off the binary noise of a unit conversion (15 significant digits)."""
    return float(f"{x:.15g}") if math.isfinite(x) else x


def add_quantity(nominal, delta, *, length_unit: str = "mm"):
    """``nominal + delta`` for scene quantities, written in the nominal's own unit.

    Parameters
    ----------
    nominal : number or str
        The value in the file: ``"10 mm"``, ``"45 deg"`` or a bare number (meaning the
        scene's default unit of the kind ``delta`` has: ``length_unit`` for lengths,
        degrees for angles).
    delta : number or str
        The perturbation: a quantity with a unit, or a bare number in the nominal's
        unit.
    length_unit : str
        The scene's ``length_unit``.

    Returns
    -------
    str or float
        A string with the nominal's unit, or a bare number when the nominal is bare.

    Raises
    ------
    TracerError
        When the two are of different kinds (a length added to an angle).

    >>> add_quantity("45 deg", "-0.5 deg")
    '44.5 deg'
    >>> add_quantity("1.5 um", 0.1)
    '1.6 um'
    """
    n_num, n_unit = split_quantity(nominal)
    d_num, d_unit = split_quantity(delta)
    if not d_unit:  # bare perturbation: in the nominal's unit
        total = n_num + d_num
        return f"{_fmt(total)!r} {n_unit}" if n_unit else _fmt(total)
    d_kind = quantity_kind(d_unit)
    if d_kind is None:
        raise units.UnitError(f"unknown unit {d_unit!r} in {delta!r}")
    if n_unit:
        n_kind = quantity_kind(n_unit)
        if n_kind != d_kind:
            raise units.UnitError(f"cannot add {delta!r} (a {d_kind}) to {nominal!r} "
                                  f"(a {n_kind or 'number'})")
        scale = _unit_scale(n_unit, n_kind)
        total = n_num + d_num * _unit_scale(d_unit, d_kind) / scale
        return f"{_fmt(total)!r} {n_unit}"
    default = scene_defaults(length_unit).get(d_kind)
    if default is None:
        raise units.UnitError(f"cannot add {delta!r} to the bare number {nominal!r}: a {d_kind} "
                              "in a scene carries its unit")
    scale = _unit_scale(default, d_kind)
    return _fmt(n_num + d_num * _unit_scale(d_unit, d_kind) / scale)
