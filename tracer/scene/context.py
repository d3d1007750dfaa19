"""State shared by the section builders while one scene is loaded."""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from .problems import Problems, did_you_mean
from .quantities import SceneUnits

__all__ = ["Build", "split_face_ref", "resolve_face"]


@dataclass
class Build:
    """Everything a section builder needs: problems, units, and what was built so far.

    Attributes
    ----------
    problems : Problems
    units : SceneUnits
    dimension : 2 or 3
    base_dir : Path or None
        Directory that relative paths (meshes) are taken from.
    allow_outside_files : bool
        Whether mesh files outside ``base_dir``'s folder tree may be read.
    materials : dict[str, Any]
        Scene-local index models by name (``[materials.NAME]``).
    coatings : dict[str, FaceTreatment]
        Face treatments by coating name (built-ins included).
    solids : dict[str, SolidSpec]
        Solids built so far.
    ambient_name : str
    """

    problems: Problems
    units: SceneUnits
    dimension: int = 3
    base_dir: Path | None = None
    allow_outside_files: bool = False  # mesh files outside base_dir's folder tree
    materials: dict[str, Any] = field(default_factory=dict)
    material_keys: set[str] = field(default_factory=set)  # names defined but broken
    coatings: dict[str, Any] = field(default_factory=dict)
    coating_keys: set[str] = field(default_factory=set)
    solids: dict[str, Any] = field(default_factory=dict)
    solid_keys: set[str] = field(default_factory=set)  # names declared (built or not)
    part_keys: set[str] = field(default_factory=set)  # the [parts.NAME] among them

    def solid_key(self, name: str) -> str:
        """Key path of solid or part ``name`` (``solids.NAME`` or ``parts.NAME``)."""
        return f"{'parts' if name in self.part_keys else 'solids'}.{name}"
    ambient: Any = None
    ambient_name: str = "air"
    spectrum: Any = None
    gaps: dict[str, Any] = field(default_factory=dict)
    gap_keys: set[str] = field(default_factory=set)
    mate_gap_keys: set[str] = field(default_factory=set)  # gap names of every mate table
    detectors: dict[str, Any] = field(default_factory=dict)
    detector_keys: set[str] = field(default_factory=set)


def split_face_ref(text: str) -> tuple[str, str] | None:
    """Split ``"solid.face"`` into ``(solid, face)``; ``None`` when malformed.

    >>> split_face_ref("upper.hypotenuse")
    ('upper', 'hypotenuse')
    >>> split_face_ref("upper") is None
    True
    """
    if not isinstance(text, str) or text.count(".") != 1:
        return None
    solid, face = text.split(".")
    if not solid or not face:
        return None
    return solid, face


def resolve_face(t, key: str, ref, build: Build):
    """(solid name, face name, face index) of a ``"solid.face"`` string, or ``None``.

    Problems (malformed reference, unknown solid or face) are reported on table ``t``
    (a :class:`tracer.scene.reader.Table`) at ``key``; a solid that was declared but not
    built has its own problems already and gives ``None`` silently.
    """
    parts = split_face_ref(ref)
    if parts is None:
        t.error(key, f'expected "solid.face", got {ref!r}')
        return None
    solid, face = parts
    if solid not in build.solid_keys:
        t.error(key, f'unknown solid "{solid}"' + did_you_mean(solid, build.solid_keys))
        return None
    spec = build.solids.get(solid)
    if spec is None:  # the solid has its own problems, already reported
        return None
    names = list(spec.geometry.face_names)
    if face not in names:
        t.error(key, f'solid "{solid}" has no face "{face}"' + did_you_mean(face, names))
        return None
    return solid, face, names.index(face)
