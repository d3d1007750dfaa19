"""The result of a Monte Carlo tolerance run: yield, worst trials, sensitivities.

See :mod:`tracer.sweep.tolerance` for the definitions (yield, margins, the rank
correlation ranking).
"""

from __future__ import annotations

import json
import math
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from .. import tolerances as _tol
from ..outputs import atomic_write_text

__all__ = ["ToleranceResult", "spearman"]

# ---------------------------------------------------------------------------
# statistics
# ---------------------------------------------------------------------------


def _ranks(x: np.ndarray) -> np.ndarray:
    """Ranks with ties averaged (1-based)."""
    order = np.argsort(x, kind="mergesort")
    ranks = np.empty(len(x))
    ranks[order] = np.arange(1, len(x) + 1)
    xs = x[order]
    i = 0
    while i < len(xs):  # average tied ranks
        j = i
        while j + 1 < len(xs) and xs[j + 1] == xs[i]:
            j += 1
        if j > i:
            ranks[order[i:j + 1]] = 0.5 * (i + j) + 1
        i = j + 1
    return ranks


def spearman(x, y) -> float:
    """Spearman rank correlation of two samples (NaN pairs dropped; 0 for a constant).

    Pearson correlation of the ranks (Spearman, Am. J. Psychol. 15, 1904).

    >>> spearman([1, 2, 3, 4], [10, 20, 25, 100]), spearman([1, 2, 3], [3, 2, 1])
    (1.0, -1.0)
    """
    x, y = np.asarray(x, float), np.asarray(y, float)
    ok = np.isfinite(x) & np.isfinite(y)
    x, y = x[ok], y[ok]
    if len(x) < 3:
        return 0.0
    rx, ry = _ranks(x), _ranks(y)
    rx -= rx.mean()
    ry -= ry.mean()
    den = math.sqrt(float(rx @ rx) * float(ry @ ry))
    return float(rx @ ry / den) if den > 0 else 0.0



# ---------------------------------------------------------------------------
# the run and its result
# ---------------------------------------------------------------------------


