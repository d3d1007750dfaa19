"""Writing a scene back to TOML (tomli-w).

A loaded scene keeps its (migrated) document; :func:`dump` writes it with the current
``format`` so that loading the text again gives the same scene. :func:`write` also
rewrites relative mesh paths so that they still point at the same files from the new
location.
"""

from __future__ import annotations

import copy
import os
from pathlib import Path

import tomli_w

from .. import __version__
from ..errors import TracerError
from .model import Scene
from .toml_io import FORMAT_VERSION

__all__ = ["dump", "write", "to_document"]

_ORDER = ("format", "title", "dimension", "length_unit", "ambient", "seed", "spectrum", "trace",
          "gap_finding", "materials", "coatings", "solids", "parts", "gaps", "sources", "detectors",
          "requirements", "tolerances")


def to_document(scene: Scene, *, relative_to: str | os.PathLike | None = None) -> dict:
    """The scene's TOML document (a dict), keys in the canonical order.

    ``relative_to``: directory the written file will live in (mesh paths are rewritten
    to stay valid from there).
    """
    if scene.raw is None:
        raise TracerError("this scene has no TOML document to write (it was not made by "
                          "tracer.scene.load/loads)")
    doc = copy.deepcopy(scene.raw)
    doc["format"] = FORMAT_VERSION
    if relative_to is not None:
        old_base = Path(scene.path).resolve().parent if scene.path else Path.cwd()
        new_base = Path(relative_to).resolve()
        for solid in [*(doc.get("solids") or {}).values(), *(doc.get("parts") or {}).values()]:
            if isinstance(solid, dict) and solid.get("kind") == "mesh" and isinstance(solid.get("path"), str):
                p = Path(solid["path"])
                if not p.is_absolute():
                    solid["path"] = Path(os.path.relpath(old_base / p, new_base)).as_posix()
    ordered = {k: doc[k] for k in _ORDER if k in doc}
    ordered.update({k: v for k, v in doc.items() if k not in ordered})
    return ordered


def dump(scene: Scene) -> str:
    """The scene as TOML text; ``loads(dump(scene))`` gives the same scene."""
    header = f"# tracer scene (format {FORMAT_VERSION}), written by tracer {__version__}\n"
    return header + tomli_w.dumps(to_document(scene))


def write(scene: Scene, path: str | os.PathLike) -> None:
    """Write the scene to ``path`` (mesh paths rebased to the new directory)."""
    target = Path(path)
    header = f"# tracer scene (format {FORMAT_VERSION}), written by tracer {__version__}\n"
    text = header + tomli_w.dumps(to_document(scene, relative_to=target.resolve().parent))
    from ..outputs import atomic_write_text

    atomic_write_text(target, text)  # temporary file, then rename: never half-written
