"""The ``[tolerances.NAME]`` tables: checked by the loader, used by the tolerance runner.

A scene file may carry the Monte Carlo tolerances of its design next to it (see
:mod:`tracer.sweep.tolerance`, which reads them and removes them before each trial).
The loader does not trace them: it checks their structure as strictly as every other
section, so that ``tracer run`` and ``tracer check`` accept a toleranced scene and report
a broken tolerance with its key path, and it keeps them in the document (``Scene.raw``)
so that writing the scene back keeps them.

Each table::

    [tolerances.gap]
    key = "solids.upper.mate.gap"     # a key path, or a list moved by one draw
    dist = "normal"                   # or "uniform" (default "normal")
    sigma = "0.03 um"                 # normal: standard deviation
    # half_width = "0.5 deg"          # uniform: half width
    # index = "glass"                 # instead of key: additive delta-n of a scene material
    # note = "free text"

Checks (every problem with its key path, ``tolerances.NAME.KEY``):

* the keys are those above (a "did you mean" otherwise); exactly one of ``key`` and
  ``index``;
* every key path is well formed (:func:`tracer.sweep.keypath.parse`), does not point into
  ``[tolerances]``, and names a value of the document that is a number or a quantity
  string - or an optional key of an existing table left out of the file whose default
  is zero (a rotation, a position, a mate ``gap``, ``wedge``, ``spin`` or ``offset``),
  which the tolerance runner starts from zero; arrays, tables, integers, booleans,
  names and left-out keys with another default (measured, or non-zero) are refused;
* ``index`` names a ``constant`` or ``cauchy`` material of ``[materials]`` (the runner
  adds delta-n to its ``n`` or ``A``);
* ``dist`` is ``"normal"`` or ``"uniform"``; ``sigma`` (normal) or ``half_width``
  (uniform) is given, the other is not;
* the scale is a finite, non-negative number or quantity (zero holds the value at its
  nominal, as in the runner) of the kind of every value it moves: a bare number is in the
  value's own unit; with a unit, it must measure what the value measures (a length for a
  thickness, an angle for a rotation), and a plain number (an index) takes a bare scale.
"""

from __future__ import annotations

import math

from .context import Build
from .problems import describe_value
from .reader import Table

__all__ = ["read_tolerance_tables", "TOLERANCE_KEYS", "DISTRIBUTIONS"]

#: Keys of one ``[tolerances.NAME]`` table (those of :mod:`tracer.sweep.tolerance`).
TOLERANCE_KEYS = ("key", "index", "dist", "sigma", "half_width", "note")

#: Accepted ``dist`` values (:data:`tracer.sweep.tolerance.DISTRIBUTIONS`).
DISTRIBUTIONS = ("normal", "uniform")

#: What a value read as one of these cannot take: an additive random perturbation.
_NOT_CONTINUOUS = {"integer": "an integer", "string": "a name or text", "boolean": "a switch",
                   "table": "a table"}

_KIND_ALIASES = {"wavelength": "length"}


def read_tolerance_tables(tables: dict[str, Table], build: Build, document: dict) -> None:
    """Check every ``[tolerances.NAME]`` table; problems go to ``build.problems``.

    Parameters
    ----------
    tables : dict[str, Table]
        ``doc.tables("tolerances")``.
    build : Build
        The loader state; ``build.problems.read`` must already hold every key the other
        sections asked for (call this after they are read).
    document : dict
        The (migrated) parsed document the key paths refer to.
    """
    if not tables:
        return
    read = _read_paths(build.problems.read)
    length_unit = document.get("length_unit", "mm")
    if not isinstance(length_unit, str):
        length_unit = "mm"
    for name, t in tables.items():
        _read_one(name, t, document, read, length_unit)


def _read_paths(read: dict) -> dict:
    """``{key tuple: kind}`` of the keys the loader asked for."""
    from ..sweep.keypath import KeyPathError, parse

    out = {}
    for path, entry in read.items():
        try:
            out[parse(path)] = entry
        except KeyPathError:
            continue
    return out


