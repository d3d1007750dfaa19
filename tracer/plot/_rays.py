"""Ray segments prepared for drawing: cut-off, colour, opacity and width by power, highlight.

Power mapping (every figure and the 3D export use it)
----------------------------------------------------
A segment's relative power is ``p = P / P_src`` with ``P`` its power [W] and ``P_src``
the largest segment power of its source (the source ray's power). Segments with
``p < min_power`` are not drawn. With ``D = -log10(min_power)`` decades drawn and
``f = clip(1 + log10(p) / D, 0, 1)`` (1 for the source rays, 0 at the cut-off):

* opacity ``alpha = ALPHA_MIN + (1 - ALPHA_MIN) * f``;
* line width ``LW_MIN + (LW_MAX - LW_MIN) * f`` [pt].

So each decade of power lost fades a ray by the same step, down to a faint but visible
line at the cut-off.

Rays that leave the assembly end in a segment flagged ``escaping`` (drawn to the
scene's extent enlarged by 30 %, see :mod:`tracer.engine.escape`); they are drawn like
the others, and ``RaySet.escaping`` marks them.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .colors import ray_rgb

__all__ = ["RaySet", "prepare_rays", "path_nodes_for", "ALPHA_MIN", "LW_MIN", "LW_MAX"]

ALPHA_MIN = 0.12
LW_MIN = 0.45
LW_MAX = 1.3


@dataclass
class RaySet:
    """Segments ready to draw, sorted from weak to strong (strong ones on top).

    start, end : (N, 3) [m]; power : (N,) [W]; relative : (N,) [1]; level : (N,) in [0, 1];
    rgba : (N, 4); width : (N,) [pt]; wavelength : (N,) [m]; highlight : (N,) bool;
    escaping : (N,) bool (the segment runs from a ray's last face out of the scene).
    """

    start: np.ndarray
    end: np.ndarray
    power: np.ndarray
    relative: np.ndarray
    level: np.ndarray
    rgba: np.ndarray
    width: np.ndarray
    wavelength: np.ndarray
    node: np.ndarray
    highlight: np.ndarray
    escaping: np.ndarray = None

    def __post_init__(self):
        if self.escaping is None:
            self.escaping = np.zeros(len(self.power), dtype=bool)

    def __len__(self) -> int:
        return len(self.power)

    @property
    def wavelengths(self) -> np.ndarray:
        """Distinct wavelengths drawn [m]."""
        return np.unique(self.wavelength)


def _empty():
    z3 = np.zeros((0, 3))
    z = np.zeros(0)
    return RaySet(z3, z3, z, z, z, np.zeros((0, 4)), z, z, np.zeros(0, dtype=np.int64),
                  np.zeros(0, dtype=bool))


def path_nodes_for(result, highlight) -> np.ndarray:
    """Path-tree nodes on the path(s) named by ``highlight`` (node and all its ancestors).

    Parameters
    ----------
    result : tracer.engine.Result
    highlight : int, str or None
        A path-tree node, or a path signature (``"laser > a.entrance:T > camera"``; a
        signature without the final detector matches the path up to its last event).
    """
    if highlight is None or result is None:
        return np.zeros(0, dtype=np.int64)
    tree = result.tree
    parent = tree.parent
    if isinstance(highlight, (int, np.integer)):
        targets = [int(highlight)]
    else:
        sig = str(highlight).strip()
        targets = []
        for det in getattr(result.compiled, "detector_names", []):
            for p in result.paths(det):
                if p["signature"] == sig:
                    targets.append(p["node"])
        if not targets:
            seg = result.segments()
            for n in np.unique(seg["node"]):
                if tree.signature(int(n)) == sig:
                    targets.append(int(n))
        if not targets:
            from tracer.errors import TracerError

            raise TracerError(f"highlight: no traced path has the signature {sig!r}")
    nodes = set()
    for n in targets:
        while n >= 0 and n not in nodes:
            nodes.add(n)
            n = int(parent[n])
    return np.array(sorted(nodes), dtype=np.int64)


def _representative(seg, node, path_nodes, depth) -> np.ndarray:
    """Mask of the segments of one ray of the path: the middle ray of its last segment,
    followed back through each parent's segment that ends where the child starts."""
    mask = np.zeros(len(node), dtype=bool)
    if len(path_nodes) == 0:
        return mask
    start = np.asarray(seg["start"], float)
    end = np.asarray(seg["end"], float)
    chain = sorted((int(n) for n in path_nodes), key=lambda n: int(depth[n]))
    chain = [n for n in chain if np.any(node == n)]
    if not chain:
        return mask
    last = np.nonzero(node == chain[-1])[0]
    esc = seg.get("escaping")
    if esc is not None and len(last) and not np.all(esc[last]) and np.any(esc[last]):
        last = last[~np.asarray(esc, bool)[last]]  # a detected path: its rays, not the misses
    centre = end[last].mean(axis=0)
    cur = int(last[np.argmin(np.linalg.norm(end[last] - centre, axis=1))])
    mask[cur] = True
    for n in reversed(chain[:-1]):
        cand = np.nonzero(node == n)[0]
        cur = int(cand[np.argmin(np.linalg.norm(end[cand] - start[cur], axis=1))])
        mask[cur] = True
    return mask


def prepare_rays(result, *, min_power: float = 1e-6, highlight=None) -> RaySet:
    """Segments of ``result`` above the cut-off, with colours and widths (module docstring).

    Parameters
    ----------
    result : tracer.engine.Result or None
        Traced with ``segments=N > 0`` (otherwise nothing is drawn).
    min_power : float [1]
        Cut-off relative to the source ray's power, in (0, 1).
    highlight : int, str or None
        See :func:`path_nodes_for`. One ray of that path (the middle one where it ends,
        followed back to its source) is flagged in ``RaySet.highlight``.
    """
    if result is None:
        return _empty()
    if not (0 < float(min_power) < 1):
        from tracer.errors import TracerError

        raise TracerError(f"min_power={min_power!r}: expected a fraction between 0 and 1")
    seg = result.segments()
    if len(seg["power"]) == 0:
        return _empty()
    power = np.asarray(seg["power"], dtype=float)
    node = np.asarray(seg["node"], dtype=np.int64)
    src = np.asarray(result.tree.root)[node]
    ref = np.zeros(int(src.max()) + 1)
    np.maximum.at(ref, src, power)
    rel = power / np.where(ref[src] > 0, ref[src], 1.0)
    hl_nodes = path_nodes_for(result, highlight)
    hl = _representative(seg, node, hl_nodes, result.tree.depth)
    keep = (rel >= min_power) | hl
    decades = -np.log10(min_power)
    level = np.clip(1.0 + np.log10(np.maximum(rel, 1e-300)) / decades, 0.0, 1.0)
    order = np.argsort(level[keep], kind="stable")
    idx = np.nonzero(keep)[0][order]
    wl = np.asarray(seg["wavelength"], dtype=float)[idx]
    lev = level[idx]
    rgba = np.concatenate([ray_rgb(wl), (ALPHA_MIN + (1 - ALPHA_MIN) * lev)[:, None]], axis=1)
    return RaySet(
        start=np.asarray(seg["start"], dtype=float)[idx],
        end=np.asarray(seg["end"], dtype=float)[idx],
        power=power[idx], relative=rel[idx], level=lev, rgba=rgba,
        width=LW_MIN + (LW_MAX - LW_MIN) * lev, wavelength=wl, node=node[idx],
        highlight=hl[idx],
        escaping=np.asarray(seg.get("escaping", np.zeros(len(power), bool)), bool)[idx],
    )
