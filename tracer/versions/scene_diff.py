"""The difference of two scene documents by meaning: key paths added, removed, changed.

Both documents are the parsed TOML (includes merged), so table order, layout and
comments never make a difference. Values are compared by what they mean: a quantity
string is parsed into SI (``"25 mm"`` and ``"2.5 cm"`` are equal), an integer equals the
same float, and a list of numbers or quantities is compared element by element. A
change is shown with the values as written, and for quantities also in SI.

>>> d = diff_documents({"a": {"x": "25 mm", "y": 1}}, {"a": {"x": "2.5 cm", "y": 2, "z": 3}})
>>> [(c.kind, c.key) for c in d.changes]
[('changed', 'a.y'), ('added', 'a.z')]
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

from .. import units
from ..scene.reader import join

__all__ = ["SceneChange", "SceneDiff", "diff_documents", "flatten", "same_value", "quantity_of"]

#: Quantity kinds tried on a string value, in this order (wavelength is a length here).
_KINDS = ("length", "angle", "frequency", "power", "fraction", "temperature", "pressure")

#: Relative tolerance of "the same value" after conversion to SI (round-off of the unit
#: scale only: 25 mm and 2.5 cm differ by one ulp).
SAME_VALUE_RTOL = 1e-12


def quantity_of(value):
    """``(kind, SI value)`` of a quantity string, else ``None``.

    >>> quantity_of("2.5 cm")
    ('length', 0.025)
    >>> quantity_of("BK7") is None
    True
    """
    if not isinstance(value, str) or not value.strip() or not value.strip()[0] in "+-.0123456789":
        return None
    for kind in _KINDS:
        try:
            return kind, units.parse(value, kind, None)
        except Exception:  # noqa: BLE001 - not a quantity of this kind
            continue
    return None


def _close(a: float, b: float) -> bool:
    if math.isnan(a) or math.isnan(b):
        return math.isnan(a) and math.isnan(b)
    return a == b or abs(a - b) <= SAME_VALUE_RTOL * max(abs(a), abs(b))


def same_value(a, b) -> bool:
    """Whether two scalar or list TOML values mean the same."""
    if isinstance(a, bool) or isinstance(b, bool):
        return type(a) is type(b) and a == b
    if isinstance(a, (int, float)) and isinstance(b, (int, float)):
        return _close(float(a), float(b))
    qa, qb = quantity_of(a), quantity_of(b)
    if qa is not None and qb is not None:
        return qa[0] == qb[0] and _close(qa[1], qb[1])
    if isinstance(a, list) and isinstance(b, list):
        return len(a) == len(b) and all(same_value(x, y) for x, y in zip(a, b))
    return type(a) is type(b) and a == b


def _is_table_list(value) -> bool:
    return isinstance(value, list) and bool(value) and all(isinstance(v, dict) for v in value)


def flatten(document: dict, prefix: str = "") -> dict:
    """``{key path: value}`` of every leaf (scalars and lists of scalars).

    Arrays of tables are entered by index (``layers[0].material``).

    >>> flatten({"a": {"b": 1, "c": [{"d": 2}]}, "e": [1, "2 mm"]})
    {'a.b': 1, 'a.c[0].d': 2, 'e': [1, '2 mm']}
    """
    out = {}
    for key, value in document.items():
        path = join(prefix, key)
        _leaf(out, path, value)
    return out


def _leaf(out, path, value):
    if isinstance(value, dict):
        if not value:
            out[path] = {}
        out.update(flatten(value, path))
    elif _is_table_list(value):
        for i, item in enumerate(value):
            out.update(flatten(item, f"{path}[{i}]"))
    else:
        out[path] = value


def show(value) -> str:
    """A value as written in TOML (short), with its SI value for a quantity string."""
    if isinstance(value, str):
        q = quantity_of(value)
        text = '"' + value + '"'
        if q is not None:
            si = {"length": "m", "angle": "rad", "frequency": "Hz", "power": "W", "fraction": "",
                  "temperature": "K", "pressure": "Pa"}[q[0]]
            text += f" (= {q[1]:.6g}{' ' + si if si else ''})"
        return text
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, list):
        return "[" + ", ".join(show(v).split(" (=")[0] for v in value) + "]"
    if isinstance(value, dict):
        return "{}"
    return repr(value)


def _plain(value):
    """JSON-ready copy of a TOML value (dates as ISO strings)."""
    if isinstance(value, dict):
        return {k: _plain(v) for k, v in value.items()}
    if isinstance(value, list):
        return [_plain(v) for v in value]
    if isinstance(value, (str, int, float, bool)) or value is None:
        if isinstance(value, float) and not math.isfinite(value):
            return str(value)
        return value
    return str(value)


@dataclass(frozen=True)
class SceneChange:
    """One difference: ``kind`` is "added", "removed" or "changed"; values as written."""

    kind: str
    key: str
    old: object = None
    new: object = None

    def describe(self) -> str:
        if self.kind == "added":
            return f"+ {self.key} = {show(self.new)}"
        if self.kind == "removed":
            return f"- {self.key} = {show(self.old)}"
        return f"~ {self.key}: {show(self.old)} -> {show(self.new)}"

    def to_dict(self) -> dict:
        d = dict(kind=self.kind, key=self.key)
        if self.kind != "added":
            d["old"] = _plain(self.old)
        if self.kind != "removed":
            d["new"] = _plain(self.new)
        return d


@dataclass
class SceneDiff:
    """Differences of two scene documents, in key-path order."""

    old_name: str
    new_name: str
    changes: list = field(default_factory=list)

    @property
    def identical(self) -> bool:
        return not self.changes

    def by_kind(self, kind: str) -> list:
        return [c for c in self.changes if c.kind == kind]

    def format_text(self) -> str:
        head = f"scene: {self.old_name} -> {self.new_name}: "
        if not self.changes:
            return head + "no difference (by meaning: order, layout, comments and units aside)"
        counts = ", ".join(f"{len(self.by_kind(k))} {k}" for k in ("added", "removed", "changed")
                           if self.by_kind(k))
        return "\n".join([head + counts] + ["  " + c.describe() for c in self.changes])

    def to_dict(self) -> dict:
        return dict(old=self.old_name, new=self.new_name, identical=self.identical,
                    changes=[c.to_dict() for c in self.changes])

    def _repr_html_(self) -> str:
        from .html import scene_diff_html
        return scene_diff_html(self)


def diff_documents(old: dict, new: dict, *, old_name: str = "old", new_name: str = "new") -> SceneDiff:
    """The :class:`SceneDiff` of two parsed scene documents (includes already merged)."""
    a, b = flatten(old), flatten(new)
    changes = []
    for key in sorted(set(a) | set(b), key=_sort_key):
        if key not in b:
            changes.append(SceneChange("removed", key, old=a[key]))
        elif key not in a:
            changes.append(SceneChange("added", key, new=b[key]))
        elif not same_value(a[key], b[key]):
            changes.append(SceneChange("changed", key, old=a[key], new=b[key]))
    return SceneDiff(old_name, new_name, changes)


def _sort_key(key: str):
    import re
    return [int(t) if t.isdigit() else t for t in re.split(r"(\d+)", key)]
