"""Output files that are never half-written, and the manifest of what a run wrote.

Atomic writes
-------------
Every file tracer writes (JSON, CSV, HTML, PNG/SVG figures, GLB) goes through
:func:`atomic_write_bytes` / :func:`atomic_write_text` / :func:`atomic_savefig`: the data
go to a temporary file in the target's own folder (``.NAME.XXXX.tmp``), are flushed and
synced, and the temporary file is then renamed over the target (``os.replace``, atomic
on POSIX and Windows within one file system). An interrupted or failed run therefore
leaves either the previous complete file or none, never a truncated one that looks
complete; the temporary file is removed on any error (Ctrl-C included).

Run manifest
------------
A command that writes into an output folder (``--out DIR``) records what it wrote in
``DIR/manifest.json`` (:class:`RunManifest`), one entry per command under ``"runs"``
(``run``, ``draw``, ``report``, ...): the scene files and the SHA-256 of their bytes, the
tracer version, the time, ``complete`` (false after a failed or interrupted run) and the
files of this run (relative to the folder) with their sizes. Before writing its entry it
reads the previous one of the same command: files it listed that this run did not write
again are stale (from an earlier run, perhaps of another scene) and are removed. Only
files the old manifest listed are ever deleted: a user's own files and the files of the
other commands are left alone, and a manifest that cannot be read deletes nothing.
"""

from __future__ import annotations

import contextlib
import datetime as _dt
import hashlib
import json
import os
import tempfile
from pathlib import Path

from .errors import TracerError

__all__ = ["atomic_write_bytes", "atomic_write_text", "atomic_savefig", "atomic_target",
           "check_writable_folder", "RunManifest", "MANIFEST_NAME", "file_sha256"]

#: File name of the run manifest inside an output folder.
MANIFEST_NAME = "manifest.json"
#: Format version of the manifest (``"format"`` key).
MANIFEST_FORMAT = 1


def _error(path, exc) -> TracerError:
    return TracerError(f"cannot write {os.fspath(path)}: {getattr(exc, 'strerror', None) or exc}")


@contextlib.contextmanager
def atomic_target(path):
    """Yield a temporary path beside ``path``; on success it is renamed to ``path``.

    For writers that want a file name (``savefig``, exporters). On any exception,
    ``KeyboardInterrupt`` included, the temporary file is removed and ``path`` is left
    as it was. An ``OSError`` becomes a :class:`TracerError` naming ``path``.
    """
    path = Path(path)
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
        fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
        os.close(fd)
    except OSError as exc:
        raise _error(path, exc) from None
    done = False
    try:
        yield Path(tmp)
        _fsync_file(tmp)
        os.replace(tmp, path)
        done = True
    except OSError as exc:
        raise _error(path, exc) from None
    finally:
        if not done:
            with contextlib.suppress(OSError):
                os.unlink(tmp)


