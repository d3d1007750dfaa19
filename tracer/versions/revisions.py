"""Scene specs: a file, or ``REV:path`` -- a scene as committed at a git revision.

``REV:path`` is read with ``git show`` from the repository of the working folder; the
working tree is never changed. ``path`` is relative to the repository root, as git takes
it; ``REV:./path`` is relative to the working folder. Includes of a scene at a revision
are read at the same revision. A spec that names an existing file is that file, even
when it holds a colon.

>>> parse_spec("scenes/plate_ghost.toml").revision is None
True
>>> s = parse_spec("HEAD~1:scenes/plate_ghost.toml")
>>> s.revision, s.path
('HEAD~1', 'scenes/plate_ghost.toml')
"""

from __future__ import annotations

import os
import posixpath
import subprocess
from dataclasses import dataclass
from pathlib import Path

from ..errors import TracerError
from ..scene.problems import Problem, SceneError
from ..scene.toml_io import parse_text
from .includes import FileTree, repository_root, resolve_includes

__all__ = ["SceneSpec", "RevisionTree", "parse_spec", "read_document", "load_spec"]


@dataclass(frozen=True)
class SceneSpec:
    """A scene file (``revision`` None) or a file at a git revision."""

    text: str
    revision: str | None
    path: str

    def __str__(self) -> str:
        return self.text


def parse_spec(text: str) -> SceneSpec:
    """``FILE`` or ``REV:path`` (a file that exists wins)."""
    text = os.fspath(text)
    if os.path.exists(text) or ":" not in text:
        return SceneSpec(text, None, text)
    rev, _, path = text.partition(":")
    if len(rev) == 1 and rev.isalpha() and os.name == "nt":  # C:\... on Windows
        return SceneSpec(text, None, text)
    if not rev or not path:
        raise TracerError(f'"{text}": expected a scene file or REV:path (e.g. HEAD~1:scenes/a.toml)')
    return SceneSpec(text, rev, path)


def _git(args: list[str], cwd) -> bytes:
    try:
        done = subprocess.run(["git", *args], cwd=cwd, capture_output=True, check=False)
    except FileNotFoundError:
        raise TracerError("git is not installed or not on PATH; a REV:path scene needs it") from None
    if done.returncode != 0:
        raise KeyError(done.stderr.decode("utf-8", "replace").strip() or "git failed")
    return done.stdout


class RevisionTree:
    """Files of one git revision; names are POSIX paths relative to the repository root."""

    def __init__(self, revision: str, cwd=None):
        cwd = Path(cwd or Path.cwd())
        try:
            top = _git(["rev-parse", "--show-toplevel"], cwd).decode().strip()
        except KeyError as exc:
            raise TracerError(f"{cwd}: not inside a git repository ({exc}); "
                              "REV:path needs one") from None
        self.root = Path(top).resolve()
        self.revision = revision
        self.cwd = cwd.resolve()
        try:
            _git(["rev-parse", "--verify", "--quiet", f"{revision}^{{commit}}"], self.root)
        except KeyError:
            raise TracerError(f'"{revision}": no such git revision in {self.root}') from None

    def name_of(self, path: str) -> str:
        """Repository-relative name of ``path`` as written after ``REV:``."""
        if path.startswith("./") or path.startswith("../"):
            rel = Path(os.path.relpath(self.cwd / path, self.root)).as_posix()
        else:
            rel = path
        return posixpath.normpath(rel)

    def read(self, name: str) -> bytes:
        return _git(["show", f"{self.revision}:{name}"], self.root)

    def display(self, name: str) -> str:
        return f"{self.revision}:{name}"


def read_document(spec: SceneSpec | str, *, cwd=None) -> tuple[dict, str, Path]:
    """The parsed scene of ``spec`` with its includes merged.

    Returns ``(document, display name, base folder)``; the base folder is where relative
    mesh paths are taken from (the scene's folder in the working tree).

    Raises
    ------
    SceneError
        Unreadable file or revision, TOML syntax, bad includes.
    """
    spec = parse_spec(spec) if isinstance(spec, str) else spec
    if spec.revision is None:
        try:
            data = Path(spec.path).read_bytes()
        except OSError as exc:
            raise SceneError([Problem(spec.path, "", f"cannot read the file: {exc.strerror or exc}")]) from None
        document = parse_text(data, file=spec.path)
        return (resolve_includes(document, file=spec.path), spec.path,
                Path(spec.path).resolve().parent)
    tree = RevisionTree(spec.revision, cwd)
    name = tree.name_of(spec.path)
    if name == ".." or name.startswith("../"):
        raise SceneError([Problem(spec.text, "", "the path lies outside the repository")])
    try:
        data = tree.read(name)
    except KeyError as exc:
        raise SceneError([Problem(spec.text, "", f"cannot read it from git: {exc}")]) from None
    document = parse_text(data, file=spec.text)
    document = resolve_includes(document, file=spec.text, tree=tree, name=name)
    return document, spec.text, (tree.root / posixpath.dirname(name)).resolve()


def load_spec(spec: SceneSpec | str, *, cwd=None):
    """Load and validate the scene of ``spec`` (a file or ``REV:path``).

    Mesh files named by a scene at a revision are read from the working tree.
    """
    from ..scene.loader import from_dict

    document, shown, base = read_document(spec, cwd=cwd)
    return from_dict(document, path=shown, base_dir=base)
