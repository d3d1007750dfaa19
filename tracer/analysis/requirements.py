"""Requirement verdicts: evaluate a scene's requirements on a trace.

Kinds (:class:`tracer.scene.model.RequirementSpec`):

* ``min_power``: power on a detector >= limit. The value is in watts, or a fraction of
  the total source power when the limit was given as a fraction (``relative``).
* ``max_power``: power on a detector <= limit, in watts or (``relative``) as a fraction
  of the total source power: the plainest stray-light requirement.
* ``max_ghost_fraction``: power of every ghost path on a detector divided by the design
  signal (the design path and the paths equivalent to it) <= limit (see
  :mod:`tracer.analysis.ghosts`).
  With no design signal the value is infinite (reported as ``None`` in JSON) and the
  requirement fails.
* ``max_leakage``: power that crossed a named gap (both directions, every crossing, as
  booked by the engine; by default tunnelled and refracted alike, or the one
  ``mechanism`` the requirement names) divided by the source power <= limit (see
  :mod:`tracer.analysis.leakage`).

Three verdicts. The trace does not follow power that fell under the power threshold
(*discarded*) or reached the event cap (*cut*); where it would have gone is unknown. So
every value has a bound: what it would be had all that power ``U = discarded + cut``
gone the worst way for the requirement, and the best way.

* ``max_power``, ``max_leakage``: ``upper = value + U`` (over the source power when the
  value is a fraction); ``lower = value``.
* ``min_power``: ``lower = value`` (untraced power can only add to a detector),
  ``upper = value + U``.
* ``max_ghost_fraction``: ``upper = (ghost + U) / signal``, ``lower = ghost /
  (signal + U)``.

A requirement **passes** when its worst-case bound meets the limit, **fails** when its
best-case bound misses it, and is **inconclusive** otherwise (lower the power threshold
or raise the event cap, or use ``power_threshold = "auto"``). Only a conclusive pass
counts as passed (:attr:`Verdict.passed`); ``tracer run`` exits 1 for a failure or an
inconclusive verdict. Where a detector's power rests on sampling (light that met a scatter
event, or any light in Monte Carlo mode) its bounds are widened by ``VERDICT_SIGMAS`` (3)
standard errors (:meth:`tracer.engine.Result.detector_standard_error`), and the scatter
sampling account counts as untraced power; gap leakage carries no sampling error yet.

>>> v = Verdict("leak", "max_power", "cam", value=2e-9, limit=1e-8, unit="W", comparison="<=",
...             lower=2e-9, upper=5e-8)
>>> v.verdict, v.passed
('inconclusive', False)
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

from .tables import finite_or_none, fmt_fraction, fmt_sci, format_table

__all__ = ["Verdict", "evaluate", "format_verdicts", "all_passed", "verdict_of", "untraced_power",
           "zero_power_warnings", "behind_warnings", "untraced_notes", "VERDICTS"]

#: The three verdicts, in increasing order of trouble.
VERDICTS = ("pass", "inconclusive", "fail")

_WHAT = {"min_power": "power on {}", "max_power": "power on {}",
         "max_scattered_power": "scattered power on {}",
         "max_ghost_fraction": "ghost fraction on {}", "max_leakage": "leakage through {}"}
_SHORT = {"min_power": "power", "max_power": "power", "max_scattered_power": "scattered power",
          "max_ghost_fraction": "ghost fraction",
          "max_leakage": "leakage"}

#: What to do about an inconclusive verdict.
ADVICE = ('lower trace.power_threshold (or set power_threshold = "auto") or raise '
          'trace.max_events, so that less power goes untraced')


def verdict_of(comparison: str, limit: float, lower: float, upper: float) -> str:
    """``"pass"``, ``"fail"`` or ``"inconclusive"`` from the bounds of a value.

    Parameters
    ----------
    comparison : ``"<="`` or ``">="``
    limit : float
    lower, upper : float
        Best and worst case of the value (``lower <= upper``; may be inf).

    >>> verdict_of("<=", 1.0, 0.5, 0.9), verdict_of("<=", 1.0, 0.5, 2.0), verdict_of("<=", 1.0, 1.5, 2)
    ('pass', 'inconclusive', 'fail')
    >>> verdict_of(">=", 1.0, 1.5, 2.0), verdict_of(">=", 1.0, 0.5, 2.0), verdict_of(">=", 1.0, 0.2, 0.5)
    ('pass', 'inconclusive', 'fail')
    """
    if comparison == "<=":
        if upper <= limit:
            return "pass"
        return "fail" if lower > limit else "inconclusive"
    if lower >= limit:
        return "pass"
    return "fail" if upper < limit else "inconclusive"


@dataclass(frozen=True)
class Verdict:
    """The outcome of one requirement.

    Attributes
    ----------
    name : str
    kind : str
        ``min_power``, ``max_power``, ``max_scattered_power``, ``max_ghost_fraction`` or
        ``max_leakage``.
    subject : str
        The detector or gap it is about.
    value : float
        Measured value, in ``unit`` (may be inf for a ghost fraction without signal).
    limit : float
        In ``unit``.
    unit : str
        ``"W"`` or ``"1"`` (a fraction).
    comparison : str
        ``">="`` or ``"<="``.
    lower, upper : float
        Best and worst case of the value had the untraced (discarded + cut) power gone
        the best or worst way for the requirement (default: ``value``).
    untraced_w : float [W]
        Discarded plus cut power of the trace (and the magnitude of the scatter sampling
        account), the power the bounds allow for.
    sampling_error : float
        In ``unit``: ``VERDICT_SIGMAS`` (3) standard errors of the value where it rests on
        sampled scatter (or on Monte Carlo choices), already inside ``lower``/``upper``.
    verdict : str
        ``"pass"``, ``"fail"`` or ``"inconclusive"`` (derived from the bounds).
    passed : bool
        True only for a conclusive pass.
    """

    name: str
    kind: str
    subject: str
    value: float
    limit: float
    unit: str
    comparison: str
    lower: float | None = None
    upper: float | None = None
    untraced_w: float = 0.0
    sampling_error: float = 0.0
    verdict: str = field(init=False)
    passed: bool = field(init=False)

    def __post_init__(self):
        if self.lower is None:
            object.__setattr__(self, "lower", self.value)
        if self.upper is None:
            object.__setattr__(self, "upper", self.value)
        v = verdict_of(self.comparison, self.limit, self.lower, self.upper)
        object.__setattr__(self, "verdict", v)
        object.__setattr__(self, "passed", v == "pass")

    @property
    def bound(self) -> float:
        """The worst-case bound: ``upper`` for a maximum, ``lower`` for a minimum."""
        return self.upper if self.comparison == "<=" else self.lower

    def advice(self) -> str:
        """What to do about an inconclusive verdict ('' otherwise)."""
        if self.verdict != "inconclusive":
            return ""
        side = "at most" if self.comparison == "<=" else "at least"
        other = self.upper if self.comparison == "<=" else self.lower
        text = (f"{self.name}: inconclusive, the value is {_fmt(self.value, self.unit)} but could "
                f"be {_fmt(other, self.unit)} had the {fmt_sci(self.untraced_w)} W of discarded "
                f"and cut power gone the worst way")
        if self.sampling_error > 0:
            text += (f" and with its sampling error ({_fmt(self.sampling_error, self.unit)} at "
                     "3 standard errors)")
        text += f"; it must be {side} {_fmt(self.limit, self.unit)}: {ADVICE}"
        if self.sampling_error > 0:
            text += "; for the sampling error, trace more source rays or raise trace.scatter_rays"
        return text

    def to_dict(self) -> dict:
        return dict(name=self.name, kind=self.kind, subject=self.subject, passed=self.passed,
                    verdict=self.verdict, value=finite_or_none(self.value),
                    limit=float(self.limit), unit=self.unit, comparison=self.comparison,
                    bound=finite_or_none(self.bound), lower=finite_or_none(self.lower),
                    upper=finite_or_none(self.upper), untraced_w=float(self.untraced_w),
                    sampling_error=float(self.sampling_error))

    def _repr_html_(self) -> str:  # Jupyter (tracer.notebook)
        from ..notebook import verdicts_html
        return verdicts_html([self])

    def describe(self) -> str:
        """One line, e.g. ``enough: power on camera 9.2e-04 W >= 5.0e-04 W: pass``."""
        what = _WHAT.get(self.kind, self.kind + " {}").format(self.subject)
        text = (f"{self.name}: {what} {_fmt(self.value, self.unit)} {self.comparison} "
                f"{_fmt(self.limit, self.unit)}: {_label(self.verdict)}")
        if self.verdict == "inconclusive":
            text += f" (worst case {_fmt(self.bound, self.unit)})"
        return text


def _label(verdict: str) -> str:
    return {"pass": "pass", "fail": "FAIL", "inconclusive": "INCONCLUSIVE"}[verdict]


def _fmt(x: float, unit: str) -> str:
    if unit == "W":
        return f"{fmt_sci(x)} W"
    if not math.isfinite(x):
        return "inf"
    return fmt_fraction(x)


def untraced_power(result) -> float:
    """Discarded plus cut (and lost) power of a trace [W], plus the magnitude of the scatter
    sampling account (scattered power booked at the events that the sampled children do not
    carry, or carry in excess: power whose destination the sampling did not resolve)."""
    tot = result.ledger.totals()
    return float(tot["discarded_w"] + tot["cut_w"] + abs(tot.get("sampling_w", 0.0)))


def _sigma(result, detector) -> float:
    """``VERDICT_SIGMAS`` standard errors of a detector's sampled power [W]."""
    from ..tolerances import VERDICT_SIGMAS

    se = getattr(result, "detector_standard_error", None)
    return VERDICT_SIGMAS * float(se(detector)) if se is not None else 0.0


