"""Scene-wide settings: header keys, the spectrum, trace settings, gap finding."""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .. import tolerances, units
from ..errors import TracerError
from .model import Spectrum, TraceSettings
from .problems import describe_value
from .quantities import LENGTH_UNITS
from .ranges import threshold_problem
from .reader import Table

__all__ = ["Header", "read_header", "read_spectrum", "read_trace", "GapFinding",
           "read_gap_finding", "TRACE_MODES"]

TRACE_MODES = ("tree", "monte-carlo")


@dataclass(frozen=True)
class Header:
    """Top-level scalar keys of a scene."""

    title: str
    dimension: int
    length_unit: str
    seed: int
    ambient: str


def read_header(doc: Table, *, default_title: str) -> Header:
    """Read ``title``, ``dimension``, ``length_unit``, ``seed`` and ``ambient``."""
    title = doc.string("title", default=default_title) or default_title
    dimension = doc.integer("dimension", default=3)
    if dimension not in (2, 3, None):
        doc.error("dimension", f"expected 2 (a cross-section in the x-y plane) or 3, got {dimension}")
    length_unit = doc.string("length_unit", default="mm", choices=LENGTH_UNITS) or "mm"
    seed = doc.integer("seed", default=0, minimum=0)
    ambient = doc.string("ambient", default="air") or "air"
    return Header(title, dimension if dimension in (2, 3) else 3, length_unit,
                  seed if seed is not None else 0, ambient)


def read_spectrum(t: Table) -> Spectrum | None:
    """A ``spectrum`` table: ``wavelengths``, optional ``weights`` and ``bandwidth``."""
    wl = t.quantities("wavelengths", "wavelength", required=True, positive=True,
                      allow_single=True)
    weights = t.numbers("weights", minimum=0.0)
    bw_raw = t.raw("bandwidth")
    bandwidth = None
    if wl is not None and weights is not None:
        if weights.size != wl.size:
            t.error("weights", f"expected {wl.size} weights (one per wavelength), got {weights.size}")
            weights = None
        elif not weights.sum() > 0:
            t.error("weights", "expected at least one positive weight")
            weights = None
    elif wl is not None:
        weights = np.full(wl.size, 1.0)
    if bw_raw is not None and wl is not None:
        if isinstance(bw_raw, bool) or not isinstance(bw_raw, (str, int, float)):
            t.error("bandwidth", "expected a spectral width such as \"2 nm\" or \"5 GHz\", "
                                 f"got {describe_value(bw_raw)}")
        else:
            try:
                bandwidth = units.bandwidth(bw_raw, center=float(np.mean(wl)), default=None)
            except TracerError as exc:
                t.error("bandwidth", f"{exc} (expected a spectral width such as \"2 nm\" or "
                                     "\"5 GHz\")")
                return None
            if not math.isfinite(bandwidth) or bandwidth < 0:
                t.error("bandwidth", f"expected a non-negative width, got {describe_value(bw_raw)}")
                return None
    t.finish()
    if wl is None or weights is None:
        return None
    return Spectrum(wavelengths=wl, weights=weights / weights.sum(),
                    bandwidth=bandwidth if bandwidth else None)


def read_trace(t: Table | None) -> tuple[TraceSettings, tuple[str, ...] | None]:
    """The ``trace`` table; the sequence is returned raw for later face checks."""
    if t is None:
        return TraceSettings(auto_threshold=True), None
    mode = t.string("mode", default="tree", choices=TRACE_MODES)
    raw = t.raw("power_threshold")
    t._asked("power_threshold", "number", 1e-6)  # a number, or "auto"
    auto = raw is None or (isinstance(raw, str) and raw.strip().lower() == "auto")
    threshold = None
    if not auto:
        problem = threshold_problem(raw)
        if problem is not None:
            t.error("power_threshold", f"{problem}, got {describe_value(raw)}")
        else:
            threshold = float(raw)
    cost = t.number("auto_cost", default=tolerances.AUTO_THRESHOLD_COST, minimum=1.0)
    if t.has("auto_cost") and not auto:
        t.note("auto_cost", 'only used with power_threshold = "auto"')
    max_events = t.integer("max_events", default=64, minimum=1, maximum=100_000)
    sequence = t.strings("sequence")
    scatter_rays = t.integer("scatter_rays", default=16, minimum=1, maximum=10_000)
    scatter_depth = t.integer("scatter_depth", default=1, minimum=0, maximum=16)
    targets = t.strings("scatter_targets", nonempty=False) if t.has("scatter_targets") else None
    share = t.quantity("target_share", "fraction", default=0.5, nonnegative=True, maximum=1.0)
    t.finish()
    settings = TraceSettings(mode=mode or "tree",
                             power_threshold=threshold if threshold is not None
                             else tolerances.AUTO_THRESHOLD_START,
                             max_events=max_events or 64,
                             sequence=tuple(sequence) if sequence else None,
                             auto_threshold=bool(auto),
                             auto_cost=cost if cost is not None else tolerances.AUTO_THRESHOLD_COST,
                             scatter_rays=scatter_rays or 16,
                             scatter_depth=scatter_depth if scatter_depth is not None else 1,
                             scatter_targets=tuple(targets) if targets is not None else None,
                             target_share=share if share is not None else 0.5)
    return settings, tuple(sequence) if sequence else None


@dataclass(frozen=True)
class GapFinding:
    """Automatic gap discovery settings (``[gap_finding]``)."""

    enabled: bool = False
    max_separation: float = tolerances.GAP_MAX_SEPARATION
    max_angle: float = tolerances.GAP_MAX_ANGLE
    medium: str | None = None
    coherence: str = "auto"


def read_gap_finding(t: Table | None) -> GapFinding:
    """The ``gap_finding`` table (discovery is off when absent)."""
    if t is None:
        return GapFinding()
    enabled = t.boolean("enabled", default=True)
    sep = t.quantity("max_separation", "length", default=tolerances.GAP_MAX_SEPARATION,
                     positive=True)
    ang = t.quantity("max_angle", "angle", default=tolerances.GAP_MAX_ANGLE, nonnegative=True,
                     maximum=math.radians(45))
    medium = t.string("medium")
    coherence = t.string("coherence", default="auto", choices=("auto", "coherent", "incoherent"))
    t.finish()
    return GapFinding(bool(enabled), sep if sep is not None else tolerances.GAP_MAX_SEPARATION,
                      ang if ang is not None else tolerances.GAP_MAX_ANGLE, medium,
                      coherence or "auto")
