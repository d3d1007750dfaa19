"""Requirement verdicts: evaluate a scene's requirements on a trace.

Kinds (:class:`tracer.scene.model.RequirementSpec`):

* ``min_power``: power on a detector >= limit. The value is in watts, or a fraction of
  the total source power when the limit was given as a fraction (``relative``).
* ``max_ghost_fraction``: power of every ghost path on a detector divided by the design
  signal (the design path and the paths equivalent to it) <= limit (see
  :mod:`tracer.analysis.ghosts`).
  With no design signal the value is infinite (reported as ``None`` in JSON) and the
  requirement fails.
* ``max_leakage``: power that tunnelled through a named gap (both directions, every
  crossing, as booked by the engine) divided by the source power <= limit (see
  :mod:`tracer.analysis.leakage`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from .tables import finite_or_none, fmt_fraction, fmt_sci, format_table

__all__ = ["Verdict", "evaluate", "format_verdicts", "all_passed"]


@dataclass(frozen=True)
class Verdict:
    """The outcome of one requirement.

    Attributes
    ----------
    name : str
    kind : str
        ``min_power``, ``max_ghost_fraction`` or ``max_leakage``.
    subject : str
        The detector or gap it is about.
    passed : bool
    value : float
        Measured value, in ``unit`` (may be inf for a ghost fraction without signal).
    limit : float
        In ``unit``.
    unit : str
        ``"W"`` or ``"1"`` (a fraction).
    comparison : str
        ``">="`` or ``"<="``.
    """

    name: str
    kind: str
    subject: str
    passed: bool
    value: float
    limit: float
    unit: str
    comparison: str

    def to_dict(self) -> dict:
        return dict(name=self.name, kind=self.kind, subject=self.subject, passed=self.passed,
                    value=finite_or_none(self.value), limit=float(self.limit), unit=self.unit,
                    comparison=self.comparison)

    def _repr_html_(self) -> str:  # Jupyter (tracer.notebook)
        from ..notebook import verdicts_html
        return verdicts_html([self])

    def describe(self) -> str:
        """One line, e.g. ``enough: power on camera 9.2e-04 W >= 5.0e-04 W: pass``."""
        what = {"min_power": f"power on {self.subject}",
                "max_ghost_fraction": f"ghost fraction on {self.subject}",
                "max_leakage": f"leakage through {self.subject}"}.get(self.kind, self.kind)
        return (f"{self.name}: {what} {_fmt(self.value, self.unit)} {self.comparison} "
                f"{_fmt(self.limit, self.unit)}: {'pass' if self.passed else 'FAIL'}")


def _fmt(x: float, unit: str) -> str:
    if unit == "W":
        return f"{fmt_sci(x)} W"
    if not math.isfinite(x):
        return "inf"
    return fmt_fraction(x)


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
    out = []
    for spec in (getattr(result.scene, "requirements", {}) or {}).values():
        if spec.kind == "min_power":
            p = float(result.detector_power(spec.detector))
            if spec.relative:
                value, unit = (p / src if src else 0.0), "1"
            else:
                value, unit = p, "W"
            out.append(Verdict(spec.name, spec.kind, spec.detector, bool(value >= spec.limit),
                               value, float(spec.limit), unit, ">="))
        elif spec.kind == "max_ghost_fraction":
            table = ghosts.get(spec.detector)
            if table is None:
                table = ghosts[spec.detector] = ghost_table(result, spec.detector)
            value = table.ghost_fraction
            out.append(Verdict(spec.name, spec.kind, spec.detector, bool(value <= spec.limit),
                               value, float(spec.limit), "1", "<="))
        elif spec.kind == "max_leakage":
            value = gap_leakage(result, spec.gap)
            out.append(Verdict(spec.name, spec.kind, spec.gap, bool(value <= spec.limit),
                               value, float(spec.limit), "1", "<="))
        else:  # pragma: no cover - the loader only produces the kinds above
            from ..errors import TracerError

            raise TracerError(f"requirement {spec.name!r}: unknown kind {spec.kind!r}")
    return out


def all_passed(verdicts) -> bool:
    """True when every verdict passed (also for no requirement)."""
    return all(v.passed for v in verdicts)


def format_verdicts(verdicts) -> str:
    """Aligned table of verdicts with a closing line."""
    if not verdicts:
        return "requirements: none declared"
    body = []
    for v in verdicts:
        what = {"min_power": "power", "max_ghost_fraction": "ghost fraction",
                "max_leakage": "leakage"}.get(v.kind, v.kind)
        body.append([v.name, what, v.subject, _fmt(v.value, v.unit), v.comparison,
                     _fmt(v.limit, v.unit), "pass" if v.passed else "FAIL"])
    failed = [v.name for v in verdicts if not v.passed]
    text = "requirements\n" + format_table(
        ["name", "checks", "on", "value", "", "limit", "verdict"], body, align="<<<r<r<",
        indent="  ")
    if failed:
        text += f"\n  {len(failed)} of {len(verdicts)} FAILED: {', '.join(failed)}"
    else:
        text += f"\n  all {len(verdicts)} passed"
    return text
