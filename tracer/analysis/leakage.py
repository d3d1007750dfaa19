"""Leakage through a gap: power that tunnelled across a thin layer beyond its critical angle.

A TIR face backed by a thin gap (a prism pair, a beam-splitter cube) does not reflect
everything: the evanescent field couples across the gap (frustrated TIR) and a fraction
tunnels into the partner solid. The engine books these events as kind ``tunnel`` (code
``FT``) on the face the wave tunnels from, and books the power each tunnelled child
carries across the gap, per source and per direction (solid A to B, B to A), at the
moment it crosses (:meth:`tracer.engine.Result.tunnelled_power`).

The leakage of a gap is that tunnelled power, both directions, over the source power.
It is exact in tree mode whatever happens to the light afterwards (detected, escaped,
absorbed, discarded or cut); light that crosses the gap several times (A to B, back
B to A, ...) counts once per crossing. In Monte Carlo mode it is an unbiased estimate.

:func:`path_tunnelled_power` gives the older, path-table figure: the power that
*arrives* on a detector or escapes along paths with at least one tunnel event, a lower
bound of the tunnelled power (it misses what tunnels and is then absorbed, discarded
or cut, and counts a path that tunnels twice once).
"""

from __future__ import annotations

__all__ = ["gap_leakage", "gap_faces", "gap_tunnelled_power", "tunnelled_power",
           "path_tunnelled_power", "gap_tunnel_table"]


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


def gap_leakage(result, gap: str) -> float:
    """Leakage of ``gap``: tunnelled power (both directions) over source power [1].

    See the module docstring.

    Parameters
    ----------
    result : tracer.engine.Result
    gap : str
        Gap name in the traced scene.
    """
    src = float(result.source_power_w)
    value = gap_tunnelled_power(result, gap)
    if not src > 0:
        return 0.0
    return value / src


def gap_tunnel_table(result) -> dict:
    """Per gap: faces, tunnelled power [W] in each direction and in all, leakage [1].

    Returns
    -------
    dict
        ``{gap: {"faces": [a, b], "tunnelled_w", "a_to_b_w", "b_to_a_w", "leakage"}}``
        in scene order (empty without gaps).
    """
    src = float(result.source_power_w)
    out = {}
    for name in getattr(result, "gap_names", []):
        a, b = gap_faces(result.scene, name)
        ab = float(result.tunnelled_power(name, direction="a->b"))
        ba = float(result.tunnelled_power(name, direction="b->a"))
        out[name] = dict(faces=[a, b], tunnelled_w=ab + ba, a_to_b_w=ab, b_to_a_w=ba,
                         leakage=(ab + ba) / src if src > 0 else 0.0)
    return out
