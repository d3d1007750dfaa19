"""Where the scattered light goes: one figure for the stray-light question of a detector.

Three panels answer "which surfaces light up my sensor, where, and how strongly":

* **the scene** (a 2D section, or the top view of a 3D scene) with the light that met a
  scatter event drawn in the scattered-light colour and everything else in faint grey;
  the faces whose scatter reaches the detector are outlined in that colour and numbered
  by rank;
* **the detector** seen from the light side: scattered power per pixel, in ppm of the
  source power, on a log scale (specular light left out);
* **the ranking**: the faces by the scattered power they put on the detector (ppm of the
  source), with the share of the scattered total, the total's standard error and the
  specular rest for comparison.

Which face a path is credited to: the face of its last scatter event
(:func:`tracer.analysis.scatter_sources.scatter_ranking`).
"""

from __future__ import annotations

import dataclasses

import numpy as np

from . import _style
from ._rays import prepare_rays

__all__ = ["scatter_figure", "SCATTER_COLOR", "SPECULAR_GREY"]

#: Colour of scattered light and of the faces that send it (our own choice).
SCATTER_COLOR = "#c8641e"
#: Colour of the light that met no scatter event, drawn underneath.
SPECULAR_GREY = "#9aa0a6"

_RANKED = 5  # faces outlined and numbered in the scene panel


def _split_rays(result, min_power):
    """(specular, scattered) ray sets of a traced result, recoloured."""
    from matplotlib.colors import to_rgba

    rays = prepare_rays(result, min_power=min_power)
    if len(rays) == 0:
        return rays, rays
    scat = np.asarray(result.tree.scatters)[rays.node] > 0

    def part(mask, colour, alpha_floor):
        fields = {f.name: getattr(rays, f.name)[mask] for f in dataclasses.fields(rays)}
        rgba = np.tile(to_rgba(colour), (int(mask.sum()), 1))
        rgba[:, 3] = alpha_floor + (1 - alpha_floor) * fields["level"]
        fields["rgba"] = rgba
        return type(rays)(**fields)

    spec, scattered = part(~scat, SPECULAR_GREY, 0.05), part(scat, SCATTER_COLOR, 0.08)
    scattered.width = scattered.width * 0.5  # many thin rays: the density shows the flux
    return spec, scattered


def _face_outline(scene, face_name):
    """Polygon (k, 3) [m] of ``"solid.face"`` in scene coordinates, or None."""
    solid, _, face = face_name.partition(".")
    spec = scene.solids.get(solid)
    if spec is None:
        return None
    geo = spec.geometry
    names = list(geo.face_names)
    if face not in names:
        return None
    return np.asarray(geo.face_polygons[names.index(face)], dtype=float)


def _scene_panel(ax, scene, draw_result, ranking, *, min_power):
    from .diagram2d import draw_2d

    specular, scattered = _split_rays(draw_result, min_power)
    # a section through the middle of the solids (x-y; the plane of a 2D scene)
    draw_2d(scene, None, ax=ax, rays=[specular, scattered], legend=False, title=False,
            solid_labels=True)
    _, scale = ax.drawing_unit
    plane = ax.drawing_plane
    spots: list[tuple[np.ndarray, list[int]]] = []  # label position -> ranks there
    span = np.ptp(np.array([ax.get_xlim(), ax.get_ylim()]), axis=1).max()
    for rank, f in enumerate(ranking["faces"][:_RANKED], start=1):
        poly = _face_outline(scene, f["face"])
        if poly is None:
            continue
        xy = plane.to2d(np.vstack([poly, poly[:1]])) / scale
        ax.plot(xy[:, 0], xy[:, 1], color=SCATTER_COLOR, lw=2.2, zorder=9,
                solid_capstyle="round", gid=f"face-{rank}")
        c = xy[:-1].mean(axis=0)
        for at, ranks in spots:  # faces seen edge-on side by side share one label
            if np.linalg.norm(at - c) < 0.04 * span:
                ranks.append(rank)
                break
        else:
            spots.append((c, [rank]))
    for at, ranks in spots:
        ax.annotate(",".join(str(r) for r in ranks), xy=at, xytext=(5, 5),
                    textcoords="offset points", fontsize=7, color="white", zorder=12,
                    fontweight="bold", gid="face-rank",
                    bbox=dict(boxstyle="round,pad=0.2", fc=SCATTER_COLOR, ec="none"))
    ax.set_title("light after a scatter event (colour) over the rest (grey);\n"
                 "numbered: the faces that send it, by rank", loc="left", fontsize=8.5,
                 color=_style.INK)


