"""The difference of two run summaries (``tracer.analysis.run_summary``).

Everything is read generically from the JSON summary, so accounts added to it later
(new ledger or gap keys) flow through:

* **accounts** -- every number under ``ledger`` and ``gaps`` (nested objects entered, key
  paths joined by dots) and the scalar numbers of each detector (``power_w``,
  ``ghost_fraction``, ...), old, new and the change;
* **ghost paths** of each detector matched by signature: new (only in NEW), gone (only in
  OLD), and for the common ones the power ratio new/old;
* **verdicts** of the requirements (by name) that changed. Verdicts are ordered
  pass < inconclusive < fail (the summary's ``verdict`` when present, else ``passed``);
  the diff is *worse* when a requirement's verdict moved up that order, or a requirement
  only in NEW does not pass.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

__all__ = ["ResultDiff", "AccountChange", "PathChange", "VerdictChange", "diff_summaries",
           "verdict_of", "verdict_rank", "numeric_leaves"]

#: Verdicts from best to worst.
VERDICT_ORDER = ("pass", "inconclusive", "fail")

#: Changes of an account smaller than this fraction of the source power (or of the
#: value, for fractions) are shown as "no change": summation round-off.
ACCOUNT_RTOL = 1e-12


def verdict_of(entry: dict) -> str:
    """A requirement entry's verdict: ``verdict`` when present, else from ``passed``."""
    v = entry.get("verdict")
    if isinstance(v, str) and v:
        return v
    return "pass" if entry.get("passed") else "fail"


def verdict_rank(verdict: str) -> int:
    """0 pass, 1 inconclusive, 2 fail (an unknown verdict counts as fail)."""
    return VERDICT_ORDER.index(verdict) if verdict in VERDICT_ORDER else len(VERDICT_ORDER) - 1


def _number(v) -> bool:
    return isinstance(v, (int, float)) and not isinstance(v, bool)


def numeric_leaves(data, prefix: str) -> dict:
    """``{dotted key: number or None}`` of every number (and null) below ``data``."""
    out = {}
    if isinstance(data, dict):
        for k, v in data.items():
            out.update(numeric_leaves(v, f"{prefix}.{k}" if prefix else str(k)))
    elif _number(data) or data is None:
        out[prefix] = None if data is None else float(data)
    return out


def accounts_of(summary: dict) -> dict:
    """The accounts compared by :func:`diff_summaries` (see the module docstring)."""
    out = {}
    out.update(numeric_leaves(summary.get("ledger", {}), "ledger"))
    out.update(numeric_leaves(summary.get("gaps", {}), "gaps"))
    for name, det in (summary.get("detectors") or {}).items():
        for k, v in det.items():
            if _number(v) or (v is None and k.endswith(("_w", "fraction"))):
                out[f"detectors.{name}.{k}"] = None if v is None else float(v)
    return out


@dataclass(frozen=True)
class AccountChange:
    key: str
    old: float | None
    new: float | None

    @property
    def delta(self) -> float | None:
        if self.old is None or self.new is None:
            return None
        return self.new - self.old

    @property
    def relative(self) -> float | None:
        d = self.delta
        if d is None or self.old == 0:
            return None
        return d / abs(self.old)

    def to_dict(self) -> dict:
        return dict(key=self.key, old=self.old, new=self.new, delta=self.delta,
                    relative=self.relative)


@dataclass(frozen=True)
class PathChange:
    """A ghost path of one detector: ``status`` "new", "gone" or "common"."""

    detector: str
    signature: str
    status: str
    old_w: float | None
    new_w: float | None
    label: str = ""

    @property
    def ratio(self) -> float | None:
        """Power new/old of a common path (None otherwise, or when old is 0)."""
        if self.old_w is None or self.new_w is None or self.old_w == 0:
            return None
        return self.new_w / self.old_w

    def to_dict(self) -> dict:
        return dict(detector=self.detector, signature=self.signature, label=self.label,
                    status=self.status, old_power_w=self.old_w, new_power_w=self.new_w,
                    ratio=self.ratio)


@dataclass(frozen=True)
class VerdictChange:
    """A requirement whose verdict differs (``old`` or ``new`` None when absent)."""

    name: str
    old: str | None
    new: str | None
    old_entry: dict | None = None
    new_entry: dict | None = None

    @property
    def worse(self) -> bool:
        if self.new is None:
            return False
        if self.old is None:
            return self.new != "pass"
        return verdict_rank(self.new) > verdict_rank(self.old)

    def to_dict(self) -> dict:
        return dict(name=self.name, old=self.old, new=self.new, worse=self.worse,
                    old_value=(self.old_entry or {}).get("value"),
                    new_value=(self.new_entry or {}).get("value"),
                    unit=(self.new_entry or self.old_entry or {}).get("unit"))


