"""Style-preserving edits of scene text: comments, layout and key order are kept.

Programs that change a scene -- ``tracer sweep --write-scenes`` writing one file per
point, a future editor -- edit the TOML text through ``tomlkit`` instead of parsing and
re-serialising it, so that a reviewer's diff of the written file shows only the values
that changed. Key paths are those of :mod:`tracer.sweep.keypath`
(``solids.upper.mate.gap``, ``solids.p.rotation[2]``).

>>> text = '# my prism\\n[solids.p]\\nsize = "20 mm"   # catalogue part\\n'
>>> print(edit_text(text, {"solids.p.size": "21 mm"}), end="")
# my prism
[solids.p]
size = "21 mm"   # catalogue part
"""

from __future__ import annotations

import os
from pathlib import Path

__all__ = ["edit_text", "write_point_scenes"]


def edit_text(text: str, values: dict) -> str:
    """``text`` with each ``{key path: value}`` set, everything else as it was.

    Raises
    ------
    tracer.sweep.keypath.KeyPathError
        A key path that does not name a value of the document.
    """
    import tomlkit

    from ..sweep.keypath import set_value

    doc = tomlkit.parse(text)
    for path, value in values.items():
        old = _get(doc, path)
        set_value(doc, path, value)
        _keep_comment(doc, path, old)
    return tomlkit.dumps(doc)


def _get(doc, path):
    from ..sweep.keypath import get_value
    try:
        return get_value(doc, path)
    except Exception:  # noqa: BLE001 - a new key: nothing to keep
        return None


def _keep_comment(doc, path, old) -> None:
    """Carry an end-of-line comment of the replaced item over to the new one."""
    comment = getattr(getattr(old, "trivia", None), "comment", "")
    if not comment:
        return
    from ..sweep.keypath import parse
    parts = parse(path)
    parent = doc
    for p in parts[:-1]:
        parent = parent[p]
    try:
        item = parent.item(parts[-1]) if hasattr(parent, "item") else parent[parts[-1]]
    except Exception:  # noqa: BLE001 - arrays: tomlkit keeps their own comments
        return
    trivia = getattr(item, "trivia", None)
    if trivia is not None and not trivia.comment:
        trivia.comment_ws = old.trivia.comment_ws
        trivia.comment = comment


def write_point_scenes(scene_file: str | os.PathLike, points: list, folder: str | os.PathLike,
                       *, stem: str | None = None) -> list[Path]:
    """Write one scene file per sweep point (``{key path: value}``), style kept.

    Files are ``STEM-point-NNNN.toml`` in ``folder``; a relative mesh path or include of
    the scene is written so that it still names the same file from ``folder``.
    """
    from ..errors import TracerError

    src = Path(scene_file)
    try:
        text = src.read_text(encoding="utf-8")
    except OSError as exc:
        raise TracerError(f"cannot read {src}: {exc.strerror or exc}") from None
    folder = Path(folder)
    folder.mkdir(parents=True, exist_ok=True)
    rebase = _rebase_values(text, src.resolve().parent, folder.resolve())
    stem = stem or src.stem
    written = []
    for i, point in enumerate(points, start=1):
        target = folder / f"{stem}-point-{i:04d}.toml"
        target.write_text(edit_text(text, {**rebase, **point}), encoding="utf-8")
        written.append(target)
    return written


def _rebase_values(text: str, old_base: Path, new_base: Path) -> dict:
    """Key-path edits that keep relative mesh paths and includes valid from ``new_base``."""
    import tomllib

    doc = tomllib.loads(text)
    out = {}

    def rel(p: str) -> str:
        return Path(os.path.relpath(old_base / p, new_base)).as_posix()

    inc = doc.get("include")
    if isinstance(inc, str) and not os.path.isabs(inc):
        out["include"] = rel(inc)
    elif isinstance(inc, list):
        for i, p in enumerate(inc):
            if isinstance(p, str) and not os.path.isabs(p):
                out[f"include[{i}]"] = rel(p)
    for name, solid in (doc.get("solids") or {}).items():
        if isinstance(solid, dict) and solid.get("kind") == "mesh" and isinstance(solid.get("path"), str) \
                and not os.path.isabs(solid["path"]):
            from ..sweep.keypath import format_path
            out[format_path(("solids", name, "path"))] = rel(solid["path"])
    return out
