"""Orthographic views of a 3D scene with its rays: top, front, side and isometric.

Every view is an orthographic projection along a viewing direction: the solids' faces
that face the viewer are filled by material (semi-transparent, farther faces first),
faces turned away are outlined with faint dashed lines (hidden edges), plane detectors
are grey rectangles, and ray segments are projected with the colours, opacities and
widths of :mod:`tracer.plot._rays`.

Views (the viewer looks along ``-w``; ``u`` is drawn to the right, ``v`` upwards):

==========  =====================  =============
view        looking                u, v
==========  =====================  =============
top         down, along -z         x, y
front       along +y               x, z
side        along -x               y, z
isometric   along -(1, -1, 1)/√3   right, up
==========  =====================  =============

The four views of :func:`draw_3d_views` share one drawing scale, so lengths compare
between them.
"""

from __future__ import annotations

import numpy as np

from . import _style
from ._rays import prepare_rays
from ._section import Plane
from .colors import darker, scene_colors, solid_label
from .diagram2d import (SOLID_ALPHA, _add_rays, _caption, _legend, _rect_corners,
                        _short_signature, outline_points)

__all__ = ["draw_view", "draw_3d_views", "view_plane", "VIEWS"]

_E = np.eye(3)
#: name -> (u, v) of the view (w = u x v points to the viewer).
VIEWS = {
    "top": (_E[0], _E[1]),
    "front": (_E[0], _E[2]),
    "side": (_E[1], _E[2]),
}

_TITLES = {"top": "top (x–y)", "front": "front (x–z)", "side": "side (y–z)",
           "isometric": "isometric"}


def view_plane(view, origin=None) -> Plane:
    """Projection plane of a view.

    Parameters
    ----------
    view : "top", "front", "side", "isometric" or (3,) viewing direction
        A direction is where the viewer looks (from the eye into the scene).
    origin : (3,) [m] or None

    >>> p = view_plane("isometric")
    >>> [round(float(c), 3) for c in p.w]   # towards the viewer
    [0.577, -0.577, 0.577]
    """
    o = np.zeros(3) if origin is None else np.asarray(origin, float)
    if isinstance(view, str):
        if view in VIEWS:
            u, v = VIEWS[view]
            return Plane(o, u.copy(), v.copy())
        if view in ("isometric", "iso"):
            view = -np.array([1.0, -1.0, 1.0])
        else:
            from tracer.errors import TracerError

            raise TracerError(f"unknown view {view!r}; expected top, front, side, isometric "
                              "or a viewing direction (x, y, z)")
    look = np.asarray(view, float)
    look = look / np.linalg.norm(look)
    up = _E[2] if abs(look[2]) < 0.99 else _E[1]
    u = np.cross(look, up)
    u /= np.linalg.norm(u)
    v = np.cross(u, look)
    return Plane(o, u, v)


def _scene_points(scene, rays):
    pts = [np.vstack(s.geometry.face_polygons) for s in scene.solids.values()]
    for d in scene.detectors.values():
        if d.kind == "plane":
            pts.append(_rect_corners(d)[0])
    if len(rays):
        pts += [rays.start, rays.end]
    return np.vstack(pts) if pts else np.zeros((1, 3))


def _face_rings(geometry, plane: Plane, scale):
    """Per face: (depth, facing, rings) with rings a list of (k, 2) outlines in drawing
    units, the first the outside; a mesh face with a hole (a tube's end, a baffle's plate)
    gets its hole as a further ring, from the union of its triangles."""
    polys = [np.asarray(p, float) for p in geometry.face_polygons]
    normals = np.asarray(geometry.face_normals, float)
    holes = {}
    if not getattr(geometry, "is_convex", True):
        from shapely.geometry import Polygon as ShapelyPolygon
        from shapely.ops import unary_union

        verts, tris, tface = geometry.triangles()
        verts = np.asarray(verts, float)
        for f in range(len(polys)):
            if abs(normals[f] @ plane.w) < 1e-9:
                continue
            tri = [ShapelyPolygon(plane.to2d(verts[t]) / scale)
                   for t in np.asarray(tris)[np.asarray(tface) == f]]
            shape = unary_union([t.buffer(0) for t in tri if t.area > 0])
            if shape.geom_type == "Polygon" and len(shape.interiors):
                holes[f] = [np.asarray(r.coords)[:-1] for r in shape.interiors]
    out = []
    for f, (poly, n) in enumerate(zip(polys, normals)):
        out.append((float(plane.depth(poly).mean()), float(n @ plane.w),
                    [plane.to2d(poly) / scale] + holes.get(f, [])))
    return out


