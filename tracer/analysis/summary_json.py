"""The machine-readable run summary (``tracer run --json PATH``).

The layout is documented key by key in ``docs/json-summary.md`` and versioned by
``schema_version``: keys are only ever added within one version. Every number is a
plain JSON number in SI units (watts, metres) or a fraction; values that would be
infinite or undefined are ``null``.
"""

from __future__ import annotations

import json
import os
from dataclasses import dataclass, field

__all__ = ["RunAnalysis", "analyse", "run_summary", "write_json", "SCHEMA_NAME", "SCHEMA_VERSION",
           "CAUTION"]

SCHEMA_NAME = "tracer-run-summary"
SCHEMA_VERSION = 2

#: The ``caution`` key of every summary (our own wording; the full caution is in the
#: README and in the HTML report).
CAUTION = ("Engineering estimate from a geometric ray model with thin-film and evanescent "
           "coefficients; not a safety certification. Ghost paths can carry hazardous laser or "
           "microwave power in unexpected directions: measure them and follow the applicable "
           "safety standards and exposure limits.")


@dataclass
class RunAnalysis:
    """A trace with its analysis: budget, ghost tables and requirement verdicts."""

    result: object
    budget: object
    ghosts: dict = field(default_factory=dict)
    verdicts: list = field(default_factory=list)

    @property
    def passed(self) -> bool:
        """True when every requirement passed conclusively (also for none)."""
        return all(v.passed for v in self.verdicts)

    @property
    def verdict(self) -> str:
        """``"pass"``, ``"fail"`` (any requirement failed) or ``"inconclusive"``."""
        kinds = {v.verdict for v in self.verdicts}
        return "fail" if "fail" in kinds else "inconclusive" if "inconclusive" in kinds else "pass"

    @property
    def warnings(self) -> list[str]:
        """Detectors reading 0 W while power went untraced; light crossing detectors from
        behind; for a detector with an inconclusive verdict, the untraced power left on its
        side of the assembly (when that can be told)."""
        from .requirements import behind_warnings, untraced_notes, zero_power_warnings

        unsure = {v.subject for v in self.verdicts if v.verdict == "inconclusive"}
        return (zero_power_warnings(self.result) + behind_warnings(self.result)
                + (untraced_notes(self.result, unsure) if unsure else []))

    def _repr_html_(self) -> str:  # Jupyter (tracer.notebook)
        from ..notebook import analysis_html
        return analysis_html(self)


def analyse(result) -> RunAnalysis:
    """Budget, ghost table of every detector and requirement verdicts of a trace.

    Parameters
    ----------
    result : tracer.engine.Result
    """
    from .budget import power_budget
    from .ghosts import ghost_tables
    from .requirements import evaluate

    ghosts = ghost_tables(result)
    return RunAnalysis(result=result, budget=power_budget(result), ghosts=ghosts,
                       verdicts=evaluate(result, ghosts=ghosts))


def _settings(result) -> dict:
    o = result.options
    return dict(
        mode=str(o.mode), power_threshold=float(o.power_threshold), max_events=int(o.max_events),
        seed=int(o.seed),
        rays_requested=(o.rays if isinstance(o.rays, (int, type(None))) else dict(o.rays)),
        rays_launched={n: int(result.launched[i]) for i, n in enumerate(result.source_names)},
        ray_range=_ray_range(getattr(o, "ray_range", None)),
        threshold_choice=_choice(getattr(result, "threshold_choice", None)),
    )


def _choice(choice):
    """How ``power_threshold = "auto"`` chose (None: the threshold was set)."""
    if not choice:
        return None
    return dict(mode=str(choice["mode"]), chosen=float(choice["chosen"]),
                max_events=int(choice["max_events"]), reason=str(choice["reason"]),
                cost_limit=float(choice["cost_limit"]), events_total=int(choice["events_total"]),
                attempts=[dict(threshold=float(a["threshold"]), max_events=int(a["max_events"]),
                               events=int(a["events"]), untraced_w=float(a["untraced_w"]),
                               inconclusive=list(a["inconclusive"])) for a in choice["attempts"]])


