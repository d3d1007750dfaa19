"""The numbers a sweep point or a tolerance trial keeps from one trace.

:func:`collect` turns a :class:`tracer.engine.Result` into one flat row of plain values,
with these columns (``DET`` a detector, ``GAP`` a gap, ``REQ`` a requirement, ``STATE``
an input polarisation state):

=============================  ====  =================================================
column                         unit  meaning
=============================  ====  =================================================
``power.DET``                  W     power on the detector
``fraction.DET``               1     ... over the total source power
``T.STATE.DET``                1     detector power over source power when every source
                                     launches the linear state ``STATE`` (e.g. s and p)
``Tdesign.STATE.DET``          1     the same for the design path alone
``design_power.DET``           W     power of the design path
``design_group_power.DET``     W     the design signal: design path and its equivalents
``ghost_power.DET``            W     every path outside the design group
``ghost_fraction.DET``         1     ghost power over design-path power
``top_ghost_power.DET``        W     the strongest ghost path
``top_ghost.DET``              --    its label
``leakage.GAP``                1     power that crossed the gap (tunnelled or refracted) over source power
``req.REQ``                    W/1   the requirement's measured value
``pass.REQ``                   --    True only for a conclusive pass (False for a
                                     failure or an inconclusive verdict)
``verdict.REQ``                --    "pass", "fail" or "inconclusive"
``deviation_deg`` ...          deg   from the sequential design path, when asked
=============================  ====  =================================================

Ghosts, leakage and requirement values are those of :mod:`tracer.analysis` (design path:
the scene's declared sequence where it reaches the detector, else the strongest path).

Polarisation states
-------------------
``T.STATE.DET`` uses the field matrices the engine carries: every detector hit keeps
its Jones matrix from the source's two input states to the detector frame, scaled so
that the hit's power for a unit-trace input coherency ``J`` is ``tr(M J M^H)``. One
trace therefore gives the detector power for *any* input polarisation: the sum over
hits of ``tr(M J M^H)`` with ``J = v v^H``, ``v = (cos a, sin a)`` for a linear state
at angle ``a`` from the source's ``x_axis``. This holds in tree mode; in Monte Carlo
mode the fields are rescaled to the carried power, so :func:`collect` is given results
of extra traces with every source set to each state instead (``retraced``).

The power threshold prunes children by the power of the state actually traced (the
source's own polarisation), so the ``T`` of another state misses at most the pruned
power -- below ``power_threshold`` of the source power per pruned child; lower the
threshold where that matters.

Which angle is s and which is p depends on the geometry: the defaults
(:data:`DEFAULT_STATES`, s = 90 deg, p = 0 deg) hold when the planes of incidence
contain the source's ``x_axis`` -- the case of an assembly laid out in the x-y plane
with a source travelling in that plane and the default ``x_axis`` (z x direction).
"""

from __future__ import annotations

import math

import numpy as np

__all__ = ["collect", "state_power", "DEFAULT_STATES", "GROUPS", "state_coherency"]

#: Input states for ``T.STATE.DET``: name -> linear angle from the source x_axis [rad].
DEFAULT_STATES = {"s": math.pi / 2, "p": 0.0}

#: Result groups :func:`collect` knows.
GROUPS = ("power", "polarization", "ghosts", "leakage", "requirements", "sequence")


def state_coherency(angle: float) -> np.ndarray:
    """Coherency ``v v^H`` of the linear state at ``angle`` [rad] (trace 1).

    >>> state_coherency(0.0).real.tolist()
    [[1.0, 0.0], [0.0, 0.0]]
    """
    v = np.array([math.cos(angle), math.sin(angle)], dtype=complex)
    return np.outer(v, v.conj())


def state_power(result, detector: str, coherency, *, node: int | None = None) -> float:
    """Power [W] on plane detector ``detector`` had every source launched ``coherency``.

    Sums ``tr(M J M^H)`` over the recorded hits (tree mode; see the module docstring),
    or over the hits of one path-tree ``node`` (one path).

    Raises
    ------
    TracerError
        When hits were dropped (``max_hits`` too small) or the trace is Monte Carlo.
    """
    from ..errors import TracerError

    if result.options.mode != "tree":
        raise TracerError("polarisation states from one trace need tree mode")
    h = result.hits(detector)
    expected = sum(int(p["rays"]) for p in result.paths(detector))
    if len(h["power"]) != expected:
        raise TracerError(f"detector {detector!r}: only {len(h['power'])} of {expected} hits were "
                          "kept; raise the max_hits trace setting")
    J = np.asarray(coherency, dtype=complex)
    M = h["jones"] if node is None else h["jones"][h["node"] == node]
    return float(np.einsum("nij,jk,nlk->", M, J, M.conj()).real)


