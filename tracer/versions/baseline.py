"""Baselines: the results a repository commits beside a scene, and their comparison.

``tracer run SCENE --save-baseline FILE`` writes a small TOML file: the trace settings
and one line per quantity, keys sorted, numbers rounded to :data:`DIGITS` significant
digits, so that a deliberate change shows as a readable text diff in review.
``tracer run SCENE --baseline FILE`` traces again and names every quantity that moved
by more than its tolerance (exit code 1).

Quantities (all from the JSON summary, read generically):

* ``source_power_w``; every number under ``ledger`` (but the closure residual, which
  is round-off) and under ``gaps``;
* ``detectors.D.K`` for every number K of detector D (``power_w``, ``ghost_fraction``,
  ``paths_total``, ...);
* ``detectors.D.path[SIGNATURE].power_w`` for the :data:`TOP_PATHS` strongest paths;
* ``requirements.R.value`` and ``requirements.R.verdict`` (a verdict must not change).

A quantity moved when ``|new - old| > max(absolute, relative * |old|)``. Defaults
:data:`DEFAULT_RELATIVE` and :data:`DEFAULT_ABSOLUTE` (in the quantity's SI unit); the
scene overrides them in its ``[baseline]`` table::

    [baseline]
    relative = "0.01 %"                         # default for every quantity
    absolute = 1e-12                            # [W] or [1], default for every quantity
    top_paths = 10
    [baseline.tolerances."detectors.*.ghost_fraction"]
    absolute = 1e-6
    [baseline.tolerances."ledger.detected_w"]
    relative = "1 %"

Patterns use ``*`` and ``?``; an exact key wins over patterns, then the longest pattern.
A baseline path missing from the new run compares with 0 W, and so does a new path
stronger than the weakest path the baseline recorded for its detector: a ghost that
appears is caught. Other quantities new in the run (a key added to the summary by a
newer tracer) are listed, not failed.
"""

from __future__ import annotations

import fnmatch
import math
import os
from dataclasses import dataclass, field
from pathlib import Path

__all__ = ["DIGITS", "TOP_PATHS", "DEFAULT_RELATIVE", "DEFAULT_ABSOLUTE", "Tolerances",
           "BaselineCheck", "Moved", "baseline_values", "dump_baseline", "save_baseline",
           "load_baseline", "compare", "read_baseline_table", "scene_tolerances"]

#: Significant digits of the numbers written.
DIGITS = 6
#: Paths recorded per detector (strongest first).
TOP_PATHS = 10
#: Default relative tolerance: above the rounding of :data:`DIGITS` digits (5e-7), far
#: below any physical change; a trace with the same settings repeats exactly.
DEFAULT_RELATIVE = 1e-5
#: Default absolute tolerance in the quantity's SI unit ([W] or [1]): below any ghost worth
#: reporting, above summation round-off of a budget.
DEFAULT_ABSOLUTE = 1e-15
#: Ledger keys that are round-off, not results.
_SKIP = {"ledger.residual_w", "ledger.relative_residual"}
_NONE = "n/a"
_MISSING = object()


def _round(v: float) -> float:
    if v == 0 or not math.isfinite(v):
        return float(v)
    return float(f"{v:.{DIGITS}g}")


def _leaves(data, prefix, out):
    if isinstance(data, dict):
        for k, v in data.items():
            _leaves(v, f"{prefix}.{k}", out)
    elif data is None:
        out[prefix] = _NONE
    elif isinstance(data, int) and not isinstance(data, bool):
        out[prefix] = int(data)
    elif isinstance(data, float):
        out[prefix] = _round(data)


def baseline_values(summary: dict, *, top_paths: int = TOP_PATHS) -> dict:
    """``{quantity: number or verdict string}`` of a run summary (module docstring)."""
    from .result_diff import verdict_of

    out: dict = {}
    out["source_power_w"] = _round(float(summary.get("source_power_w", 0.0)))
    _leaves(summary.get("ledger", {}), "ledger", out)
    _leaves(summary.get("gaps", {}), "gaps", out)
    for name, det in (summary.get("detectors") or {}).items():
        for k, v in det.items():
            if k in ("paths", "hits_dropped"):
                continue
            if v is None or isinstance(v, (int, float)) and not isinstance(v, bool):
                _leaves(v, f"detectors.{name}.{k}", out)
        for p in (det.get("paths") or [])[:top_paths]:
            out[f"detectors.{name}.path[{p['signature']}].power_w"] = _round(float(p["power_w"]))
    for r in summary.get("requirements") or []:
        out[f"requirements.{r['name']}.verdict"] = verdict_of(r)
        _leaves(r.get("value"), f"requirements.{r['name']}.value", out)
    for k in _SKIP:
        out.pop(k, None)
    return dict(sorted(out.items()))


def _run_settings(summary: dict) -> dict:
    s = summary.get("settings") or {}
    return dict(mode=s.get("mode"), seed=s.get("seed"), power_threshold=s.get("power_threshold"),
                max_events=s.get("max_events"), rays=dict(sorted((s.get("rays_launched") or {}).items())))


