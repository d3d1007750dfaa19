"""Leakage through a gap: power that tunnelled across a thin layer beyond its critical angle.

A TIR face backed by a thin gap (a prism pair, a beam-splitter cube) does not reflect
everything: the evanescent field couples across the gap (frustrated TIR) and a fraction
tunnels into the partner solid. The engine books these events as kind ``tunnel`` (code
``FT``) on one of the two faces of the gap.

The leakage of a gap is the power of every path that contains at least one ``tunnel``
event on either face of the gap, divided by the source power. It is computed from the
path tree: the power each such path delivers to a detector or carries out of the
assembly (escaped). A path that tunnels more than once counts once.

Power that tunnels and is then absorbed, discarded under the power threshold or cut at
the event cap is not in the path table, so the figure is a lower bound by at most those
accounts (zero for lossless solids and a threshold well below the leak).
"""

from __future__ import annotations

__all__ = ["gap_leakage", "gap_faces", "tunnelled_power"]


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


def tunnelled_power(result, faces) -> float:
    """Power [W] of every detected or escaped path with a ``tunnel`` event on ``faces``.

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


def gap_leakage(result, gap: str) -> float:
    """Leakage of ``gap``: tunnelled power over source power [1] (see the module docstring).

    Parameters
    ----------
    result : tracer.engine.Result
    gap : str
        Gap name in the traced scene.
    """
    faces = gap_faces(result.scene, gap)
    src = float(result.source_power_w)
    if not src > 0:
        return 0.0
    return tunnelled_power(result, faces) / src