def evaluate(result, *, ghosts: dict | None = None) -> list[Verdict]:
    """Evaluate every requirement of the traced scene.

    Parameters
    ----------
    result : tracer.engine.Result
    ghosts : dict of str -> GhostTable, optional
        Ghost tables already computed (by detector name), reused when given.

    Returns
    -------
    list of Verdict
        In the scene's order.
    """
    from .ghosts import ghost_table
    from .leakage import gap_leakage

    ghosts = dict(ghosts or {})
    src = float(result.source_power_w)
    u_w = untraced_power(result)
    u_frac = u_w / src if src else 0.0
    out = []
    for spec in (getattr(result.scene, "requirements", {}) or {}).values():
        limit = float(spec.limit)
        if spec.kind in ("min_power", "max_power", "max_scattered_power"):
            if spec.kind == "max_scattered_power":
                table = ghosts.get(spec.detector)
                if table is None:
                    table = ghosts[spec.detector] = ghost_table(result, spec.detector)
                p = float(table.scattered_power_w)
            else:
                p = float(result.detector_power(spec.detector))
            k = _sigma(result, spec.detector)
            if spec.relative:
                scale = 1.0 / src if src else 0.0
                value, unit, u = p * scale, "1", u_frac
            else:
                scale = 1.0
                value, unit, u = p, "W", u_w
            cmp = ">=" if spec.kind == "min_power" else "<="
            out.append(Verdict(spec.name, spec.kind, spec.detector, value, limit, unit, cmp,
                               lower=max(value - k * scale, 0.0), upper=value + u + k * scale,
                               untraced_w=u_w, sampling_error=k * scale))
        elif spec.kind == "max_ghost_fraction":
            table = ghosts.get(spec.detector)
            if table is None:
                table = ghosts[spec.detector] = ghost_table(result, spec.detector)
            value = table.ghost_fraction
            ghost_w = float(table.ghost_power_w)
            signal = float(table.design_group_power_w)
            k = _sigma(result, spec.detector)
            upper = (ghost_w + u_w + k) / signal if signal > 0 else math.inf
            lower = max(ghost_w - k, 0.0) / (signal + u_w) if signal + u_w > 0 else math.inf
            lower = min(lower, value)
            out.append(Verdict(spec.name, spec.kind, spec.detector, value, limit, "1", "<=",
                               lower=lower, upper=max(upper, value), untraced_w=u_w,
                               sampling_error=k / signal if signal > 0 else 0.0))
        elif spec.kind == "max_leakage":
            value = gap_leakage(result, spec.gap,
                                mechanism=getattr(spec, "mechanism", "crossed"))
            out.append(Verdict(spec.name, spec.kind, spec.gap, value, limit, "1", "<=",
                               lower=value, upper=value + u_frac, untraced_w=u_w))
        else:  # pragma: no cover - the loader only produces the kinds above
            from ..errors import TracerError

            raise TracerError(f"requirement {spec.name!r}: unknown kind {spec.kind!r}")
    return out


