"""A measured BSDF read from a CSV file, interpolated, checked for energy and reciprocity.

File format (our own; one header line, then one row per measured value)::

    incidence_deg,scatter_deg,azimuth_deg,bsdf_per_sr
    0,0,0,0.0159
    ...

``incidence_deg`` is the angle of incidence, ``scatter_deg`` the polar angle of the scatter
direction from the face normal (on the side the table describes: reflection, or
transmission with ``side = "transmit"``), ``azimuth_deg`` the azimuth of the scatter
direction from the plane of incidence, 0 towards the specular direction, over 0..180 (the
surface is taken as isotropic, so the BSDF is even in azimuth); ``bsdf_per_sr`` the BSDF
[1/sr] (radiance out per irradiance in, cosine of the scatter angle excluded). The rows must
fill a grid: every combination of the distinct incidence, scatter and azimuth values once.
Between nodes the BSDF is interpolated linearly in the three angles (outside the measured
range it is held at the nearest node).

Checks (:func:`read_table`): the hemispherical integral ``int BSDF cos(theta_s) dOmega`` at
every measured incidence may not exceed 1 (+ ``BSDF_ENERGY_TOL``): such data create energy
and are refused; where a scatter angle is also a measured incidence angle, reciprocity
``BSDF(i -> s, phi) = BSDF(s -> i, phi)`` (Helmholtz; F. E. Nicodemus et al., "Geometrical
considerations and nomenclature for reflectance", NBS Monograph 160, 1977) is compared and
a difference above ``BSDF_RECIPROCITY_RTOL`` is reported as a warning.
"""

from __future__ import annotations

import csv
from dataclasses import dataclass, field

import numpy as np

from ..errors import TracerError
from ..tolerances import BSDF_ENERGY_TOL, BSDF_RECIPROCITY_RTOL
from .models import REFLECT_SIDE, Partition, cosine_density, cosine_sample

__all__ = ["BsdfTable", "read_table", "BsdfTableError", "COLUMNS"]

COLUMNS = ("incidence_deg", "scatter_deg", "azimuth_deg", "bsdf_per_sr")


class BsdfTableError(TracerError, ValueError):
    """A BSDF table file that cannot be used (names the file, the row and what is expected)."""


def _grid_integral(values_fn, n=90):
    """``int f(theta_s, phi) cos sin dtheta dphi`` over the hemisphere (midpoint rule, phi
    over 0..pi doubled by symmetry) for ``values_fn(theta_s, phi) -> (..., n, n)``."""
    th = (np.arange(n) + 0.5) * (0.5 * np.pi / n)
    ph = (np.arange(n) + 0.5) * (np.pi / n)
    vals = values_fn(th[:, None], ph[None, :])
    w = (np.cos(th) * np.sin(th))[:, None] * (0.5 * np.pi / n) * (np.pi / n) * 2.0
    return (vals * w).sum(axis=(-2, -1))


