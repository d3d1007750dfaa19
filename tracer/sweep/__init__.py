"""Sweeps, Monte Carlo tolerancing and parallel work (local processes or Dask).

* :mod:`~tracer.sweep.keypath` -- scene values by TOML key path in the raw document;
* :mod:`~tracer.sweep.parallel` -- backends (serial, process pool, Dask) and per-task seeds;
* :mod:`~tracer.sweep.split_trace` -- one large trace as ray ranges, summed.
"""

from .keypath import KeyPathError, get_value, parse, set_value, with_values
from .parallel import (DaskBackend, ParallelError, ProcessBackend, SerialBackend, get_backend,
                       parallel_map, task_rng, task_seed)
from .split_trace import merge_summaries, trace_range, trace_split

__all__ = ["KeyPathError", "get_value", "set_value", "with_values", "parse",
           "ParallelError", "SerialBackend", "ProcessBackend", "DaskBackend", "get_backend",
           "parallel_map", "task_seed", "task_rng", "trace_split", "trace_range", "merge_summaries"]
