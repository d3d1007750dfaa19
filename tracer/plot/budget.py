"""The power-budget figure: where the source power went, one bar per account.

Horizontal bars on a logarithmic power axis (budgets span many decades: a detector
receives most of the power, ghosts and leaks parts per million), grouped and coloured by
category, each labelled with its power and its fraction of the source power. Category
colours are fixed (:data:`CATEGORY_COLORS`), so every budget figure reads the same.
"""

from __future__ import annotations

import numpy as np

from . import _style

__all__ = ["budget_figure", "budget_rows", "CATEGORY_COLORS"]

#: Fixed colour per budget category.
CATEGORY_COLORS = {
    "detector": "#2e7d5b",
    "absorbed (face)": "#8c5a2b",
    "absorbed (bulk)": "#b8864b",
    "escaped": "#4f6d8f",
    "discarded": "#a0a0a0",
    "cut": "#c07070",
    "lost": "#7a3b7a",
}
_ORDER = tuple(CATEGORY_COLORS)


def budget_rows(budget) -> tuple[list[tuple[str, str, float]], float]:
    """Normalise a budget into ``([(category, name, power_w), ...], source_power_w)``.

    Parameters
    ----------
    budget
        A :class:`tracer.analysis.budget.PowerBudget`, a list of its ``BudgetRow``, a
        list of dicts with ``category``, ``name``, ``power_w`` (and optionally
        ``fraction``), a list of ``(category, name, power_w)`` tuples, or a
        :class:`tracer.engine.Result` (its budget is computed).

    >>> rows, src = budget_rows([("detector", "camera", 0.9), ("escaped", "a.exit", 0.1)])
    >>> len(rows), round(src, 6)
    (2, 1.0)
    """
    src = None
    if hasattr(budget, "ledger") and hasattr(budget, "tree"):
        from tracer.analysis.budget import power_budget

        budget = power_budget(budget)
    if hasattr(budget, "rows") and hasattr(budget, "source_power_w"):
        src = float(budget.source_power_w)
        budget = budget.rows
    rows = []
    fractions = []
    for r in budget:
        if isinstance(r, dict):
            cat, name, p = r.get("category", ""), r.get("name", ""), float(r.get("power_w", 0.0))
            fractions.append(r.get("fraction"))
        elif hasattr(r, "power_w"):
            cat, name, p = r.category, r.name, float(r.power_w)
            fractions.append(getattr(r, "fraction", None))
        else:
            cat, name, p = r[0], r[1], float(r[2])
            fractions.append(None)
        rows.append((str(cat), str(name), p))
    if src is None:
        fr = [(p, f) for (_, _, p), f in zip(rows, fractions) if f]
        src = fr[0][0] / fr[0][1] if fr else float(sum(p for _, _, p in rows))
    return rows, src


def budget_figure(budget, *, ax=None, floor: float = 1e-12, title: str | bool = True,
                  figsize=None):
    """Bar chart of a power budget [W] (log axis), coloured by category.

    Parameters
    ----------
    budget
        Anything :func:`budget_rows` accepts (``PowerBudget``, rows, dicts, tuples, Result).
    ax : matplotlib Axes or None
    floor : float [1]
        Accounts below this fraction of the source power are not drawn (round-off).
    title : str or bool
        ``True``: "power budget" with the source power.

    Returns
    -------
    matplotlib Figure
    """
    from tracer.units import format_power

    rows, src = budget_rows(budget)
    keep = [r for r in rows if r[2] > floor * max(src, 1e-300)]
    keep.sort(key=lambda r: (_ORDER.index(r[0]) if r[0] in _ORDER else len(_ORDER), -r[2]))
    n = max(len(keep), 1)
    fig, ax = _style.new_axes(ax, figsize=figsize or (6.4, 0.9 + 0.32 * n))
    with _style.style():
        if not keep:
            ax.text(0.5, 0.5, "no power booked", ha="center", va="center", transform=ax.transAxes)
            ax.set_axis_off()
            return fig
        y = np.arange(len(keep))[::-1]
        powers = np.array([r[2] for r in keep])
        colors = [CATEGORY_COLORS.get(r[0], "#777777") for r in keep]
        lo = 10 ** np.floor(np.log10(powers.min()) - 0.5)
        hi = 10 ** np.ceil(np.log10(max(powers.max(), src)) + 1.3)
        ax.barh(y, powers - lo, left=lo, color=colors, height=0.62, edgecolor="none")
        ax.set_xscale("log")
        ax.set_xlim(lo, hi)
        labels = [f"{r[1]}" for r in keep]
        ax.set_yticks(y, labels)
        ax.tick_params(axis="y", length=0)
        for yy, p in zip(y, powers):
            frac = p / src if src else 0.0
            ax.text(p * 1.25, yy, f"{format_power(p, digits=3)}  ({_fmt_frac(frac)})", va="center",
                    ha="left", fontsize=7, color=_style.INK)
        ax.set_xlabel("power [W]")
        ax.grid(True, axis="x", color=_style.GRID, lw=0.5, which="major")
        ax.set_axisbelow(True)
        ax.spines["left"].set_visible(False)
        if src > 0:
            ax.axvline(src, color=_style.FAINT, lw=0.7, ls=(0, (3, 2)))
            ax.text(src, y.max() + 0.65, " source", fontsize=6.5, color=_style.FAINT, ha="left",
                    va="bottom")
        ax.set_ylim(-0.6, len(keep) - 0.2)
        from matplotlib.patches import Patch

        cats = [c for c in _ORDER if any(r[0] == c for r in keep)]
        cats += sorted({r[0] for r in keep} - set(_ORDER))
        ax.legend(handles=[Patch(color=CATEGORY_COLORS.get(c, "#777777"), label=c) for c in cats],
                  loc="upper center", bbox_to_anchor=(0.5, -0.55 / n - 0.12), ncol=min(len(cats), 4))
        empty = [r[1] for r in rows if r[0] == "detector" and r[2] <= floor * max(src, 1e-300)]
        if empty:
            ax.annotate("no power on " + ", ".join(empty), xy=(1.0, 1.0), xycoords="axes fraction",
                        xytext=(0, 4), textcoords="offset points", ha="right", va="bottom",
                        fontsize=7, color=_style.FAINT)
        if title:
            ax.set_title(f"power budget, source {format_power(src, digits=4)}" if title is True
                         else str(title), loc="left")
    return fig


def _fmt_frac(f: float) -> str:
    """Share of the source power for a bar label: % down to 0.1 %, then ppm.

    >>> _fmt_frac(0.526), _fmt_frac(0.00219), _fmt_frac(1.36e-4), _fmt_frac(2e-9)
    ('52.6 %', '0.219 %', '136 ppm', '2.00e-09')
    """
    if f >= 1e-3:
        return f"{100 * f:.3g} %"
    if f >= 1e-6:
        return f"{f * 1e6:.3g} ppm"
    return f"{f:.2e}"