def _read_one(name: str, t: Table, document: dict, read: dict, length_unit: str) -> None:
    t.string("note", nonempty=False)
    has_key, has_index = t.has("key"), t.has("index")
    if has_key == has_index:
        t.error(None, 'give either "key" (a key path or a list of them) or "index" (the name '
                      "of a constant or cauchy material in [materials])")
    dist = t.string("dist", default="normal", choices=DISTRIBUTIONS)
    t.known("sigma", "half_width")
    scale = None
    if dist is not None:
        what, other = ("sigma", "half_width") if dist == "normal" else ("half_width", "sigma")
        if other in t.data:
            t.error(other, f'a {dist} tolerance takes "{what}", not "{other}"')
        if what not in t.data:
            t.error(None, f'missing key "{what}": expected the {"standard deviation" if dist == "normal" else "half width"} '
                          'of the perturbation, a number or a quantity such as "0.05 um" or "0.1 deg"')
        else:
            scale = _read_scale(t, what)
    targets = []  # (label, key path, value or None when defaulted, kind)
    if has_key and not has_index:
        targets = _read_keys(t, document, read)
    elif has_index and not has_key:
        targets = _read_index(t, document, read)
    if scale is not None:
        for label, path, value, kind in targets:
            _check_kind(t, what, scale, label, path, value, kind, length_unit)
    t.finish(context="in a tolerance")


def _read_scale(t: Table, what: str):
    """``(raw, number, unit)`` of sigma / half_width, or None (problem recorded)."""
    from ..sweep.keypath import quantity_kind, split_quantity

    raw = t.data[what]
    expected = 'a non-negative number or quantity such as "0.05 um", "0.1 deg" or 0.0005'
    if isinstance(raw, bool) or not isinstance(raw, (int, float, str)):
        t.error(what, f"expected {expected}, got {describe_value(raw)}")
        return None
    try:
        num, unit = split_quantity(raw)
    except Exception:  # noqa: BLE001 - a UnitError from a malformed string
        t.error(what, f"expected {expected}, got {describe_value(raw)}")
        return None
    if not math.isfinite(num) or num < 0:
        t.error(what, f"expected {expected}, got {describe_value(raw)}")
        return None
    if unit and quantity_kind(unit) is None:
        t.error(what, f'unknown unit "{unit}" in {describe_value(raw)}; expected {expected}')
        return None
    return raw, num, unit


def _read_keys(t: Table, document: dict, read: dict) -> list:
    raw = t.data["key"]
    items = [raw] if isinstance(raw, str) else raw
    if not isinstance(items, list) or not items or not all(isinstance(k, str) for k in items):
        t.error("key", 'expected a key path such as "solids.upper.mate.gap" or a non-empty array '
                       f"of them, got {describe_value(raw)}")
        return []
    out = []
    for i, path in enumerate(items):
        label = "key" if isinstance(raw, str) else f"key[{i}]"
        target = _check_path(t, label, path, document, read)
        if target is not None:
            out.append((label, path, *target))
    return out