@dataclass
class ToleranceResult:
    """Trials of a Monte Carlo tolerance run.

    Attributes
    ----------
    tolerances : list of Tolerance
    deltas : (N, K) ndarray
        Drawn perturbation of each trial and tolerance [the tolerance's unit].
    values : list of dict
        ``{path: value}`` written into each trial's document.
    rows : list of dict
        Result columns of each trial (:mod:`tracer.sweep.collect`).
    nominal : dict
        Result columns of the unperturbed scene.
    requirements : dict
        ``{name: (comparison, limit)}`` of the scene's requirements.
    errors : list
        Error per trial (None when it ran).
    """

    tolerances: list
    deltas: np.ndarray
    values: list
    rows: list
    nominal: dict
    requirements: dict = field(default_factory=dict)
    errors: list = field(default_factory=list)
    scene: str = ""
    seed: int = 0
    settings: dict = field(default_factory=dict)

    @property
    def trials(self) -> int:
        return len(self.rows)

    @property
    def limits(self) -> dict:
        """``{req.NAME: limit}`` for plots."""
        return {f"req.{n}": lim for n, (_, lim) in self.requirements.items()}

    @property
    def columns(self) -> list[str]:
        seen: dict = {}
        for r in [self.nominal, *self.rows]:
            for k in r:
                seen.setdefault(k, None)
        return list(seen)

    def column(self, name: str) -> np.ndarray:
        """A numeric result column over the trials (NaN where missing or failed)."""
        if name not in self.columns:
            raise KeyError(f"no column {name!r}; columns: {', '.join(self.columns)}")
        out = []
        for r in self.rows:
            v = r.get(name)
            out.append(float(v) if isinstance(v, (int, float)) and v is not None else np.nan)
        return np.array(out, dtype=float)

    def summary_columns(self) -> list[str]:
        """Numeric columns worth a histogram: requirement values, fractions, deviation."""
        keep = ("req.", "fraction.", "T.", "leakage.", "deviation_deg", "ghost_fraction.")
        return [c for c in self.columns if c.startswith(keep) and
                isinstance(self.nominal.get(c, 0.0), (int, float)) and
                not isinstance(self.nominal.get(c), bool)]

    def passed(self) -> np.ndarray:
        """(N,) bool: every requirement passed in the trial (failed trials count as fails)."""
        ok = np.array([r != {} for r in self.rows], dtype=bool)
        for n in self.requirements:
            ok &= np.array([bool(r.get(f"pass.{n}", False)) for r in self.rows], dtype=bool)
        return ok

    def yield_fraction(self, requirement: str | None = None) -> float:
        """Fraction of trials that pass every requirement (or one named requirement)."""
        if not self.rows:
            return float("nan")
        if requirement is None:
            return float(self.passed().mean())
        if requirement not in self.requirements:
            raise KeyError(f"no requirement {requirement!r}; the scene has "
                           f"{', '.join(self.requirements) or 'none'}")
        return float(np.mean([bool(r.get(f"pass.{requirement}", False)) for r in self.rows]))

    def inconclusive_count(self, requirement: str) -> int:
        """Trials whose verdict on ``requirement`` was inconclusive (not counted as passing)."""
        return int(sum(r.get(f"verdict.{requirement}") == "inconclusive" for r in self.rows))

    def margins(self) -> np.ndarray:
        """(N,) smallest normalised requirement margin per trial (negative: fails)."""
        m = np.full(len(self.rows), np.inf)
        for n, (cmp, lim) in self.requirements.items():
            v = self.column(f"req.{n}") if f"req.{n}" in self.columns else np.full(len(self.rows), np.nan)
            scale = abs(lim) if lim else 1.0
            mm = (v - lim) / scale if cmp == ">=" else (lim - v) / scale
            m = np.minimum(m, np.where(np.isfinite(mm), mm, -np.inf))
        return m

    def worst(self, count: int = 5) -> list[dict]:
        """The ``count`` trials with the smallest margin: index, margin, perturbations."""
        if not self.requirements:
            return []
        m = self.margins()
        order = np.argsort(m, kind="stable")[:count]
        return [dict(trial=int(i), margin=_num(m[i]),
                     perturbations={t.name: _delta(t, self.deltas[i, k])
                                    for k, t in enumerate(self.tolerances)},
                     results={f"req.{n}": self.rows[i].get(f"req.{n}") for n in self.requirements})
                for i in order]

    def sensitivity(self, column: str) -> list[tuple[str, float, float]]:
        """``[(tolerance, share, rho), ...]`` by falling share (see the module docstring)."""
        y = self.column(column)
        if not np.isfinite(y).any():
            return []
        spread, size = float(np.nanstd(y)), float(np.nanmean(np.abs(y)))
        if spread == 0 or spread <= _tol.SENSITIVITY_MIN_SPREAD * size:
            return []  # constant to round-off
        rhos = [spearman(self.deltas[:, k], y) for k in range(len(self.tolerances))]
        sq = np.array(rhos) ** 2
        total = sq.sum()
        shares = sq / total if total > 0 else sq
        out = [(t.name, float(s), float(r)) for t, s, r in zip(self.tolerances, shares, rhos)]
        return sorted(out, key=lambda x: -x[1])

    def to_dict(self) -> dict:
        cols = self.summary_columns()
        stats = {}
        for c in cols:
            v = self.column(c)
            v = v[np.isfinite(v)]
            if len(v):
                stats[c] = dict(nominal=_num(self.nominal.get(c)), mean=float(v.mean()),
                                std=float(v.std(ddof=1)) if len(v) > 1 else 0.0,
                                min=float(v.min()), max=float(v.max()),
                                p05=float(np.percentile(v, 5)), p95=float(np.percentile(v, 95)),
                                sensitivity=[dict(tolerance=n, share=s, rho=r)
                                             for n, s, r in self.sensitivity(c)])
        return dict(
            scene=self.scene, seed=self.seed, trials=self.trials,
            settings={k: v for k, v in self.settings.items() if k != "progress"},
            tolerances=[dict(name=t.name, keys=list(t.paths), dist=t.dist,
                             **{"sigma" if t.dist == "normal" else "half_width": t.scale},
                             unit=t.unit) for t in self.tolerances],
            requirements={n: dict(comparison=c, limit=lim, yield_=self.yield_fraction(n))
                          for n, (c, lim) in self.requirements.items()},
            yield_fraction=self.yield_fraction() if self.requirements else None,
            worst=self.worst(),
            statistics=stats,
            nominal={k: _num(v) for k, v in self.nominal.items()},
            trial_rows=[dict(trial=i, perturbations={t.name: _delta(t, self.deltas[i, k])
                                                     for k, t in enumerate(self.tolerances)},
                             results={k: _num(v) for k, v in r.items()}, error=e)
                        for i, (r, e) in enumerate(zip(self.rows, self.errors or [None] * len(self.rows)))],
        )

    def to_json(self, path=None) -> str:
        text = json.dumps(self.to_dict(), indent=2).replace('"yield_"', '"yield"')
        if path is not None:
            atomic_write_text(path, text + "\n")
        return text

    def to_csv(self, path=None) -> str:
        """One row per trial: perturbations (header ``tol:NAME [unit]``), then results."""
        from ..analysis.tables import csv_text

        cols = self.columns
        header = ["trial"] + [f"tol:{t.name}" + (f" [{t.unit}]" if t.unit else "")
                              for t in self.tolerances] + cols
        body = [[i, *[float(x) for x in self.deltas[i]], *[r.get(c) for c in cols]]
                for i, r in enumerate(self.rows)]
        text = csv_text(header, body)
        if path is not None:
            atomic_write_text(path, text)
        return text

    def format_text(self) -> str:
        """A short report: yield, worst trials, statistics and rankings."""
        lines = [f"{self.trials} trials, {len(self.tolerances)} tolerances, seed {self.seed}"]
        for t in self.tolerances:
            lines.append(f"  {t.describe()}")
        if self.requirements:
            lines.append(f"yield: {100 * self.yield_fraction():.1f} % of trials pass every requirement")
            for n in self.requirements:
                unsure = self.inconclusive_count(n)
                lines.append(f"  {n}: {100 * self.yield_fraction(n):.1f} %"
                             + (f" ({unsure} trial(s) inconclusive, counted as not passing: lower "
                                "the power threshold)" if unsure else ""))
            worst = self.worst(3)
            if worst:
                lines.append("  worst trials (margin: distance of the tightest requirement from its "
                             "limit, as a fraction of the limit; negative fails):")
            for w in worst:
                lines.append(f"    trial {w['trial']}: margin {100 * w['margin']:+.1f} % of the limit")
        for c, s in self.to_dict()["statistics"].items():
            lines.append(f"{c}: nominal {_fmt(s['nominal'])}, mean {_fmt(s['mean'])}, "
                         f"std {_fmt(s['std'])}, 5-95 % [{_fmt(s['p05'])}, {_fmt(s['p95'])}]")
            for r in s["sensitivity"][:3]:
                lines.append(f"    {r['tolerance']}: share {r['share']:.2f} (rho {r['rho']:+.2f})")
        return "\n".join(lines)

    def write(self, out_dir, *, figures: bool = True) -> list[Path]:
        """``tolerance.csv``, ``tolerance.json`` and (matplotlib) histograms."""
        from .runner import write_result_files

        if not figures:
            return write_result_files(self, out_dir, "tolerance")
        from . import plots

        return write_result_files(self, out_dir, "tolerance", plots.tolerance_figures)


def _fmt(x):
    return "-" if x is None else f"{x:.4g}"


def _num(v):
    if isinstance(v, bool) or v is None or isinstance(v, str):
        return v
    v = float(v)
    return v if math.isfinite(v) else None


def _delta(t, d):
    return t.delta_text(float(d))


