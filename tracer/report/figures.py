"""Figures for the outputs, made by :mod:`tracer.plot` and turned into files or bytes.

This module never imports matplotlib itself: it calls the plotting module's functions
(which return matplotlib figures) and the figures' own ``savefig``. A figure kind whose
plotting function is not available (matplotlib missing, or the function not in this
version of :mod:`tracer.plot`) is skipped and named in :attr:`Figure.skipped`.

Kinds: ``rays`` (2D section with the traced rays), ``rays3d`` (3D view), ``budget``
(power budget), ``irradiance``, ``stokes`` (per plane detector), ``far_field``,
``scatter`` (per plane detector that scattered light reaches: where it comes from).
"""

from __future__ import annotations

import io
from dataclasses import dataclass
from pathlib import Path

__all__ = ["Figure", "make_figures", "save_figures", "figure_png", "close", "KINDS"]

#: Every figure kind, in report order.
KINDS = ("rays", "rays3d", "budget", "irradiance", "stokes", "far_field", "scatter")


@dataclass
class Figure:
    """One figure made for the outputs.

    name : str
        File stem (``rays``, ``irradiance-camera`` ...).
    title : str
        Caption.
    figure : matplotlib Figure
    """

    name: str
    title: str
    figure: object


def _plot():
    try:
        from .. import plot
    except ImportError:
        return None
    return plot


#: Where each plotting function lives in :mod:`tracer.plot` (also taken from the
#: package namespace when it exports it).
_SUBMODULES = ("diagram2d", "diagram3d", "maps", "budget", "figures", "scatter_view")


#: Plotting functions of each figure kind, first found wins (see :func:`_find`).
_PLOT_FUNCTIONS = {
    "rays": ("draw_2d",),
    "rays3d": ("draw_3d_views",),
    "budget": ("budget_figure", "draw_budget", "plot_budget"),
    "irradiance": ("irradiance_map",),
    "stokes": ("stokes_maps",),
    "far_field": ("far_field_map",),
    "scatter": ("scatter_figure",),
}


def _find(plot, *names):
    import importlib

    for n in names:
        fn = getattr(plot, n, None)
        if callable(fn):
            return fn
    for sub in _SUBMODULES:
        try:
            mod = importlib.import_module(f"{plot.__name__}.{sub}")
        except ImportError:
            continue
        for n in names:
            fn = getattr(mod, n, None)
            if callable(fn):
                return fn
    return None


def close(fig) -> None:
    """Free a figure (through the plotting module's pyplot)."""
    try:
        from ..plot._style import pyplot

        pyplot().close(fig)
    except Exception:  # noqa: BLE001 - closing is best effort
        pass


#: Geometric rays per spectral line and source in a ray diagram: few enough that single rays
#: (and the faint ghosts) stay visible instead of blending into a saturated band.
DIAGRAM_RAYS = 11

#: Ray segments recorded for a diagram's drawing run.
DIAGRAM_SEGMENTS = 4000


def drawing_result(result):
    """The trace to draw rays from.

    ``result`` itself when it recorded segments from at most ``DIAGRAM_RAYS`` geometric rays
    per source and line; otherwise the same scene traced again with the same settings (mode,
    threshold, event cap, seed) and ``DIAGRAM_RAYS`` rays per line, recording segments. The
    power budget, ghost tables and maps always come from ``result``.
    """
    from ..engine import trace

    opts = result.options
    launched = int(sum(int(n) for n in result.launched))
    lines = sum(max(int(sum(1 for w in s.spectrum.weights if w > 0)), 1)
                for s in result.scene.sources.values())
    if opts.segments and launched <= DIAGRAM_RAYS * max(lines, 1):
        return result
    return trace(result.scene, mode=opts.mode, power_threshold=opts.power_threshold,
                 max_events=opts.max_events, seed=opts.seed, rays=DIAGRAM_RAYS,
                 segments=DIAGRAM_SEGMENTS, progress=False)


