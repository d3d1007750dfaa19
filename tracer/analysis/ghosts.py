"""Ghost tables: the paths that reach a detector, ranked by power.

For every detector the paths of a trace (distinct event sequences from a source to the
detector) are ranked by power. Each row gives the rank, the power [W], its fraction of
the total source power, its ratio to the design-path signal, a compact path label, the
number of reflections (partial and total), where the path lands on the detector
(power-weighted centroid and RMS radius in the detector's x, y frame) and its degree of
polarisation.

The design path and its group
-----------------------------
The *design path* of a detector is the path the system is built for. Paths that meet
exactly the same faces with the same events, in another order, are *equivalent* to it:
the sub-aperture paths of a corner cube (its three reflectors in any of six orders) or
of a roof, which the beam takes by design. The design path and its equivalents form the
*design group*, whose power is the design signal; every other path on the detector is a
ghost. The design path is chosen as follows:

1. when the scene declares a sequence (``[trace] sequence``), the strongest path whose
   faces are exactly the declared faces, in order (a ``:T`` / ``:R`` suffix on an entry
   also fixes the kind of event there: ``T`` matches transmit and tunnel, ``R`` matches
   reflect and TIR). A sequence ending with a detector name applies to that detector
   only;
2. otherwise, or when no path on the detector follows the sequence, the strongest path
   on the detector.

Only specular paths (no scatter event) can be the design path: scattered light is never
the design signal. ``design_rule`` in the table says which rule applied: ``"sequence"``
or ``"strongest"`` (``"none"`` when no specular path reached the detector).

Specular ghosts and scattered light
-----------------------------------
Paths with a scatter event (codes ``SR``, ``ST`` in labels) are *scattered light*; the
other paths outside the design group are *specular ghosts*. The table keeps one ranking
by power but prints the two kinds in separate sections, and gives their sums apart
(``specular_ghost_power_w``, ``scattered_power_w``; ``ghost_power_w`` is both). Scattered
powers rest on sampling: each row carries its standard error (``standard_error_w``, from
the spread over source rays), and so does the table (the detector's).

Path labels
-----------
The engine's signature (``laser > plate.front:T > plate.back:T > camera``) is kept as
the path's key. The label groups consecutive events in one solid and folds repeats:
``plate(front:T (back:R front:R)×2 back:T)``; event codes are those of the path tree
(T transmit, R partial reflection, TIR total internal reflection, FT tunnelled across a
gap, A absorbed). With more than one source the label starts with the source name.

>>> ghost_label([("plate.front", "transmit"), ("plate.back", "reflect"),
...              ("plate.front", "reflect"), ("plate.back", "transmit"), ("camera", "detect")])
'plate(front:T back:R front:R back:T)'
>>> ghost_label([("p.a", "transmit")] + [("p.b", "reflect"), ("p.a", "reflect")] * 3
...             + [("p.b", "transmit"), ("cam", "detect")])
'p(a:T (b:R a:R)×3 b:T)'
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from .tables import csv_text, finite_or_none, fmt_fraction, fmt_length_mm, fmt_sci, format_table

__all__ = ["GhostRow", "GhostTable", "ghost_table", "ghost_tables", "ghost_label",
           "matches_sequence", "EVENT_CODES", "SPOT_HEADER"]

#: Column headings of :meth:`GhostRow.spot_cells`.
SPOT_HEADER = ("x [mm]", "y [mm]", "rms [mm]", "DoP")

#: Event kind name -> code used in labels (same codes as the path tree's signatures).
EVENT_CODES = {"transmit": "T", "reflect": "R", "TIR": "TIR", "tunnel": "FT", "absorb": "A",
               "detect": "D", "scatter-r": "SR", "scatter-t": "ST"}
_REFLECTING = ("reflect", "TIR")
_TRANSMITTING = ("transmit", "tunnel")


@dataclass(frozen=True)
class GhostRow:
    """One path on one detector (see the module docstring).

    Attributes
    ----------
    rank : int
        1 for the strongest path.
    signature : str
        The engine's full signature, source to detector (the path's key).
    label : str
        Compact readable label.
    power_w : float [W]
    fraction : float [1]
        Of the total source power of the trace.
    ratio : float or None [1]
        Power over the design path's power (``None`` without a design path).
    reflections : int
        Partial and total reflections on the path.
    rays : int
        Source rays (geometric rays times spectral lines) that took the path.
    centroid : (float, float) or None [m]
        Power-weighted centroid of the path's hits in the detector's (x, y).
    rms_radius : float or None [m]
        Power-weighted RMS distance of the hits from the centroid.
    dop : float or None [1]
        Degree of polarisation of the path's summed Stokes vector.
    design : bool
        True for the design path.
    equivalent : bool
        True for a path equivalent to the design path (same faces and events in another
        order: part of the design signal, not a ghost).
    scattered : bool
        True for a path with at least one scatter event (scattered light; else a
        specular path).
    standard_error_w : float [W]
        Standard error of the power where it rests on sampling (scatter in tree mode,
        every path in Monte Carlo mode); 0 for an exact path.
    """

    rank: int
    signature: str
    label: str
    power_w: float
    fraction: float
    ratio: float | None
    reflections: int
    rays: int
    centroid: tuple[float, float] | None
    rms_radius: float | None
    dop: float | None
    design: bool
    equivalent: bool = False
    scattered: bool = False
    standard_error_w: float = 0.0

    @property
    def light(self) -> str:
        """``"design"`` (the design group), ``"specular ghost"`` or ``"scattered"``."""
        if self.scattered:
            return "scattered"
        return "specular ghost" if self.ghost else "design"

    @property
    def ghost(self) -> bool:
        """Neither the design path nor equivalent to it."""
        return not (self.design or self.equivalent)

    def to_dict(self) -> dict:
        return dict(
            rank=self.rank, signature=self.signature, label=self.label, power_w=self.power_w,
            fraction=self.fraction, ratio_to_design=finite_or_none(self.ratio),
            reflections=self.reflections, rays=self.rays,
            centroid_m=None if self.centroid is None else [float(c) for c in self.centroid],
            rms_radius_m=finite_or_none(self.rms_radius),
            degree_of_polarization=finite_or_none(self.dop), design=self.design,
            equivalent_to_design=self.equivalent, scattered=self.scattered,
            standard_error_w=float(self.standard_error_w),
        )

    def spot_cells(self) -> list[str]:
        """Centroid x, y and RMS radius [mm] and DoP as table cells (plane detectors),
        under :data:`SPOT_HEADER`."""
        cx, cy = self.centroid if self.centroid is not None else (None, None)
        return [fmt_length_mm(cx), fmt_length_mm(cy), fmt_length_mm(self.rms_radius),
                "-" if self.dop is None else f"{self.dop:.3f}"]


@dataclass(frozen=True)
class GhostTable:
    """Ranked paths on one detector.

    Attributes
    ----------
    detector : str
    kind : "plane" or "far_field"
    source_power_w : float [W]
    power_w : float [W]
        All power on the detector.
    design_rule : "sequence", "strongest" or "none"
    rows : list of GhostRow
        Every path, strongest first.
    hits_dropped : int
        Hits on the detector not kept individually (the trace's ``max_hits`` was
        reached): powers and ranks are complete, but the landing columns (centroid, RMS
        radius, degree of polarisation) cover only the kept hits.
    standard_error_w : float [W]
        Standard error of the detector's sampled power (0 when none is sampled).
    """

    detector: str
    kind: str
    source_power_w: float
    power_w: float
    design_rule: str
    rows: list = field(default_factory=list)
    hits_dropped: int = 0
    standard_error_w: float = 0.0

    def _repr_html_(self) -> str:  # Jupyter (tracer.notebook)
        from ..notebook import ghost_table_html
        return ghost_table_html(self)

    @property
    def design(self) -> GhostRow | None:
        """The design-path row, or ``None``."""
        return next((r for r in self.rows if r.design), None)

    @property
    def design_power_w(self) -> float:
        """Power of the design path alone [W]."""
        d = self.design
        return d.power_w if d is not None else 0.0

    @property
    def design_group_power_w(self) -> float:
        """Power of the design path and its equivalents: the design signal [W]."""
        return float(sum(r.power_w for r in self.rows if not r.ghost))

    @property
    def ghost_power_w(self) -> float:
        """Power of every path outside the design group [W]: specular ghosts and
        scattered light."""
        return float(sum(r.power_w for r in self.rows if r.ghost))

    @property
    def specular_ghost_power_w(self) -> float:
        """Power of the specular ghosts [W]: paths outside the design group with no
        scatter event."""
        return float(sum(r.power_w for r in self.rows if r.ghost and not r.scattered))

    @property
    def scattered_power_w(self) -> float:
        """Power of the paths with at least one scatter event [W]."""
        return float(sum(r.power_w for r in self.rows if r.scattered))

    @property
    def ghost_fraction(self) -> float:
        """Ghost power over the design signal [1] (inf when there is no design signal)."""
        d = self.design_group_power_w
        g = self.ghost_power_w
        if d > 0:
            return g / d
        return 0.0 if g == 0 else math.inf

    @property
    def strongest_ghost(self) -> GhostRow | None:
        return next((r for r in self.rows if r.ghost), None)

    # ------------------------------------------------------------ outputs
    def to_dict(self, limit: int | None = None) -> dict:
        rows = self.rows if limit is None else self.rows[:limit]
        d = self.design
        return dict(
            detector=self.detector, kind=self.kind, power_w=self.power_w,
            fraction=self.power_w / self.source_power_w if self.source_power_w else 0.0,
            design_rule=self.design_rule,
            design_signature=d.signature if d is not None else None,
            design_power_w=self.design_power_w,
            design_group_power_w=self.design_group_power_w,
            design_group_paths=sum(1 for r in self.rows if not r.ghost),
            ghost_power_w=self.ghost_power_w,
            ghost_fraction=finite_or_none(self.ghost_fraction),
            specular_ghost_power_w=self.specular_ghost_power_w,
            scattered_power_w=self.scattered_power_w,
            scattered_paths=sum(1 for r in self.rows if r.scattered),
            standard_error_w=float(self.standard_error_w),
            paths_total=len(self.rows), paths=[r.to_dict() for r in rows],
            hits_dropped=int(self.hits_dropped),
        )

    # new columns go at the end: scripts reading the earlier ones by position keep working
    CSV_COLUMNS = ("rank", "design", "power_w", "fraction_of_source", "ratio_to_design",
                   "reflections", "rays", "centroid_x_m", "centroid_y_m", "rms_radius_m",
                   "degree_of_polarization", "label", "signature", "light", "standard_error_w")

    def to_csv(self, limit: int | None = None) -> str:
        """CSV text, one row per path (columns :attr:`CSV_COLUMNS`)."""
        rows = self.rows if limit is None else self.rows[:limit]
        out = []
        for r in rows:
            cx, cy = r.centroid if r.centroid is not None else (None, None)
            out.append([r.rank, "yes" if r.design else ("equivalent" if r.equivalent else ""),
                        r.power_w, r.fraction,
                        finite_or_none(r.ratio), r.reflections, r.rays, cx, cy,
                        finite_or_none(r.rms_radius), finite_or_none(r.dop), r.label,
                        r.signature, r.light, r.standard_error_w])
        return csv_text(list(self.CSV_COLUMNS), out)

    def format_text(self, limit: int | None = 20) -> str:
        """Aligned text table with a heading (at most ``limit`` rows): the specular paths
        (design group and specular ghosts), then the scattered light, each strongest
        first with its overall rank."""
        rows = self.rows if limit is None else self.rows[:limit]
        head = (f"detector {self.detector}: {fmt_sci(self.power_w)} W "
                f"({fmt_fraction(self.power_w / self.source_power_w if self.source_power_w else 0)}"
                f" of source), {len(self.rows)} path{'s' if len(self.rows) != 1 else ''}")
        if not self.rows:
            return head + "\n  (no light reached this detector)"
        rule = {"sequence": "the declared sequence", "strongest": "the strongest specular path",
                "none": "none (no specular path reached it)"}[self.design_rule]
        head += f"; design path = {rule}" + (" (marked *)" if self.design is not None else "")
        plane = self.kind == "plane"
        sampled = any(r.standard_error_w > 0 for r in self.rows)
        header = ["rank", "power [W]"] + (["± s.e. [W]"] if sampled else []) + [
            "of source", "to design", "refl"]
        if plane:
            header += SPOT_HEADER
        header.append("path")

        def cells(r):
            mark = "*" if r.design else ("=" if r.equivalent else " ")
            out = [f"{r.rank}{mark}", fmt_sci(r.power_w)]
            if sampled:
                out.append(fmt_sci(r.standard_error_w) if r.standard_error_w > 0 else "-")
            out += [fmt_fraction(r.fraction),
                    fmt_sci(r.ratio) if not r.design and r.ratio is not None
                    else ("1" if r.design else "-"),
                    str(r.reflections)]
            if plane:
                out += r.spot_cells()
            out.append(r.label)
            return out

        specular = [r for r in rows if not r.scattered]
        scattered = [r for r in rows if r.scattered]
        text = head
        if specular:
            text += "\n  specular paths:\n" + format_table(header, [cells(r) for r in specular],
                                                          indent="  ")
        if scattered:
            text += ("\n  scattered light (paths with a scatter event; sampled):\n"
                     + format_table(header, [cells(r) for r in scattered], indent="  "))
        if limit is not None and len(self.rows) > limit:
            rest = sum(r.power_w for r in self.rows[limit:])
            text += f"\n  ... {len(self.rows) - limit} weaker paths, {fmt_sci(rest)} W together"
        gf = self.ghost_fraction
        n_eq = sum(1 for r in self.rows if r.equivalent)
        if n_eq:
            text += (f"\n  = {n_eq} path{'s' if n_eq != 1 else ''} equivalent to the design path "
                     f"(same faces and events in another order): design signal "
                     f"{fmt_sci(self.design_group_power_w)} W")
        if any(r.scattered for r in self.rows):
            sig = self.design_group_power_w
            ratio = (lambda w: f" = {fmt_sci(w / sig)} of the design signal") if sig > 0 else (
                lambda w: "")
            text += (f"\n  specular ghosts {fmt_sci(self.specular_ghost_power_w)} W"
                     f"{ratio(self.specular_ghost_power_w)}"
                     f"\n  scattered light {fmt_sci(self.scattered_power_w)} W"
                     f" ± {fmt_sci(self.standard_error_w)} W (one standard error)"
                     f"{ratio(self.scattered_power_w)}")
        else:
            text += (f"\n  ghost power {fmt_sci(self.ghost_power_w)} W = "
                     f"{fmt_sci(gf) if math.isfinite(gf) else 'inf'} of the design signal")
        if self.hits_dropped > 0:
            text += "\n" + self.dropped_warning()
        return text

    def dropped_warning(self) -> str:
        """The warning line printed when hits were dropped (empty when none were)."""
        if self.hits_dropped <= 0:
            return ""
        what = "x, y, rms and DoP" if self.kind == "plane" else "far-field records"
        return (f"  warning: {self.hits_dropped} hit{'s' if self.hits_dropped != 1 else ''} "
                f"not kept (max_hits reached); {what} use the kept hits only, powers are "
                "complete (raise the max_hits trace setting)")


# ---------------------------------------------------------------- labels
def _split_face(name: str) -> tuple[str, str]:
    if "." in name:
        solid, face = name.split(".", 1)
        return solid, face
    return "", name


def _fold(tokens: list[str]) -> list[str]:
    """Fold consecutive repeats of blocks of up to 8 tokens into ``(block)×n``."""
    out, i, n = [], 0, len(tokens)
    while i < n:
        best_len, best_count = 1, 1
        for length in range(1, min(8, (n - i) // 2) + 1):
            block = tokens[i : i + length]
            count = 1
            while tokens[i + count * length : i + (count + 1) * length] == block:
                count += 1
            if count >= 2 and count * length > best_count * best_len:
                best_len, best_count = length, count
        if best_count >= 2:
            block = tokens[i : i + best_len]
            inner = " ".join(block)
            out.append(f"{inner}×{best_count}" if best_len == 1 else f"({inner})×{best_count}")
            i += best_len * best_count
        else:
            out.append(tokens[i])
            i += 1
    return out


def ghost_label(events, *, source: str | None = None) -> str:
    """Compact label of a path from its ``(face name, kind name)`` events.

    Parameters
    ----------
    events : list of (str, str)
        ``("solid.face", kind)`` pairs as :meth:`tracer.engine.Result.paths` gives them;
        a final ``detect`` event is left out of the label.
    source : str, optional
        Prefixed as ``"source: "`` (used when a scene has several sources).
    """
    groups: list[tuple[str, list[str]]] = []
    for face, kind in events:
        if kind == "detect":
            continue
        solid, fname = _split_face(face)
        token = f"{fname}:{EVENT_CODES.get(kind, kind)}"
        if groups and groups[-1][0] == solid:
            groups[-1][1].append(token)
        else:
            groups.append((solid, [token]))
    parts = [f"{s}({' '.join(_fold(toks))})" if s else " ".join(_fold(toks)) for s, toks in groups]
    text = " ".join(parts) if parts else "(direct)"
    return f"{source}: {text}" if source else text


def _events_from_signature(signature: str) -> tuple[str, list[tuple[str, str]]]:
    parts = [p.strip() for p in signature.split(" > ")]
    names = {v: k for k, v in EVENT_CODES.items()}
    events = []
    for p in parts[1:]:
        if ":" in p:
            face, code = p.rsplit(":", 1)
            events.append((face, names.get(code, code)))
        else:
            events.append((p, "detect"))
    return parts[0], events


# ---------------------------------------------------------------- design path
def matches_sequence(events, sequence, *, detector: str, detector_names=()) -> bool:
    """Whether a path's events follow a declared sequence.

    Parameters
    ----------
    events : list of (str, str)
        ``(face, kind)`` of the path, ending with the ``detect`` event.
    sequence : sequence of str
        ``"solid.face"`` entries with optional ``:T``/``:R``; may end with a detector.
    detector : str
        Detector the path ends on.
    detector_names : collection of str
        Names that mark a sequence entry as a detector.

    >>> ev = [("a.x", "transmit"), ("a.y", "TIR"), ("a.z", "transmit"), ("cam", "detect")]
    >>> matches_sequence(ev, ["a.x", "a.y:R", "a.z"], detector="cam")
    True
    >>> matches_sequence(ev, ["a.x", "a.y:T", "a.z"], detector="cam")
    False
    >>> matches_sequence(ev, ["a.x", "a.y", "a.z", "other"], detector="cam", detector_names={"other"})
    False
    """
    seq = list(sequence)
    if seq and seq[-1] in set(detector_names):
        if seq[-1] != detector:
            return False
        seq = seq[:-1]
    faces = [(f, k) for f, k in events if k != "detect"]
    if len(faces) != len(seq):
        return False
    for (face, kind), entry in zip(faces, seq):
        name, force = entry, None
        if ":" in entry:
            name, force = entry.rsplit(":", 1)
            force = force.strip().upper()
        if face != name.strip():
            return False
        if force == "T" and kind not in _TRANSMITTING:
            return False
        if force == "R" and kind not in _REFLECTING:
            return False
    return True


def _sequence_for(scene, detector: str):
    """The scene's sequence if it applies to ``detector`` (else None)."""
    seq = getattr(getattr(scene, "settings", None), "sequence", None)
    if not seq:
        return None
    dets = set(getattr(scene, "detectors", {}) or {})
    if seq[-1] in dets and seq[-1] != detector:
        return None
    return tuple(seq)


