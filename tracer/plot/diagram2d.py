"""The 2D ray diagram: a section of the scene with its rays.

:func:`draw_2d` cuts every solid with a drawing plane (the x-y plane for 2D scenes),
fills the cut by material, marks gaps with their thickness and medium, draws plane
detectors as heavy lines and the traced ray segments (projected on the plane) coloured
by wavelength (:mod:`tracer.plot.colors`), with opacity and width by log power and a
cut-off (:mod:`tracer.plot._rays`). One path (a ghost, say) can be highlighted.
"""

from __future__ import annotations

import numpy as np

from . import _style
from ._rays import RaySet, prepare_rays
from ._section import Plane, plane_for, section
from .colors import darker, material_colors, ray_rgb, wavelength_label

__all__ = ["draw_2d", "format_gap"]

SOLID_ALPHA = 0.38
HIGHLIGHT_COLOR = "#222222"
HIGHLIGHT_HALO = 4.5  # [pt]


def format_gap(thickness: float, medium: str) -> str:
    """Gap annotation text: ``"2.0 µm air"``, ``"contact, NOA61"``.

    thickness : float [m]; medium : str

    >>> format_gap(2e-6, "air"), format_gap(0.25e-3, "oil"), format_gap(0.0, "cement")
    ('2.0 µm air', '250 µm oil', 'contact, cement')
    """
    if thickness <= 0:
        return f"contact, {medium}"
    sym, scale = _style.length_unit(thickness)
    if sym == "cm":
        sym, scale = "mm", 1e-3
    v = thickness / scale
    num = f"{v:.1f}" if v < 10 else f"{v:.0f}"
    return f"{num} {sym} {medium}"


def _scene_plane(scene, plane, at) -> Plane:
    if isinstance(plane, Plane):
        return plane
    if at is None:
        if getattr(scene, "dimension", 3) == 2 or not scene.solids:
            at = 0.0
        else:
            lo = np.min([s.geometry.bounds[0] for s in scene.solids.values()], axis=0)
            hi = np.max([s.geometry.bounds[1] for s in scene.solids.values()], axis=0)
            w = np.abs(plane_for(plane).w)
            at = float(((lo + hi) / 2) @ w)
    return plane_for(plane, at)


def _rect_corners(det):
    n = np.asarray(det.normal, float)
    n = n / np.linalg.norm(n)
    x = np.asarray(det.x_axis, float)
    x = x - (x @ n) * n
    x /= np.linalg.norm(x)
    y = np.cross(n, x)
    w, h = det.size
    c = np.asarray(det.position, float)
    return np.array([c - w / 2 * x - h / 2 * y, c + w / 2 * x - h / 2 * y,
                     c + w / 2 * x + h / 2 * y, c - w / 2 * x + h / 2 * y]), n


def _detector_trace(det, plane: Plane):
    """Segment (2, 2) [m] where a plane detector meets the drawing plane, or its outline."""
    corners, n = _rect_corners(det)
    s = plane.depth(corners)
    size = max(det.size) if max(det.size) > 0 else 1.0
    if np.all(np.abs(s) <= 1e-9 * size) or abs(n @ plane.w) > 1 - 1e-9:
        return plane.to2d(corners), True  # in (or parallel to) the plane: outline
    pts = []
    for j in range(4):
        a, b, sa, sb = corners[j], corners[(j + 1) % 4], s[j], s[(j + 1) % 4]
        if abs(sa) <= 1e-12 * size:
            pts.append(a)
        elif sa * sb < 0:
            pts.append(a + (b - a) * sa / (sa - sb))
    if len(pts) < 2:  # misses the plane: draw its projection
        return plane.to2d(corners), True
    p = plane.to2d(np.array(pts))
    d = np.linalg.norm(p[:, None] - p[None], axis=-1)
    i, j = np.unravel_index(d.argmax(), d.shape)
    return np.array([p[i], p[j]]), False


