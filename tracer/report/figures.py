"""Figures for the outputs, made by :mod:`tracer.plot` and turned into files or bytes.

This module never imports matplotlib itself: it calls the plotting module's functions
(which return matplotlib figures) and the figures' own ``savefig``. A figure kind whose
plotting function is not available (matplotlib missing, or the function not in this
version of :mod:`tracer.plot`) is skipped and named in :attr:`Figure.skipped`.

Kinds: ``rays`` (2D section with the traced rays), ``rays3d`` (3D view), ``budget``
(power budget), ``irradiance``, ``stokes`` (per plane detector), ``far_field``.
"""

from __future__ import annotations

import io
from dataclasses import dataclass
from pathlib import Path

__all__ = ["Figure", "make_figures", "save_figures", "figure_png", "close", "KINDS"]

#: Every figure kind, in report order.
KINDS = ("rays", "rays3d", "budget", "irradiance", "stokes", "far_field")


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


def _find(plot, *names):
    for n in names:
        fn = getattr(plot, n, None)
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


def _call(fn, *args, **kw):
    try:
        return fn(*args, **kw)
    except TypeError:
        return None


def make_figures(result, analysis=None, *, kinds=KINDS, skipped: list | None = None) -> list[Figure]:
    """Figures of a trace, of the requested ``kinds`` (see the module docstring).

    Parameters
    ----------
    result : tracer.engine.Result
        Traced with ``segments=N`` for ray diagrams to show rays.
    analysis : tracer.analysis.RunAnalysis, optional
        Gives the budget figure its budget.
    kinds : tuple of str
    skipped : list, optional
        Receives the kinds that could not be drawn, with the reason.
    """
    plot = _plot()
    skipped = skipped if skipped is not None else []
    if plot is None:
        skipped.extend((k, "the plotting module is not available") for k in kinds)
        return []
    scene = result.scene
    out: list[Figure] = []

    def missing(kind):
        skipped.append((kind, "not available in this version of tracer.plot"))

    for kind in kinds:
        if kind == "rays":
            fn = _find(plot, "draw_2d")
            if fn is None:
                missing(kind)
                continue
            out.append(Figure("rays", "Section with the traced rays (opacity and width fall with power)",
                              fn(scene, result)))
        elif kind == "rays3d":
            fn = _find(plot, "draw_3d")
            if fn is None:
                missing(kind)
                continue
            out.append(Figure("rays3d", "3D view with the traced rays", fn(scene, result)))
        elif kind == "budget":
            fn = _find(plot, "budget_figure", "draw_budget", "plot_budget")
            if fn is None:
                missing(kind)
                continue
            budget = analysis.budget if analysis is not None else None
            fig = _call(fn, budget) if budget is not None else None
            if fig is None:
                fig = _call(fn, result)
            if fig is None:
                missing(kind)
                continue
            out.append(Figure("budget", "Power budget: where the source power goes", fig))
        elif kind in ("irradiance", "stokes"):
            fn = _find(plot, f"{kind}_map", f"draw_{kind}", f"plot_{kind}")
            if fn is None:
                missing(kind)
                continue
            for det in result.compiled.detector_names:
                fig = _call(fn, result, det)
                if fig is not None:
                    title = ("Irradiance" if kind == "irradiance" else "Stokes parameters")
                    out.append(Figure(f"{kind}-{det}", f"{title} on detector {det}", fig))
        elif kind == "far_field":
            if not getattr(result.compiled, "far_fields", None):
                continue
            fn = _find(plot, "far_field_map", "draw_far_field", "plot_far_field")
            if fn is None:
                missing(kind)
                continue
            for d in result.compiled.far_fields:
                fig = _call(fn, result, d.name)
                if fig is not None:
                    out.append(Figure(f"far-field-{d.name}", f"Far-field intensity ({d.name})", fig))
        else:
            from ..errors import TracerError

            raise TracerError(f"unknown figure kind {kind!r}; kinds: {', '.join(KINDS)}")
    return out


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

    folder = Path(folder)
    written = []
    for f in make_figures(result, analysis, kinds=kinds, skipped=skipped):
        try:
            for fmt in formats:
                target = folder / f"{prefix}{f.name}.{fmt}"
                kw = dict(format=fmt, bbox_inches="tight", pad_inches=0.06, facecolor="white")
                if fmt == "png":
                    kw["dpi"] = 170
                f.figure.savefig(target, **kw)
                written.append(target)
        except OSError as exc:
            raise TracerError(f"cannot write {folder}: {exc.strerror or exc}") from None
        finally:
            close(f.figure)
    return written
