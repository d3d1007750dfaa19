"""Estimate a trace's events and memory before it starts, and refuse what would not fit.

A scene can be valid and still ask for a trace no machine finishes: 10^8 rays on a
scene that splits every ray into thousands of ghosts, or a tree that keeps splitting
because nothing ever falls below the power threshold. :func:`estimate` traces a small
*pilot* (the first rays of every source, twice: ``w`` and ``2w`` of them, under a hard
event budget) with the trace's own settings and extrapolates:

- events = (pilot events per source ray) x (source rays);
- path-tree nodes = pilot nodes + (new nodes per ray in the pilot's second half) x (rays
  left): paths are shared between rays, so the tree saturates;
- memory = interpreter and kernels + path tree + kept detector hits + the depth-first
  stack of active rays (at most ``chunk`` rays per level of the deepest pilot path).

The pilot takes the first source-ray indices, which are the first spectral line's
(line-major order); a line that behaves very differently is caught by the trace's own
budgets instead. The per-item sizes are measured orders of magnitude of the engine's arrays
(engineering estimate, no source). :func:`check_fits` compares the estimate with this
machine's budget (available memory, and an event count of about an hour of tracing) and
raises :class:`TooLarge` (a :class:`~tracer.errors.TracerError`) naming the estimate and
the override; the real trace is then given an event budget of its own so that a run the
pilot misjudged still ends, with a clear message.
"""

from __future__ import annotations

import os
from dataclasses import dataclass

from .compile import EngineError
from .tree import NODE_BYTES, RAY_BYTES, EventBudgetExceeded

__all__ = ["Estimate", "TooLarge", "estimate", "check_fits", "machine_memory",
           "EVENT_BUDGET", "OVERRIDE"]

#: Events one trace may have without ``allow_large``: about an hour on one core at the
#: measured 3 million events/s (DEVELOPERS.md, "Measured figures").
EVENT_BUDGET = 10_000_000_000
#: How the user overrides a refusal (named in the message).
OVERRIDE = "--allow-large"
#: Rays of the pilot's first window per source (the second has twice as many).
PILOT_RAYS = 16
#: Events the pilot may trace before it is stopped.
PILOT_EVENTS = 300_000

#: Interpreter, numpy, numba kernels and the compiled scene [bytes] (measured order).
_BASE_BYTES = 300e6
#: One path-tree node: tree arrays, hash-table slot, per-path aggregates [bytes].
_NODE_BYTES = NODE_BYTES
#: One kept detector hit (position, direction, field matrix, power, path ...) [bytes].
_HIT_BYTES = 260.0
#: One active ray in the depth-first stack (field matrix, position, direction, ...) [bytes].
_RAY_BYTES = RAY_BYTES


@dataclass(frozen=True)
class Estimate:
    """What a trace would cost.

    Attributes
    ----------
    rays : int
        Source rays (geometric rays x spectral lines, all sources).
    events : float
        Expected ray-face events.
    events_lower_bound : bool
        True when the pilot itself passed its budget: ``events`` is then a lower bound.
    memory : float [bytes]
        Expected peak memory.
    pilot_rays, pilot_events : int
        What the pilot traced.
    auto_cost : float or None
        With the automatic power threshold: the estimate is of the first trace (threshold
        ``AUTO_THRESHOLD_START``) and the retraces may together cost up to this many times
        its events (they stop there by themselves); None for a fixed threshold.
    """

    rays: int
    events: float
    events_lower_bound: bool
    memory: float
    pilot_rays: int
    pilot_events: int
    auto_cost: float | None = None

    def text(self) -> str:
        """One line, for messages and ``--verbose`` output."""
        at_least = "at least " if self.events_lower_bound else ""
        auto = ""
        if self.auto_cost is not None:
            auto = (f"; automatic threshold: this is the first trace, the retraces that make "
                    f"the verdicts conclusive may cost up to {self.auto_cost:g} times as much")
        return (f"{self.rays} source rays, {at_least}{self.events:.3g} events, "
                f"about {_gib(self.memory)} of memory (from a pilot of {self.pilot_rays} rays, "
                f"{self.pilot_events} events){auto}")


class TooLarge(EngineError):
    """A trace that would not fit this machine (refused before it starts)."""


def _gib(n: float) -> str:
    return f"{n / 2**30:.3g} GiB" if n >= 2**30 else f"{n / 2**20:.3g} MiB"


def machine_memory() -> float:
    """Memory a trace may use on this machine [bytes]: 80 % of the available memory
    (Linux ``MemAvailable``), else half the physical memory, else 2 GiB."""
    try:
        with open("/proc/meminfo", encoding="ascii") as fh:
            for line in fh:
                if line.startswith("MemAvailable:"):
                    return 0.8 * float(line.split()[1]) * 1024
    except (OSError, ValueError, IndexError):
        pass
    try:
        return 0.5 * os.sysconf("SC_PAGE_SIZE") * os.sysconf("SC_PHYS_PAGES")
    except (ValueError, OSError, AttributeError):
        return 2.0 * 2**30