def _ring_patch(rings, **kw):
    """One patch of an outline with holes (even-odd fill)."""
    from matplotlib.patches import PathPatch
    from matplotlib.path import Path

    verts, codes = [], []
    for r in rings:
        verts.extend(list(r) + [r[0]])
        codes.extend([Path.MOVETO] + [Path.LINETO] * (len(r) - 1) + [Path.CLOSEPOLY])
    return PathPatch(Path(np.asarray(verts), codes), **kw)


def _draw_solids(ax, scene, plane: Plane, colors, scale):
    faces = []
    for s in scene.solids.values():
        col = colors[solid_label(s)]
        for depth, facing, rings in _face_rings(s.geometry, plane, scale):
            faces.append((depth, facing, rings, col))
    faces.sort(key=lambda f: f[0])
    for depth, facing, rings, col in faces:
        if facing < -1e-9:
            ax.add_patch(_ring_patch(rings, facecolor="none", edgecolor=darker(col),
                                     lw=0.5, ls=(0, (3, 2)), alpha=0.45, zorder=1))
    for depth, facing, rings, col in faces:
        if facing > 1e-9:
            ax.add_patch(_ring_patch(rings, facecolor=col, alpha=SOLID_ALPHA * 0.7,
                                     edgecolor="none", zorder=2))
            ax.add_patch(_ring_patch(rings, facecolor="none", edgecolor=darker(col),
                                     lw=0.8, zorder=3))


def _draw_detectors(ax, scene, plane: Plane, scale):
    from matplotlib.patches import Polygon

    for name, d in scene.detectors.items():
        if d.kind != "plane":
            continue
        xy = plane.to2d(outline_points(d)) / scale
        ax.add_patch(Polygon(xy, closed=True, facecolor="#9a9a9a", alpha=0.18, edgecolor="none",
                             zorder=7))
        ax.add_patch(Polygon(xy, closed=True, facecolor="none", edgecolor=_style.INK, lw=1.1,
                             zorder=8))
        span = np.ptp(xy, axis=0)
        c = xy.mean(axis=0)
        if span.max() < 1e-12:
            continue
        if span[0] >= span[1]:  # wide: label above
            ax.annotate(name, xy=(c[0], xy[:, 1].max()), xytext=(0, 3), textcoords="offset points",
                        ha="center", va="bottom", fontsize=6.5, color=_style.INK, zorder=12)
        else:
            ax.annotate(name, xy=(xy[:, 0].max(), c[1]), xytext=(3, 0), textcoords="offset points",
                        ha="left", va="center", fontsize=6.5, color=_style.INK, zorder=12)


def _triad(ax, plane: Plane):
    """Small axis cross in the lower right corner (axes-fraction coordinates)."""
    o = np.array([0.9, 0.1])
    for k, name in enumerate("xyz"):
        d = np.array([_E[k] @ plane.u, _E[k] @ plane.v])
        if np.linalg.norm(d) < 0.2:
            continue
        tip = o + 0.07 * d
        ax.annotate("", xy=tip, xytext=o, xycoords="axes fraction",
                    arrowprops=dict(arrowstyle="-|>", color=_style.FAINT, lw=0.6,
                                    mutation_scale=6, shrinkA=0, shrinkB=0))
        ax.annotate(name, xy=o + 0.1 * d, xycoords="axes fraction", ha="center", va="center",
                    fontsize=6.5, color=_style.FAINT)


def draw_view(scene, result=None, *, view="isometric", ax=None, min_power: float = 1e-6,
              highlight=None, scale_bar: bool = True, legend: bool = True,
              title: str | bool = True, span: float | None = None, rays=None,
              figsize=(5.0, 4.6)):
    """One orthographic view of the scene and its rays.

    Parameters
    ----------
    scene : tracer.scene.model.Scene
    result : tracer.engine.Result or None
        Traced with ``segments=N`` to show rays.
    view : "top", "front", "side", "isometric" or (3,) viewing direction
        See the module docstring.
    ax : matplotlib Axes or None
    min_power : float [1]
        Cut-off relative to the source ray's power.
    highlight : int, str or None
        Path-tree node or path signature; one ray of it is drawn with a halo.
    scale_bar, legend : bool
    title : str or bool
        ``True``: the view's name.
    span : float or (float, float) [m] or None
        Width and height of the drawing window (default: the content plus a margin);
        views given the same span share one scale.
    rays : RaySet or None
        Already prepared rays (internal reuse; default from ``result``).

    Returns
    -------
    matplotlib Figure
    """
    fig, ax = _style.new_axes(ax, figsize=figsize)
    plane = view_plane(view)
    colors = scene_colors(scene)
    if rays is None:
        rays = prepare_rays(result, min_power=min_power, highlight=highlight)
    pts = _scene_points(scene, rays)
    xy = plane.to2d(pts)
    lo, hi = xy.min(axis=0), xy.max(axis=0)
    extent = float(max(np.max(hi - lo), 1e-9))
    if span is None:
        sx = sy = extent * 1.08
    else:
        sx, sy = (float(span), float(span)) if np.isscalar(span) else (float(span[0]), float(span[1]))
    full = max(sx, sy)
    _, scale = _style.length_unit(full)
    with _style.style():
        _draw_solids(ax, scene, plane, colors, scale)
        _draw_detectors(ax, scene, plane, scale)
        _add_rays(ax, rays, plane, scale)
        c = (lo + hi) / 2
        ax.set_xlim((c[0] - sx / 2) / scale, (c[0] + sx / 2) / scale)
        ax.set_ylim((c[1] - sy / 2) / scale, (c[1] + sy / 2) / scale)
        ax.set_aspect("equal")
        ax.set_axis_off()
        _triad(ax, plane)
        if scale_bar:
            _style.add_scale_bar(ax, full, scale=scale, loc="lower left", fraction=0.2)
        if title:
            name = view if isinstance(view, str) else "view"
            ax.set_title(_TITLES.get(name, str(name)) if title is True else str(title),
                         loc="left", fontsize=9, color=_style.INK)
        if legend:
            _legend(ax, scene, rays, colors,
                    highlight_label="highlighted path (one ray)" if rays.highlight.any() else None)
    return fig


