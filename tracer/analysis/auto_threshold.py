"""``power_threshold = "auto"``: trace until every requirement's verdict is conclusive.

The trace does not follow children under the power threshold (discarded) nor rays at
the event cap (cut). A requirement passes only when it would still pass had all that
*untraced* power ``U`` gone the worst way for it (:mod:`tracer.analysis.requirements`),
so a threshold that is too high leaves verdicts ``inconclusive``. With ``"auto"``:

1. trace with the first threshold (``tracer.tolerances.AUTO_THRESHOLD_START``, 1e-6,
   the former default) and evaluate the requirements;
2. while a verdict is inconclusive, find the untraced power ``U*`` that would make every
   inconclusive verdict conclusive (the smallest margin between its value and its limit,
   in watts) and aim at ``AUTO_THRESHOLD_MARGIN`` (1/10) of it: the threshold is scaled by
   ``target / discarded`` (between 1e-4 and 1/10 per step; discarded power falls roughly
   in proportion to the threshold), and the event cap is multiplied by 4 (at most 100000)
   when cut power alone exceeds the target; then trace again;
3. stop when every verdict is conclusive, when the threshold would fall below
   ``AUTO_THRESHOLD_FLOOR`` (1e-15), or when the traces so far have cost ``auto_cost``
   times the events of the first trace (``[trace] auto_cost``, default 30). The last
   trace is kept; its verdicts may still be inconclusive, and the choice says why.

A scene without requirements, or in Monte Carlo mode (nothing is discarded), is traced
once with the first threshold. Traces of a ray range (``ray_range``, split traces) are
not repeated: every piece uses the first threshold so that the pieces add up.

The choice is kept on the result as :attr:`Result.threshold_choice` (a dict: ``chosen``,
``max_events``, ``reason``, ``attempts`` [threshold, max_events, events, untraced_w,
inconclusive]), printed by ``tracer run`` and written to the JSON summary
(``settings.threshold_choice``).
"""

from __future__ import annotations

import math

from .. import tolerances

__all__ = ["trace_auto", "needed_untraced_w", "describe_choice"]


def needed_untraced_w(verdict, source_w: float) -> float:
    """Untraced power [W] below which an inconclusive ``verdict`` would be conclusive.

    Parameters
    ----------
    verdict : tracer.analysis.requirements.Verdict
    source_w : float [W]
        Total source power (for verdicts whose value is a fraction of it).
    """
    v = verdict
    scale = source_w if v.unit == "1" else 1.0
    if v.kind == "max_ghost_fraction":
        # the value is ghost / signal; the ghost and signal powers are not on the verdict,
        # so they come from the bounds: upper - value = U / signal
        u = v.untraced_w
        if not (u > 0 and math.isfinite(v.upper) and v.upper > v.value):
            return 0.0
        signal = u / (v.upper - v.value)
        ghost = v.value * signal
        if v.value <= v.limit:
            return max(v.limit * signal - ghost, 0.0)
        return max(ghost / v.limit - signal, 0.0) if v.limit > 0 else 0.0
    return max(abs(v.limit - v.value) * scale, 0.0)


def describe_choice(choice: dict) -> str:
    """One line about an automatic threshold choice."""
    tries = ", ".join(f"{a['threshold']:g}" for a in choice["attempts"])
    return (f"power threshold auto: {choice['chosen']:g} (max_events {choice['max_events']}) "
            f"after {len(choice['attempts'])} trace(s) [{tries}]: {choice['reason']}")


def trace_auto(scene, trace_once, **settings):
    """Trace ``scene`` with an automatic power threshold (see the module docstring).

    Parameters
    ----------
    scene : tracer.scene.model.Scene
    trace_once : callable
        ``trace_once(scene, **settings) -> Result`` with a fixed threshold.
    **settings
        As for :func:`tracer.engine.trace` (``power_threshold`` unset).

    Returns
    -------
    tracer.engine.Result
        The last trace, with ``threshold_choice`` set.
    """
    from .requirements import evaluate

    st = scene.settings
    thr = float(st.power_threshold)
    max_events = settings.pop("max_events", None) or int(st.max_events)
    budget_factor = float(getattr(st, "auto_cost", tolerances.AUTO_THRESHOLD_COST))
    attempts = []
    total_events = 0
    first_events = None
    while True:
        res = trace_once(scene, power_threshold=thr, max_events=max_events, **settings)
        total_events += res.events
        if first_events is None:
            first_events = max(res.events, 1)
        verdicts = evaluate(res) if scene.requirements else []
        unsure = [v for v in verdicts if v.verdict == "inconclusive"]
        tot = res.ledger.totals()
        attempts.append(dict(threshold=thr, max_events=int(max_events), events=int(res.events),
                             untraced_w=float(tot["discarded_w"] + tot["cut_w"]),
                             inconclusive=[v.name for v in unsure]))
        if not scene.requirements:
            reason = "no requirement: the first threshold is kept"
            break
        if not unsure:
            reason = "every verdict conclusive"
            break
        src = float(res.source_power_w)
        need = min(needed_untraced_w(v, src) for v in unsure)
        target = tolerances.AUTO_THRESHOLD_MARGIN * need
        if not target > 0:
            reason = (f"{', '.join(v.name for v in unsure)} inconclusive: no lower threshold is "
                      "known to make it conclusive (its value equals the limit, or its detector "
                      "has no design signal)")
            break
        if total_events >= budget_factor * first_events:
            reason = (f"{', '.join(v.name for v in unsure)} still inconclusive: cost limit reached "
                      f"({total_events} events traced, auto_cost = {budget_factor:g} times the "
                      f"first trace's {first_events}); raise [trace] auto_cost or set a lower "
                      "power_threshold")
            break
        new_thr, new_cap = thr, max_events
        if tot["discarded_w"] > 0 and not res.options.mode == "monte-carlo":
            factor = min(max(target / tot["discarded_w"], 1e-4), 0.1)
            new_thr = thr * factor
        if tot["cut_w"] > target and max_events < 100_000:
            new_cap = min(4 * max_events, 100_000)
        if new_thr < tolerances.AUTO_THRESHOLD_FLOOR:
            new_thr = tolerances.AUTO_THRESHOLD_FLOOR if thr > tolerances.AUTO_THRESHOLD_FLOOR else thr
        if new_thr == thr and new_cap == max_events:
            reason = (f"{', '.join(v.name for v in unsure)} still inconclusive: the threshold is "
                      f"at its floor {tolerances.AUTO_THRESHOLD_FLOOR:g} and the event cap at "
                      f"{max_events}")
            break
        thr, max_events = new_thr, new_cap
    need_text = ""
    if len(attempts) > 1 and not attempts[-1]["inconclusive"]:
        need_text = (f" (the first trace left {', '.join(attempts[0]['inconclusive'])} "
                     f"inconclusive: {attempts[0]['untraced_w']:.3g} W untraced)")
    res.threshold_choice = dict(mode="auto", chosen=float(thr), max_events=int(max_events),
                                reason=reason + need_text, attempts=attempts,
                                cost_limit=budget_factor, events_total=int(total_events))
    return res