@dataclass
class ResultDiff:
    """Difference of two run summaries (see the module docstring)."""

    old_name: str
    new_name: str
    accounts: list = field(default_factory=list)
    paths: list = field(default_factory=list)
    verdicts: list = field(default_factory=list)
    source_power_w: float = 0.0

    @property
    def worse(self) -> bool:
        """A requirement verdict got worse (the exit code 1 of ``tracer diff``)."""
        return any(v.worse for v in self.verdicts)

    def changed_accounts(self) -> list:
        return [a for a in self.accounts if _moved(a, self.source_power_w)]

    def path_changes(self, *, ratio_tolerance: float = 1e-9) -> list:
        """New and gone paths, and common ones whose power changed."""
        return [p for p in self.paths if p.status != "common"
                or p.ratio is None and p.old_w != p.new_w
                or p.ratio is not None and abs(p.ratio - 1) > ratio_tolerance]

    def format_text(self, *, limit: int = 20) -> str:
        lines = [f"results: {self.old_name} -> {self.new_name}"]
        moved = self.changed_accounts()
        if moved:
            lines.append(f"  accounts changed ({len(moved)} of {len(self.accounts)}):")
            for a in moved[:limit * 2]:
                rel = "" if a.relative is None else f" ({a.relative:+.3%})"
                lines.append(f"    {a.key}: {_num(a.old, a.key)} -> {_num(a.new, a.key)}"
                             f"{'' if a.delta is None else ', delta ' + _num(a.delta, a.key, sign=True)}{rel}")
            if len(moved) > limit * 2:
                lines.append(f"    ... {len(moved) - limit * 2} more (see the JSON)")
        else:
            lines.append("  accounts: no change")
        pc = self.path_changes()
        if pc:
            lines.append(f"  ghost paths changed ({len(pc)}):")
            for p in pc[:limit]:
                if p.status == "common":
                    what = (f"power x{p.ratio:.4g} ({_num(p.old_w, '_w')} -> {_num(p.new_w, '_w')})"
                            if p.ratio is not None else f"{_num(p.old_w, '_w')} -> {_num(p.new_w, '_w')}")
                else:
                    what = f"{p.status} ({_num(p.new_w if p.status == 'new' else p.old_w, '_w')})"
                lines.append(f"    {p.detector}: {what}: {p.label or p.signature}")
            if len(pc) > limit:
                lines.append(f"    ... {len(pc) - limit} more (see the JSON)")
        else:
            lines.append("  ghost paths: no change")
        if self.verdicts:
            lines.append("  requirement verdicts changed:")
            for v in self.verdicts:
                mark = "  WORSE" if v.worse else ""
                lines.append(f"    {v.name}: {v.old or '(absent)'} -> {v.new or '(absent)'}{mark}")
        else:
            lines.append("  requirement verdicts: no change")
        return "\n".join(lines)

    def to_dict(self) -> dict:
        return dict(old=self.old_name, new=self.new_name, worse=self.worse,
                    accounts=[a.to_dict() for a in self.accounts],
                    paths=[p.to_dict() for p in self.paths],
                    verdicts=[v.to_dict() for v in self.verdicts])

    def _repr_html_(self) -> str:
        from .html import result_diff_html
        return result_diff_html(self)


def _moved(a: AccountChange, source_w: float) -> bool:
    """Changed by more than summation round-off (:data:`ACCOUNT_RTOL` of the source power
    for powers; of the value, and at least that much absolutely, for fractions)."""
    if a.old is None or a.new is None:
        return a.old != a.new
    from .baseline import is_power

    if is_power(a.key) and source_w > 0:
        return abs(a.new - a.old) > ACCOUNT_RTOL * source_w
    return abs(a.new - a.old) > ACCOUNT_RTOL * max(abs(a.old), abs(a.new), 1.0)


def _num(v, key: str, *, sign: bool = False) -> str:
    from .baseline import is_power

    if v is None:
        return "n/a"
    text = f"{v:+.4g}" if sign else f"{v:.4g}"
    return text + (" W" if is_power(key) else "")


def diff_summaries(old: dict, new: dict, *, old_name: str = "old", new_name: str = "new") -> ResultDiff:
    """The :class:`ResultDiff` of two run summaries."""
    a, b = accounts_of(old), accounts_of(new)
    accounts = [AccountChange(k, a.get(k), b.get(k)) for k in [*a, *[k for k in b if k not in a]]]
    paths = []
    dets_old, dets_new = old.get("detectors") or {}, new.get("detectors") or {}
    for det in [*dets_old, *[d for d in dets_new if d not in dets_old]]:
        po = {p["signature"]: p for p in (dets_old.get(det) or {}).get("paths", [])}
        pn = {p["signature"]: p for p in (dets_new.get(det) or {}).get("paths", [])}
        for sig in [*pn, *[s for s in po if s not in pn]]:
            o, n = po.get(sig), pn.get(sig)
            status = "common" if o and n else ("new" if n else "gone")
            paths.append(PathChange(det, sig, status, o and o.get("power_w"), n and n.get("power_w"),
                                    label=(n or o).get("label", "")))
    ro = {r["name"]: r for r in old.get("requirements") or []}
    rn = {r["name"]: r for r in new.get("requirements") or []}
    verdicts = []
    for name in [*rn, *[r for r in ro if r not in rn]]:
        vo = verdict_of(ro[name]) if name in ro else None
        vn = verdict_of(rn[name]) if name in rn else None
        if vo != vn:
            verdicts.append(VerdictChange(name, vo, vn, ro.get(name), rn.get(name)))
    src = new.get("source_power_w") or old.get("source_power_w") or 0.0
    return ResultDiff(old_name, new_name, accounts, paths, verdicts,
                      source_power_w=float(src) if math.isfinite(float(src)) else 0.0)