def _add_rays(ax, rays: RaySet, plane: Plane, scale: float, *, zorder=5):
    from matplotlib.collections import LineCollection

    if len(rays) == 0:
        return
    a = plane.to2d(rays.start) / scale
    b = plane.to2d(rays.end) / scale
    lines = np.stack([a, b], axis=1)
    ax.add_collection(LineCollection(lines, colors=rays.rgba, linewidths=rays.width,
                                     capstyle="round", zorder=zorder))
    if rays.highlight.any():
        hl = lines[rays.highlight]
        rgb = ray_rgb(rays.wavelength[rays.highlight])
        # a neutral halo under the path, the path itself in its own colour on top
        ax.add_collection(LineCollection(hl, colors=HIGHLIGHT_COLOR, linewidths=HIGHLIGHT_HALO,
                                         capstyle="round", zorder=zorder + 1, alpha=0.3))
        ax.add_collection(LineCollection(hl, colors=rgb, linewidths=1.4, capstyle="round",
                                         zorder=zorder + 2))


def _legend(ax, scene, rays: RaySet, colors: dict, *, highlight_label=None, ncol=None):
    from matplotlib.lines import Line2D
    from matplotlib.patches import Patch

    handles = [Patch(facecolor=colors[m], edgecolor=darker(colors[m]), alpha=SOLID_ALPHA + 0.1,
                     label=m) for m in colors]
    wls = rays.wavelengths if len(rays) else np.unique(np.concatenate(
        [np.asarray(s.spectrum.wavelengths, float) for s in scene.sources.values()]
        or [np.zeros(0)]))
    for wl in wls[:8]:
        handles.append(Line2D([], [], color=ray_rgb(wl), lw=1.6, label=wavelength_label(wl)))
    if len(wls) > 8:
        handles.append(Line2D([], [], color="none", label=f"+ {len(wls) - 8} more wavelengths"))
    if highlight_label:
        handles.append(Line2D([], [], color=HIGHLIGHT_COLOR, lw=HIGHLIGHT_HALO, alpha=0.3,
                              label=highlight_label))
    if not handles:
        return None
    ncol = ncol or min(len(handles), 5)
    return ax.legend(handles=handles, loc="upper center", bbox_to_anchor=(0.5, 0.0),
                     ncol=ncol, handlelength=1.6, columnspacing=1.2, borderaxespad=0.2)


def _caption(ax, text, legend=None):
    import textwrap

    wrapped = "\n".join(textwrap.wrap(text, 95, subsequent_indent="    "))
    ax.annotate(wrapped, xy=(0.5, 0.0), xycoords=legend if legend is not None else "axes fraction",
                xytext=(0, -4), textcoords="offset points", ha="center", va="top",
                fontsize=6.5, color=_style.FAINT)


def _short_signature(sig: str, limit: int = 70) -> str:
    parts = sig.split(" > ")
    text = " > ".join(p.split(".", 1)[-1] if i else p for i, p in enumerate(parts))
    return text if len(text) <= limit else text[: limit - 1] + "…"