def _plane_detectors(result):
    return list(result.compiled.detector_names)


def collect(result, *, groups=("power", "polarization", "ghosts", "leakage", "requirements"),
            states: dict | None = None, retraced: dict | None = None,
            sequence_report=None) -> tuple[dict, dict]:
    """One row of results from a trace.

    Parameters
    ----------
    result : tracer.engine.Result
    groups : collection of str
        Which of :data:`GROUPS` to fill.
    states : dict, optional
        ``{name: angle [rad]}`` for ``T.STATE.DET`` (default :data:`DEFAULT_STATES`).
    retraced : dict, optional
        ``{name: Result}`` traced with every source in state ``name``; used for the
        ``T`` columns instead of the field matrices (Monte Carlo mode).
    sequence_report : tracer.engine.SequenceReport, optional
        For the ``sequence`` group.

    Returns
    -------
    row : dict
        Column -> number, bool or str.
    details : dict
        Extra plain data for JSON: ``top_ghosts`` per detector (up to 3 paths).
    """
    from ..analysis import evaluate, gap_leakage, ghost_table

    groups = set(groups)
    states = DEFAULT_STATES if states is None else states
    row: dict = {}
    details: dict = {}
    src = float(result.source_power_w)
    dets = list(result.detector_names)
    planes = _plane_detectors(result)
    if "power" in groups:
        for d in dets:
            p = float(result.detector_power(d))
            row[f"power.{d}"] = p
            row[f"fraction.{d}"] = p / src if src > 0 else 0.0
    tables = {}
    if groups & {"ghosts", "requirements", "polarization"}:
        tables = {d: ghost_table(result, d) for d in planes}
    if "polarization" in groups and states:
        nodes = {}
        if retraced is None:
            for d in planes:
                des = tables[d].design
                nodes[d] = next((p["node"] for p in result.paths(d)
                                 if des is not None and p["signature"] == des.signature), None)
        for name, angle in states.items():
            for d in planes:
                if retraced is not None:
                    r = retraced[name]
                    s = float(r.source_power_w)
                    row[f"T.{name}.{d}"] = float(r.detector_power(d)) / s if s > 0 else 0.0
                    des = ghost_table(r, d).design
                    row[f"Tdesign.{name}.{d}"] = (des.power_w / s if des is not None and s > 0
                                                  else 0.0)
                else:
                    J = state_coherency(angle)
                    p = state_power(result, d, J)
                    row[f"T.{name}.{d}"] = p / src if src > 0 else 0.0
                    pd = state_power(result, d, J, node=nodes[d]) if nodes[d] is not None else 0.0
                    row[f"Tdesign.{name}.{d}"] = pd / src if src > 0 else 0.0
    if "ghosts" in groups:
        for d, t in tables.items():
            row[f"design_power.{d}"] = float(t.design_power_w)
            row[f"design_group_power.{d}"] = float(t.design_group_power_w)
            row[f"ghost_power.{d}"] = float(t.ghost_power_w)
            gf = t.ghost_fraction
            row[f"ghost_fraction.{d}"] = float(gf) if math.isfinite(gf) else None
            g = t.strongest_ghost
            row[f"top_ghost_power.{d}"] = float(g.power_w) if g is not None else 0.0
            row[f"top_ghost.{d}"] = g.label if g is not None else ""
            details.setdefault("top_ghosts", {})[d] = [
                dict(label=r.label, signature=r.signature, power_w=float(r.power_w))
                for r in t.rows if r.ghost][:3]
    if "leakage" in groups:
        for gname in getattr(result.scene, "gaps", {}) or {}:
            row[f"leakage.{gname}"] = float(gap_leakage(result, gname))
    if "requirements" in groups:
        for v in evaluate(result, ghosts=tables):
            row[f"req.{v.name}"] = float(v.value) if math.isfinite(v.value) else None
            row[f"pass.{v.name}"] = bool(v.passed)
            row[f"verdict.{v.name}"] = v.verdict
    if "sequence" in groups and sequence_report is not None:
        s = sequence_report.summary()
        row["sequence_complete"] = bool(s["complete"])
        row["deviation_deg"] = float(s["deviation_deg"])
        row["throughput_seq"] = float(s["throughput"])
        row["lateral_displacement_m"] = float(s["lateral_displacement_m"])
        if s.get("image_rotation_deg") is not None:
            row["image_rotation_deg"] = float(s["image_rotation_deg"])
    return row, details
