"""Files a scene refers to (mesh files, measured BSDF tables): where they may be read from.

Relative paths are taken from the scene file's folder; a file outside that folder tree is
read only with ``allow_outside_files`` (``tracer --allow-outside-files`` or
``TRACER_ALLOW_OUTSIDE_FILES=1``), so that a scene from elsewhere cannot make the tool
read arbitrary files.
"""

from __future__ import annotations

import os
from pathlib import Path

__all__ = ["resolve_scene_file"]


def resolve_scene_file(t, build, key: str, path: str, *, what: str, expected: str):
    """The absolute path of the file named at ``key`` of table ``t``, or ``None`` with the
    problem recorded (outside the folder tree, missing or unreadable).

    ``what`` names the kind of file in messages ("mesh file"), ``expected`` says what it
    should hold.
    """
    base = Path(build.base_dir or Path.cwd())
    file = Path(path)
    if not file.is_absolute():
        file = base / file
    try:
        file = file.resolve()
        inside = file.is_relative_to(base.resolve())
    except (OSError, RuntimeError, ValueError):
        inside, file = False, Path(path)
    if not inside and not build.allow_outside_files:
        t.error(key, f'{what} "{path}" is outside the scene file\'s folder {base} (relative '
                     "paths are taken from that folder; files elsewhere are read only with "
                     "tracer --allow-outside-files or TRACER_ALLOW_OUTSIDE_FILES=1)")
        return None
    if not file.is_file() or not os.access(file, os.R_OK):
        t.error(key, f'{what} "{path}" is missing or unreadable (relative paths are taken from '
                     f"the scene file's folder; expected {expected})")
        return None
    return file