def make_figures(result, analysis=None, *, kinds=KINDS, skipped: list | None = None) -> list[Figure]:
    """Figures of a trace, of the requested ``kinds`` (see the module docstring).

    Parameters
    ----------
    result : tracer.engine.Result
        Traced with ``segments=N`` for ray diagrams to show rays.
    analysis : tracer.analysis.RunAnalysis, optional
        Gives the budget figure its budget (computed here when not given).
    kinds : tuple of str
    skipped : list, optional
        Receives ``(kind, reason)`` for the kinds that could not be drawn.
    """
    from ..errors import TracerError

    bad = [k for k in kinds if k not in KINDS]
    if bad:
        raise TracerError(f"unknown figure kind {bad[0]!r}; kinds: {', '.join(KINDS)}")
    plot = _plot()
    skipped = skipped if skipped is not None else []
    if plot is None:
        skipped.extend((k, "the plotting module is not available") for k in kinds)
        return []
    scene = result.scene
    planes = list(result.compiled.detector_names)
    fars = [d.name for d in getattr(result.compiled, "far_fields", [])]
    out: list[Figure] = []

    def missing(kind):
        skipped.append((kind, "not available in this version of tracer.plot"))

    drawn = drawing_result(result) if {"rays", "rays3d", "scatter"} & set(kinds) else None

    for kind in kinds:
        if kind == "far_field" and not fars:
            continue
        fn = _find(plot, *_PLOT_FUNCTIONS[kind])
        if fn is None:
            missing(kind)
            continue
        if kind == "rays":
            out.append(Figure("rays", "Section with the traced rays (opacity and width fall with "
                                      "power, one decade a step)", fn(scene, drawn)))
        elif kind == "rays3d":
            out.append(Figure("rays3d", "Top, front, side and isometric views with the traced rays",
                              fn(scene, drawn)))
        elif kind == "budget":
            if analysis is None:
                from ..analysis import power_budget

                budget = power_budget(result)
            else:
                budget = analysis.budget
            out.append(Figure("budget", "Power budget: where the source power goes", fn(budget)))
        elif kind in ("irradiance", "stokes"):
            if not planes:
                skipped.append((kind, "the scene has no plane detector"))
            for det in planes:
                if result.detector_power(det) <= 0:
                    skipped.append((f"{kind} {det}", "no light reached this detector"))
                    continue
                grid = map_grid(plot, result, det)
                binning = _binning_note(result, det, grid)
                if kind == "irradiance":
                    out.append(Figure(f"irradiance-{det}", f"Irradiance on detector {det} [W/m²]"
                                      + binning, fn(result, det, pixels=grid)))
                else:
                    out.append(Figure(f"stokes-{det}", f"Normalised Stokes parameters S1/S0, "
                                      f"S2/S0, S3/S0 on detector {det}" + binning,
                                      fn(result, det, pixels=grid)))
        elif kind == "scatter":
            from ..analysis.scatter_sources import scatter_ranking

            lit = [d for d in planes if scatter_ranking(result, d)["scattered_w"] > 0]
            for det in lit:
                out.append(Figure(f"scatter-{det}", f"Scattered light on detector {det}: where it "
                                  "goes in the scene, where it lands, and the faces that send it",
                                  fn(result, det, draw_result=drawn)))
        elif kind == "far_field":
            for name in fars:
                out.append(Figure(f"far-field-{name}", f"Radiant intensity by direction ({name})",
                                  fn(result, name)))
    return out


def map_grid(plot, result, detector) -> tuple[int, int]:
    """Pixel grid for the maps of ``detector``: its own grid coarsened (powers of two) until
    the lit pixels get a few rays each, so that a sparse ray grid gives a smooth map rather
    than a pattern of dots (power is conserved on any grid)."""
    data = plot.irradiance_data(result, detector, pixels="auto")
    return tuple(int(n) for n in data["detector"].pixels)


def _binning_note(result, detector, grid) -> str:
    own = tuple(int(n) for n in result.scene.detectors[detector].pixels)
    if tuple(grid) == own:
        return f" ({own[0]} x {own[1]} pixels)"
    return (f" (binned on {grid[0]} x {grid[1]} pixels instead of the detector's "
            f"{own[0]} x {own[1]}, so that each lit pixel gets several rays)")


def figure_png(fig, *, dpi: int | None = None) -> bytes:
    """PNG bytes of a matplotlib figure (tight box, white background)."""
    if dpi is None:
        try:
            from ..plot._style import PNG_DPI as dpi
        except ImportError:
            dpi = 150
    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=dpi, bbox_inches="tight", pad_inches=0.06, facecolor="white")
    return buf.getvalue()


def save_figures(result, analysis, folder, *, kinds=KINDS, formats=("png",),
                 skipped: list | None = None, prefix: str = "") -> list[Path]:
    """Make the figures of ``kinds`` and write them into ``folder``; returns the files.

    Files are ``folder/PREFIX + name + "." + format`` for each format (png, svg).
    """
    from ..errors import TracerError
    from ..outputs import atomic_savefig

    folder = Path(folder)
    written = []
    for f in make_figures(result, analysis, kinds=kinds, skipped=skipped):
        try:
            for fmt in formats:
                target = folder / f"{prefix}{f.name}.{fmt}"
                kw = dict(format=fmt, bbox_inches="tight", pad_inches=0.06, facecolor="white")
                if fmt == "png":
                    kw["dpi"] = 170
                atomic_savefig(f.figure, target, **kw)  # temporary file, then rename
                written.append(target)
        except OSError as exc:
            raise TracerError(f"cannot write {folder}: {exc.strerror or exc}") from None
        finally:
            close(f.figure)
    return written