def dump_baseline(summary: dict, *, scene: str | None = None, top_paths: int = TOP_PATHS) -> str:
    """The baseline file's text for a run summary."""
    import tomli_w

    run = {k: v for k, v in _run_settings(summary).items() if v is not None}
    if scene:
        run = {"scene": Path(scene).as_posix(), **run}
    head = ("# tracer baseline: results of a scene, checked by `tracer run SCENE --baseline FILE`.\n"
            "# Written by `tracer run SCENE --save-baseline FILE`; rewrite it after a deliberate change.\n"
            f"# Numbers in SI units (W, m, fractions), {DIGITS} significant digits.\n")
    return head + tomli_w.dumps({"run": run, "values": baseline_values(summary, top_paths=top_paths)})


def save_baseline(summary: dict, path: str | os.PathLike, *, scene: str | None = None,
                  top_paths: int = TOP_PATHS) -> Path:
    """Write the baseline file (see :func:`dump_baseline`)."""
    from ..errors import TracerError

    target = Path(path)
    text = dump_baseline(summary, scene=scene, top_paths=top_paths)
    try:
        tmp = target.with_name(target.name + ".tmp")
        tmp.write_text(text, encoding="utf-8")
        os.replace(tmp, target)
    except OSError as exc:
        raise TracerError(f"cannot write the baseline {target}: {exc.strerror or exc}") from None
    return target


def load_baseline(path: str | os.PathLike) -> dict:
    """The parsed baseline file: ``{"run": {...}, "values": {...}}``."""
    from ..scene.problems import Problem, SceneError
    from ..scene.toml_io import parse_text

    file = os.fspath(path)
    try:
        data = parse_text(Path(file).read_bytes(), file=file)
    except OSError as exc:
        raise SceneError([Problem(file, "", f"cannot read the baseline: {exc.strerror or exc}")]) from None
    values = data.get("values")
    if not isinstance(values, dict) or not all(
            isinstance(v, (int, float, str)) and not isinstance(v, bool) for v in values.values()):
        raise SceneError([Problem(file, "values", "expected a [values] table of numbers and "
                                  "verdict strings, as `tracer run --save-baseline` writes")])
    run = data.get("run", {})
    return dict(run=run if isinstance(run, dict) else {}, values=values)


# ---------------------------------------------------------------------- tolerances
@dataclass
class Tolerances:
    """Default tolerances and per-quantity overrides (``pattern -> (relative, absolute)``)."""

    relative: float = DEFAULT_RELATIVE
    absolute: float = DEFAULT_ABSOLUTE
    top_paths: int = TOP_PATHS
    overrides: dict = field(default_factory=dict)

    def of(self, key: str) -> tuple[float, float]:
        """``(relative, absolute)`` for a quantity."""
        if key in self.overrides:
            hit = self.overrides[key]
        else:
            hits = [p for p in self.overrides if fnmatch.fnmatchcase(key, p)]
            hit = self.overrides[max(hits, key=len)] if hits else (None, None)
        rel, ab = hit
        return (self.relative if rel is None else rel, self.absolute if ab is None else ab)


def read_baseline_table(table) -> Tolerances | None:
    """Check a scene's ``[baseline]`` table (a :class:`tracer.scene.reader.Table`)."""
    if table is None:
        return None
    tol = Tolerances()
    rel = table.quantity("relative", "fraction", nonnegative=True)
    ab = table.number("absolute", minimum=0.0, what="an absolute tolerance in the quantity's SI "
                                                     "unit (W or 1)")
    top = table.integer("top_paths", minimum=0)
    tol.relative = DEFAULT_RELATIVE if rel is None else rel
    tol.absolute = DEFAULT_ABSOLUTE if ab is None else ab
    tol.top_paths = TOP_PATHS if top is None else top
    for pattern, t in table.tables("tolerances").items():
        r = t.quantity("relative", "fraction", nonnegative=True)
        a = t.number("absolute", minimum=0.0, what="an absolute tolerance in the quantity's SI "
                                                   "unit (W or 1)")
        if r is None and a is None and not t.has("relative") and not t.has("absolute"):
            t.error(None, 'expected "relative" and/or "absolute"')
        tol.overrides[pattern] = (r, a)
        t.finish()
    table.finish()
    return tol


def scene_tolerances(scene) -> Tolerances:
    """The tolerances of a loaded scene (its ``[baseline]`` table, else the defaults)."""
    from ..scene.problems import Problems
    from ..scene.quantities import SceneUnits
    from ..scene.reader import Table

    raw = getattr(scene, "raw", None) or {}
    if not isinstance(raw.get("baseline"), dict):
        return Tolerances()
    problems = Problems(getattr(scene, "path", None))
    units = SceneUnits(raw.get("length_unit", "mm")) if isinstance(raw.get("length_unit", "mm"), str) \
        else SceneUnits("mm")
    doc = Table(raw, "", problems, units)
    return read_baseline_table(doc.table("baseline")) or Tolerances()