def all_passed(verdicts) -> bool:
    """True when every verdict is a conclusive pass (also for no requirement)."""
    return all(v.passed for v in verdicts)


def zero_power_warnings(result) -> list[str]:
    """A warning per plane detector that reads 0 W while some power went untraced."""
    u_w = untraced_power(result)
    if not u_w > 0:
        return []
    out = []
    for name in result.compiled.detector_names:
        if result.detector_power(name) == 0.0:
            out.append(f"warning: detector {name} reads 0 W while {fmt_sci(u_w)} W "
                       f"({fmt_sci(u_w / result.source_power_w)} of the source power) was "
                       "discarded or cut: light too faint for the power threshold may have been "
                       "on its way there; lower trace.power_threshold (or set it to \"auto\") or "
                       "raise trace.max_events to see it")
    return out


def untraced_notes(result, detectors=None) -> list[str]:
    """Per plane detector with light (of ``detectors``, default all): discarded or cut power
    left on its side of the assembly (:meth:`tracer.engine.Result.untraced_near`), when any."""
    out = []
    near_of = getattr(result, "untraced_near", None)
    if near_of is None:
        return out
    for name in result.compiled.detector_names:
        if detectors is not None and name not in detectors:
            continue
        near = near_of(name)
        if near is not None and near[0] > 0:
            out.append(f"note: {fmt_sci(near[0])} W was discarded or cut in "
                       f"{', '.join(near[1])}, the solid(s) the light on detector {name} last "
                       "leaves; some of it may have been on its way there")
    return out


