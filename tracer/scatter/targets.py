"""Importance sampling of declared targets: directions from a scatter point towards a set
of planar patches (detector rectangles, faces such as an entrance pupil).

The targets are one set of triangles (world frame). :meth:`Targets.sample` picks a point
uniformly over their total area and returns the direction towards it; :meth:`Targets.density`
is the density of those directions per solid angle [1/sr],
``sum over triangles hit of d^2 / (A |cos theta_t|)`` with ``d`` the distance to the hit,
``theta_t`` the angle at the target and ``A`` the total area (the change of variables from
area to solid angle, common practice, no source). With both densities known, the model's
own directions and the aimed ones are combined by the balance heuristic (E. Veach &
L. J. Guibas, "Optimally combining sampling techniques for Monte Carlo rendering",
SIGGRAPH 1995), which is unbiased whatever share of the samples is aimed.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["Targets", "rectangle_triangles", "polygon_triangles"]


def rectangle_triangles(center, x_axis, y_axis, half):
    """Two triangles (2, 3, 3) of the rectangle ``center +- half[0] x +- half[1] y`` [m]."""
    c, x, y = (np.asarray(v, dtype=float) for v in (center, x_axis, y_axis))
    a, b = half[0] * x, half[1] * y
    p = [c - a - b, c + a - b, c + a + b, c - a + b]
    return np.array([[p[0], p[1], p[2]], [p[0], p[2], p[3]]])


def ellipse_triangles(center, x_axis, y_axis, half, sides: int = 48):
    """Fan triangles (sides, 3, 3) of a polygon circumscribing the ellipse of semi-axes
    ``half`` [m] (a disk detector): aiming covers the whole disk, and directions into the
    thin slivers outside it simply miss (the density stays that of the sampled triangles)."""
    c, x, y = (np.asarray(v, dtype=float) for v in (center, x_axis, y_axis))
    grow = 1.0 / np.cos(np.pi / sides)  # circumscribed: the polygon's edges touch the ellipse
    phi = 2.0 * np.pi * np.arange(sides) / sides
    rim = c + grow * (half[0] * np.cos(phi)[:, None] * x + half[1] * np.sin(phi)[:, None] * y)
    nxt = np.roll(rim, -1, axis=0)
    return np.stack([np.broadcast_to(c, rim.shape), rim, nxt], axis=1)


def polygon_triangles(vertices):
    """Fan triangles (k-2, 3, 3) of a convex planar polygon (k, 3) [m]."""
    v = np.asarray(vertices, dtype=float)
    return np.array([[v[0], v[i], v[i + 1]] for i in range(1, len(v) - 1)])


@dataclass
class Targets:
    """Triangles ``(T, 3, 3)`` [m] that scatter sampling aims at (see module docstring)."""

    triangles: np.ndarray

    def __post_init__(self):
        t = np.asarray(self.triangles, dtype=float).reshape(-1, 3, 3)
        self.triangles = t
        e1, e2 = t[:, 1] - t[:, 0], t[:, 2] - t[:, 0]
        cross = np.cross(e1, e2)
        self.areas = 0.5 * np.linalg.norm(cross, axis=1)
        self.total_area = float(self.areas.sum())
        self._cdf = np.cumsum(self.areas) / self.total_area if self.total_area > 0 else None
        self._e1, self._e2 = e1, e2

    def __len__(self) -> int:
        return len(self.triangles)

    def sample(self, points, u1, u2, u3):
        """Unit directions (N, 3) from ``points`` (N, 3) [m] towards points drawn uniformly
        over the targets' area, from three uniforms per ray."""
        k = np.minimum(np.searchsorted(self._cdf, u1, side="right"), len(self.areas) - 1)
        s = np.sqrt(u2)
        b1, b2 = s * (1.0 - u3), s * u3  # uniform barycentric (common practice, no source)
        q = self.triangles[k, 0] + b1[:, None] * self._e1[k] + b2[:, None] * self._e2[k]
        d = q - points
        return d / np.linalg.norm(d, axis=1)[:, None]

    def density(self, points, directions):
        """Density [1/sr] of :meth:`sample`'s directions at ``directions`` (N, 3) from
        ``points`` (N, 3): ray--triangle intersections (Moeller--Trumbore, common practice)."""
        n = len(points)
        out = np.zeros(n)
        if n == 0 or self.total_area <= 0:
            return out
        for t in range(len(self.triangles)):
            e1, e2, v0 = self._e1[t], self._e2[t], self.triangles[t, 0]
            p = np.cross(directions, e2)
            det = p @ e1
            ok = np.abs(det) > 1e-300
            inv = np.where(ok, 1.0 / np.where(ok, det, 1.0), 0.0)
            s = points - v0
            u = (s * p).sum(axis=1) * inv
            q = np.cross(s, e1)
            v = (directions * q).sum(axis=1) * inv
            dist = (q @ e2) * inv
            hit = ok & (u >= 0) & (v >= 0) & (u + v <= 1) & (dist > 0)
            if not hit.any():
                continue
            normal = np.cross(e1, e2)
            normal /= np.linalg.norm(normal)
            cos_t = np.abs(directions[hit] @ normal)
            with np.errstate(divide="ignore"):
                out[hit] += dist[hit] ** 2 / (self.total_area * cos_t)
        return out