def _event_multiset(events):
    """Sorted (face, kind) events of a path: equal for paths that differ only in order.

    >>> a = [("c.r1", "TIR"), ("c.r2", "TIR"), ("cam", "detect")]
    >>> _event_multiset(a) == _event_multiset([a[1], a[0], a[2]])
    True
    """
    return tuple(sorted((str(f), str(k)) for f, k in events))


# ---------------------------------------------------------------- landing spots
def _landing(result, detector: str):
    """Per path node: (hit power, centroid x, y, mean r², Stokes) from recorded hits."""
    try:
        h = result.hits(detector)
    except KeyError:
        return {}
    node = np.asarray(h["node"], dtype=np.int64)
    if node.size == 0:
        return {}
    uniq, inv = np.unique(node, return_inverse=True)
    w = np.asarray(h["power"], float)
    xy = np.asarray(h["local"], float)
    st = np.asarray(h["stokes"], float)
    wsum = np.bincount(inv, weights=w, minlength=len(uniq))
    cnt = np.bincount(inv, minlength=len(uniq))
    safe = np.where(wsum > 0, wsum, 1.0)
    cx = np.bincount(inv, weights=w * xy[:, 0], minlength=len(uniq)) / safe
    cy = np.bincount(inv, weights=w * xy[:, 1], minlength=len(uniq)) / safe
    r2 = np.bincount(inv, weights=w * (xy[:, 0] ** 2 + xy[:, 1] ** 2), minlength=len(uniq)) / safe
    stokes = np.stack([np.bincount(inv, weights=st[:, k], minlength=len(uniq)) for k in range(4)], 1)
    out = {}
    for j, n in enumerate(uniq.tolist()):
        var = max(r2[j] - cx[j] ** 2 - cy[j] ** 2, 0.0)  # second moment about the centroid
        out[n] = (int(cnt[j]), float(wsum[j]), (float(cx[j]), float(cy[j])), math.sqrt(var), stokes[j])
    return out


