"""Two ray diagrams on one axes: a scene before and after a change (``tracer diff``).

The solids' sections of both scenes are outlined (OLD dashed, NEW solid) and the traced
rays of each are drawn in one colour per side, opacity and width by log power as in
:mod:`tracer.plot.diagram2d` (:mod:`tracer.plot._rays`), so moved or new ghost paths
stand out where the two colours part.
"""

from __future__ import annotations

import numpy as np

from . import _style
from ._rays import prepare_rays
from ._section import section
from .diagram2d import _detector_trace, _scene_plane

__all__ = ["draw_overlay", "OLD_COLOR", "NEW_COLOR"]

#: Colours of the two sides (a blue and an orange that stay apart for common colour
#: vision deficiencies; common practice, no source).
OLD_COLOR = "#1f6fb4"
NEW_COLOR = "#e07b00"


def draw_overlay(old_scene, old_result, new_scene, new_result, *, ax=None,
                 labels=("old", "new"), min_power: float = 1e-6, plane="xy", at=None,
                 title: str | bool = True, figsize=(6.4, 5.0)):
    """Draw both scenes' sections and rays on one axes.

    Parameters
    ----------
    old_scene, new_scene : tracer.scene.model.Scene
    old_result, new_result : tracer.engine.Result or None
        Traces recorded with ``segments=N``; ``None`` draws the geometry only.
    labels : (str, str)
        Legend names of the two sides.
    min_power : float [1]
        Segments weaker than this fraction of their source ray's power are not drawn.
    plane, at : see :func:`tracer.plot.draw_2d` (the plane is chosen from ``new_scene``).

    Returns
    -------
    matplotlib Figure
    """
    from matplotlib.collections import LineCollection
    from matplotlib.colors import to_rgba
    from matplotlib.lines import Line2D
    from matplotlib.patches import Polygon

    fig, ax = _style.new_axes(ax, figsize=figsize)
    pl = _scene_plane(new_scene, plane, at)
    sides = []
    pts = []
    for scene, result, colour, dashed in ((old_scene, old_result, OLD_COLOR, True),
                                          (new_scene, new_result, NEW_COLOR, False)):
        rays = prepare_rays(result, min_power=min_power)
        loops = []
        for s in scene.solids.values():
            loops.extend(section(s.geometry, pl).loops)
        dets = [_detector_trace(d, pl)[0] for d in scene.detectors.values() if d.kind == "plane"]
        pts.extend(loops)
        pts.extend(dets)
        if len(rays):
            pts += [pl.to2d(rays.start), pl.to2d(rays.end)]
        sides.append((rays, loops, dets, colour, dashed))
    allp = np.vstack(pts) if pts else np.zeros((1, 2))
    lo, hi = allp.min(axis=0), allp.max(axis=0)
    width = float(max(hi[0] - lo[0], hi[1] - lo[1], 1e-9))
    _, scale = _style.length_unit(width)
    with _style.style():
        for rays, loops, dets, colour, dashed in sides:
            ls = (0, (4, 3)) if dashed else "-"
            for loop in loops:
                ax.add_patch(Polygon(loop / scale, closed=True, facecolor="none", edgecolor=colour,
                                     lw=0.9, ls=ls, zorder=2))
            for seg in dets:
                ax.plot(*(seg.T / scale), color=colour, lw=2.0, ls=ls, zorder=3)
            if len(rays):
                lines = np.stack([pl.to2d(rays.start), pl.to2d(rays.end)], axis=1) / scale
                rgba = np.tile(to_rgba(colour), (len(rays), 1))
                rgba[:, 3] = rays.rgba[:, 3]
                ax.add_collection(LineCollection(lines, colors=rgba, linewidths=rays.width,
                                                 linestyles=ls, capstyle="butt", zorder=5))
        pad = 0.06 * width
        ax.set_xlim((lo[0] - pad) / scale, (hi[0] + pad) / scale)
        ax.set_ylim((lo[1] - pad) / scale, (hi[1] + pad) / scale)
        ax.set_aspect("equal")
        ax.set_axis_off()
        _style.add_scale_bar(ax, width, scale=scale, loc="lower left")
        handles = [Line2D([], [], color=OLD_COLOR, lw=1.6, ls=(0, (4, 3)), label=str(labels[0])),
                   Line2D([], [], color=NEW_COLOR, lw=1.6, label=str(labels[1]))]
        ax.legend(handles=handles, loc="upper center", bbox_to_anchor=(0.5, 0.0), ncol=2)
        if title:
            ax.set_title("ray diagrams overlaid" if title is True else str(title))
    return fig
