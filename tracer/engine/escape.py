"""Where to end the drawn segment of a ray that leaves the assembly.

A ray that meets nothing more travels to infinity; for drawing, its last segment is
recorded from its last face (or its source) to where it leaves the *drawing box*: the
axis-aligned box around every solid, plane detector and source position of the scene,
enlarged by :data:`ENLARGE` (30 %) about its centre, with a margin of at least
``ENLARGE / 2`` of the box diagonal on every side (so that a flat scene still has room
across its thin axis). Such segments are flagged ``escaping`` in
:meth:`tracer.engine.Result.segments`.

>>> import numpy as np
>>> lo, hi = np.zeros(3), np.ones(3)
>>> ends = escape_ends(np.array([[0.5, 0.5, 0.5]]), np.array([[1.0, 0, 0]]), lo, hi)
>>> bool(np.isclose(ends[0, 0], 1.0 + 0.15 * np.sqrt(3)))
True
"""

from __future__ import annotations

import numpy as np

__all__ = ["ENLARGE", "scene_box", "drawing_box", "escape_ends"]

#: Enlargement of the scene's extent for escaping segments [1].
ENLARGE = 0.3


def scene_box(cs) -> tuple[np.ndarray, np.ndarray]:
    """(lo, hi) [m] around the solids, plane detectors and source positions of ``cs``.

    Parameters
    ----------
    cs : tracer.engine.compile.CompiledScene
    """
    pts = []
    if cs.n_solids:
        pts += [np.asarray(cs.box_lo, float), np.asarray(cs.box_hi, float)]
    if len(cs.detector_names):
        for sx, sy in ((-1, -1), (-1, 1), (1, -1), (1, 1)):
            pts.append(cs.det_position + sx * cs.det_half[:, :1] * cs.det_x
                       + sy * cs.det_half[:, 1:] * cs.det_y)
    scene = getattr(cs, "scene", None)
    for s in (getattr(scene, "sources", None) or {}).values():
        pts.append(np.asarray(s.position, float)[None])
    if not pts:
        return np.zeros(3), np.zeros(3)
    p = np.vstack(pts)
    return p.min(axis=0), p.max(axis=0)


def drawing_box(lo, hi, *, enlarge: float = ENLARGE) -> tuple[np.ndarray, np.ndarray]:
    """The box ``lo, hi`` [m] enlarged by ``enlarge`` [1] about its centre (module docstring)."""
    lo, hi = np.asarray(lo, float), np.asarray(hi, float)
    c = (lo + hi) / 2
    half = (hi - lo) / 2
    diag = float(np.linalg.norm(hi - lo))
    if diag <= 0:
        diag = 1.0
    half = np.maximum(half * (1 + enlarge), half + enlarge / 2 * diag)
    return c - half, c + half


def escape_ends(origins, directions, lo, hi, *, enlarge: float = ENLARGE) -> np.ndarray:
    """End points [m] of escaping segments: where each ray leaves the drawing box.

    Parameters
    ----------
    origins, directions : (N, 3) float [m], [1]
        Start of the segment and unit direction.
    lo, hi : (3,) float [m]
        Scene box (:func:`scene_box`); enlarged here by ``enlarge``.

    Returns
    -------
    (N, 3) float [m]
        A ray starting outside the box and missing it gets a segment of length
        ``enlarge`` times the box diagonal.
    """
    o = np.asarray(origins, float)
    d = np.asarray(directions, float)
    blo, bhi = drawing_box(lo, hi, enlarge=enlarge)
    with np.errstate(divide="ignore", invalid="ignore"):
        inv = 1.0 / d
        t1 = (blo - o) * inv
        t2 = (bhi - o) * inv
    tmin = np.where(d == 0, -np.inf, np.minimum(t1, t2))
    tmax = np.where(d == 0, np.where((o >= blo) & (o <= bhi), np.inf, -np.inf), np.maximum(t1, t2))
    t_in = tmin.max(axis=1)
    t_out = tmax.min(axis=1)
    fallback = enlarge * float(np.linalg.norm(bhi - blo))
    ok = np.isfinite(t_out) & (t_out > 0) & (t_in <= t_out)
    t = np.where(ok, t_out, fallback)
    return o + t[:, None] * d