def draw_3d_views(scene, result=None, *, min_power: float = 1e-6, highlight=None,
                  title: str | bool = True, figsize=(8.6, 8.4)):
    """Top, front and side views and an isometric view in one figure (2 x 2).

    Layout: top view above the front view, side view to the right of the front view,
    isometric view top right; all four at one scale.

    Parameters
    ----------
    scene : tracer.scene.model.Scene
    result : tracer.engine.Result or None
    min_power : float [1]
        Cut-off relative to the source ray's power.
    highlight : int, str or None
        Path-tree node or path signature to highlight (one ray, with a halo).
    title : str or bool
        Figure title; ``True`` uses the scene title.

    Returns
    -------
    matplotlib Figure
        Axes in the order top, isometric, front, side.
    """
    plt = _style.pyplot()
    rays = prepare_rays(result, min_power=min_power, highlight=highlight)
    pts = _scene_points(scene, rays)
    order = ("top", "isometric", "front", "side")
    ext = {v: np.ptp(view_plane(v).to2d(pts), axis=0) for v in order}
    big = max(max(float(e.max()) for e in ext.values()), 1e-9)
    ext = {v: np.maximum(e, 0.3 * big) * 1.12 + 0.12 * big for v, e in ext.items()}  # margins, no slivers
    widths = [max(ext["top"][0], ext["front"][0]), max(ext["isometric"][0], ext["side"][0])]
    heights = [max(ext["top"][1], ext["isometric"][1]), max(ext["front"][1], ext["side"][1])]
    fig_w = figsize[0]
    k = 0.94 * fig_w / sum(widths)  # inches per metre: one scale for all four views
    fig_h = float(np.clip(k * sum(heights) * 1.12 + 1.3, 4.0, figsize[1] * 1.4))
    with _style.style():
        fig, axes = plt.subplots(2, 2, figsize=(fig_w, fig_h),
                                 gridspec_kw=dict(wspace=0.04, hspace=0.12, width_ratios=widths,
                                                  height_ratios=heights))
        cells = {"top": (0, 0), "isometric": (0, 1), "front": (1, 0), "side": (1, 1)}
        for v in order:
            r, c = cells[v]
            draw_view(scene, None, view=v, ax=axes[r, c], rays=rays,
                      span=(widths[c], heights[r]), legend=False, scale_bar=True)
        colors = scene_colors(scene)
        leg_ax = axes[1, 0]
        hl = rays.highlight.any()
        leg = _legend(leg_ax, scene, rays, colors,
                      highlight_label="highlighted path (one ray)" if hl else None, ncol=5)
        if leg is not None:
            leg.remove()
            fig.legend(handles=leg.legend_handles, loc="lower center", ncol=min(5, len(leg.legend_handles)),
                       bbox_to_anchor=(0.5, 0.25 / fig_h), frameon=False, handlelength=1.6)
        if hl and isinstance(highlight, str):
            fig.text(0.5, 0.005, "highlighted: " + _short_signature(highlight, 160), ha="center",
                     va="bottom", fontsize=6.5, color=_style.FAINT, wrap=True)
        if title:
            fig.suptitle(scene.title if title is True else str(title), x=0.05, ha="left",
                         fontweight="bold", fontsize=11, y=1 - 0.12 / fig_h)
        fig.subplots_adjust(left=0.02, right=0.98, top=1 - 0.55 / fig_h, bottom=0.75 / fig_h)
    return fig