def draw_2d(scene, result=None, *, ax=None, face_labels: bool = False, solid_labels: bool = True,
            gap_labels: bool = True, min_power: float = 1e-6, highlight=None,
            scale_bar: bool = True, legend: bool = True, title: str | bool = True,
            plane: str | Plane = "xy", at: float | None = None, figsize=(6.4, 5.0)):
    """Draw the scene's section with its traced rays.

    Parameters
    ----------
    scene : tracer.scene.model.Scene
    result : tracer.engine.Result or None
        Traced with ``segments=N`` to show rays; ``None`` draws the geometry only.
    ax : matplotlib Axes or None
        Axes to draw in; a new figure when ``None``.
    face_labels : bool
        Write each face's name inside its solid along the cut edge.
    solid_labels : bool
        Write each solid's name at its centre.
    gap_labels : bool
        Annotate each gap with its thickness and medium ("2.0 µm air") and a leader.
    min_power : float [1]
        Segments weaker than this fraction of their source ray's power are not drawn
        (see :mod:`tracer.plot._rays` for the opacity/width mapping).
    highlight : int, str or None
        A path-tree node or a path signature to draw on top with a dark outline.
    scale_bar : bool
        Add a scale bar (nm, µm, mm, cm or m chosen from the drawing's size).
    legend : bool
        Legend of materials, wavelengths and the highlighted path, below the drawing.
    title : str or bool
        Title text; ``True`` uses the scene title; ``False`` none.
    plane : "xy", "xz", "yz" or Plane
        Drawing plane (2D scenes are x-y sections at z = 0).
    at : float [m] or None
        Position of the plane along its normal (default 0 for 2D scenes, the middle of
        the solids for 3D scenes).

    Returns
    -------
    matplotlib Figure
        ``fig.axes[0]`` is the drawing (or ``ax`` when given).

    Notes
    -----
    Solids the plane misses are drawn as the dashed outline of their projection.
    Coordinates are drawn in the unit of the scale bar; axes are hidden.
    """
    from matplotlib.patches import Polygon

    fig, ax = _style.new_axes(ax, figsize=figsize)
    pl = _scene_plane(scene, plane, at)
    colors = material_colors(s.material_name for s in scene.solids.values())
    rays = prepare_rays(result, min_power=min_power, highlight=highlight)

    # extent first: decides the drawing unit
    pts = []
    cuts = {}
    for name, s in scene.solids.items():
        sec = section(s.geometry, pl)
        cuts[name] = sec
        if sec.loops:
            pts.extend(sec.loops)
        else:
            pts.append(pl.to2d(np.vstack(s.geometry.face_polygons)))
    dets = {}
    for name, d in scene.detectors.items():
        if d.kind == "plane":
            dets[name] = _detector_trace(d, pl)
            pts.append(dets[name][0])
    if len(rays):
        pts.append(pl.to2d(rays.start))
        pts.append(pl.to2d(rays.end))
    allp = np.vstack(pts) if pts else np.zeros((1, 2))
    lo, hi = allp.min(axis=0), allp.max(axis=0)
    width = float(max(hi[0] - lo[0], hi[1] - lo[1], 1e-9))
    _, scale = _style.length_unit(width)
    with _style.style():
        solid_xy = []
        for name, s in scene.solids.items():
            col = colors[s.material_name]
            sec = cuts[name]
            if sec.loops:
                for loop in sec.loops:
                    ax.add_patch(Polygon(loop / scale, closed=True, facecolor=col,
                                         alpha=SOLID_ALPHA, edgecolor="none", zorder=1))
                    ax.add_patch(Polygon(loop / scale, closed=True, facecolor="none",
                                         edgecolor=darker(col), lw=0.9, zorder=2))
                big = max(sec.loops, key=lambda lp: _area(lp))
                solid_xy.append((name, _centroid(big), big))
            else:
                from shapely.geometry import MultiPoint

                hull = MultiPoint(pl.to2d(np.vstack(s.geometry.face_polygons))).convex_hull
                if hull.geom_type == "Polygon":
                    xy = np.asarray(hull.exterior.coords)[:-1]
                    ax.add_patch(Polygon(xy / scale, closed=True, facecolor="none",
                                         edgecolor=darker(col), lw=0.8, ls=(0, (4, 3)), zorder=2))
            if face_labels and sec.edges:
                for p0, p1, face, n2 in sec.edges:
                    _face_label(ax, p0 / scale, p1 / scale, n2, face)
        if solid_labels:
            for name, c, loop in solid_xy:
                ax.text(c[0] / scale, c[1] / scale, name, ha="center", va="center", fontsize=7.5,
                        color=_style.INK, zorder=12, style="italic",
                        bbox=dict(boxstyle="round,pad=0.15", fc="white", ec="none", alpha=0.6))
        centre = (lo + hi) / 2
        if gap_labels:
            for g in scene.gaps.values():
                _gap_label(ax, g, cuts, centre, scale, width)
        for name, (seg, outline) in dets.items():
            if outline:
                ax.add_patch(Polygon(seg / scale, closed=True, facecolor="none",
                                     edgecolor=_style.INK, lw=0.9, ls=(0, (2, 2)), zorder=8))
                ax.text(*(seg.mean(axis=0) / scale), name, fontsize=7, color=_style.INK,
                        ha="center", va="center", zorder=12)
            else:
                ax.plot(*(seg.T / scale), color=_style.INK, lw=2.4, solid_capstyle="butt", zorder=8)
                d = scene.detectors[name]
                n2 = pl.to2d(pl.origin + np.asarray(d.normal, float))
                n2 = n2 / max(np.linalg.norm(n2), 1e-300)
                _end_label(ax, seg / scale, -n2, name)
        _add_rays(ax, rays, pl, scale)
        pad = 0.06 * width
        ax.set_xlim((lo[0] - pad) / scale, (hi[0] + pad) / scale)
        ax.set_ylim((lo[1] - pad) / scale, (hi[1] + pad) / scale)
        ax.set_aspect("equal")
        ax.set_axis_off()
        if scale_bar:
            _style.add_scale_bar(ax, width, scale=scale, loc="lower left")
        hl_label = None
        if highlight is not None and rays.highlight.any():
            hl_label = "highlighted path (one ray)"
        if legend:
            leg = _legend(ax, scene, rays, colors, highlight_label=hl_label)
            if hl_label and isinstance(highlight, str):
                _caption(ax, "highlighted: " + _short_signature(highlight, 400), leg)
        if title:
            ax.set_title(scene.title if title is True else str(title), loc="left")
    return fig


