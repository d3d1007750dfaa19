"""``[requirements.NAME]``: checks a run evaluates (minimum and maximum power, ghosts, leakage)."""

from __future__ import annotations

from .. import units
from ..errors import TracerError
from .context import Build
from .model import RequirementSpec
from .problems import describe_value, did_you_mean
from .reader import Table

__all__ = ["read_requirement", "REQUIREMENT_KINDS"]

REQUIREMENT_KINDS = ("min_power", "max_power", "max_scattered_power", "max_ghost_fraction",
                     "max_leakage")

#: Kinds whose limit is a power or a fraction of the source power.
_POWER_KINDS = ("min_power", "max_power", "max_scattered_power")

#: What a ``max_leakage`` requirement judges (``mechanism`` key): every crossing of the
#: gap (default), only frustrated TIR, or only refraction below the critical angle.
LEAKAGE_MECHANISMS = ("crossed", "tunnelled", "refracted")


def _name_ref(t: Table, key: str, known: set[str], what: str) -> str | None:
    value = t.string(key, required=True)
    if value is None:
        return None
    if value not in known:
        t.error(key, f'unknown {what} "{value}"' + did_you_mean(value, known))
        return None
    return value


def read_requirement(name: str, t: Table, build: Build, *, gap_names: set[str]) -> RequirementSpec | None:
    """One ``[requirements.NAME]`` table.

    ``min_power``: ``detector`` and ``limit`` as a power ("1 mW", absolute) or a
    fraction (0.5 or "50 %", of the total source power); ``max_power`` likewise ("1 nW",
    or "0.1 ppm" of the source power); ``max_scattered_power`` likewise, for the power
    of the detector's paths that met a scatter event. ``max_ghost_fraction``:
    ``detector`` and ``limit`` (fraction). ``max_leakage``: ``gap`` and ``limit``
    (fraction of the source power).
    """
    kind = t.string("kind", required=True, choices=REQUIREMENT_KINDS)
    detector = gap = None
    relative = True
    limit = None
    mechanism = "crossed"
    if kind in _POWER_KINDS + ("max_ghost_fraction",):
        detector = _name_ref(t, "detector", build.detector_keys, "detector")
        t.known("gap", "mechanism")
        if "gap" in t.data:
            t.error("gap", f'a {kind} requirement names a detector, not a gap')
        if "mechanism" in t.data:
            t.error("mechanism", f"only a max_leakage requirement has a mechanism, not a {kind}")
    elif kind == "max_leakage":
        gap = _name_ref(t, "gap", gap_names, "gap")
        t.known("detector")
        if "detector" in t.data:
            t.error("detector", "a max_leakage requirement names a gap, not a detector")
        mechanism = t.string("mechanism", default="crossed", choices=LEAKAGE_MECHANISMS)
    else:
        t.known("detector", "gap", "mechanism")
    raw = t.raw("limit")
    if kind is not None:
        if raw is None:
            t.error(None, 'missing key "limit": expected '
                    + ('a power such as "1 mW" or a fraction such as "50 %"'
                       if kind in _POWER_KINDS else 'a fraction such as 0.001 or "0.1 %"'))
        elif isinstance(raw, bool) or not isinstance(raw, (int, float, str)):
            t.error("limit", f"expected a number or a quantity string, got {describe_value(raw)}")
        else:
            limit, relative = _limit(t, kind, raw)
    t.finish(context=f"for a {kind} requirement" if kind else None)
    if kind is None or limit is None or (detector is None and gap is None):
        return None
    return RequirementSpec(name=name, kind=kind, limit=limit, detector=detector, gap=gap,
                           relative=relative, mechanism=mechanism or "crossed")


def _limit(t: Table, kind: str, raw):
    if kind in _POWER_KINDS and isinstance(raw, str):
        try:
            value = units.power(raw, default=None)
            return value, False
        except TracerError:
            pass
    try:
        value = units.fraction(raw)
    except TracerError:
        expected = ('a power such as "1 mW" or a fraction such as 0.5 or "50 %"'
                    if kind in _POWER_KINDS else 'a fraction such as 0.001 or "0.1 %"')
        t.error("limit", f"expected {expected}, got {describe_value(raw)}")
        return None, True
    upper = float("inf") if kind == "max_ghost_fraction" else 1.0
    if not 0.0 <= value <= upper:
        t.error("limit", f"expected a fraction between 0 and 1, got {describe_value(raw)}"
                if upper == 1.0 else f"expected a non-negative fraction, got {describe_value(raw)}")
        return None, True
    return value, True
