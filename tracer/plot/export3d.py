"""3D export of a scene and its rays as a binary glTF (GLB) file, through trimesh.

Contents of the file (lengths in metres, the glTF unit):

* one mesh per solid (named after the solid), coloured by its material
  (:func:`tracer.plot.colors.material_colors`) with a semi-transparent, double-sided
  material;
* one thin quad per plane detector (grey, named ``detector <name>``);
* the ray segments above the cut-off: one line set per wavelength (named
  ``rays <wavelength>``, glTF ``LINES`` primitives with vertex colours from
  :func:`tracer.plot.colors.ray_rgb`), or, with ``tubes``, thin cylinders (meshes
  that every viewer draws, at the cost of file size).

The file loads back with ``trimesh.load(path)`` as a ``trimesh.Scene``.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from ._rays import prepare_rays
from .colors import ray_rgb, scene_colors, solid_label, wavelength_label
from .diagram2d import outline_points

__all__ = ["export_glb", "scene_to_trimesh"]

SOLID_OPACITY = 0.45
DETECTOR_RGBA = (0.45, 0.45, 0.45, 0.6)


def _rgba255(color, alpha):
    from .colors import darker

    rgb = darker(color, 1.0)
    return np.array([*(int(round(255 * c)) for c in rgb), int(round(255 * alpha))], dtype=np.uint8)


def _material(rgba255, name):
    from trimesh.visual.material import PBRMaterial

    return PBRMaterial(name=name, baseColorFactor=rgba255, metallicFactor=0.0,
                       roughnessFactor=0.6, alphaMode="BLEND" if rgba255[3] < 255 else "OPAQUE",
                       doubleSided=True)


def scene_to_trimesh(scene, result=None, *, min_power: float = 1e-6, tubes: float | None = None,
                     max_tubes: int = 20000):
    """The scene (and rays) as a ``trimesh.Scene`` (see the module docstring).

    Parameters
    ----------
    scene : tracer.scene.model.Scene
    result : tracer.engine.Result or None
        Traced with ``segments=N`` to include rays.
    min_power : float [1]
        Cut-off relative to the source ray's power.
    tubes : float [m] or None
        Radius of ray tubes; ``None`` writes line primitives.
    max_tubes : int
        Largest number of tube segments (the strongest are kept).

    Returns
    -------
    trimesh.Scene
    """
    import trimesh
    from trimesh.visual import TextureVisuals

    out = trimesh.Scene()
    colors = scene_colors(scene)
    for name, s in scene.solids.items():
        mesh = s.geometry.to_trimesh().copy()
        rgba = _rgba255(colors[solid_label(s)], SOLID_OPACITY)
        mesh.visual = TextureVisuals(material=_material(rgba, s.material_name))
        mesh.metadata["material"] = s.material_name
        out.add_geometry(mesh, geom_name=name, node_name=name)
    for name, d in scene.detectors.items():
        if d.kind != "plane":
            continue
        rim = outline_points(d)
        fan = [[0, i, i + 1] for i in range(1, len(rim) - 1)]  # convex outline: a fan
        quad = trimesh.Trimesh(vertices=rim, faces=fan, process=False)
        rgba = np.array([int(255 * c) for c in DETECTOR_RGBA], dtype=np.uint8)
        quad.visual = TextureVisuals(material=_material(rgba, "detector"))
        out.add_geometry(quad, geom_name=f"detector {name}", node_name=f"detector {name}")
    rays = prepare_rays(result, min_power=min_power)
    if len(rays) == 0:
        return out
    if tubes:
        keep = np.argsort(-rays.level, kind="stable")[:max_tubes]
        parts = []
        for i in keep:
            a, b = rays.start[i], rays.end[i]
            if np.linalg.norm(b - a) <= 0:
                continue
            cyl = trimesh.creation.cylinder(radius=float(tubes), segment=np.array([a, b]), sections=6)
            rgb = (ray_rgb(rays.wavelength[i]) * 255).round().astype(np.uint8)
            cyl.visual.face_colors = np.array([*rgb, 255], dtype=np.uint8)
            parts.append(cyl)
        if parts:
            out.add_geometry(trimesh.util.concatenate(parts), geom_name="rays", node_name="rays")
        return out
    for wl in rays.wavelengths:
        sel = rays.wavelength == wl
        segs = np.stack([rays.start[sel], rays.end[sel]], axis=1)
        segs = segs[np.linalg.norm(segs[:, 1] - segs[:, 0], axis=1) > 0]
        if not len(segs):
            continue
        path = trimesh.load_path(segs)
        rgb = (ray_rgb(wl) * 255).round().astype(np.uint8)
        path.colors = np.tile(np.array([*rgb, 255], dtype=np.uint8), (len(path.entities), 1))
        label = f"rays {wavelength_label(float(wl))}"
        out.add_geometry(path, geom_name=label, node_name=label)
    return out


def export_glb(scene, result=None, path="scene.glb", *, min_power: float = 1e-6,
               tubes: float | None = None) -> Path:
    """Write the scene (solids by material, detectors, rays by wavelength) as a GLB file.

    Parameters
    ----------
    scene : tracer.scene.model.Scene
    result : tracer.engine.Result or None
        Traced with ``segments=N`` to include rays.
    path : str or Path
        Output file (``.glb``).
    min_power : float [1]
        Cut-off relative to the source ray's power.
    tubes : float [m] or None
        Draw rays as cylinders of this radius instead of line primitives.

    Returns
    -------
    Path
        The file written.
    """
    from ..outputs import atomic_write_bytes

    tm = scene_to_trimesh(scene, result, min_power=min_power, tubes=tubes)
    data = tm.export(file_type="glb")
    return atomic_write_bytes(Path(path), data)  # temporary file, then rename