def _check_path(t: Table, label: str, path: str, document: dict, read: dict):
    """``(value or None, kind)`` of the value a key path names, or None (problem recorded)."""
    from ..sweep.keypath import KeyPathError, get_value, parse, split_quantity

    try:
        parts = parse(path)
    except KeyPathError as exc:
        t.error(label, str(exc))
        return None
    if parts[0] == "tolerances":
        t.error(label, f'key path "{path}": a tolerance moves a value of the scene, not of [tolerances]')
        return None
    base = parts
    while base and isinstance(base[-1], int):
        base = base[:-1]
    kind, zero_default = read.get(base, (None, False))
    try:
        value = get_value(document, path)
    except KeyPathError as exc:
        if base in read and _parent_exists(document, parts, base):
            if not zero_default and kind not in _NOT_CONTINUOUS:
                t.error(label, f'key path "{path}": the value is left out of the file and its default '
                               "is not zero, but the tolerance runner starts a missing value from "
                               "zero; write the nominal value into the file to tolerance it")
                return None
            value = None  # left at its zero default in the file: the runner starts from zero
        else:
            t.error(label, f"{exc} (a tolerance must name a value of this scene, or one of its "
                           "optional keys left at a zero default)")
            return None
    if kind in _NOT_CONTINUOUS:
        t.error(label, f'key path "{path}" names {_NOT_CONTINUOUS[kind]}, not a quantity that can '
                       "take a random perturbation")
        return None
    if value is not None:
        if isinstance(value, bool) or not isinstance(value, (int, float, str)):
            t.error(label, f'key path "{path}" names {describe_value(value)}; expected a number or a '
                           "quantity (name one item of an array, e.g. rotation[2])")
            return None
        try:
            split_quantity(value)
        except Exception:  # noqa: BLE001
            t.error(label, f'key path "{path}" names {describe_value(value)}, not a number or a '
                           "quantity")
            return None
    return value, kind


def _parent_exists(document: dict, parts: tuple, base: tuple) -> bool:
    """Whether every table up to the defaulted key exists (and the key itself is absent)."""
    cur = document
    for key in base[:-1]:
        if isinstance(key, int):
            if not isinstance(cur, list) or not -len(cur) <= key < len(cur):
                return False
        elif not isinstance(cur, dict) or key not in cur:
            return False
        cur = cur[key]
    if not isinstance(cur, dict) or base[-1] in cur:
        return False  # present but the item does not exist (e.g. an index out of range)
    # an index into an absent array: the runner writes an array of zeros (3 items)
    return all(p < 3 for p in parts[len(base):]) if len(parts) > len(base) else True


def _read_index(t: Table, document: dict, read: dict) -> list:
    material = t.data["index"]
    mats = document.get("materials")
    mats = mats if isinstance(mats, dict) else {}
    if not isinstance(material, str) or not material.strip():
        t.error("index", f"expected the name of a material of [materials], got {describe_value(material)}")
        return []
    if material not in mats or not isinstance(mats[material], dict):
        from .problems import did_you_mean

        t.error("index", f'"{material}" is not a material of the scene\'s [materials] table '
                         "(catalog materials cannot take a delta-n; declare a constant or cauchy "
                         "material)" + (did_you_mean(material, mats) if mats else ""))
        return []
    model = mats[material].get("model")
    term = {"constant": "n", "cauchy": "A"}.get(model)
    if term is None:
        t.error("index", f'material "{material}" is a {model if isinstance(model, str) else "?"} model; '
                         "an additive delta-n needs a constant model (its n) or a cauchy model (its A)")
        return []
    value = mats[material].get(term)
    return [("index", f"materials.{material}.{term}", value, "number")]


def _a(word: str) -> str:
    return ("an " if word[:1] in "aeiou" else "a ") + word


def _check_kind(t: Table, what: str, scale, label: str, path: str, value, kind, length_unit: str):
    """The scale must measure what the value measures (module docstring)."""
    from ..errors import TracerError
    from ..sweep.keypath import add_quantity, quantity_kind

    raw, _num, unit = scale
    kind = _KIND_ALIASES.get(kind, kind)
    if unit:
        s_kind = quantity_kind(unit)
        if kind == "number":
            t.error(what, f'{describe_value(raw)} has a unit, but {path} (at {t.path(label)}) is a '
                          "plain number: give a bare number")
            return
        if kind is not None and s_kind != kind:
            t.error(what, f"expected {_a(kind)} for {path} (at {t.path(label)}), got {raw!r} "
                          f"({_a(s_kind)})")
            return
    try:
        add_quantity(0 if value is None else value, raw, length_unit=length_unit)
    except TracerError as exc:
        t.error(what, f"cannot perturb {path} (at {t.path(label)}) by {describe_value(raw)}: {exc}")
