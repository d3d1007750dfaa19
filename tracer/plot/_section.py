"""Plane sections and projections of solids for drawing (pure numpy, no matplotlib).

A drawing plane is an origin ``o`` and two orthonormal in-plane axes ``u``, ``v`` (its
normal ``w = u x v``); a point ``p`` is drawn at ``((p - o) . u, (p - o) . v)``.

:func:`section` cuts a solid's face polygons with the plane and returns the cut edges
(each tagged with its face) chained into closed loops.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["Plane", "PLANES", "plane_for", "section", "Section", "project"]


@dataclass(frozen=True)
class Plane:
    """A drawing plane: ``origin`` [m], in-plane unit axes ``u``, ``v``; ``w = u x v``."""

    origin: np.ndarray
    u: np.ndarray
    v: np.ndarray

    @property
    def w(self) -> np.ndarray:
        return np.cross(self.u, self.v)

    def to2d(self, points) -> np.ndarray:
        """(..., 3) [m] -> (..., 2) [m] in-plane coordinates."""
        p = np.asarray(points, dtype=float) - self.origin
        return np.stack([p @ self.u, p @ self.v], axis=-1)

    def depth(self, points) -> np.ndarray:
        """(..., 3) [m] -> (...,) [m] signed distance along ``w`` (towards the viewer)."""
        return (np.asarray(points, dtype=float) - self.origin) @ self.w


_E = np.eye(3)
#: Named planes: (u, v); the viewer looks along -w.
PLANES = {
    "xy": (_E[0], _E[1]),
    "xz": (_E[0], _E[2]),
    "yz": (_E[1], _E[2]),
}


def plane_for(name: str, at: float = 0.0) -> Plane:
    """The plane ``name`` ("xy", "xz" or "yz") through ``at`` [m] along its normal.

    >>> plane_for("xz", 0.002).origin.tolist()
    [0.0, 0.002, 0.0]
    """
    if name not in PLANES:
        from tracer.errors import TracerError

        raise TracerError(f"unknown drawing plane {name!r}; expected one of {', '.join(PLANES)}")
    u, v = PLANES[name]
    w = np.cross(u, v)
    return Plane(origin=w * float(at) * np.sign(w.sum()), u=u, v=v)


@dataclass
class Section:
    """The cut of one solid by a plane.

    edges : list of (p0 (2,), p1 (2,), face name, in-plane outward normal (2,))
    loops : list of (k, 2) arrays [m], closed polygons (last point not repeated)
    """

    edges: list
    loops: list


def section(geometry, plane: Plane, *, tol: float | None = None) -> Section:
    """Cut ``geometry`` (face_polygons, face_names, face_normals) with ``plane``.

    Parameters
    ----------
    geometry : tracer.geometry solid
    plane : Plane
    tol : float [m] or None
        Distance under which a vertex counts as on the plane (default: 1e-9 of the
        solid's size).

    Returns
    -------
    Section
        Empty when the plane misses the solid.

    Examples
    --------
    >>> import numpy as np
    >>> from tracer.geometry.solid import ConvexSolid
    >>> n = np.vstack([np.eye(3), -np.eye(3)])
    >>> cube = ConvexSolid(n, np.full(6, 1e-3), ["px", "py", "pz", "mx", "my", "mz"])
    >>> s = section(cube, plane_for("xy"))
    >>> len(s.loops), len(s.loops[0]), sorted(e[2] for e in s.edges)
    (1, 4, ['mx', 'my', 'px', 'py'])
    """
    polys = [np.asarray(p, dtype=float) for p in geometry.face_polygons]
    normals = np.asarray(geometry.face_normals, dtype=float)
    names = list(geometry.face_names)
    if callable(getattr(geometry, "triangles", None)):
        # a mesh face may have holes (a tube's end, a baffle's plate) that its outer
        # boundary polygon does not show: cut its triangles instead
        verts, tris, tface = geometry.triangles()
        polys = list(np.asarray(verts, dtype=float)[np.asarray(tris)])
        normals = normals[np.asarray(tface)]
        names = [names[f] for f in np.asarray(tface)]
    size = float(np.ptp(np.asarray(geometry.bounds, dtype=float), axis=0).max())
    eps = tol if tol is not None else 1e-9 * max(size, 1e-12)
    w = plane.w
    edges = []
    for poly, name, nrm in zip(polys, names, normals):
        s = (poly - plane.origin) @ w
        if np.all(np.abs(s) <= eps):
            continue  # face in the plane: not a cut edge
        pts = []
        k = len(poly)
        for j in range(k):
            a, b = poly[j], poly[(j + 1) % k]
            sa, sb = s[j], s[(j + 1) % k]
            if abs(sa) <= eps:
                pts.append(a)
            elif abs(sb) > eps and sa * sb < 0:
                pts.append(a + (b - a) * (sa / (sa - sb)))
        if len(pts) < 2:
            continue
        pts = np.array(pts)
        line = np.cross(w, nrm)
        if np.linalg.norm(line) < 1e-12:
            continue
        order = np.argsort(pts @ line)
        pts = pts[order]
        n2 = np.array([nrm @ plane.u, nrm @ plane.v])
        n2 = n2 / max(np.linalg.norm(n2), 1e-300)
        for i in range(0, len(pts) - 1, 2):
            p0, p1 = plane.to2d(pts[i]), plane.to2d(pts[i + 1])
            if np.linalg.norm(p1 - p0) > eps:
                edges.append((p0, p1, name, n2))
    if len(polys) != len(geometry.face_names):
        while True:  # repeat: a segment may bridge two earlier, separate ones
            joined = _merge_collinear(edges, eps * 10)
            if len(joined) == len(edges):
                break
            edges = joined
    return Section(edges=edges, loops=_chain(edges, eps * 10))


def _merge_collinear(edges, tol):
    """Join cut segments of one face that meet end to end on one line.

    A face cut triangle by triangle gives one segment per triangle; drawn and labelled,
    the face should be one edge per stretch it crosses the plane.
    """
    merged = []
    for edge in edges:
        p0, p1, name, n2 = edge
        for i, (q0, q1, other, m2) in enumerate(merged):
            if other != name or abs(float(n2 @ m2)) < 1.0 - 1e-9:
                continue
            d = q1 - q0
            # collinear: both new ends on the old segment's line
            off = max(abs(_cross2(d, p0 - q0)), abs(_cross2(d, p1 - q0))) / np.linalg.norm(d)
            if off > tol:
                continue
            ends = [q0, q1, p0, p1]
            touching = min(np.linalg.norm(a - b) for a in (q0, q1) for b in (p0, p1))
            if touching > tol:
                continue
            t = [float((e - q0) @ d) for e in ends]
            merged[i] = (ends[int(np.argmin(t))], ends[int(np.argmax(t))], name, m2)
            break
        else:
            merged.append(edge)
    return merged


def _cross2(a, b):
    return float(a[0] * b[1] - a[1] * b[0])


def _chain(edges, tol):
    """Chain undirected edges into closed loops by matching endpoints within ``tol``."""
    remaining = [(np.asarray(a), np.asarray(b)) for a, b, _, _ in edges]
    loops = []
    while remaining:
        a, b = remaining.pop(0)
        loop = [a, b]
        closed = False
        while remaining:
            end = loop[-1]
            for i, (c, d) in enumerate(remaining):
                if np.linalg.norm(c - end) <= tol:
                    nxt = d
                elif np.linalg.norm(d - end) <= tol:
                    nxt = c
                else:
                    continue
                remaining.pop(i)
                break
            else:
                break
            if np.linalg.norm(nxt - loop[0]) <= tol:
                closed = True
                break
            loop.append(nxt)
        if len(loop) >= 3:
            loops.append(np.array(loop))
        del closed
    return loops


def project(points, plane: Plane) -> np.ndarray:
    """Orthographic projection of (..., 3) points [m] onto ``plane``: (..., 2) [m]."""
    return plane.to2d(points)
