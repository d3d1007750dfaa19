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
from .colors import darker, ray_rgb, scene_colors, solid_label, wavelength_label

__all__ = ["draw_2d", "format_gap"]

SOLID_ALPHA = 0.38
HIGHLIGHT_COLOR = "#222222"
HIGHLIGHT_HALO = 4.5  # [pt]


#: Dash length [pt] of each wavelength's share of a path drawn in several wavelengths.
RAY_DASH = 4.0


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


def outline_points(det, sides: int = 48) -> np.ndarray:
    """Outline (k, 3) [m] of a plane detector: its four corners, or a circle of ``sides``
    points for a round one."""
    corners, n = _rect_corners(det)
    if getattr(det, "outline", "rectangle") != "circle":
        return corners
    c = np.asarray(det.position, float)
    x = (corners[1] - corners[0]) / 2
    y = (corners[3] - corners[0]) / 2
    phi = 2 * np.pi * np.arange(sides) / sides
    return c + np.cos(phi)[:, None] * x + np.sin(phi)[:, None] * y


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


def _concat_rays(sets) -> RaySet:
    """One RaySet of several (for extents and label placement)."""
    import dataclasses

    fields = [f.name for f in dataclasses.fields(RaySet)]
    return RaySet(**{f: np.concatenate([getattr(s, f) for s in sets]) for f in fields})


