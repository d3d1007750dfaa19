"""Small figures of sweeps and tolerance runs (matplotlib, imported lazily, Agg).

Every function takes ``ax=None`` (a new figure when ``None``) and returns the axes.

* :func:`plot_sweep` -- result columns against one axis;
* :func:`plot_transmission_sp` -- ``T.s.DET`` and ``T.p.DET`` against an axis (e.g. the
  gap thickness of a frustrated-TIR pair);
* :func:`plot_ghosts` -- ghost power on a detector against an axis (e.g. a tilt);
* :func:`plot_histogram` -- a tolerance column's distribution, limits marked;
* :func:`plot_sensitivity` -- the sensitivity ranking of one result as bars.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

__all__ = ["plot_sweep", "plot_transmission_sp", "plot_ghosts", "plot_histogram",
           "plot_sensitivity", "sweep_figures", "tolerance_figures"]


def _plt():
    import matplotlib

    if matplotlib.get_backend().lower() not in ("agg", "pdf", "svg", "ps", "cairo"):
        try:
            matplotlib.use("Agg", force=False)
        except Exception:  # pragma: no cover - interactive backend already in use
            pass
    import matplotlib.pyplot as plt

    return plt


def _axes(ax):
    if ax is not None:
        return ax
    plt = _plt()
    fig, ax = plt.subplots(figsize=(6.0, 4.0), layout="constrained")
    return ax


def plot_sweep(result, x: str, columns, *, ax=None, logy: bool = False, labels=None):
    """Columns of a :class:`~tracer.sweep.sweep.SweepResult` against axis ``x``.

    Parameters
    ----------
    result : SweepResult
    x : str
        Axis key path.
    columns : str or list of str
    ax : matplotlib Axes, optional
    logy : bool
        Logarithmic y axis.
    """
    ax = _axes(ax)
    columns = [columns] if isinstance(columns, str) else list(columns)
    xs = result.axis_numbers(x)
    order = np.argsort(xs, kind="stable")
    for i, c in enumerate(columns):
        ys = result.column(c).astype(float)
        ax.plot(xs[order], ys[order], marker="o", ms=3,
                label=(labels[i] if labels else c))
    ax.set_xlabel(result._axis(x).label)
    if logy:
        ax.set_yscale("log")
    ax.grid(True, alpha=0.3)
    ax.legend(fontsize="small")
    return ax


def plot_transmission_sp(result, x: str, detector: str, *, ax=None, logy: bool = False):
    """Transmission for the s and p input states on ``detector`` against axis ``x``
    (all paths, and the design path dashed where the table has it)."""
    ax = plot_sweep(result, x, [f"T.s.{detector}", f"T.p.{detector}"], ax=ax, logy=logy,
                    labels=["s, all paths", "p, all paths"])
    if f"Tdesign.s.{detector}" in result.columns:
        xs = result.axis_numbers(x)
        order = np.argsort(xs, kind="stable")
        for st, color in (("s", "C0"), ("p", "C1")):
            ys = result.column(f"Tdesign.{st}.{detector}").astype(float)
            ax.plot(xs[order], ys[order], ls="--", color=color, label=f"{st}, design path")
        ax.legend(fontsize="small")
    ax.set_ylabel(f"transmission to {detector} [1]")
    return ax


def plot_ghosts(result, x: str, detector: str, *, ax=None):
    """Ghost power and the strongest ghost on ``detector`` against axis ``x``."""
    ax = plot_sweep(result, x, [f"ghost_power.{detector}", f"top_ghost_power.{detector}"],
                    ax=ax, logy=True, labels=["all ghosts", "strongest ghost"])
    ax.set_ylabel(f"ghost power on {detector} [W]")
    return ax


def plot_histogram(values, *, ax=None, bins: int = 30, label: str = "", limit=None,
                   nominal=None):
    """Histogram of trial values, with the requirement ``limit`` and the ``nominal``."""
    ax = _axes(ax)
    v = np.asarray(values, dtype=float)
    v = v[np.isfinite(v)]
    span = float(np.ptp(v)) if len(v) else 0.0
    rng = None
    if len(v) and span <= 1e-12 * max(float(np.max(np.abs(v))), 1e-300):
        half = max(abs(float(v[0])) * 1e-6, 1e-12)  # constant: one visible bar
        rng, bins = (float(v[0]) - half, float(v[0]) + half), 1
    ax.hist(v, bins=bins, range=rng, color="tab:blue", alpha=0.8)
    if limit is not None:
        ax.axvline(limit, color="tab:red", ls="--", label="limit")
    if nominal is not None:
        ax.axvline(nominal, color="k", ls=":", label="nominal")
    ax.set_xlabel(label)
    ax.set_ylabel("trials")
    if limit is not None or nominal is not None:
        ax.legend(fontsize="small")
    return ax


def plot_sensitivity(ranking, *, ax=None, title: str = ""):
    """Horizontal bars of a sensitivity ranking: list of (tolerance, share [1])."""
    ax = _axes(ax)
    names = [r[0] for r in ranking][::-1]
    shares = [r[1] for r in ranking][::-1]
    ax.barh(range(len(names)), shares, color="tab:orange")
    ax.set_yticks(range(len(names)), names, fontsize="small")
    ax.set_xlabel("share of the variance (squared rank correlation, normalised)")
    if title:
        ax.set_title(title, fontsize="small")
    return ax


def _save(ax, path):
    fig = ax.figure
    from ..outputs import atomic_savefig

    try:
        atomic_savefig(fig, path, dpi=120)  # temporary file, then rename
    finally:
        _plt().close(fig)
    return Path(path)


def _safe(name: str) -> str:
    return "".join(c if c.isalnum() or c in "-_." else "_" for c in name)


def sweep_figures(result, out_dir) -> list[Path]:
    """The standard figures of a sweep along its first numeric axis."""
    out = Path(out_dir)
    files = []
    axis = next((a for a in result.axes if all(n is not None for n in a.numbers)), None)
    if axis is None or len(axis) < 2:
        return files
    cols = result.columns
    dets = sorted({c.split(".", 1)[1] for c in cols if c.startswith("power.")})
    for d in dets:
        if f"T.s.{d}" in cols and f"T.p.{d}" in cols:
            files.append(_save(plot_transmission_sp(result, axis.path, d),
                               out / f"transmission-{_safe(d)}.png"))
        if f"ghost_power.{d}" in cols and np.nanmax(result.column(f"ghost_power.{d}")) > 0:
            files.append(_save(plot_ghosts(result, axis.path, d), out / f"ghosts-{_safe(d)}.png"))
    fr = [f"fraction.{d}" for d in dets]
    if fr:
        files.append(_save(plot_sweep(result, axis.path, fr), out / "fractions.png"))
    return files


def tolerance_figures(result, out_dir) -> list[Path]:
    """Histograms of every requirement value and detector fraction, sensitivity bars."""
    out = Path(out_dir)
    files = []
    for col in result.summary_columns():
        vals = result.column(col)
        if not np.isfinite(vals).any():
            continue
        from .. import tolerances as tol

        fin = vals[np.isfinite(vals)]
        if float(np.std(fin)) <= tol.SENSITIVITY_MIN_SPREAD * float(np.mean(np.abs(fin))):
            continue  # constant to round-off: nothing to show
        ax = plot_histogram(vals, label=col, limit=result.limits.get(col),
                            nominal=result.nominal.get(col))
        files.append(_save(ax, out / f"hist-{_safe(col)}.png"))
        rank = result.sensitivity(col)
        if rank:
            files.append(_save(plot_sensitivity(rank, title=col), out / f"sens-{_safe(col)}.png"))
    return files
