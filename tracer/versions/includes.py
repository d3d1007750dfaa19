"""Shared tables from other TOML files: the scene key ``include``.

A scene (or an included file) may list files whose ``materials``, ``coatings`` and
``solids`` tables it takes in::

    include = ["../shared/glasses.toml", "../shared/coatings.toml"]

Paths are relative to the file that names them and must stay inside the repository tree
(the nearest folder above the scene holding ``.git``; without one, the scene's own
folder). An included file holds only those three tables (and its own ``include``).
A name defined twice (in the scene and an included file, or in two included files) is
an error naming both files and the key path; so is a cycle of includes. The merged
document is what the loader validates, what ``tracer diff`` compares and what a baseline
records: the ``include`` key itself is removed.

Reading goes through a *reader* ``(name) -> bytes`` so that the same rules apply to files
of a git revision (:mod:`tracer.versions.revisions`).
"""

from __future__ import annotations

import os
import posixpath
from pathlib import Path
from typing import Callable

from ..scene.problems import Problem, SceneError
from ..scene.toml_io import parse_text

__all__ = ["INCLUDABLE_TABLES", "repository_root", "resolve_includes", "FileTree",
           "IncludedDocument", "relocate"]

#: The tables an included file may define.
INCLUDABLE_TABLES = ("materials", "coatings", "solids", "parts")


class IncludedDocument(dict):
    """A merged document that remembers which file each included entry came from.

    ``origins``: ``{"materials.crown": "shared/glasses.toml", ...}`` for the entries taken
    from included files (deep copies keep it).
    """

    origins: dict

    def __init__(self, *args, origins=None, **kw):
        super().__init__(*args, **kw)
        self.origins = dict(origins or {})


def relocate(error: SceneError, document) -> SceneError:
    """``error`` with every problem inside an included entry moved to the file it came from."""
    origins = getattr(document, "origins", None)
    if not origins:
        return error
    out = []
    for p in error.problems:
        file = p.file
        for prefix, where in origins.items():
            if p.key == prefix or p.key.startswith(prefix + ".") or p.key.startswith(prefix + "["):
                file = where
                break
        out.append(Problem(file, p.key, p.message, p.line, p.column) if file != p.file else p)
    return SceneError(out)


def repository_root(folder: str | os.PathLike) -> Path:
    """The nearest folder at or above ``folder`` holding ``.git``; else ``folder`` itself."""
    start = Path(folder).resolve()
    for p in (start, *start.parents):
        if (p / ".git").exists():
            return p
    return start


class FileTree:
    """Files of the working tree below ``root``; names are POSIX paths relative to it."""

    def __init__(self, root: str | os.PathLike):
        self.root = Path(root).resolve()

    def read(self, name: str) -> bytes:
        return (self.root / name).read_bytes()

    def display(self, name: str) -> str:
        """The name shown in messages (relative to the working directory when possible)."""
        p = self.root / name
        try:
            return os.path.relpath(p)
        except ValueError:  # another drive
            return str(p)


def _relative_name(path: Path, root: Path) -> str | None:
    try:
        return path.resolve().relative_to(root).as_posix()
    except ValueError:
        return None