def _add_rays(ax, rays: RaySet, plane: Plane, scale: float, *, zorder=5):
    from matplotlib.collections import LineCollection

    if len(rays) == 0:
        return
    a = plane.to2d(rays.start) / scale
    b = plane.to2d(rays.end) / scale
    lines = np.stack([a, b], axis=1)
    waves = np.unique(rays.wavelength)
    if len(waves) == 1:
        ax.add_collection(LineCollection(lines, colors=rays.rgba, linewidths=rays.width,
                                         capstyle="round", zorder=zorder))
    else:
        # Several wavelengths often share one geometric path (flat faces, no dispersion worth
        # seeing): each wavelength is drawn as interleaved dashes, so every colour stays
        # visible where the paths coincide instead of the last one drawn hiding the others.
        k = len(waves)
        for i, wl in enumerate(waves):
            sel = rays.wavelength == wl
            ax.add_collection(LineCollection(
                lines[sel], colors=rays.rgba[sel], linewidths=rays.width[sel], capstyle="butt",
                linestyles=[(i * RAY_DASH, (RAY_DASH, (k - 1) * RAY_DASH))], zorder=zorder))
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
            plane: str | Plane = "xy", at: float | None = None, figsize=(6.4, 5.0),
            rays=None):
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
    rays : RaySet, list of RaySet, or None
        Rays already prepared (drawn in the order given, each with its own colours)
        instead of those of ``result``.

    Returns
    -------
    matplotlib Figure
        ``fig.axes[0]`` is the drawing (or ``ax`` when given).

    Notes
    -----
    Solids the plane misses are drawn as the dashed outline of their projection.
    Coordinates are drawn in the unit of the scale bar; axes are hidden. The axes keep
    that unit as ``ax.drawing_unit`` (name, metres per unit) and the drawing plane as
    ``ax.drawing_plane``, so that callers can add to the drawing.
    """
    from matplotlib.patches import Polygon

    fig, ax = _style.new_axes(ax, figsize=figsize)
    pl = _scene_plane(scene, plane, at)
    colors = scene_colors(scene)
    ray_sets = None
    if rays is not None:
        ray_sets = list(rays) if isinstance(rays, (list, tuple)) else [rays]
        rays = _concat_rays(ray_sets)
    else:
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
    unit, scale = _style.length_unit(width)
    ax.drawing_unit = (unit, scale)
    ax.drawing_plane = pl
    with _style.style():
        solid_xy = []
        for name, s in scene.solids.items():
            col = colors[solid_label(s)]
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
        centre = (lo + hi) / 2
        gap_faces = set()
        if gap_labels:
            for g in scene.gaps.values():
                if _gap_label(ax, g, cuts, centre, scale, width, faces=face_labels):
                    gap_faces |= {(g.solid_a, g.face_a), (g.solid_b, g.face_b)}
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
        for rs in (ray_sets or [rays]):
            _add_rays(ax, rs, pl, scale)
        pad = 0.06 * width
        ax.set_xlim((lo[0] - pad) / scale, (hi[0] + pad) / scale)
        ax.set_ylim((lo[1] - pad) / scale, (hi[1] + pad) / scale)
        ax.set_aspect("equal")
        ax.set_axis_off()
        if face_labels or solid_labels:
            ax.apply_aspect()
            axes_pt = ax.get_position().width * fig.get_size_inches()[0] * 72
            span = (ax.get_xlim()[1] - ax.get_xlim()[0]) * scale
            placer = _LabelPlacer(rays, pl, width, [], metres_per_point=span / max(axes_pt, 1.0))
            if solid_labels:
                for name, c, loop in solid_xy:
                    at = placer.place_inside(loop, c, name)
                    ax.text(at[0] / scale, at[1] / scale, name, ha="center", va="center",
                            fontsize=7.5, color=_style.INK, zorder=12, style="italic",
                            bbox=dict(boxstyle="round,pad=0.15", fc="white", ec="none", alpha=0.6))
            if face_labels:
                # longest edges first: where room is short, the short faces go unlabelled;
                # the two faces of a gap are named in the gap's note instead
                edges = [(name, e) for name in scene.solids for e in cuts[name].edges
                         if not (gap_labels and (name, e[2]) in gap_faces)]
                edges.sort(key=lambda ne: -float(np.linalg.norm(ne[1][1] - ne[1][0])))
                for _, (p0, p1, face, n2) in edges:
                    spot = placer.place(p0, p1, n2, face)
                    if spot is not None:
                        _face_label(ax, spot[0] / scale, spot[1], face)
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
            ax.set_title(scene.title if title is True else str(title))
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


def _seg_distance(points, a, b):
    """Distance of each of (P, 2) points to the nearest of (S, 2)-(S, 2) segments."""
    if len(a) == 0:
        return np.full(len(points), np.inf)
    d = b - a
    L2 = np.maximum(np.einsum("ij,ij->i", d, d), 1e-300)
    rel = points[:, None, :] - a[None]
    t = np.clip(np.einsum("psk,sk->ps", rel, d) / L2, 0, 1)
    near = a[None] + t[..., None] * d[None]
    return np.linalg.norm(points[:, None, :] - near, axis=-1).min(axis=1)


class _LabelPlacer:
    """Puts face labels inside their solid along the cut edge, where rays and other
    labels leave room: candidates along the edge that fit on it, the one farthest from
    visible rays and from labels already placed wins; ties go to the middle."""

    FRACTIONS = np.array([0.5, 0.4, 0.6, 0.3, 0.7, 0.2, 0.8])

    def __init__(self, rays, plane, width, taken, *, metres_per_point):
        self.width = width
        self.pt = metres_per_point
        if len(rays):
            a, b = plane.to2d(rays.start), plane.to2d(rays.end)
            keep = rays.level > 0.35  # only rays that are clearly visible get in the way
            self.a, self.b = a[keep], b[keep]
        else:
            self.a = self.b = np.zeros((0, 2))
        self.ta, self.tb = [], []
        self.boxes = []  # shapely rectangles of the labels placed, for the overlap test
        for c in taken:  # solid names: short horizontal bars
            c = np.asarray(c, float)
            self.ta.append(c - [12 * self.pt, 0])
            self.tb.append(c + [12 * self.pt, 0])

    def place_inside(self, loop, centre, text):
        """Spot for a solid's name inside polygon ``loop``, clear of rays, near ``centre``."""
        from shapely.geometry import Point
        from shapely.geometry import Polygon as SPoly

        poly = SPoly(loop)
        lo, hi = loop.min(axis=0), loop.max(axis=0)
        g = np.stack(np.meshgrid(np.linspace(lo[0], hi[0], 13), np.linspace(lo[1], hi[1], 13)), -1)
        half = 0.5 * len(text) * 4.4 * self.pt
        margin = 5 * self.pt
        cand = [np.asarray(centre, float)]
        for p in g.reshape(-1, 2):
            if poly.buffer(-margin).contains(Point(p)):
                cand.append(p)
        cand = np.array(cand)
        ends = [cand - [half, 0], cand, cand + [half, 0]]
        d = np.min([_seg_distance(e, self.a, self.b) for e in ends], axis=0)
        inside = np.array([poly.contains(Point(e)) for e in ends[0]]) & np.array(
            [poly.contains(Point(e)) for e in ends[2]])
        score = np.minimum(d, 10 * self.pt) - 0.05 * np.linalg.norm(cand - centre, axis=1)
        score = np.where(inside | (np.arange(len(cand)) == 0), score, -np.inf)
        best = cand[int(np.argmax(score))]
        self.ta.append(best - [half, 0])
        self.tb.append(best + [half, 0])
        self.boxes.append(self._box(best, np.array([1.0, 0.0]), half, self.SOLID_HALF_HEIGHT))
        return best

    #: Half heights of a face label (6 pt type) and a solid label (7.5 pt) with their white
    #: boxes [pt]; labels are kept from overlapping as rectangles of these sizes.
    FACE_HALF_HEIGHT = 4.5
    SOLID_HALF_HEIGHT = 5.5

    def _box(self, centre, u, half, half_height):
        from shapely.geometry import Polygon as SPoly

        v = np.array([-u[1], u[0]]) * half_height * self.pt
        a = u * half
        c = np.asarray(centre, float)
        return SPoly([c - a - v, c + a - v, c + a + v, c - a + v])

    def place(self, p0, p1, n2, text):
        L = float(np.linalg.norm(p1 - p0))
        u = (p1 - p0) / max(L, 1e-300)
        half = 0.5 * len(text) * 3.7 * self.pt
        inset = 7.0 * self.pt
        f = self.FRACTIONS
        cand = p0[None] + f[:, None] * (p1 - p0)[None] - np.asarray(n2)[None] * inset
        fits = (f * L >= half + 2 * self.pt) & ((1 - f) * L >= half + 2 * self.pt)
        along = np.linspace(-1.0, 1.0, 5)  # points along the label's centre line
        samples = np.concatenate([cand + t * half * u for t in along])
        k = len(cand)
        d_rays = _seg_distance(samples, self.a, self.b).reshape(len(along), k).min(axis=0)
        score = np.minimum(d_rays, 14 * self.pt)
        if self.ta:
            d_lab = _seg_distance(samples, np.array(self.ta),
                                  np.array(self.tb)).reshape(len(along), k).min(axis=0)
            score = np.minimum(score, d_lab - 2 * self.pt)
        # labels never overlap: a spot whose box meets a label already placed is not a spot
        for i in np.nonzero(fits)[0]:
            box = self._box(cand[i], u, half, self.FACE_HALF_HEIGHT).buffer(-0.5 * self.pt)
            fits[i] = not any(box.intersects(b) for b in self.boxes)  # touching is fine
        score = score - 0.3 * self.pt * np.abs(f - 0.5) * 10
        if not fits.any():
            return None  # the edge is too short for its name, or crowded: leave it unlabelled
        score = np.where(fits, score, -np.inf)
        best = cand[int(np.argmax(score))]
        self.ta.append(best - half * u)
        self.tb.append(best + half * u)
        self.boxes.append(self._box(best, u, half, self.FACE_HALF_HEIGHT))
        return best, _upright(np.degrees(np.arctan2(u[1], u[0])))