def _ray_range(r):
    """The ``ray_range`` setting as plain data (None, [start, stop] or {source: [...]})."""
    if r is None:
        return None
    if isinstance(r, dict):
        return {str(k): [None if x is None else int(x) for x in v] for k, v in r.items()}
    return [None if x is None else int(x) for x in r]


def run_summary(analysis: RunAnalysis, *, max_paths: int = 50) -> dict:
    """Plain-data summary of a run (see ``docs/json-summary.md``).

    Parameters
    ----------
    analysis : RunAnalysis
    max_paths : int
        Paths listed per detector (strongest first); ``paths_total`` gives the count.
    """
    from .. import __version__

    res = analysis.result
    scene = res.scene
    led = res.ledger
    src = float(res.source_power_w)
    budget = analysis.budget
    b = led.breakdown()
    detectors = {}
    for name, table in analysis.ghosts.items():
        d = table.to_dict(limit=max_paths)
        d.pop("detector")
        d["behind_w"] = float(res.behind_power(name)) if hasattr(res, "behind_power") else 0.0
        if table.kind == "plane" and hasattr(res, "paths"):
            from .scatter_sources import scatter_ranking

            d["scatter_sources"] = scatter_ranking(res, name)["faces"]
        else:
            d["scatter_sources"] = []
        near = res.untraced_near(name) if hasattr(res, "untraced_near") else None
        d["untraced_near_w"] = None if near is None else float(near[0])
        d["untraced_near_solids"] = None if near is None else list(near[1])
        detectors[name] = d
    ledger = dict(
        source_w=src,
        detected_w=budget.totals["detected_w"], absorbed_w=budget.totals["absorbed_w"],
        escaped_w=budget.totals["escaped_w"], discarded_w=budget.totals["discarded_w"],
        cut_w=budget.totals["cut_w"], lost_w=budget.totals["lost_w"],
        sampling_w=budget.totals.get("sampling_w", 0.0),
        residual_w=budget.residual_w, relative_residual=budget.relative_residual,
        detectors={k: float(v) for k, v in b["detectors"].items()},
        absorbed_faces={k: float(v) for k, v in b["absorbed_faces"].items()},
        absorbed_bulk={k: float(v) for k, v in b["absorbed_bulk"].items()},
        escaped_faces={k: float(v) for k, v in b["escaped_faces"].items()},
    )
    return dict(
        schema=SCHEMA_NAME,
        schema_version=SCHEMA_VERSION,
        caution=CAUTION,
        tool=dict(name="tracer", version=__version__),
        scene=dict(title=getattr(scene, "title", ""), path=getattr(scene, "path", None),
                   dimension=int(getattr(scene, "dimension", 3))),
        settings=_settings(res),
        seed=int(res.options.seed),
        events=int(res.events),
        source_power_w=src,
        sources={n: dict(power_w=float(led.launched[i]), rays=int(res.launched[i]))
                 for i, n in enumerate(led.sources)},
        detectors=detectors,
        ledger=ledger,
        budget=[r.to_dict() for r in budget.rows],
        gaps={name: dict(g) for name, g in budget.tunnelled.items()},
        scatter=dict(
            scattered_faces=(res.scattered_power() if hasattr(res, "scattered_power") else {}),
            sampling_w=float(budget.totals.get("sampling_w", 0.0))),
        hits_dropped=int(getattr(res, "hits_dropped", 0)),
        requirements=[_verdict_dict(v, scene) for v in analysis.verdicts],
        passed=analysis.passed,
        verdict=analysis.verdict,
        warnings=analysis.warnings,
    )


def _verdict_dict(v, scene) -> dict:
    """A verdict as plain data; a ``max_leakage`` one also says which crossings it judged."""
    d = v.to_dict()
    if v.kind == "max_leakage":
        spec = (getattr(scene, "requirements", {}) or {}).get(v.name)
        d["mechanism"] = str(getattr(spec, "mechanism", "crossed"))
    return d


def write_json(data: dict, path: str | os.PathLike) -> None:
    """Write ``data`` as indented UTF-8 JSON (strict: no NaN or Infinity), atomically."""
    from ..outputs import atomic_write_text

    text = json.dumps(data, indent=2, ensure_ascii=False, allow_nan=False) + "\n"
    atomic_write_text(path, text)  # temporary file, then rename: never half-written
