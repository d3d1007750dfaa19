"""One task of a sweep or a tolerance run: change the document, load, trace, collect.

A task carries the parsed scene document (``Scene.raw``) and the changes of its point
as ``{key path: value}``; the worker writes the values into a copy of the document,
loads it through the scene loader (so that every value is validated as in a file),
traces it and keeps one row of results (:func:`tracer.sweep.collect.collect`). A
scene problem does not raise in the worker: the task returns it as an error naming the
point, and the caller decides (:func:`check_errors`).

Seeds: with ``seeds="common"`` (default) every task traces with the scene seed (common
random numbers: point-to-point differences come from the changed values, not from new
random rays); with ``seeds="per-task"`` task ``i`` traces with
:func:`tracer.sweep.parallel.task_seed` ``(seed, i)``. Both are independent of the
number of workers and of the backend.
"""

from __future__ import annotations

import math
import os
from dataclasses import dataclass, field
from pathlib import Path

from ..errors import TracerError
from .collect import DEFAULT_STATES, collect
from .keypath import KeyPathError, format_path, parse, set_value, with_values
from .parallel import task_seed

__all__ = ["RunOptions", "PointError", "run_task", "make_task", "check_errors", "document_of"]

SEED_MODES = ("common", "per-task")


class PointError(TracerError):
    """One or more points (or trials) could not be loaded or traced."""

    def __init__(self, message: str, failures: list | None = None):
        super().__init__(message)
        self.failures = list(failures or [])

    def __reduce__(self):
        return (type(self), (str(self), self.failures))


@dataclass(frozen=True)
class RunOptions:
    """What every task does.

    Attributes
    ----------
    settings : dict
        Trace settings for :func:`tracer.engine.trace` (``rays``, ``mode``, ...).
    groups : tuple of str
        Result groups (:data:`tracer.sweep.collect.GROUPS`).
    states : dict
        ``{name: angle [rad]}`` of the linear input states for ``T.STATE.DET``.
    seeds : "common" or "per-task"
    """

    settings: dict = field(default_factory=dict)
    groups: tuple = ("power", "polarization", "ghosts", "leakage", "requirements", "sequence")
    states: dict = field(default_factory=lambda: dict(DEFAULT_STATES))
    seeds: str = "common"


def run_options(settings: dict | None = None, groups=None, states: dict | None = None, *,
                seeds: str = "common") -> RunOptions:
    """:class:`RunOptions` from the optional arguments of a sweep or a tolerance run
    (``None``: the default groups and states).

    >>> run_options({"rays": 10}, groups=["power"]).groups
    ('power',)
    """
    return RunOptions(settings=dict(settings or {}), seeds=seeds,
                      **({} if groups is None else {"groups": tuple(groups)}),
                      **({} if states is None else {"states": dict(states)}))


def write_result_files(result, out_dir, stem: str, figures=None) -> list[Path]:
    """``STEM.csv`` and ``STEM.json`` (``result.to_csv``, ``result.to_json``) in ``out_dir``
    (made when missing), then the files of ``figures(result, out_dir)`` when given."""
    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    files = [out / f"{stem}.csv", out / f"{stem}.json"]
    result.to_csv(files[0])
    result.to_json(files[1])
    if figures is not None:
        files += figures(result, out)
    return files


def document_of(scene_or_path) -> tuple[dict, str | None, str]:
    """``(document, path, base_dir)`` from a scene file path, a loaded Scene or a dict."""
    from ..scene.toml_io import parse_text

    if isinstance(scene_or_path, (str, os.PathLike)):
        file = os.fspath(scene_or_path)
        try:
            text = Path(file).read_bytes()
        except OSError as exc:
            raise TracerError(f"{file}: cannot read the scene file: {exc.strerror or exc}") from None
        return parse_text(text, file=file), file, str(Path(file).resolve().parent)
    if isinstance(scene_or_path, dict):
        return scene_or_path, None, os.getcwd()
    raw = getattr(scene_or_path, "raw", None)
    if raw is None:
        raise TracerError("the scene has no parsed document (Scene.raw): load it from a file "
                          "or text to sweep it")
    path = getattr(scene_or_path, "path", None)
    base = str(Path(path).resolve().parent) if path else os.getcwd()
    return raw, path, base


def describe_point(values: dict) -> str:
    """``path = value, ...`` of a point, for messages."""
    return ", ".join(f"{k} = {v!r}" for k, v in values.items()) or "nominal"


def make_task(doc, path, base_dir, index: int, values: dict, options: RunOptions, kind="point"):
    """A picklable task tuple for :func:`run_task`."""
    return (doc, path, base_dir, int(index), dict(values), options, kind)


def _linear_document(doc: dict, angle: float) -> dict:
    out = with_values(doc, {})
    for name, src in (out.get("sources") or {}).items():
        if isinstance(src, dict):
            src["polarization"] = {"kind": "linear", "angle": f"{math.degrees(angle)!r} deg"}
    return out


def run_task(task) -> dict:
    """Run one task; returns ``{index, values, ok, error, row, details}`` (plain data)."""
    from .. import engine
    from ..scene import from_dict

    doc, path, base_dir, index, values, options, kind = task
    out = dict(index=index, values=values, ok=False, error=None, row={}, details={})
    where = f"{kind} {index} ({describe_point(values)})"
    try:
        changed = with_values(doc, values)
        scene = from_dict(changed, path=path, base_dir=base_dir)
    except TracerError as exc:
        out["error"] = f"{where}: {exc}"
        return out
    settings = dict(options.settings)
    settings.setdefault("progress", False)
    if options.seeds == "per-task":
        settings["seed"] = task_seed(int(settings.get("seed", scene.seed)), index)
    groups = set(options.groups)
    try:
        result = engine.trace(scene, **settings)
        retraced = None
        mode = result.options.mode
        if "polarization" in groups and options.states and mode != "tree":
            retraced = {}
            for name, angle in options.states.items():
                s2 = from_dict(_linear_document(changed, angle), path=path, base_dir=base_dir)
                retraced[name] = engine.trace(s2, **settings)
        report = None
        if "sequence" in groups and scene.settings.sequence:
            try:
                report = engine.trace_sequence(scene)
            except TracerError:
                report = None
        row, details = collect(result, groups=groups, states=options.states, retraced=retraced,
                               sequence_report=report)
    except TracerError as exc:
        out["error"] = f"{where}: {exc}"
        return out
    out.update(ok=True, row=row, details=details)
    return out


def check_paths(doc: dict, paths) -> None:
    """Raise :class:`KeyPathError` for a key path that cannot be set in ``doc``."""
    for p in paths:
        parse(p)
        trial = with_values(doc, {})
        set_value(trial, p, 0)


def check_errors(outcomes: list[dict], *, on_error: str, kind: str = "point") -> None:
    """Raise :class:`PointError` for failed tasks unless ``on_error == "skip"``."""
    failed = [o for o in outcomes if not o["ok"]]
    if not failed or on_error == "skip":
        return
    lines = [o["error"] for o in failed[:10]]
    more = f"\n... and {len(failed) - 10} more" if len(failed) > 10 else ""
    raise PointError(f"{len(failed)} of {len(outcomes)} {kind}s failed:\n" + "\n".join(lines) + more,
                     [o["error"] for o in failed])


__all__ += ["describe_point", "check_paths", "format_path", "KeyPathError", "run_options",
            "write_result_files"]
