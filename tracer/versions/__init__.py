"""Scenes under version control: includes, git revisions, scene and result diffs, baselines.

* :mod:`~tracer.versions.includes` -- shared tables (materials, coatings, solids) included
  from other TOML files of the repository;
* :mod:`~tracer.versions.revisions` -- scene specs ``FILE`` or ``REV:path`` (read with
  ``git show``, the working tree untouched);
* :mod:`~tracer.versions.scene_diff` -- the difference of two scene documents by key path,
  quantities compared in SI;
* :mod:`~tracer.versions.result_diff` -- the difference of two run summaries: accounts,
  ghost paths by signature, requirement verdicts;
* :mod:`~tracer.versions.baseline` -- small, stable baseline files and their comparison;
* :mod:`~tracer.versions.edit` -- style-preserving edits of scene text (comments and
  layout kept).
"""

from .includes import INCLUDABLE_TABLES, repository_root, resolve_includes
from .revisions import SceneSpec, load_spec, parse_spec, read_document
from .scene_diff import SceneChange, SceneDiff, diff_documents
from .result_diff import ResultDiff, diff_summaries, verdict_rank

__all__ = [
    "INCLUDABLE_TABLES", "repository_root", "resolve_includes",
    "SceneSpec", "load_spec", "parse_spec", "read_document",
    "SceneChange", "SceneDiff", "diff_documents",
    "ResultDiff", "diff_summaries", "verdict_rank",
]
