"""Parameter sweeps: vary scene values by key path, trace every point, tabulate.

Example (a mated pair, see ``docs/sweeps.md``)::

    import tracer.sweep as sw
    res = sw.sweep("pair.toml", [sw.range_axis("solids.upper.mate.gap", "0.05 um", "1 um", 20)],
                   workers=2, settings={"rays": 5})
    res.column("Tdesign.s.through")

Each point is a copy of the scene's parsed document with the axes' values written in
(:mod:`tracer.sweep.keypath`), loaded through the scene loader -- so a bad value is
reported with its key path and the point -- traced with :func:`tracer.engine.trace`
and reduced to one row (:mod:`tracer.sweep.collect`): detector powers and fractions,
transmission for s and p input states, ghost power and the strongest ghosts, gap
leakage, requirement values and verdicts, and the design path's deviation when the
scene declares a sequence. Points run on any backend of :mod:`tracer.sweep.parallel`;
the table is the same for any number of workers (see :mod:`tracer.sweep.runner` for
the seeds).

A sweep of a gap: the thickness of a ``[gaps.NAME]`` table is checked against the
placed geometry, so sweep the geometry instead -- the ``gap`` of a mated solid
(``solids.upper.mate.gap``) or a position component.
"""

from __future__ import annotations

import json
import math
import os
from collections.abc import Sequence
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from ..errors import TracerError
from .axes import Axis, grid
from .parallel import Backend, parallel_map
from .runner import (check_errors, check_paths, document_of, make_task, run_options, run_task,
                     write_result_files)

__all__ = ["sweep", "SweepResult"]


@dataclass
class SweepResult:
    """The table of a sweep.

    Attributes
    ----------
    axes : list of Axis
    points : list of dict
        ``{path: value}`` of every point, in order (first axis slowest).
    rows : list of dict
        Result columns per point (``{}`` for a failed point with ``on_error="skip"``).
    details : list of dict
        Extra plain data per point (top ghosts).
    errors : list of str or None
        The error of every failed point (``None`` when it ran).
    scene : str
        The scene file (or title).
    settings : dict
        Trace settings used.
    """

    axes: list
    points: list
    rows: list
    details: list = field(default_factory=list)
    errors: list = field(default_factory=list)
    scene: str = ""
    settings: dict = field(default_factory=dict)

    @property
    def columns(self) -> list[str]:
        """Result columns, in first-seen order."""
        seen: dict = {}
        for r in self.rows:
            for k in r:
                seen.setdefault(k, None)
        return list(seen)

    def axis_numbers(self, path: str) -> np.ndarray:
        """The numbers (in the axis unit) of axis ``path`` at every point."""
        ax = self._axis(path)
        lookup = dict(zip(ax.values, ax.numbers))
        return np.array([np.nan if lookup[p[path]] is None else lookup[p[path]]
                         for p in self.points], dtype=float)

    def _axis(self, path) -> Axis:
        for a in self.axes:
            if a.path == path:
                return a
        raise KeyError(f"no axis {path!r}; axes: {', '.join(a.path for a in self.axes)}")

    def column(self, name: str) -> np.ndarray:
        """A result column as an array (NaN where missing); axis paths give their numbers."""
        if any(a.path == name for a in self.axes):
            return self.axis_numbers(name)
        if name not in self.columns:
            raise KeyError(f"no column {name!r}; columns: {', '.join(self.columns)}")
        vals = [r.get(name) for r in self.rows]
        if any(isinstance(v, str) for v in vals):
            return np.array(vals, dtype=object)
        return np.array([np.nan if v is None else float(v) for v in vals], dtype=float)

    # ------------------------------------------------------------ outputs
    def to_dict(self) -> dict:
        """JSON-ready data: axes, points with their values, results and errors."""
        return dict(
            scene=self.scene,
            settings={k: v for k, v in self.settings.items() if k != "progress"},
            axes=[dict(path=a.path, unit=a.unit, values=list(a.values),
                       numbers=list(a.numbers)) for a in self.axes],
            columns=self.columns,
            points=[dict(index=i, values=p, results=_finite(r), details=d, error=e)
                    for i, (p, r, d, e) in enumerate(zip(self.points, self.rows,
                                                         self.details or [{}] * len(self.rows),
                                                         self.errors or [None] * len(self.rows)))],
        )

    def to_json(self, path: str | os.PathLike | None = None) -> str:
        text = json.dumps(self.to_dict(), indent=2)
        if path is not None:
            _write(path, text + "\n")
        return text

    def to_csv(self, path: str | os.PathLike | None = None) -> str:
        """CSV: ``point``, one column per axis (its number in the axis unit, header
        ``path [unit]``), then every result column."""
        from ..analysis.tables import csv_text

        header = ["point"] + [a.label for a in self.axes] + self.columns
        lookups = [dict(zip(a.values, a.numbers)) for a in self.axes]
        body = []
        for i, (p, r) in enumerate(zip(self.points, self.rows)):
            cells = [i]
            for a, lk in zip(self.axes, lookups):
                n = lk.get(p[a.path])
                cells.append(n if n is not None else p[a.path])
            cells += [r.get(c) for c in self.columns]
            body.append(cells)
        text = csv_text(header, body)
        if path is not None:
            _write(path, text)
        return text

    def write(self, out_dir: str | os.PathLike, *, figures: bool = True) -> list[Path]:
        """Write ``sweep.csv``, ``sweep.json`` and (when matplotlib imports) figures."""
        if not figures:
            return write_result_files(self, out_dir, "sweep")
        from . import plots

        return write_result_files(self, out_dir, "sweep", plots.sweep_figures)