def _pilot(scene, settings, window: int):
    from .api import trace

    s = dict(settings)
    s.update(ray_range=(0, window), segments=0, progress=False, event_budget=PILOT_EVENTS)
    try:
        res = trace(scene, **s)
    except EventBudgetExceeded as exc:
        return None, exc.events
    return res, res.events


def estimate(scene, **settings) -> Estimate:
    """Estimate events and memory of ``trace(scene, **settings)`` (see the module notes).

    Parameters
    ----------
    scene : tracer.scene.model.Scene
    **settings
        As :func:`tracer.engine.trace` (``ray_range`` and ``event_budget`` are ignored).
    """
    from .api import _options, launch_counts

    settings = {k: v for k, v in settings.items() if k not in ("ray_range", "event_budget")}
    settings, auto_cost = _first_auto_trace(scene, settings)
    opts = _options(scene, settings)
    counts = launch_counts(scene, opts.rays)
    rays = int(sum(counts.values()))
    if rays == 0:
        return Estimate(0, 0.0, False, _BASE_BYTES, 0, 0, auto_cost)
    w = PILOT_RAYS
    first, ev1 = _pilot(scene, settings, w)
    pilot1 = int(sum(min(w, n) for n in counts.values()))
    if first is None:  # even the small pilot passed its budget
        per_ray = ev1 / max(pilot1, 1)
        return Estimate(rays, per_ray * rays, True, _BASE_BYTES + ev1 * _NODE_BYTES, pilot1, ev1,
                        auto_cost)
    second, ev2 = _pilot(scene, settings, 2 * w)
    pilot2 = int(sum(min(2 * w, n) for n in counts.values()))
    res = second if second is not None else first
    pilot_rays = pilot2 if second is not None else pilot1
    per_ray = (ev2 if second is not None else ev1) / max(pilot_rays, 1)
    events = per_ray * rays
    n1 = len(first.tree)
    n2 = len(res.tree)
    extra = pilot2 - pilot1 if second is not None else 0
    growth = (n2 - n1) / extra if extra > 0 else 0.0
    nodes = n2 + max(growth, 0.0) * max(rays - pilot_rays, 0)
    nodes = min(nodes, events + n2)
    hits_per_ray = res._rec.n_hits / max(pilot_rays, 1)
    hits = min(hits_per_ray * rays, float(opts.max_hits))
    depth = int(res.tree.depth.max()) if len(res.tree) else 1
    stack = min(depth, int(opts.max_events)) * min(int(opts.chunk), max(rays, 1)) * _RAY_BYTES
    memory = _BASE_BYTES + nodes * _NODE_BYTES + hits * _HIT_BYTES + stack
    lower = second is None
    return Estimate(rays, events, lower, memory, pilot_rays, ev2 if second is not None else ev1,
                    auto_cost)


def _first_auto_trace(scene, settings: dict) -> tuple[dict, float | None]:
    """Settings of the first trace of an automatic-threshold run, and its cost factor.

    The pilot traces a ray range, which never chooses the threshold by itself, so an
    automatic threshold (``"auto"`` given, or unset with the scene's automatic default) is
    replaced by the first threshold the automatic choice would try.
    """
    from .. import tolerances

    thr = settings.get("power_threshold")
    st = scene.settings
    wants = (isinstance(thr, str) and thr.strip().lower() == "auto") or (
        thr is None and getattr(st, "auto_threshold", False))
    if not wants:
        return settings, None
    out = dict(settings, power_threshold=tolerances.AUTO_THRESHOLD_START)
    return out, float(getattr(st, "auto_cost", tolerances.AUTO_THRESHOLD_COST))


def check_fits(scene, *, allow_large: bool = False, memory_budget: float | None = None,
               event_budget: float = EVENT_BUDGET, **settings) -> Estimate:
    """Estimate the trace and raise :class:`TooLarge` when it would not fit.

    Parameters
    ----------
    scene : tracer.scene.model.Scene
    allow_large : bool
        Only estimate, never refuse.
    memory_budget : float [bytes], optional
        Default: :func:`machine_memory`.
    event_budget : float
        Largest number of events allowed.
    **settings
        As :func:`tracer.engine.trace`.
    """
    est = estimate(scene, **settings)
    if allow_large:
        return est
    budget = machine_memory() if memory_budget is None else float(memory_budget)
    why = []
    if est.memory > budget:
        why.append(f"memory {_gib(est.memory)} > {_gib(budget)} available")
    if est.events > event_budget:
        why.append(f"events {est.events:.3g} > {event_budget:.3g} (about an hour of tracing)")
    if why:
        raise TooLarge(f"this trace would not fit this machine ({'; '.join(why)}): estimate "
                       f"{est.text()}; use fewer rays (--rays), a higher power threshold "
                       f"(--threshold) or fewer events per ray (--max-events), or pass "
                       f"{OVERRIDE} to trace it anyway")
    return est
