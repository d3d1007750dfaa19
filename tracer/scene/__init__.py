"""Scenes: the TOML format, its strict validation, the loader and the writer.

>>> from tracer.scene import loads, SceneError
>>> try:
...     loads('format = 1\\ntitel = "x"\\n[spectrum]\\nwavelengths = ["550 nm"]', path="x.toml")
... except SceneError as exc:
...     for problem in exc.problems:
...         print(problem)
x.toml: titel: unknown key "titel"; did you mean "title"? (known: ambient, baseline, coatings,
  detectors, dimension, format, gap_finding, gaps, include, length_unit, materials, parts, requirements, seed,
  solids, sources, spectrum, title, tolerances, trace)

The format is described key by key in ``docs/scene-format.md``.
"""

from .loader import from_dict, load, loads
from .problems import Problem, SceneError
from .summary import format_summary, summarize
from .toml_io import FORMAT_VERSION
from .writer import dump, to_document, write

__all__ = ["load", "loads", "from_dict", "dump", "write", "to_document", "summarize",
           "format_summary", "SceneError", "Problem", "FORMAT_VERSION"]