def resolve_includes(document: dict, *, file: str | None = None, base_dir=None,
                     tree=None, name: str | None = None) -> dict:
    """The document with its includes merged in (and its ``include`` key removed).

    Parameters
    ----------
    document : dict
        The parsed scene (not changed).
    file : str, optional
        The scene file as given (used in messages and for its folder).
    base_dir : path-like, optional
        Folder of relative includes when ``file`` is not given (default: working folder).
    tree : FileTree or revisions.RevisionTree, optional
        Where included files are read; default the working tree of the scene's repository.
    name : str, optional
        The scene's name inside ``tree`` (POSIX, relative to its root); with ``tree``.

    Raises
    ------
    SceneError
        Bad ``include`` value, unreadable or invalid included file, a path outside the
        tree, a cycle, a name defined twice.
    """
    if not isinstance(document, dict) or "include" not in document:
        return document
    if tree is None:
        folder = Path(file).resolve().parent if file else Path(base_dir or Path.cwd()).resolve()
        tree = FileTree(repository_root(folder))
        if file:
            name = _relative_name(Path(file), tree.root)
        else:
            rel = _relative_name(folder, tree.root)
            name = posixpath.join(rel, "<scene>") if rel not in (None, ".") else "<scene>"
        if name is None:  # cannot happen: the root is an ancestor of the scene's folder
            name = Path(file).name
    display = file or (tree.display(name) if name != "<scene>" else None)
    merged = {k: v for k, v in document.items() if k != "include"}
    origin: dict[tuple[str, str], str] = {}
    for table in INCLUDABLE_TABLES:
        if isinstance(merged.get(table), dict):
            merged[table] = dict(merged[table])
            for key in merged[table]:
                origin[(table, key)] = display or "<scene>"
    problems: list[Problem] = []
    _walk(document.get("include"), name=name, display=display, tree=tree, merged=merged,
          origin=origin, chain=[name], problems=problems)
    if problems:
        raise SceneError(problems)
    from ..scene.reader import join
    return IncludedDocument(merged, origins={join(t, k): f for (t, k), f in origin.items()
                                             if f != (display or "<scene>")})


def _include_list(value, display, problems) -> list[str]:
    if isinstance(value, str):
        value = [value]
    if not isinstance(value, list) or not all(isinstance(v, str) and v for v in value):
        problems.append(Problem(display, "include", "expected a file name or a list of file "
                                "names relative to this file (e.g. include = [\"shared/glasses.toml\"])"))
        return []
    return value


def _walk(value, *, name, display, tree, merged, origin, chain, problems):
    for i, entry in enumerate(_include_list(value, display, problems)):
        key = f"include[{i}]"
        if posixpath.isabs(entry) or os.path.isabs(entry):
            problems.append(Problem(display, key, f'"{entry}": expected a path relative to this '
                                    "file, inside the repository tree"))
            continue
        target = posixpath.normpath(posixpath.join(posixpath.dirname(name), entry))
        if target == ".." or target.startswith("../"):
            problems.append(Problem(display, key, f'"{entry}" lies outside the repository tree '
                                    f"({tree.root}); included files must be inside it"))
            continue
        if target in chain:
            cycle = " -> ".join([*chain[chain.index(target):], target])
            problems.append(Problem(display, key, f"include cycle: {cycle}"))
            continue
        shown = tree.display(target)
        try:
            data = tree.read(target)
        except (OSError, KeyError) as exc:
            why = getattr(exc, "strerror", None) or str(exc)
            problems.append(Problem(display, key, f'cannot read included file "{entry}" '
                                    f"({shown}): {why}"))
            continue
        try:
            included = parse_text(data, file=shown)
        except SceneError as exc:
            problems.extend(exc.problems)
            continue
        for k in included:
            if k not in (*INCLUDABLE_TABLES, "include"):
                problems.append(Problem(shown, k, "an included file holds only "
                                        + ", ".join(f"[{t}]" for t in INCLUDABLE_TABLES)
                                        + " tables (and include)"))
        for table in INCLUDABLE_TABLES:
            entries = included.get(table)
            if entries is None:
                continue
            if not isinstance(entries, dict):
                problems.append(Problem(shown, table, "expected a table of named entries"))
                continue
            into = merged.setdefault(table, {})
            if not isinstance(into, dict):
                continue  # the scene's own loader reports its bad table
            for k, v in entries.items():
                where = origin.get((table, k))
                if where is not None:
                    problems.append(Problem(shown, f"{table}.{k}", f'"{k}" is also defined in '
                                            f"{where} ({table}.{k}); names must be unique across "
                                            "included files"))
                    continue
                into[k] = v
                origin[(table, k)] = shown
        if "include" in included:
            _walk(included["include"], name=target, display=shown, tree=tree, merged=merged,
                  origin=origin, chain=[*chain, target], problems=problems)
