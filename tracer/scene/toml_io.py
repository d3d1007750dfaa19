"""Reading TOML text into plain data, and the format version with its migration hook.

Syntax errors become a :class:`~tracer.scene.problems.SceneError` naming the file, line
and column. Every scene carries ``format = N``; a document written for an older format
is brought up to :data:`FORMAT_VERSION` by the functions in :data:`MIGRATIONS` before it
is validated, so that old scene files keep loading.

>>> parse_text("a = 1", file="x.toml")
{'a': 1}
>>> try:
...     parse_text("a = 1\\nb = [1,\\nc = ", file="x.toml")
... except SceneError as exc:
...     print(exc)
x.toml:3:1: TOML syntax error: Invalid value
"""

from __future__ import annotations

import re
import tomllib
from typing import Callable

from .problems import Problem, SceneError

__all__ = ["FORMAT_VERSION", "MIGRATIONS", "parse_text", "migrate"]

#: The format version this package reads and writes.
FORMAT_VERSION = 1

#: ``{old_version: function(document) -> document of old_version + 1}``. Empty while only
#: format 1 exists; a future format 2 adds ``MIGRATIONS[1]`` here.
MIGRATIONS: dict[int, Callable[[dict], dict]] = {}

_AT = re.compile(r"\s*\(at line (\d+), column (\d+)\)\s*$")
_AT_END = re.compile(r"\s*\(at end of document\)\s*$")


def parse_text(text: str, *, file: str | None = None) -> dict:
    """Parse TOML text; syntax errors raise :class:`SceneError` with line and column."""
    if isinstance(text, bytes):
        try:
            text = text.decode("utf-8")
        except UnicodeDecodeError as exc:
            raise SceneError([Problem(file, "", f"not UTF-8 text: {exc}")]) from None
    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        message = str(exc)
        line = column = None
        match = _AT.search(message)
        if match:
            line, column = int(match[1]), int(match[2])
            message = message[: match.start()]
        elif _AT_END.search(message):
            line = text.count("\n") + 1
            message = _AT_END.sub("", message) + " (at end of document)"
        raise SceneError([Problem(file, "", f"TOML syntax error: {message}", line, column)]) from None


def migrate(document: dict, version: int) -> dict:
    """Bring ``document`` written for format ``version`` up to :data:`FORMAT_VERSION`."""
    while version < FORMAT_VERSION:
        document = MIGRATIONS[version](document)
        version += 1
    return document
