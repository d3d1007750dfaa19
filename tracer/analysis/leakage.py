"""Leakage through a gap: every watt that crosses it, by whatever mechanism.

A TIR face backed by a thin gap (a prism pair, a beam-splitter cube) is meant to reflect
everything, and light can still cross the gap into the partner solid two ways:

* **tunnelled**: beyond the gap medium's critical angle the evanescent field couples
  across a thin gap (frustrated TIR); the engine books these events as kind ``tunnel``
  (code ``FT``);
* **refracted**: rays that meet the gap *below* the critical angle (an illumination cone
  wider than the TIR margin, a tilted source) are ordinarily transmitted through the
  gap medium into the partner (kind ``transmit``).

The engine books the power each transmitted child carries from one face of the gap to
the other, per source, per direction (solid A to B, B to A) and per mechanism, at the
moment it crosses (:meth:`tracer.engine.Result.crossed_power`). The *crossed* power is
the sum of both mechanisms.

The leakage of a gap is the crossed power (both directions, both mechanisms) over the
source power; :func:`gap_leakage` can judge one mechanism alone. It is exact in tree
mode whatever happens to the light afterwards (detected, escaped, absorbed, discarded or
cut); light that crosses the gap several times (A to B, back B to A, ...) counts once
per crossing. In Monte Carlo mode it is an unbiased estimate. :func:`gap_crossings`
gives every figure of one gap at once.

:func:`path_tunnelled_power` gives the older, path-table figure: the power that
*arrives* on a detector or escapes along paths with at least one tunnel event, a lower
bound of the tunnelled power (it misses what tunnels and is then absorbed, discarded
or cut, and counts a path that tunnels twice once).
"""

from __future__ import annotations

__all__ = ["gap_leakage", "gap_faces", "gap_crossings", "gap_tunnelled_power", "tunnelled_power",
           "path_tunnelled_power", "gap_tunnel_table", "leakage_notes", "MECHANISMS"]

#: What a leakage figure counts: every crossing, only frustrated TIR, or only refraction.
MECHANISMS = ("crossed", "tunnelled", "refracted")


def gap_faces(scene, gap: str) -> tuple[str, str]:
    """The two ``solid.face`` names of gap ``gap`` of ``scene``."""
    from ..errors import TracerError

    gaps = getattr(scene, "gaps", {}) or {}
    if gap not in gaps:
        raise TracerError(f"unknown gap {gap!r}; the scene has {', '.join(gaps) or 'no gap'}")
    g = gaps[gap]
    return f"{g.solid_a}.{g.face_a}", f"{g.solid_b}.{g.face_b}"


def _tunnels(events, faces) -> bool:
    return any(k == "tunnel" and f in faces for f, k in events)


def path_tunnelled_power(result, faces) -> float:
    """Power [W] of every detected or escaped path with a ``tunnel`` event on ``faces``.

    A lower bound of the tunnelled power (see the module docstring); kept for
    comparison with :func:`gap_tunnelled_power`.

    Parameters
    ----------
    result : tracer.engine.Result
    faces : collection of str
        ``solid.face`` names.
    """
    from .ghosts import _events_from_signature

    faces = set(faces)
    total = 0.0
    for det in result.compiled.detector_names:
        for p in result.paths(det):
            if _tunnels(p["events"], faces):
                total += float(p["power_w"])
    for p in result.escaped_paths(limit=10**12):
        _, events = _events_from_signature(p["signature"])
        if _tunnels(events, faces):
            total += float(p["power_w"])
    return total


#: Former name of :func:`path_tunnelled_power` (same arguments and meaning).
tunnelled_power = path_tunnelled_power


def gap_tunnelled_power(result, gap: str, *, direction: str | None = None,
                        source: str | None = None) -> float:
    """Power [W] that tunnelled through ``gap`` (booked by the engine, exact in tree mode).

    Only the frustrated-TIR share of the crossings; :func:`gap_crossings` gives all.

    Parameters
    ----------
    result : tracer.engine.Result
    gap : str
        Gap name in the traced scene.
    direction : {"a->b", "b->a"}, optional
        One direction only (default both).
    source : str, optional
        One source only (default all).
    """
    from ..errors import TracerError

    gap_faces(result.scene, gap)  # a clear error for an unknown gap
    try:
        return float(result.tunnelled_power(gap, direction=direction, source=source))
    except KeyError as exc:
        raise TracerError(str(exc.args[0])) from None


def gap_crossings(result, gap: str, *, source: str | None = None) -> dict:
    """Every crossing of ``gap``: power [W] by mechanism and direction, and fractions [1].

    Parameters
    ----------
    result : tracer.engine.Result
    gap : str
        Gap name in the traced scene.
    source : str, optional
        One source only (default all); fractions are then of that source's power.

    Returns
    -------
    dict
        ``faces`` [a, b]; ``tir_possible`` (False for a cemented joint: no solid is
        denser than the gap medium); ``crossed_w``, ``tunnelled_w``, ``refracted_w`` and
        per direction ``crossed_a_to_b_w``, ``crossed_b_to_a_w``, ``tunnelled_a_to_b_w``,
        ... ``refracted_b_to_a_w`` [W]; ``source_w`` [W]; ``crossed``, ``tunnelled``,
        ``refracted`` as fractions of the source power [1] (``crossed`` is the leakage);
        ``refracted_share`` = refracted / crossed [1] (0 when nothing crossed).

    Examples
    --------
    >>> from pathlib import Path
    >>> import tracer
    >>> scene = tracer.load(Path(tracer.__file__).parents[1] / "scenes" / "tir_prism_pair.toml")
    >>> g = gap_crossings(tracer.trace(scene, rays=3), "tir")
    >>> g["crossed_w"] == g["tunnelled_w"] + g["refracted_w"], g["refracted_w"]
    (True, 0.0)
    """
    from ..errors import TracerError

    faces = gap_faces(result.scene, gap)  # a clear error for an unknown gap
    try:
        out = dict(faces=list(faces))
        out["tir_possible"] = (bool(result.gap_tir_possible(gap))
                               if hasattr(result, "gap_tir_possible") else True)
        for m in MECHANISMS:
            ab = float(result.crossed_power(gap, source=source, direction="a->b", mechanism=m))
            ba = float(result.crossed_power(gap, source=source, direction="b->a", mechanism=m))
            out[f"{m}_w"] = ab + ba
            out[f"{m}_a_to_b_w"] = ab
            out[f"{m}_b_to_a_w"] = ba
    except KeyError as exc:
        raise TracerError(str(exc.args[0])) from None
    if source is None:
        src = float(result.source_power_w)
    else:
        src = float(result.ledger.launched[result.ledger.sources.index(source)])
    out["source_w"] = src
    for m in MECHANISMS:
        out[m] = out[f"{m}_w"] / src if src > 0 else 0.0
    out["refracted_share"] = out["refracted_w"] / out["crossed_w"] if out["crossed_w"] > 0 else 0.0
    return out


