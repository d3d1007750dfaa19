"""The power budget: where the source power goes.

Built from the engine's power ledger. Every watt launched ends in exactly one account:

* ``detector``: recorded on a plane detector;
* ``absorbed (face)``: on an absorbing face, or absorbed by a lossy coating or gap layer;
* ``absorbed (bulk)``: in the bulk of a solid (or of the ambient medium);
* ``escaped``: left the assembly for good, booked under the last face it crossed
  (``(no hit)`` for source rays that met nothing); a far-field detector sees all of it;
* ``discarded``: children whose power fell below the trace's power threshold;
* ``cut``: rays stopped at the event cap (``max_events``);
* ``lost``: rays a numerical failure left with no exit (shown only when non-zero).

Beside the accounts, the budget lists the power that tunnelled through each gap
(frustrated TIR, booked by the engine at each crossing, both directions): it is not an
account (that power ends in one of the accounts above) and is not part of the sum.

The rows add up to the source power; :attr:`PowerBudget.residual_w` is what is left
(round-off only, for a correct trace). Rows whose magnitude is below
:data:`tracer.tolerances.BUDGET_ROUNDOFF` of the source power are left out of the
tables (they are round-off of "parent minus children" bookings) but stay in the totals.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from .. import tolerances
from .tables import csv_text, fmt_fraction, fmt_sci, format_table

__all__ = ["BudgetRow", "PowerBudget", "power_budget", "CATEGORIES"]

#: Accounts per category shown in printed tables before the rest is folded into one row.
DISPLAY_ROWS = 8

#: Budget categories, in table order.
CATEGORIES = ("detector", "absorbed (face)", "absorbed (bulk)", "escaped", "discarded", "cut", "lost")


@dataclass(frozen=True)
class BudgetRow:
    """One account of the budget.

    Attributes
    ----------
    category : str
        One of :data:`CATEGORIES`.
    name : str
        Detector, ``solid.face`` or solid name; ``"power threshold"`` / ``"event cap"``
        for discarded / cut.
    power_w : float [W]
    fraction : float [1]
        Of the source power.
    """

    category: str
    name: str
    power_w: float
    fraction: float

    def to_dict(self) -> dict:
        return dict(category=self.category, name=self.name, power_w=self.power_w,
                    fraction=self.fraction)


@dataclass(frozen=True)
class PowerBudget:
    """Where the source power went (see the module docstring).

    Attributes
    ----------
    source_power_w : float [W]
    rows : list of BudgetRow
    totals : dict
        ``detected_w``, ``absorbed_w``, ``escaped_w``, ``discarded_w``, ``cut_w``
        (cut includes lost), ``sampling_w`` (scattered power booked at scatter events minus
        what their sampled children carry; signed, zero without scatter) [W].
    residual_w : float [W]
        Source power minus every account (closure residual).
    far_field : list of str
        Far-field detectors (they see the escaped power).
    tunnelled : dict
        Per gap, every crossing of it: ``faces``, ``tir_possible``, ``crossed_w``,
        ``tunnelled_w``, ``refracted_w``, ``a_to_b_w``, ``b_to_a_w`` (tunnelled) [W],
        ``crossed``, ``tunnelled`` and ``refracted`` (``a_to_b_w``, ``b_to_a_w`` [W]), ``leakage``
        (crossed / source power) and ``refracted_share`` [1] (see
        :func:`tracer.analysis.leakage.gap_tunnel_table`).
    """

    source_power_w: float
    rows: list = field(default_factory=list)
    totals: dict = field(default_factory=dict)
    residual_w: float = 0.0
    far_field: list = field(default_factory=list)
    tunnelled: dict = field(default_factory=dict)

    @property
    def relative_residual(self) -> float:
        """``|residual| / source power`` [1]."""
        return abs(self.residual_w) / self.source_power_w if self.source_power_w else 0.0

    def _repr_html_(self) -> str:  # Jupyter (tracer.notebook)
        from ..notebook import budget_html
        return budget_html(self)

    def category_total(self, category: str) -> float:
        """Sum of the rows of one category [W]."""
        return float(sum(r.power_w for r in self.rows if r.category == category))

    def to_dict(self) -> dict:
        return dict(source_power_w=self.source_power_w, rows=[r.to_dict() for r in self.rows],
                    totals=dict(self.totals), residual_w=self.residual_w,
                    relative_residual=self.relative_residual, far_field=list(self.far_field),
                    tunnelled={k: dict(v) for k, v in self.tunnelled.items()})

    def to_csv(self) -> str:
        """CSV text: category, name, power_w, fraction_of_source; then the residual."""
        out = [[r.category, r.name, r.power_w, r.fraction] for r in self.rows]
        out.append(["closure residual", "", self.residual_w,
                    self.residual_w / self.source_power_w if self.source_power_w else 0.0])
        return csv_text(["category", "name", "power_w", "fraction_of_source"], out)

    def display_rows(self, per_category: int = DISPLAY_ROWS) -> list:
        """The rows for a printed table: per category the ``per_category`` strongest, the
        rest folded into one row ``"N more"`` carrying their sum (a 24-walled mount cell
        would otherwise fill a page). CSV and JSON keep every account.

        >>> b = PowerBudget(1.0, rows=[BudgetRow("escaped", f"a.f{i}", 0.1, 0.1) for i in range(5)])
        >>> [r.name for r in b.display_rows(2)]
        ['a.f0', 'a.f1', '3 more']
        """
        out = []
        for cat in CATEGORIES + tuple(sorted({r.category for r in self.rows} - set(CATEGORIES))):
            rows = [r for r in self.rows if r.category == cat]
            if len(rows) > per_category + 1:
                rest = rows[per_category:]
                w = float(sum(r.power_w for r in rest))
                rows = rows[:per_category] + [BudgetRow(cat, f"{len(rest)} more", w,
                                                        sum(r.fraction for r in rest))]
            out.extend(rows)
        return out

    def format_text(self) -> str:
        """Aligned table with per-category subtotals and the closure residual (the
        strongest accounts of each category, :meth:`display_rows`)."""
        body = []
        for r in self.display_rows():
            body.append([r.category, r.name, fmt_sci(r.power_w), fmt_fraction(r.fraction)])
        body.append(["total", "", fmt_sci(self.source_power_w - self.residual_w),
                     fmt_fraction(1 - (self.residual_w / self.source_power_w
                                       if self.source_power_w else 0.0))])
        text = (f"power budget (source power {fmt_sci(self.source_power_w)} W)\n"
                + format_table(["where", "account", "power [W]", "of source"], body,
                               align="<<rr", indent="  "))
        text += (f"\n  closure residual {fmt_sci(self.residual_w)} W "
                 f"({fmt_sci(self.relative_residual)} of the source power)")
        for name, g in self.tunnelled.items():
            text += "\n  " + _crossing_line(name, g)
        if self.far_field:
            many = len(self.far_field) > 1
            text += (f"\n  far-field detector{'s' if many else ''} {', '.join(self.far_field)} "
                     f"collect{'' if many else 's'} the escaped power")
        return text


def _crossing_line(name: str, g: dict) -> str:
    """One text line: what crossed gap ``name`` (``g`` as in :attr:`PowerBudget.tunnelled`).

    A cemented joint (no TIR possible) shows only the crossed power: there is no
    tunnelling to report there.
    """
    a_, b_ = (str(f).split(".")[0] for f in g["faces"][:2])
    c = g.get("crossed", g)
    dirs = (f"{a_} to {b_} {fmt_sci(c['a_to_b_w'])} W, {b_} to {a_} {fmt_sci(c['b_to_a_w'])} W")
    head = (f"crossed gap {name} ({g['faces'][0]} | {g['faces'][1]}): "
            f"{fmt_sci(g['crossed_w'])} W = {fmt_fraction(g['leakage'])} of the source")
    tail = f" ({dirs}; already inside the accounts above)"
    if not g.get("tir_possible", True):
        return f"{head}{tail[:-1]}; a cemented joint, no TIR possible)"
    src = g["crossed_w"] / g["leakage"] if g["leakage"] else 0.0

    def part(key):
        w = g[f"{key}_w"]
        frac = fmt_fraction(w / src) if src else fmt_fraction(0.0)
        return f"{key} {fmt_sci(w)} W = {frac}"

    return (f"{head}{tail}\n    of which {part('tunnelled')} (frustrated TIR), "
            f"{part('refracted')} (refraction below the critical angle)")


def power_budget(result, *, source: str | None = None) -> PowerBudget:
    """The power budget of a trace.

    Parameters
    ----------
    result : tracer.engine.Result
    source : str, optional
        Budget of one source only (default: all sources together).

    Returns
    -------
    PowerBudget
    """
    from ..errors import TracerError

    led = result.ledger
    index = None
    if source is not None:
        if source not in led.sources:
            raise TracerError(f"unknown source {source!r}; sources: {', '.join(led.sources)}")
        index = led.sources.index(source)
    b = led.breakdown(index)
    src = float(b["source_w"])
    floor = tolerances.BUDGET_ROUNDOFF * src

    def frac(x):
        return x / src if src else 0.0

    rows = []

    def add(cat, name, value):
        value = float(value)
        if abs(value) > floor or (cat == "detector"):
            rows.append(BudgetRow(cat, name, value, frac(value)))

    for name, v in b["detectors"].items():
        add("detector", name, v)
    for name, v in sorted(b["absorbed_faces"].items(), key=lambda kv: -kv[1]):
        add("absorbed (face)", name, v)
    for name, v in sorted(b["absorbed_bulk"].items(), key=lambda kv: -kv[1]):
        add("absorbed (bulk)", name, v)
    for name, v in sorted(b["escaped_faces"].items(), key=lambda kv: -kv[1]):
        add("escaped", name, v)
    add("discarded", "power threshold", b["discarded_w"])
    lost = float(b.get("lost_w", 0.0))
    add("cut", "event cap", b["cut_w"] - lost)
    add("lost", "no exit found", lost)
    sampling = float(b.get("sampling_w", 0.0))
    add("scatter sampling", "booked minus sampled", sampling)
    totals = {k: float(b[k]) for k in ("detected_w", "absorbed_w", "escaped_w", "discarded_w", "cut_w")}
    totals["lost_w"] = lost
    totals["sampling_w"] = sampling
    far = [d.name for d in getattr(result.compiled, "far_fields", [])]
    tunnelled = {}
    if hasattr(result, "crossed_power"):
        from .leakage import crossing_entry, gap_crossings

        for gname in getattr(result, "gap_names", []):
            tunnelled[gname] = crossing_entry(gap_crossings(result, gname, source=source))
    return PowerBudget(source_power_w=src, rows=rows, totals=totals,
                       residual_w=float(b["residual_w"]), far_field=far, tunnelled=tunnelled)
