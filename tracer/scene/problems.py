"""Problems found in a scene file, collected and reported together.

A scene is checked in full before anything is reported: every problem becomes one
:class:`Problem` (file, TOML key path, message), and the loader raises a single
:class:`SceneError` holding all of them. Notes (things that are allowed but worth
knowing, such as a source that starts inside a solid) are collected the same way and
end up in :attr:`tracer.scene.model.Scene.notes`.

>>> p = Problem(file="x.toml", key="solids.upper.material", message='unknown material "bk7"')
>>> str(p)
'x.toml: solids.upper.material: unknown material "bk7"'
>>> str(SceneError([p]))
'x.toml: solids.upper.material: unknown material "bk7"'
"""

from __future__ import annotations

import difflib
from dataclasses import dataclass, field

from ..errors import SceneError  # defined there (importable from tracer.errors), re-exported here

__all__ = ["Problem", "SceneError", "Problems", "did_you_mean", "describe_value"]


@dataclass(frozen=True)
class Problem:
    """One problem: where (file, key path, optional line/column) and what.

    Attributes
    ----------
    file : str or None
        Scene file (as given to the loader), ``None`` for text without a file.
    key : str
        Dotted TOML key path such as ``solids.upper.faces.hypotenuse.coating``;
        empty for problems of the whole document.
    message : str
        What is wrong and what was expected.
    line, column : int or None
        Position in the file, known for TOML syntax errors only.
    """

    file: str | None
    key: str
    message: str
    line: int | None = None
    column: int | None = None

    def __str__(self) -> str:
        where = self.file or "<scene>"
        if self.line is not None:
            where += f":{self.line}"
            if self.column is not None:
                where += f":{self.column}"
        if self.key:
            return f"{where}: {self.key}: {self.message}"
        return f"{where}: {self.message}"


@dataclass
class Problems:
    """Collector of errors and notes for one scene file."""

    file: str | None = None
    errors: list[Problem] = field(default_factory=list)
    notes: list[Problem] = field(default_factory=list)
    #: Every key path the loader asked for (present or not) -> ``(kind, zero_default)``:
    #: what it was read as (a quantity kind, "number", "integer", "string", "boolean",
    #: "table", or None) and whether leaving it out of the file means zero.
    read: dict = field(default_factory=dict, repr=False, compare=False)

    def error(self, key: str, message: str, *, line: int | None = None,
              column: int | None = None) -> None:
        """Record an error at ``key``."""
        problem = Problem(self.file, key, message, line, column)
        if problem not in self.errors:
            self.errors.append(problem)

    def note(self, key: str, message: str) -> None:
        """Record a note (allowed, but reported) at ``key``."""
        problem = Problem(self.file, key, message)
        if problem not in self.notes:
            self.notes.append(problem)

    def raise_if_any(self) -> None:
        """Raise :class:`SceneError` with every error collected so far."""
        if self.errors:
            raise SceneError(self.errors)

    def __bool__(self) -> bool:
        return bool(self.errors)


def did_you_mean(word: str, known, *, show_known: int = 24) -> str:
    """Suffix for an "unknown name" message: a close match and the known names.

    >>> did_you_mean("ar-coat", ["ar_coat", "mirror"])
    '; did you mean "ar_coat"? (known: ar_coat, mirror)'
    >>> did_you_mean("x", [])
    ' (none defined)'
    """
    known = sorted({str(k) for k in known})
    if not known:
        return " (none defined)"
    text = ""
    close = difflib.get_close_matches(str(word), known, n=1, cutoff=0.6)
    if not close:  # case-insensitive second chance
        lowered = {k.lower(): k for k in known}
        close = [lowered[m] for m in difflib.get_close_matches(str(word).lower(), list(lowered), n=1,
                                                               cutoff=0.6)]
    if close:
        text = f'; did you mean "{close[0]}"?'
    shown = ", ".join(known[:show_known]) + (", ..." if len(known) > show_known else "")
    return f"{text} (known: {shown})"


def describe_value(value) -> str:
    """Short description of a TOML value for messages: its text and its TOML type.

    >>> describe_value(True)
    'true (a boolean)'
    >>> describe_value("5 mm")
    '"5 mm" (a string)'
    """
    if isinstance(value, bool):
        return f"{str(value).lower()} (a boolean)"
    if isinstance(value, int):
        return f"{value} (an integer)"
    if isinstance(value, float):
        return f"{value!r} (a number)"
    if isinstance(value, str):
        shown = value if len(value) <= 40 else value[:37] + "..."
        return f'"{shown}" (a string)'
    if isinstance(value, dict):
        return "a table"
    if isinstance(value, list):
        return f"an array of {len(value)} item{'s' if len(value) != 1 else ''}"
    return f"{type(value).__name__}"