def gap_leakage(result, gap: str, *, mechanism: str = "crossed") -> float:
    """Leakage of ``gap``: power that crossed it (both directions) over source power [1].

    See the module docstring.

    Parameters
    ----------
    result : tracer.engine.Result
    gap : str
        Gap name in the traced scene.
    mechanism : {"crossed", "tunnelled", "refracted"}
        Count every crossing (default), only frustrated TIR or only refraction.
    """
    if mechanism not in MECHANISMS:
        raise ValueError(f"mechanism={mechanism!r}: expected one of {', '.join(MECHANISMS)}")
    return gap_crossings(result, gap)[mechanism]


def gap_tunnel_table(result) -> dict:
    """Per gap: faces, crossed, tunnelled and refracted power [W] in each direction, leakage [1].

    Returns
    -------
    dict
        ``{gap: {"faces": [a, b], "tir_possible", "crossed_w", "tunnelled_w",
        "refracted_w", "a_to_b_w", "b_to_a_w" (tunnelled, per direction, as before),
        "crossed": {"a_to_b_w", "b_to_a_w"}, "tunnelled": {...}, "refracted": {...},
        "leakage" (crossed / source power), "refracted_share"}}`` in scene order (empty
        without gaps).
    """
    return {name: crossing_entry(gap_crossings(result, name))
            for name in getattr(result, "gap_names", [])}


def crossing_entry(g: dict) -> dict:
    """The budget / JSON form of a :func:`gap_crossings` dict."""
    return dict(
        faces=list(g["faces"]), tir_possible=bool(g["tir_possible"]),
        crossed_w=g["crossed_w"], tunnelled_w=g["tunnelled_w"], refracted_w=g["refracted_w"],
        a_to_b_w=g["tunnelled_a_to_b_w"], b_to_a_w=g["tunnelled_b_to_a_w"],
        crossed=dict(a_to_b_w=g["crossed_a_to_b_w"], b_to_a_w=g["crossed_b_to_a_w"]),
        tunnelled=dict(a_to_b_w=g["tunnelled_a_to_b_w"], b_to_a_w=g["tunnelled_b_to_a_w"]),
        refracted=dict(a_to_b_w=g["refracted_a_to_b_w"], b_to_a_w=g["refracted_b_to_a_w"]),
        leakage=g["crossed"], refracted_share=g["refracted_share"],
    )


def leakage_notes(result, verdicts) -> list[str]:
    """One line per ``max_leakage`` verdict: what crossed its gap, by mechanism.

    A failing verdict whose gap is crossed by refraction gets a second line saying why
    (light meets the gap below its medium's critical angle) and what to change.

    Parameters
    ----------
    result : tracer.engine.Result
    verdicts : list of tracer.analysis.Verdict
    """
    from .tables import fmt_fraction

    reqs = getattr(result.scene, "requirements", {}) or {}
    out = []
    for v in verdicts:
        if v.kind != "max_leakage":
            continue
        spec = reqs.get(v.name)
        mech = getattr(spec, "mechanism", "crossed")
        g = gap_crossings(result, v.subject)
        judged = {"crossed": "every crossing", "tunnelled": "tunnelled power only",
                  "refracted": "refracted power only"}[mech]
        if not g["tir_possible"]:
            out.append(f"{v.name}: gap {v.subject} is a cemented joint (no TIR possible); "
                       f"{fmt_fraction(g['crossed'])} of the source crossed it")
            continue
        out.append(f"{v.name}: judges {judged} of gap {v.subject}: crossed "
                   f"{fmt_fraction(g['crossed'])} of the source = refracted "
                   f"{fmt_fraction(g['refracted'])} (below the critical angle) + tunnelled "
                   f"{fmt_fraction(g['tunnelled'])} (frustrated TIR); refracted share "
                   f"{fmt_fraction(g['refracted_share'])} of the crossing")
        if not v.passed and mech != "tunnelled" and g["refracted_w"] > 0:
            out.append(f"  {v.name} fails mostly by refraction: part of the light meets the gap "
                       "below its medium's critical angle. Narrow the source's angular spread "
                       "to within the TIR margin (tracer path shows the margin over the source's "
                       "spread) or tilt the TIR face so the whole cone lies beyond the critical "
                       "angle." if g["refracted_share"] >= 0.5 else
                       f"  {v.name} fails with refraction across the gap as well as tunnelling: "
                       "see tracer path for the margin over the source's spread")
    return out