def _finite(row: dict) -> dict:
    return {k: (None if isinstance(v, float) and not math.isfinite(v) else v) for k, v in row.items()}


def _write(path, text):
    from ..outputs import atomic_write_text

    atomic_write_text(path, text)  # temporary file, then rename; TracerError when unwritable


def sweep(scene, axes: Sequence[Axis], *, settings: dict | None = None,
          groups: Sequence[str] | None = None, states: dict | None = None,
          seeds: str = "common", backend: Backend | None = None, workers: int | None = None,
          scheduler: str | None = None, on_error: str = "raise",
          progress: bool | None = None) -> SweepResult:
    """Trace ``scene`` at every point of the grid of ``axes``.

    Parameters
    ----------
    scene : str, path, Scene or dict
        A scene file, a loaded scene (its ``raw`` document is used) or a parsed document.
    axes : sequence of Axis
        :func:`tracer.sweep.axes.range_axis` / :func:`~tracer.sweep.axes.list_axis`;
        several make a grid.
    settings : dict, optional
        Trace settings (``rays``, ``mode``, ``power_threshold`` ...).
    groups : sequence of str, optional
        Result groups (default: all, see :mod:`tracer.sweep.collect`).
    states : dict, optional
        ``{name: angle [rad]}`` linear input states for the ``T.*`` columns (default s
        = 90 deg, p = 0 deg from the source ``x_axis``); ``{}`` for none.
    seeds : "common" or "per-task"
        See :mod:`tracer.sweep.runner`.
    backend, workers, scheduler
        Where the points run (:func:`tracer.sweep.parallel.get_backend`).
    on_error : "raise" or "skip"
        ``raise``: a :class:`~tracer.sweep.runner.PointError` listing every failed
        point (after all ran); ``skip``: keep them as empty rows with their error.
    progress : bool or None
        Progress bar on stderr (None: when stderr is a terminal).

    Returns
    -------
    SweepResult
    """
    if on_error not in ("raise", "skip"):
        raise TracerError(f'on_error={on_error!r}: expected "raise" or "skip"')
    if seeds not in ("common", "per-task"):
        raise TracerError(f'seeds={seeds!r}: expected "common" or "per-task"')
    axes = list(axes)
    if not axes:
        raise TracerError("a sweep needs at least one axis (--vary or --values)")
    doc, path, base = document_of(scene)
    check_paths(doc, [a.path for a in axes])
    points = grid(axes)
    opts = run_options(settings, groups, states, seeds=seeds)
    tasks = [make_task(doc, path, base, i, p, opts) for i, p in enumerate(points)]
    outcomes = parallel_map(run_task, tasks, backend=backend, workers=workers, scheduler=scheduler,
                            label="sweep", progress=progress)
    check_errors(outcomes, on_error=on_error, kind="point")
    return SweepResult(axes=axes, points=points, rows=[o["row"] for o in outcomes],
                       details=[o["details"] for o in outcomes],
                       errors=[o["error"] for o in outcomes],
                       scene=path or str(doc.get("title", "")), settings=dict(settings or {}))