# ---------------------------------------------------------------------- comparison
@dataclass(frozen=True)
class Moved:
    """A quantity beyond its tolerance (``old``/``new`` None when absent)."""

    key: str
    old: object
    new: object
    relative: float = 0.0
    absolute: float = 0.0

    def describe(self) -> str:
        unit = " W" if is_power(self.key) else ""
        if isinstance(self.old, str) or isinstance(self.new, str):
            return f"{self.key}: {self.old if self.old is not None else '(absent)'} -> " \
                   f"{self.new if self.new is not None else '(absent)'}"
        o = "(absent)" if self.old is None else f"{self.old:.6g}{unit}"
        n = "(absent)" if self.new is None else f"{self.new:.6g}{unit}"
        change = ""
        if isinstance(self.old, float) and isinstance(self.new, float) and self.old != 0:
            change = f" ({(self.new - self.old) / abs(self.old):+.4%})"
        return (f"{self.key}: {o} -> {n}{change}; tolerance {self.relative:.3g} relative, "
                f"{self.absolute:.3g}{unit} absolute")

    def to_dict(self) -> dict:
        return dict(key=self.key, old=self.old, new=self.new, relative_tolerance=self.relative,
                    absolute_tolerance=self.absolute)


@dataclass
class BaselineCheck:
    """Outcome of a comparison with a baseline."""

    file: str
    moved: list = field(default_factory=list)
    compared: int = 0
    unrecorded: list = field(default_factory=list)
    settings: list = field(default_factory=list)

    @property
    def passed(self) -> bool:
        return not self.moved

    def format_text(self) -> str:
        lines = []
        for s in self.settings:
            lines.append(f"baseline {self.file}: note: {s}")
        if self.moved:
            lines.append(f"baseline {self.file}: {len(self.moved)} of {self.compared} quantities "
                         "moved beyond their tolerance:")
            lines += ["  " + m.describe() for m in self.moved]
        else:
            lines.append(f"baseline {self.file}: all {self.compared} quantities within tolerance")
        if self.unrecorded:
            lines.append(f"  not in the baseline ({len(self.unrecorded)}; --save-baseline records "
                         "them): " + ", ".join(self.unrecorded[:8])
                         + (" ..." if len(self.unrecorded) > 8 else ""))
        return "\n".join(lines)

    def to_dict(self) -> dict:
        return dict(file=self.file, passed=self.passed, compared=self.compared,
                    moved=[m.to_dict() for m in self.moved], unrecorded=self.unrecorded,
                    settings=self.settings)


def is_power(key: str) -> bool:
    """Whether a quantity is a power [W] (``_w`` keys and the ledger's per-name accounts)."""
    return key.endswith("_w") or key.startswith(("ledger.detectors.", "ledger.absorbed_faces.",
                                                 "ledger.absorbed_bulk.", "ledger.escaped_faces."))


def _is_path(key: str) -> bool:
    return ".path[" in key and key.endswith("].power_w")


def _detector_of(key: str) -> str:
    return key.split(".path[", 1)[0]


def compare(baseline: dict, summary: dict, *, tolerances: Tolerances | None = None,
            file: str = "baseline") -> BaselineCheck:
    """Compare a run summary with a loaded baseline (:func:`load_baseline`)."""
    tol = tolerances or Tolerances()
    old = baseline["values"]
    new = baseline_values(summary, top_paths=10**9)  # every path of the run, for lookups
    check = BaselineCheck(file=file)
    run_old, run_new = baseline.get("run", {}), _run_settings(summary)
    for k in ("mode", "seed", "power_threshold", "max_events", "rays"):
        if k in run_old and run_new.get(k) is not None and run_old[k] != run_new[k]:
            check.settings.append(f"trace setting {k} differs: baseline {run_old[k]}, this run "
                                  f"{run_new[k]} (results may move for that reason alone)")
    weakest: dict = {}
    for key, v in old.items():
        if _is_path(key) and isinstance(v, (int, float)):
            d = _detector_of(key)
            weakest[d] = min(weakest.get(d, math.inf), float(v))
    keys = list(old)
    for key in new:
        if key in old:
            continue
        if _is_path(key):
            d = _detector_of(key)
            if isinstance(new[key], (int, float)) and new[key] > weakest.get(d, 0.0) \
                    and d in weakest:
                keys.append(key)
        else:
            check.unrecorded.append(key)
    for key in keys:
        rel, ab = tol.of(key)
        o, n = old.get(key, _MISSING), new.get(key, _MISSING)
        check.compared += 1
        if _is_path(key):
            o = 0.0 if o is _MISSING else o
            n = 0.0 if n is _MISSING else n
        if o is _MISSING or n is _MISSING:
            check.moved.append(Moved(key, None if o is _MISSING else o, None if n is _MISSING else n,
                                     rel, ab))
            continue
        if isinstance(o, str) or isinstance(n, str):
            if o != n:
                check.moved.append(Moved(key, o, n, rel, ab))
            continue
        o, n = float(o), float(n)
        if abs(n - o) > max(ab, rel * abs(o)):
            check.moved.append(Moved(key, o, n, rel, ab))
    return check