def _detector_panel(ax, result, detector):
    from matplotlib.colors import LogNorm

    from tracer.detectors import DetectorRecord

    from .maps import _auto_pixels, _plane_spec

    spec = _plane_spec(result, detector)
    h = result.hits(detector)
    node = np.asarray(h["node"], dtype=np.int64).reshape(-1)
    scat = np.asarray(result.tree.scatters)[node] > 0 if len(node) else np.zeros(0, bool)
    loc = np.asarray(h["local"], float).reshape(-1, 2)[scat]
    power = np.asarray(h["power"], float).reshape(-1)[scat]
    if len(power):  # a grid coarse enough that lit pixels get a few hits each
        spec = dataclasses.replace(spec, pixels=tuple(int(p) for p in _auto_pixels(spec, loc, power)))
    rec = DetectorRecord(spec)
    if len(power):
        rec.add(loc[:, 0], loc[:, 1], power)
    src = float(result.source_power_w) or 1.0
    ppm = rec.power_map() / src * 1e6
    _, scale = _style.length_unit(float(max(spec.size)))
    unit = _style.length_unit(float(max(spec.size)))[0]
    extent = [rec.u_edges[0] / scale, rec.u_edges[-1] / scale,
              rec.v_edges[0] / scale, rec.v_edges[-1] / scale]
    ax.set_title(f"{detector} seen from the light:\nscattered power per pixel", loc="left",
                 fontsize=8.5, color=_style.INK)
    if not np.any(ppm > 0):
        ax.text(0.5, 0.5, "no scattered light\nreached this detector", ha="center",
                va="center", transform=ax.transAxes, color=_style.INK, fontsize=8)
        ax.set_axis_off()
        return None
    pos = ppm[ppm > 0]
    lo = max(pos.min(), pos.max() * 1e-4)
    im = ax.imshow(np.where(ppm > 0, ppm, np.nan), origin="lower", extent=extent,
                   cmap="inferno", norm=LogNorm(vmin=lo, vmax=pos.max()), interpolation="nearest")
    ax.set_facecolor("#111111")
    ax.set_xlabel(f"u [{unit}]")
    ax.set_ylabel(f"v [{unit}]")
    if getattr(spec, "outline", "rectangle") == "circle":
        from matplotlib.patches import Ellipse

        ax.add_patch(Ellipse((0, 0), spec.size[0] / scale, spec.size[1] / scale, fill=False,
                             ec="#dddddd", lw=0.8, ls="--"))
    cb = ax.figure.colorbar(im, ax=ax, fraction=0.046, pad=0.03)
    cb.set_label("ppm of the source power")
    return im


def _ranking_panel(ax, result, ranking):
    from tracer.analysis.tables import fmt_fraction, fmt_sci

    src = float(result.source_power_w) or 1.0
    faces = ranking["faces"][:8]
    if not faces:
        ax.set_title("faces whose scatter reaches it", loc="left", fontsize=8.5, color=_style.INK)
        ax.text(0.5, 0.5, "no scatter on this detector", ha="center", va="center",
                transform=ax.transAxes, fontsize=8, color=_style.INK)
        ax.set_axis_off()
        return
    names = [f"{i}  {f['face']}" if i <= _RANKED else f["face"]
             for i, f in enumerate(faces, start=1)]
    values = np.array([f["power_w"] for f in faces]) / src * 1e6
    y = np.arange(len(faces))[::-1]
    ax.barh(y, values, color=SCATTER_COLOR, height=0.6, gid="ranking")
    ax.set_yticks(y, names, fontsize=7)
    ax.set_xscale("log")
    ax.set_xlim(values.min() / 3, values.max() * 12)
    for yi, v, f in zip(y, values, faces):
        ax.text(v * 1.15, yi, fmt_fraction(f["share"]), va="center", fontsize=6.5,
                color=_style.INK)
    ax.set_xlabel("scattered power on the detector [ppm of source]")
    total = ranking["scattered_w"]
    se = ranking["standard_error_w"]
    ax.set_title(f"faces whose scatter reaches it: {fmt_sci(total)} W ± {fmt_sci(se)} W\n"
                 f"(1 s.e.); specular light {fmt_sci(ranking['specular_w'])} W", loc="left",
                 fontsize=8.5, color=_style.INK)


def scatter_figure(result, detector: str | None = None, *, draw_result=None,
                   min_power: float = 1e-6, figsize=(13.0, 4.4)):
    """Figure of where the scattered light on ``detector`` comes from (module docstring).

    Parameters
    ----------
    result : tracer.engine.Result
        A trace with enough rays for the map and the ranking.
    detector : str or None
        Plane detector (default: the one receiving the most scattered power).
    draw_result : tracer.engine.Result or None
        A trace with recorded segments (``segments=N``) for the scene panel (default:
        ``result``, whose segments are used if it has any).
    min_power : float [1]
        Drawing cut-off relative to the source ray's power.

    Returns
    -------
    matplotlib Figure
    """
    from tracer.analysis.scatter_sources import scatter_ranking
    from tracer.errors import TracerError

    planes = list(result.compiled.detector_names)
    if not planes:
        raise TracerError("scatter figure: the scene has no plane detector")
    if detector is None:
        detector = max(planes, key=lambda d: (scatter_ranking(result, d)["scattered_w"],
                                              -planes.index(d)))
    elif detector not in planes:
        raise TracerError(f"scatter figure: unknown plane detector {detector!r}; the scene has "
                          + ", ".join(planes))
    ranking = scatter_ranking(result, detector)
    plt = _style.pyplot()
    with _style.style():
        fig = plt.figure(figsize=figsize, layout="constrained")
        gs = fig.add_gridspec(1, 3, width_ratios=[1.5, 1.0, 1.1])
        ax_scene = fig.add_subplot(gs[0])
        ax_det = fig.add_subplot(gs[1])
        ax_rank = fig.add_subplot(gs[2])
        _scene_panel(ax_scene, result.scene, draw_result if draw_result is not None else result,
                     ranking, min_power=min_power)
        _detector_panel(ax_det, result, detector)
        _ranking_panel(ax_rank, result, ranking)
        fig.suptitle(f"Scattered light on {detector}", x=0.01, ha="left", fontsize=11,
                     color=_style.INK)
    return fig