@dataclass(frozen=True)
class BsdfTable:
    """A measured, isotropic BSDF on a grid (see the module docstring).

    ``incidence``, ``scatter``, ``azimuth`` [rad] are the grid axes and ``values`` [1/sr]
    the BSDF, shape (len(incidence), len(scatter), len(azimuth)). ``side`` is
    ``REFLECT_SIDE`` or ``TRANSMIT_SIDE``; ``rest`` as for
    :class:`~tracer.scatter.models.Lambertian`.
    """

    incidence: np.ndarray
    scatter: np.ndarray
    azimuth: np.ndarray
    values: np.ndarray
    side: int = REFLECT_SIDE
    rest: str = "specular"
    depolarization: float = 1.0
    source: str = ""
    name: str = "bsdf-table"
    warnings: tuple = ()
    _fractions: np.ndarray = field(default=None, compare=False, repr=False)

    exact_sampling = False  # cosine-law proposal, importance-weighted

    def bsdf(self, theta_i, theta_s, phi):
        """Interpolated BSDF [1/sr] (trilinear, held at the edges); angles [rad], ``phi`` any
        sign (even in azimuth)."""
        ti, ts, ph = np.broadcast_arrays(np.asarray(theta_i, float), np.asarray(theta_s, float),
                                         np.abs(np.asarray(phi, float)))
        shape = ti.shape
        idx, wts = [], []
        for axis, x in zip((self.incidence, self.scatter, self.azimuth), (ti, ts, ph)):
            x = np.clip(x.ravel(), axis[0], axis[-1])
            if len(axis) == 1:
                idx.append((np.zeros(x.shape, int), np.zeros(x.shape, int)))
                wts.append(np.zeros(x.shape))
                continue
            j = np.clip(np.searchsorted(axis, x, side="right") - 1, 0, len(axis) - 2)
            t = (x - axis[j]) / (axis[j + 1] - axis[j])
            idx.append((j, j + 1))
            wts.append(t)
        out = np.zeros(ti.size)
        for a in (0, 1):
            for b in (0, 1):
                for c in (0, 1):
                    w = ((wts[0] if a else 1 - wts[0]) * (wts[1] if b else 1 - wts[1])
                         * (wts[2] if c else 1 - wts[2]))
                    out += w * self.values[idx[0][a], idx[1][b], idx[2][c]]
        return out.reshape(shape)

    def fractions(self):
        """Hemispherical integral ``int BSDF cos dOmega`` [1] at every measured incidence."""
        if self._fractions is None:
            th_i = self.incidence[:, None, None]
            f = _grid_integral(lambda ts, ph: self.bsdf(th_i, ts[None], ph[None]))
            object.__setattr__(self, "_fractions", np.atleast_1d(f))
        return self._fractions

    def fraction(self, cos_i):
        """Scattered fraction [1] at incidence ``arccos(cos_i)`` (linear between nodes)."""
        th = np.arccos(np.clip(np.asarray(cos_i, float), -1.0, 1.0))
        return np.interp(th, self.incidence, self.fractions())

    def partition(self, *, cos_i, wavelength, n1, n2, r_spec, t_spec, cos_t=None) -> Partition:
        f = self.fraction(cos_i)
        keep = 1.0 - f if self.rest == "specular" else np.zeros_like(f)
        zero = np.zeros_like(f)
        if self.side == REFLECT_SIDE:
            return Partition(keep, keep.copy(), f, zero)
        return Partition(keep, keep.copy(), zero, f)

    def density(self, side, *, sin_i, wavelength, n1, n2, alpha, beta, gamma):
        gamma = np.asarray(gamma, float)
        th_i = np.arcsin(np.clip(np.asarray(sin_i, float), 0.0, 1.0))
        th_s = np.arccos(np.clip(gamma, 0.0, 1.0))
        phi = np.arctan2(beta, alpha)
        f = np.interp(th_i, self.incidence, self.fractions())
        with np.errstate(divide="ignore", invalid="ignore"):
            return np.where((gamma > 0) & (f > 0), self.bsdf(th_i, th_s, phi) * gamma / f, 0.0)

    def sample(self, side, *, sin_i, wavelength, n1, n2, draw):
        return cosine_sample(draw(0), draw(1))

    def proposal_density(self, gamma):
        """Density [1/sr] :meth:`sample` draws from (Lambert's law)."""
        return cosine_density(gamma)


def _fail(path, where, what):
    raise BsdfTableError(f"{path}: {where}: {what}")


