"""Figures and 3D export of scenes and traces.

Importing :mod:`tracer.plot` does not import matplotlib: each function loads its module
(and matplotlib, Agg backend) on first use. Every figure function takes ``ax=None``
(a new figure when ``None``) and returns the matplotlib Figure; :func:`save` writes
SVG and PNG.

============================  =====================================================
function                      draws
============================  =====================================================
:func:`draw_2d`               section of the scene with rays, gaps, detectors
:func:`draw_view`             one orthographic view (top, front, side, isometric)
:func:`draw_3d_views`         the three orthographic views and the isometric view
:func:`export_glb`            solids, detectors and rays as a GLB file (trimesh)
:func:`irradiance_map`        detector irradiance [W/m²], linear or log
:func:`line_profile`          irradiance through the power centroid
:func:`stokes_maps`           S1/S0, S2/S0, S3/S0 maps
:func:`far_field_map`         escaping radiant intensity [W/sr] by direction
:func:`budget_figure`         power budget bars by account
:func:`scatter_figure`        where a detector's scattered light comes from
:func:`draw_overlay`          two ray diagrams on one axes (a scene before and after)
:func:`save`                  write a figure as SVG and PNG
============================  =====================================================

Colours (:mod:`tracer.plot.colors`): rays by wavelength (CIE 1931 colour matching in
the visible, documented false colours outside it), solids by material; the same
wavelength or material has the same colour in every figure.
"""

from __future__ import annotations

import importlib

__all__ = [
    "draw_2d",
    "draw_view",
    "draw_3d_views",
    "export_glb",
    "scene_to_trimesh",
    "irradiance_map",
    "irradiance_data",
    "line_profile",
    "stokes_maps",
    "far_field_map",
    "far_field_data",
    "budget_figure",
    "scatter_figure",
    "draw_overlay",
    "save",
    "wavelength_to_rgb",
    "ray_rgb",
    "material_color",
    "material_colors",
]

_WHERE = {
    "draw_2d": "diagram2d",
    "draw_view": "diagram3d",
    "draw_3d_views": "diagram3d",
    "export_glb": "export3d",
    "scene_to_trimesh": "export3d",
    "irradiance_map": "maps",
    "irradiance_data": "maps",
    "line_profile": "maps",
    "stokes_maps": "maps",
    "far_field_map": "maps",
    "far_field_data": "maps",
    "budget_figure": "budget",
    "scatter_figure": "scatter_view",
    "draw_overlay": "overlay",
    "save": "_style",
    "wavelength_to_rgb": "colors",
    "ray_rgb": "colors",
    "material_color": "colors",
    "material_colors": "colors",
}


def __getattr__(name):
    if name in _WHERE:
        return getattr(importlib.import_module(f"{__name__}.{_WHERE[name]}"), name)
    raise AttributeError(f"module 'tracer.plot' has no attribute {name!r}")


def __dir__():
    return sorted(list(globals()) + __all__)
