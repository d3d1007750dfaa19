"""The tracing engine: non-sequential tree and Monte Carlo modes, sequential design paths.

Public entry points:

* :func:`trace` -- ``trace(scene, **settings) -> Result`` (non-sequential);
* :func:`trace_sequence` -- follow a declared face sequence and report the design path;
* :class:`Result` -- ledger, paths, detector records, power that crossed each gap
  (:meth:`Result.crossed_power`: tunnelled and refracted), :meth:`Result.summary`;
* :func:`launch_counts` -- source rays per source (the indices ``ray_range`` selects).

Example (a demo scene: an uncoated plate in front of a screen):

>>> from pathlib import Path
>>> import tracer
>>> scene = tracer.load(Path(tracer.__file__).parents[1] / "scenes" / "plate_ghost.toml")
>>> res = tracer.trace(scene)
>>> s = res.summary()
>>> s["detectors"]["screen"]["paths"][0]["signature"]
'beam > plate.front:T > plate.back:T > screen'
>>> s["detectors"]["screen"]["paths"][1]["reflections"]
2
>>> led = s["ledger"]
>>> total = led["detected_w"] + led["absorbed_w"] + led["escaped_w"] + led["discarded_w"] + led["cut_w"]
>>> abs(total - s["source_power_w"]) < 1e-12 * s["source_power_w"]
True
>>> rep = tracer.trace_sequence(scene, ["plate.front", "plate.back"])
>>> rep.complete, round(float(rep.summary()["deviation_deg"]), 9)
(True, 0.0)

Conventions the engine adds to the project's:

* A ray that reaches a plane detector is recorded and ends there; one-sided detectors
  are transparent from behind. Far-field detectors bin escaping rays by direction; their
  power is booked as escaped (not detected) in the ledger.
* Across a gap the transmitted child leaves the partner face at the point across the
  gap (the hit point projected on the partner's plane); the lateral shift inside the gap
  is neglected, and the refraction uses the first face's normal (wedges below the gap
  finder's 1 deg).
* Directions use the real parts of the indices; interface coefficients use the real
  part of the incident medium's index (its loss is bulk absorption) and the complex
  index beyond the face.
* Solids must not overlap; the ambient is outside every solid.

Modules: :mod:`~tracer.engine.batch` (ray batches), :mod:`~tracer.engine.compile`
(scene -> arrays), :mod:`~tracer.engine.intersect` (nearest face),
:mod:`~tracer.engine.interact` (coefficients and children), :mod:`~tracer.engine.ledger`,
:mod:`~tracer.engine.paths`, :mod:`~tracer.engine.tree` (event loop),
:mod:`~tracer.engine.montecarlo`, :mod:`~tracer.engine.sequential`,
:mod:`~tracer.engine.result`.
"""

from .api import SETTINGS, launch_counts, trace
from .compile import EngineError, compile_scene
from .result import Result
from .sequential import SequenceReport, trace_sequence

__all__ = ["trace", "trace_sequence", "SequenceReport", "Result", "SETTINGS", "EngineError",
           "compile_scene", "launch_counts"]