def read_table(path, *, side=REFLECT_SIDE, rest="specular", depolarization=1.0) -> BsdfTable:
    """Read, check and return a :class:`BsdfTable` from the CSV file ``path``.

    Raises :class:`BsdfTableError` naming the file and row for a missing column, a value
    that is not a finite number, angles out of range, a grid with holes or repeats, or
    data whose hemispherical integral exceeds 1.
    """
    try:
        with open(path, newline="", encoding="utf-8") as fh:
            rows = list(csv.reader(line for line in fh if not line.lstrip().startswith("#")))
    except OSError as exc:
        raise BsdfTableError(f"{path}: cannot be read ({exc.strerror or exc})") from None
    except UnicodeDecodeError:
        raise BsdfTableError(f"{path}: not a UTF-8 text file") from None
    if not rows:
        _fail(path, "line 1", f"expected the header {','.join(COLUMNS)}")
    header = [h.strip() for h in rows[0]]
    missing = [c for c in COLUMNS if c not in header]
    if missing:
        _fail(path, "header", f"missing column(s) {', '.join(missing)}; expected {','.join(COLUMNS)}")
    cols = [header.index(c) for c in COLUMNS]
    data = []
    for i, row in enumerate(rows[1:], start=2):
        if not any(x.strip() for x in row):
            continue
        try:
            vals = [float(row[c]) for c in cols]
        except (ValueError, IndexError):
            _fail(path, f"row {i}", f"expected four numbers ({','.join(COLUMNS)}), got {row!r}")
        if not all(np.isfinite(vals)):
            _fail(path, f"row {i}", "values must be finite numbers")
        inc, sca, azi, val = vals
        if not 0.0 <= inc < 90.0:
            _fail(path, f"row {i}", f"incidence_deg {inc:g} is outside 0 <= angle < 90")
        if not 0.0 <= sca < 90.0:
            _fail(path, f"row {i}", f"scatter_deg {sca:g} is outside 0 <= angle < 90")
        if not 0.0 <= azi <= 180.0:
            _fail(path, f"row {i}", f"azimuth_deg {azi:g} is outside 0..180")
        if val < 0.0:
            _fail(path, f"row {i}", f"bsdf_per_sr {val:g} is negative")
        data.append(vals)
    if not data:
        _fail(path, "rows", "no data rows")
    a = np.array(data)
    axes = [np.unique(a[:, k]) for k in range(3)]
    shape = tuple(len(x) for x in axes)
    if len(a) != np.prod(shape):
        _fail(path, "rows", f"{len(a)} rows do not fill the grid of {shape[0]} incidence x "
                            f"{shape[1]} scatter x {shape[2]} azimuth values (each combination "
                            "exactly once)")
    pos = [np.searchsorted(axes[k], a[:, k]) for k in range(3)]
    flat = (pos[0] * shape[1] + pos[1]) * shape[2] + pos[2]
    if len(np.unique(flat)) != len(flat):
        _fail(path, "rows", "a combination of angles appears twice (and another is missing)")
    values = np.zeros(shape)
    values[pos[0], pos[1], pos[2]] = a[:, 3]
    table = BsdfTable(np.radians(axes[0]), np.radians(axes[1]), np.radians(axes[2]), values,
                      side=side, rest=rest, depolarization=depolarization, source=str(path))
    frac = table.fractions()
    worst = int(np.argmax(frac))
    if frac[worst] > 1.0 + BSDF_ENERGY_TOL:
        _fail(path, f"incidence {axes[0][worst]:g} deg",
              f"the hemispherical integral of the BSDF is {frac[worst]:.4g} > 1: the data "
              "scatter more power than arrives")
    warnings = _reciprocity_warnings(table, axes)
    object.__setattr__(table, "warnings", tuple(warnings))
    return table


def _reciprocity_warnings(table: BsdfTable, axes) -> list[str]:
    """Compare BSDF(i -> s) with BSDF(s -> i) where both angles are measured incidences."""
    inc = axes[0]
    common = [x for x in axes[1] if np.any(np.isclose(inc, x))]
    worst, where = 0.0, None
    for ti in common:
        for ts in common:
            if ts <= ti:
                continue
            phi = table.azimuth
            a = table.bsdf(np.radians(ti), np.radians(ts), phi)
            b = table.bsdf(np.radians(ts), np.radians(ti), phi)
            scale = np.maximum(np.maximum(a, b), 1e-300)
            d = np.max(np.abs(a - b) / scale)
            if d > worst:
                worst, where = float(d), (ti, ts)
    if where is not None and worst > BSDF_RECIPROCITY_RTOL:
        return [f"{table.source}: the BSDF is not reciprocal: BSDF({where[0]:g} deg -> "
                f"{where[1]:g} deg) and BSDF({where[1]:g} deg -> {where[0]:g} deg) differ by "
                f"{100 * worst:.0f} % (measurement error or an anisotropic surface?)"]
    return []
