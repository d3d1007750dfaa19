"""Shared figure machinery: lazy matplotlib (Agg), one house style, saving, scale bars.

matplotlib is imported only when a figure is made (never at ``import tracer`` or
``import tracer.plot``), with the non-interactive Agg backend unless a backend was
already chosen by the caller.
"""

from __future__ import annotations

import math
from contextlib import contextmanager
from pathlib import Path

import numpy as np

__all__ = ["mpl", "pyplot", "style", "new_axes", "save", "length_unit", "nice_length",
           "add_scale_bar", "PNG_DPI"]

#: Resolution of saved PNG files [dots per inch].
PNG_DPI = 170

#: The house style (applied inside :func:`style` only, never globally).
RC = {
    "font.size": 9.0,
    "axes.titlesize": 10.0,
    "axes.titleweight": "bold",
    "axes.labelsize": 9.0,
    "xtick.labelsize": 8.0,
    "ytick.labelsize": 8.0,
    "legend.fontsize": 7.5,
    "legend.frameon": False,
    "axes.spines.top": False,
    "axes.spines.right": False,
    "axes.linewidth": 0.7,
    "xtick.major.width": 0.6,
    "ytick.major.width": 0.6,
    "figure.dpi": 100,
    "savefig.dpi": PNG_DPI,
    "svg.fonttype": "none",
    "image.interpolation": "nearest",
    "font.family": "DejaVu Sans",
}

# Neutral colours used by every figure.
INK = "#333333"       # text, scale bars, detector lines
FAINT = "#8a8a8a"     # face labels, secondary text
GRID = "#e3e3e3"
GAP_INK = "#7a4a00"   # gap annotations


def mpl():
    """The matplotlib module, imported on first use with the Agg backend."""
    import matplotlib

    if "matplotlib.pyplot" not in __import__("sys").modules:
        matplotlib.use("Agg")
    return matplotlib


def pyplot():
    """``matplotlib.pyplot`` (Agg backend unless one was chosen before)."""
    mpl()
    import matplotlib.pyplot as plt

    return plt


@contextmanager
def style():
    """Context in which figures get the house style."""
    m = mpl()
    with m.rc_context(RC):
        yield


def new_axes(ax=None, *, figsize=(6.4, 4.8), **subplot_kw):
    """``(fig, ax)``: ``ax`` and its figure, or a new figure with one axes."""
    if ax is not None:
        return ax.figure, ax
    plt = pyplot()
    with style():
        fig = plt.figure(figsize=figsize)
        ax = fig.add_subplot(1, 1, 1, **subplot_kw)
    return fig, ax


def save(fig, path, *, formats=("svg", "png"), dpi: int = PNG_DPI, close: bool = False) -> list[Path]:
    """Write ``fig`` as SVG and PNG (tight bounding box, white background).

    Parameters
    ----------
    fig : matplotlib Figure (an Axes or an array of Axes is accepted too)
    path : str or Path
        File name; its suffix is replaced by each format's (``fig.svg``, ``fig.png``).
        A suffix of ``.png`` or ``.svg`` alone with ``formats=None`` writes that format only.
    formats : tuple of str or None
    dpi : int [dots per inch]
        PNG resolution (150--200 gives print quality at column width).
    close : bool
        Close the figure after writing (frees memory in batch jobs).

    Returns
    -------
    list of Path
        The files written.
    """
    fig = _figure_of(fig)
    path = Path(path)
    if formats is None:
        formats = (path.suffix.lstrip(".") or "png",)
    path.parent.mkdir(parents=True, exist_ok=True)
    out = []
    for fmt in formats:
        target = path.with_suffix("." + fmt)
        kw = dict(format=fmt, bbox_inches="tight", pad_inches=0.06, facecolor="white")
        if fmt == "png":
            kw["dpi"] = dpi
            kw["pil_kwargs"] = {"optimize": True}
        if fmt == "svg":
            kw["metadata"] = {"Date": None}  # reproducible files
        from ..outputs import atomic_savefig

        atomic_savefig(fig, target, **kw)  # temporary file, then rename
        out.append(target)
    if close:
        pyplot().close(fig)
    return out


def _figure_of(obj):
    if hasattr(obj, "savefig"):
        return obj
    if hasattr(obj, "figure"):
        return obj.figure
    arr = np.ravel(obj)
    if arr.size and hasattr(arr[0], "figure"):
        return arr[0].figure
    raise TypeError(f"expected a matplotlib Figure or Axes, got {type(obj).__name__}")


_UNITS = (("m", 1.0), ("cm", 1e-2), ("mm", 1e-3), ("µm", 1e-6), ("nm", 1e-9))


def length_unit(extent: float) -> tuple[str, float]:
    """Unit for lengths of about ``extent`` [m]: ``(symbol, metres per unit)``.

    Picks the largest of m, cm, mm, µm, nm in which ``extent`` is at least 1
    (centimetres only from 3 cm up, so that prism-sized drawings stay in mm).

    >>> length_unit(0.025), length_unit(2e-4), length_unit(0.5)
    (('mm', 0.001), ('µm', 1e-06), ('cm', 0.01))
    """
    extent = abs(float(extent))
    for sym, scale in _UNITS:
        if sym == "cm" and extent < 3e-2:
            continue
        if extent >= scale:
            return sym, scale
    return _UNITS[-1]


def nice_length(target: float) -> float:
    """Largest 1, 2 or 5 times a power of ten not above ``target`` [m].

    >>> nice_length(0.0037), nice_length(4.2e-6)
    (0.002, 2e-06)
    """
    if not target > 0:
        return 0.0
    e = math.floor(math.log10(target))
    for m in (5, 2, 1):
        v = m * 10.0 ** e
        if v <= target * (1 + 1e-9):
            return float(f"{v:.3g}")
    return float(f"{10.0 ** e:.3g}")


def format_bar(length: float) -> str:
    """Scale-bar label of a length [m] (``"2 mm"``, ``"500 µm"``)."""
    sym, scale = length_unit(length)
    v = length / scale
    return f"{v:.3g} {sym}"


def add_scale_bar(ax, width: float, *, loc: str = "lower left", fraction: float = 0.22,
                  scale: float = 1.0):
    """Add a scale bar of a nice length (about ``fraction`` of ``width``) to ``ax``.

    Parameters
    ----------
    ax : matplotlib Axes (data units: metres / ``scale``)
    width : float [m]
        Width of the drawing.
    scale : float [m per data unit]
        Data coordinates are metres divided by this.

    Returns
    -------
    float [m]
        The bar's length.
    """
    from mpl_toolkits.axes_grid1.anchored_artists import AnchoredSizeBar

    length = nice_length(fraction * width)
    if length <= 0:
        return 0.0
    bar = AnchoredSizeBar(ax.transData, length / scale, format_bar(length), loc,
                          pad=0.3, borderpad=0.4, sep=3, frameon=False, color=INK,
                          size_vertical=0, fontproperties={"size": 7.5})
    bar.set_zorder(20)
    ax.add_artist(bar)
    return length