def _fsync_file(name) -> None:
    try:
        fd = os.open(name, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(fd)
    except OSError:
        pass
    finally:
        os.close(fd)


def atomic_write_bytes(path, data: bytes) -> Path:
    """Write ``data`` to ``path`` atomically (module docstring); returns the path."""
    path = Path(path)
    with atomic_target(path) as tmp:
        with open(tmp, "wb") as fh:
            fh.write(data)
    return path


def atomic_write_text(path, text: str) -> Path:
    """Write ``text`` as UTF-8 to ``path`` atomically; returns the path."""
    return atomic_write_bytes(path, text.encode("utf-8"))


def atomic_savefig(fig, path, **kwargs) -> Path:
    """``fig.savefig(path, **kwargs)`` through a temporary file; pass ``format=`` (the
    temporary name has no meaningful suffix, so it is taken from ``path`` otherwise)."""
    path = Path(path)
    kwargs.setdefault("format", path.suffix.lstrip(".") or "png")
    with atomic_target(path) as tmp:
        fig.savefig(tmp, **kwargs)
    return path


def check_writable_folder(folder, option: str = "--out") -> Path:
    """Create ``folder`` if needed and prove it writable by creating and removing a
    temporary file in it, before any work; problems are a :class:`TracerError`."""
    p = Path(folder)
    if p.exists() and not p.is_dir():
        raise TracerError(f"{option} {folder}: is a file, not a folder; give a folder name")
    try:
        p.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise TracerError(f"{option} {folder}: cannot create the folder: {exc.strerror or exc}") from None
    try:
        fd, tmp = tempfile.mkstemp(prefix=".tracer-write-test.", dir=p)
        os.close(fd)
        os.unlink(tmp)
    except OSError as exc:
        raise TracerError(f"{option} {folder}: the folder is not writable: {exc.strerror or exc}; "
                          "give a folder you can write to") from None
    return p


def file_sha256(path) -> str | None:
    """SHA-256 (hex) of a file's bytes, ``None`` when it cannot be read."""
    try:
        return hashlib.sha256(Path(path).read_bytes()).hexdigest()
    except OSError:
        return None


class RunManifest:
    """What one run wrote into an output folder (module docstring, "Run manifest").

    >>> import tempfile, pathlib
    >>> d = pathlib.Path(tempfile.mkdtemp())
    >>> m = RunManifest(d, command="run", scene=None)
    >>> _ = m.add(atomic_write_text(d / "a.csv", "x\\n"))
    >>> _ = m.finish()
    >>> sorted(f["path"] for f in json.loads((d / "manifest.json").read_text())["runs"]["run"]["files"])
    ['a.csv']
    """

    def __init__(self, folder, *, command: str, scene=None):
        self.folder = Path(folder)
        self.command = command
        if scene is None:
            scene = []
        elif isinstance(scene, (str, os.PathLike)):
            scene = [scene]
        self.scene_paths = [os.fspath(s) for s in scene]
        self.files: list[Path] = []

    def add(self, *paths) -> list[Path]:
        """Record files of this run (paths or lists of paths); returns them as Paths."""
        out = []
        for p in paths:
            if p is None:
                continue
            if isinstance(p, (list, tuple)):
                out += self.add(*p)
                continue
            p = Path(p)
            if p not in self.files:
                self.files.append(p)
            out.append(p)
        return out

    def _relative(self, p: Path) -> str | None:
        try:
            return Path(os.path.abspath(p)).relative_to(os.path.abspath(self.folder)).as_posix()
        except ValueError:
            return None  # outside the folder (e.g. --json elsewhere): not managed here

    def _read(self) -> dict:
        try:
            doc = json.loads((self.folder / MANIFEST_NAME).read_text(encoding="utf-8"))
        except (OSError, ValueError):
            return {}
        return doc if isinstance(doc, dict) else {}

    def previous_files(self) -> list[str]:
        """Files the folder's manifest lists for an earlier run of this command ([] when
        none or unreadable)."""
        try:
            files = [f["path"] for f in self._read()["runs"][self.command]["files"]]
        except (KeyError, TypeError):
            return []
        return [f for f in files if isinstance(f, str)]

    def finish(self, *, complete: bool = True) -> list[str]:
        """Remove the stale files of the previous run of this command and write the
        manifest (``complete`` False after a failed or interrupted run).

        Returns the relative paths removed.
        """
        from . import __version__

        mine = {}
        for p in self.files:
            rel = self._relative(p)
            if rel is not None and rel != MANIFEST_NAME:
                mine[rel] = p
        removed = []
        root = Path(os.path.abspath(self.folder))
        for rel in self.previous_files():
            if rel in mine or rel == MANIFEST_NAME:
                continue
            target = Path(os.path.abspath(root / rel))
            if root not in target.parents:  # never outside the folder ("../x", absolute)
                continue
            if target.is_file() or target.is_symlink():
                with contextlib.suppress(OSError):
                    target.unlink()
                    removed.append(rel)
        entries = []
        for rel, p in mine.items():
            try:
                size = p.stat().st_size
            except OSError:
                continue
            entries.append({"path": rel, "bytes": size})
        doc = self._read()
        runs = doc.get("runs") if isinstance(doc.get("runs"), dict) else {}
        runs[self.command] = {
            "scenes": [{"path": os.path.abspath(s), "sha256": file_sha256(s)} for s in self.scene_paths],
            "version": __version__,
            "written": _dt.datetime.now(_dt.timezone.utc).isoformat(timespec="seconds"),
            "complete": bool(complete),
            "files": entries,
        }
        doc = {"format": MANIFEST_FORMAT, "tool": "tracer", "runs": runs}
        atomic_write_text(self.folder / MANIFEST_NAME, json.dumps(doc, indent=2) + "\n")
        return removed

    def __enter__(self):
        return self

    def __exit__(self, exc_type, exc, tb):
        # after an error or Ctrl-C: the files written so far, marked incomplete; stale
        # files of the earlier run are removed all the same (they are not current)
        try:
            self.finish(complete=exc_type is None)
        except TracerError:
            if exc_type is None:
                raise
        return False