def _face_label(ax, at, angle, face):
    ax.text(at[0], at[1], face, ha="center", va="center", rotation=angle, rotation_mode="anchor",
            fontsize=6, color=_style.FAINT, zorder=11,
            bbox=dict(boxstyle="round,pad=0.1", fc="white", ec="none", alpha=0.7))


def _end_label(ax, seg, direction, text):
    """Label beside a detector line, on the side ``direction`` (in-plane unit vector)."""
    mid = seg.mean(axis=0)
    d = np.asarray(direction, float)
    off = d * 5
    ha = "left" if d[0] > 0.5 else ("right" if d[0] < -0.5 else "center")
    va = "bottom" if d[1] > 0.5 else ("top" if d[1] < -0.5 else "center")
    ax.annotate(text, xy=mid, xytext=off, textcoords="offset points", ha=ha, va=va,
                fontsize=7, color=_style.INK, zorder=12)


def _gap_label(ax, gap, cuts, centre, scale, width, *, faces=False):
    """Annotate a gap with its thickness and medium (and, with ``faces``, the two faces
    on a second line); returns whether it was drawn."""
    edges = [e for e in cuts.get(gap.solid_a, ()).edges if e[2] == gap.face_a] if gap.solid_a in cuts else []
    if not edges:
        return False
    p0, p1, _, n2 = max(edges, key=lambda e: np.linalg.norm(e[1] - e[0]))
    if np.linalg.norm(p1 - centre) < np.linalg.norm(p0 - centre):
        p0, p1 = p1, p0
    t = (p1 - p0) / max(np.linalg.norm(p1 - p0), 1e-300)
    target = p0 + 0.85 * (p1 - p0)  # leader ends on the gap, near its outer end
    text_at = p1 + t * 0.09 * width + np.asarray(n2) * 0.04 * width
    off = text_at - target
    ha = "left" if off[0] > 0.02 * width else ("right" if off[0] < -0.02 * width else "center")
    text = format_gap(gap.thickness, gap.medium_name)
    if faces:
        text += f"\n{gap.solid_a}.{gap.face_a} | {gap.solid_b}.{gap.face_b}"
    ax.annotate(text, xy=target / scale,
                xytext=text_at / scale, textcoords="data", ha=ha, va="center", fontsize=7,
                color=_style.GAP_INK, zorder=13,
                arrowprops=dict(arrowstyle="-", color=_style.GAP_INK, lw=0.6,
                                shrinkA=1, shrinkB=0))
    return True
