"""The tracing engine: non-sequential tree and Monte Carlo modes, sequential design paths.

Public entry points:

* :func:`trace` -- ``trace(scene, **settings) -> Result`` (non-sequential);
* :func:`trace_sequence` -- follow a declared face sequence and report the design path;
* :class:`Result` -- ledger, paths, detector records, :meth:`Result.summary`.

Modules: :mod:`~tracer.engine.batch` (ray batches), :mod:`~tracer.engine.compile`
(scene -> arrays), :mod:`~tracer.engine.intersect` (nearest face),
:mod:`~tracer.engine.interact` (coefficients and children), :mod:`~tracer.engine.ledger`,
:mod:`~tracer.engine.paths`, :mod:`~tracer.engine.tree` (event loop),
:mod:`~tracer.engine.montecarlo`, :mod:`~tracer.engine.sequential`,
:mod:`~tracer.engine.result`.
"""

from .api import SETTINGS, trace
from .compile import EngineError, compile_scene
from .result import Result
from .sequential import SequenceReport, trace_sequence

__all__ = ["trace", "trace_sequence", "SequenceReport", "Result", "SETTINGS", "EngineError", "compile_scene"]