def behind_warnings(result) -> list[str]:
    """A note per one-sided detector that light crossed from behind (not recorded)."""
    out = []
    behind = getattr(result, "behind_power", None)
    if behind is None:
        return out
    for name in result.compiled.detector_names:
        w = behind(name)
        if w > 0:
            out.append(f"warning: {fmt_sci(w)} W crossed detector {name} from behind and was "
                       "not recorded (a one-sided detector is transparent from behind): flip its "
                       "normal or set two_sided = true if that light should count")
    return out


def format_verdicts(verdicts) -> str:
    """Aligned table of verdicts with a closing line (and advice for inconclusive ones)."""
    if not verdicts:
        return "requirements: none declared"
    body = []
    for v in verdicts:
        bound = _fmt(v.bound, v.unit) if v.bound != v.value else ""
        body.append([v.name, _SHORT.get(v.kind, v.kind), v.subject, _fmt(v.value, v.unit),
                     v.comparison, _fmt(v.limit, v.unit), bound, _label(v.verdict)])
    failed = [v.name for v in verdicts if v.verdict == "fail"]
    unsure = [v.name for v in verdicts if v.verdict == "inconclusive"]
    text = "requirements\n" + format_table(
        ["name", "checks", "on", "value", "", "limit", "worst case", "verdict"], body,
        align="<<<r<rr<", indent="  ")
    if failed:
        text += f"\n  {len(failed)} of {len(verdicts)} FAILED: {', '.join(failed)}"
    if unsure:
        text += (f"\n  {len(unsure)} of {len(verdicts)} INCONCLUSIVE: {', '.join(unsure)}")
        for v in verdicts:
            if v.verdict == "inconclusive":
                text += "\n  " + v.advice()
    if not failed and not unsure:
        text += f"\n  all {len(verdicts)} passed"
    return text
