"""Sweeps, Monte Carlo tolerancing and parallel work (local processes or Dask).

* :mod:`~tracer.sweep.keypath` -- scene values by TOML key path in the raw document;
* :mod:`~tracer.sweep.axes` -- swept values: ranges with units, lists, grids;
* :mod:`~tracer.sweep.sweep` -- :func:`sweep` and its table (CSV, JSON, figures);
* :mod:`~tracer.sweep.tolerance` -- :func:`tolerance_run`: yield, worst trials,
  sensitivities (:mod:`~tracer.sweep.tolerance_result`);
* :mod:`~tracer.sweep.collect` -- the result columns of one trace;
* :mod:`~tracer.sweep.runner` -- one task: change, load, trace, collect;
* :mod:`~tracer.sweep.parallel` -- backends (serial, process pool, Dask) and per-task seeds;
* :mod:`~tracer.sweep.split_trace` -- one large trace as ray ranges, summed;
* :mod:`~tracer.sweep.plots` -- small matplotlib figures.
"""

from .axes import Axis, AxisError, grid, list_axis, parse_value, parse_values, range_axis
from .collect import DEFAULT_STATES, collect, state_power
from .keypath import KeyPathError, add_quantity, get_value, parse, set_value, with_values
from .parallel import (DaskBackend, ParallelError, ProcessBackend, SerialBackend, get_backend,
                       parallel_map, task_rng, task_seed)
from .runner import PointError, RunOptions
from .split_trace import merge_summaries, trace_range, trace_split
from .sweep import SweepResult, sweep
from .tolerance import (Tolerance, ToleranceError, one_at_a_time, parse_tol_option,
                        read_tolerances, tolerance_run)
from .tolerance_result import ToleranceResult, spearman

__all__ = [
    "Axis", "AxisError", "grid", "list_axis", "range_axis", "parse_value", "parse_values",
    "DEFAULT_STATES", "collect", "state_power",
    "KeyPathError", "add_quantity", "get_value", "parse", "set_value", "with_values",
    "DaskBackend", "ParallelError", "ProcessBackend", "SerialBackend", "get_backend",
    "parallel_map", "task_rng", "task_seed",
    "PointError", "RunOptions",
    "merge_summaries", "trace_range", "trace_split",
    "SweepResult", "sweep",
    "Tolerance", "ToleranceError", "one_at_a_time", "parse_tol_option", "read_tolerances",
    "tolerance_run", "ToleranceResult", "spearman",
]