def _dop(stokes) -> float | None:
    s0 = float(stokes[0])
    if not s0 > 0:
        return None
    return float(min(math.sqrt(float(np.sum(np.asarray(stokes[1:]) ** 2))) / s0, 1.0))


# ---------------------------------------------------------------- tables
def ghost_table(result, detector: str) -> GhostTable:
    """Ranked paths on ``detector`` with the design path marked (see the module docstring).

    Parameters
    ----------
    result : tracer.engine.Result
    detector : str
        A plane or far-field detector of the traced scene.

    Returns
    -------
    GhostTable
    """
    from ..errors import TracerError

    if detector not in result.detector_names:
        raise TracerError(f"unknown detector {detector!r}; the scene has "
                          f"{', '.join(result.detector_names) or 'no detector'}")
    dropped = result.hits_dropped_on(detector) if hasattr(result, "hits_dropped_on") else 0
    scene = result.scene
    src_power = float(result.source_power_w)
    multi = len(result.source_names) > 1
    plane = detector in list(result.compiled.detector_names)
    if plane:
        paths = result.paths(detector)
        landing = _landing(result, detector)
    else:  # far field: every escaping path
        paths = []
        for p in result.escaped_paths(limit=10**9):
            src, ev = _events_from_signature(p["signature"])
            paths.append(dict(p, events=ev, rays=0, node=None))
        landing = {}
    total = float(result.detector_power(detector))

    sequence = _sequence_for(scene, detector)
    design_index, rule = None, "none"
    if paths:
        if sequence is not None:
            for i, p in enumerate(paths):
                if p.get("scattered"):
                    continue
                if matches_sequence(p["events"], sequence, detector=detector,
                                    detector_names=result.detector_names):
                    design_index, rule = i, "sequence"
                    break
        if design_index is None:
            # the strongest specular path: scattered light is never the design signal
            design_index = next((i for i, p in enumerate(paths) if not p.get("scattered")), None)
            rule = "strongest" if design_index is not None else "none"
    design_power = paths[design_index]["power_w"] if design_index is not None else 0.0
    design_events = (_event_multiset(paths[design_index]["events"])
                     if design_index is not None else None)

    rows = []
    for i, p in enumerate(paths):
        src = p["signature"].split(" > ", 1)[0]
        spot = landing.get(p.get("node"))
        centroid = rms = dop = None
        if spot is not None:
            _, _, centroid, rms, stokes = spot
            dop = _dop(stokes)
        ratio = (p["power_w"] / design_power) if design_power > 0 else None
        rows.append(GhostRow(
            rank=i + 1, signature=p["signature"],
            label=ghost_label(p["events"], source=src if multi else None),
            power_w=float(p["power_w"]), fraction=float(p["power_w"]) / src_power if src_power else 0.0,
            ratio=ratio, reflections=int(p["reflections"]), rays=int(p.get("rays") or 0),
            centroid=centroid, rms_radius=rms, dop=dop, design=(i == design_index),
            equivalent=(i != design_index and design_events is not None
                        and _event_multiset(p["events"]) == design_events
                        and src == paths[design_index]["signature"].split(" > ", 1)[0]),
            scattered=bool(p.get("scattered", False)),
            standard_error_w=float(p.get("standard_error_w", 0.0)),
        ))
    return GhostTable(detector=detector, kind="plane" if plane else "far_field",
                      source_power_w=src_power, power_w=total, design_rule=rule, rows=rows,
                      hits_dropped=int(dropped),
                      standard_error_w=float(result.detector_standard_error(detector))
                      if hasattr(result, "detector_standard_error") else 0.0)


def ghost_tables(result) -> dict[str, GhostTable]:
    """:func:`ghost_table` for every detector of the trace, by name."""
    return {name: ghost_table(result, name) for name in result.detector_names}