def _area(loop):
    x, y = loop[:, 0], loop[:, 1]
    return 0.5 * abs(np.dot(x, np.roll(y, -1)) - np.dot(y, np.roll(x, -1)))


def _centroid(loop):
    from shapely.geometry import Polygon as SPoly

    p = SPoly(loop)
    c = p.representative_point() if not p.is_valid else p.centroid
    if not p.contains(c):
        c = p.representative_point()
    return np.array([c.x, c.y])


def _upright(angle_deg):
    a = (angle_deg + 180) % 360 - 180
    if a > 90:
        a -= 180
    elif a <= -90:
        a += 180
    return a


def _face_label(ax, p0, p1, n2, face):
    mid = (p0 + p1) / 2
    d = p1 - p0
    ang = _upright(np.degrees(np.arctan2(d[1], d[0])))
    off = -np.asarray(n2) * 8.0  # points, inwards
    ax.annotate(face, xy=mid, xytext=off, textcoords="offset points", ha="center", va="center",
                rotation=ang, rotation_mode="anchor", fontsize=6, color=_style.FAINT, zorder=11,
                bbox=dict(boxstyle="round,pad=0.1", fc="white", ec="none", alpha=0.65))


def _end_label(ax, seg, direction, text):
    """Label beside a detector line, on the side ``direction`` (in-plane unit vector)."""
    mid = seg.mean(axis=0)
    d = np.asarray(direction, float)
    off = d * 5
    ha = "left" if d[0] > 0.5 else ("right" if d[0] < -0.5 else "center")
    va = "bottom" if d[1] > 0.5 else ("top" if d[1] < -0.5 else "center")
    ax.annotate(text, xy=mid, xytext=off, textcoords="offset points", ha=ha, va=va,
                fontsize=7, color=_style.INK, zorder=12)


def _gap_label(ax, gap, cuts, centre, scale, width):
    edges = [e for e in cuts.get(gap.solid_a, ()).edges if e[2] == gap.face_a] if gap.solid_a in cuts else []
    if not edges:
        return
    p0, p1, _, n2 = max(edges, key=lambda e: np.linalg.norm(e[1] - e[0]))
    if np.linalg.norm(p1 - centre) < np.linalg.norm(p0 - centre):
        p0, p1 = p1, p0
    t = (p1 - p0) / max(np.linalg.norm(p1 - p0), 1e-300)
    target = p0 + 0.85 * (p1 - p0)  # leader ends on the gap, near its outer end
    text_at = p1 + t * 0.09 * width + np.asarray(n2) * 0.04 * width
    off = text_at - target
    ha = "left" if off[0] > 0.02 * width else ("right" if off[0] < -0.02 * width else "center")
    ax.annotate(format_gap(gap.thickness, gap.medium_name), xy=target / scale,
                xytext=text_at / scale, textcoords="data", ha=ha, va="center", fontsize=7,
                color=_style.GAP_INK, zorder=13,
                arrowprops=dict(arrowstyle="-", color=_style.GAP_INK, lw=0.6,
                                shrinkA=1, shrinkB=0))
