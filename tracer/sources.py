"""Ray generation from a :class:`tracer.scene.model.SourceSpec`.

What a source launches
----------------------
Each *geometric ray* (an origin and a direction) is launched once per spectral line
of the source's spectrum (lines of zero weight are skipped), so a source of ``n``
geometric rays and ``K`` lines launches ``n * K`` rays, in line-major order: global ray
index ``j`` is line ``j // n``, geometric ray ``j % n``. Every line uses the same
geometric rays, so dispersion is seen ray by ray. Rays of line ``k`` carry power
``P * w_k / n`` with ``w`` the line weights normalised to sum 1; all rays of the source
together carry exactly the source power ``P`` (to round-off).

Polarisation: every ray starts with the field matrix
``[x_ray | y_ray]`` (:func:`tracer.polarization.initial_field_matrix`), where
``(x_ray, y_ray, direction)`` is a right-handed transverse frame, and the source's
Stokes vector becomes one ``(2, 2)`` coherency matrix in that input basis.

* Collimated sources: ``x_ray`` is the source ``x_axis`` made perpendicular to
  ``direction`` (the aperture's width axis), ``y_ray = direction x x_ray``.
* Point (cone) sources: ``x_ray`` is the source ``x_axis`` projected perpendicular to
  each ray's direction and normalised; where a ray runs along ``x_axis`` (projection
  below ``NORMAL_INCIDENCE_SIN``) the source's ``y_axis`` is projected instead and
  ``x_ray = y_ray x direction``.
* Fan sources: rays ``cos(phi) d + sin(phi) x`` in the plane of ``direction`` ``d`` and
  ``x_axis`` ``x``; ``x_ray = -sin(phi) d + cos(phi) x`` (the projection of ``x_axis``
  for ``|phi| < 90 deg``, continued smoothly beyond), ``y_ray = d x x`` for all rays.
  For a 2D scene in the x-y plane with ``direction`` and ``x_axis`` in that plane all
  rays have zero z components.

Sampling patterns
-----------------
* ``collimated`` / ``circle`` / ``grid``: a sunflower (Vogel) pattern of exactly the
  requested count, ``r_i = R sqrt((i + 1/2) / n)``, ``phi_i = i * golden angle`` -- an
  even areal density without the ragged edge of a clipped square lattice. One ray sits
  on the axis when ``n = 1``.
* ``collimated`` / ``rectangle`` / ``grid``: a cell-centred ``nx x ny`` lattice with
  ``nx / ny`` close to the aspect ratio and ``nx * ny`` close to the requested count
  (the count used is ``nx * ny``; see :func:`geometric_count`).
* ``point`` / ``grid``: a Fibonacci spiral on the spherical cap of ``half_angle``,
  ``cos(theta_i) = 1 - (1 - cos a)(i + 1/2)/n``, ``phi_i = i * golden angle`` -- even in
  solid angle. One ray along the axis when ``n = 1``.
* ``fan`` / ``grid``: ``n`` angles evenly from ``-half_angle`` to ``+half_angle``, both
  included (over ``[-pi, pi)`` for a full circle); the axis ray alone when ``n = 1``.
* ``random``: uniform over the aperture area, uniform in solid angle within the cone
  (``cos theta`` uniform), uniform in angle over the fan.

Random numbers: :func:`generate` draws one 63-bit integer ``seed`` from ``rng``; the
random numbers of geometric ray ``g`` come from ``numpy.random.default_rng([seed, g //
65536])`` (a block of 65536 rays), so that :func:`generate_batches` gives exactly the
same rays whatever the batch size, and results are reproducible for a given ``rng``
state.

Examples
--------
>>> import numpy as np
>>> from tracer.scene.model import SourceSpec, Spectrum, Polarization
>>> src = SourceSpec(name="beam", kind="collimated", position=np.zeros(3),
...                  direction=np.array([0.0, 0, 1]), x_axis=np.array([1.0, 0, 0]),
...                  power=1e-3, rays=100, size=(2e-3, 0.0),
...                  spectrum=Spectrum(np.array([550e-9]), np.array([1.0])),
...                  polarization=Polarization())
>>> rays = generate(src, rng=np.random.default_rng(1))
>>> len(rays), float(rays.power.sum())
(100, 0.001)
"""

from __future__ import annotations

from collections.abc import Iterator
from dataclasses import dataclass

import numpy as np

from tracer import polarization as pol
from tracer.errors import TracerError
from tracer.frames import axis_frame
from tracer.tolerances import NORMAL_INCIDENCE_SIN

__all__ = [
    "SourceError",
    "SourceRays",
    "source_frame",
    "geometric_count",
    "ray_count",
    "source_coherency",
    "generate",
    "generate_batches",
]

#: Random numbers come in blocks of this many geometric rays (see module docstring).
_RANDOM_BLOCK = 65536
_GOLDEN_ANGLE = np.pi * (3.0 - np.sqrt(5.0))


class SourceError(TracerError, ValueError):
    """A source specification cannot be turned into rays."""


@dataclass(frozen=True)
class SourceRays:
    """Rays launched by one source (struct of arrays).

    Attributes
    ----------
    origins : (N, 3) float [m]
    directions : (N, 3) float [1]
        Unit vectors.
    wavelengths : (N,) float [m]
        Vacuum wavelength of each ray.
    power : (N,) float [W]
        Launch power of each ray; ``power.sum()`` is the source power.
    field : (N, 3, 2) complex
        Initial field matrices ``[x_ray | y_ray]`` (trace(M J M^H) = 1).
    x_axis, y_axis : (N, 3) float [1]
        The rays' input frames (columns of ``field``).
    coherency : (2, 2) complex
        The source polarisation in the rays' input basis (trace 1).
    source_index : (N,) int
        Index given to :func:`generate` (the engine's source number).
    ray_index : (N,) int64
        Global index of each ray within its source (line-major, see module docstring).
    line_index : (N,) int
        Index of each ray's spectral line in ``source.spectrum``.
    source_name : str
    inside_solid : str or None
        Name of the solid the source starts in (``None``: the ambient medium).
    """

    origins: np.ndarray
    directions: np.ndarray
    wavelengths: np.ndarray
    power: np.ndarray
    field: np.ndarray
    x_axis: np.ndarray
    y_axis: np.ndarray
    coherency: np.ndarray
    source_index: np.ndarray
    ray_index: np.ndarray
    line_index: np.ndarray
    source_name: str = ""
    inside_solid: str | None = None

    def __len__(self) -> int:
        return int(self.power.shape[0])

    @staticmethod
    def concatenate(parts: list[SourceRays]) -> SourceRays:
        """Join batches of the same source into one."""
        if not parts:
            raise ValueError("nothing to concatenate")
        arrays = {
            name: np.concatenate([getattr(p, name) for p in parts])
            for name in (
                "origins", "directions", "wavelengths", "power", "field", "x_axis",
                "y_axis", "source_index", "ray_index", "line_index",
            )
        }
        first = parts[0]
        return SourceRays(
            coherency=first.coherency, source_name=first.source_name,
            inside_solid=first.inside_solid, **arrays,
        )


# ---------------------------------------------------------------------------
# Validation and bookkeeping
# ---------------------------------------------------------------------------


def _err(source, message):
    return SourceError(f"source '{source.name}': {message}")


def source_frame(source):
    """Unit ``direction`` d, ``x_axis`` x (made perpendicular to d) and ``y = d x x``.

    Parameters
    ----------
    source : SourceSpec

    Returns
    -------
    d, x, y : (3,) float [1]

    Raises
    ------
    SourceError
        When ``direction`` is zero or ``x_axis`` is (nearly) parallel to it.
    """
    return axis_frame(
        source.direction, source.x_axis, error=lambda message: _err(source, message),
        axis_name="direction", x_expected="a vector across the beam",
        axis_shown=np.asarray(source.direction, dtype=float).reshape(3).tolist(),
    )


def _line_weights(source):
    wl = np.atleast_1d(np.asarray(source.spectrum.wavelengths, dtype=float))
    w = np.atleast_1d(np.asarray(source.spectrum.weights, dtype=float))
    if wl.shape != w.shape or wl.ndim != 1 or wl.size == 0:
        raise _err(source, f"spectrum needs as many weights as wavelengths, got {wl.size} and {w.size}")
    if not (np.all(np.isfinite(wl)) and np.all(wl > 0)):
        raise _err(source, f"wavelengths must be positive [m], got {wl.tolist()}")
    if not np.all(np.isfinite(w)) or np.any(w < 0) or w.sum() <= 0:
        raise _err(source, f"spectral weights must be non-negative with a positive sum, got {w.tolist()}")
    lines = np.flatnonzero(w > 0)
    return lines, wl[lines], w[lines] / w[lines].sum()


def _rect_lattice(n, width, height):
    if width > 0 and height > 0:
        nx = max(1, int(round(np.sqrt(n * width / height))))
        ny = max(1, int(round(n / nx)))
    elif height > 0:
        nx, ny = 1, n
    else:
        nx, ny = n, 1
    return nx, ny


def _requested(source, count):
    n = source.rays if count is None else count
    if isinstance(n, bool) or int(n) != n or n < 1:
        raise _err(source, f"ray count must be a positive integer, got {n!r}")
    return int(n)


def _check(source):
    if source.kind not in ("collimated", "point", "fan"):
        raise _err(source, f"kind must be 'collimated', 'point' or 'fan', got {source.kind!r}")
    if source.sampling not in ("grid", "random"):
        raise _err(source, f"sampling must be 'grid' or 'random', got {source.sampling!r}")
    if not (np.isfinite(source.power) and source.power >= 0):
        raise _err(source, f"power must be a non-negative number [W], got {source.power!r}")
    if source.kind == "collimated":
        if source.aperture not in ("circle", "rectangle"):
            raise _err(source, f"aperture must be 'circle' or 'rectangle', got {source.aperture!r}")
        size = np.asarray(source.size, dtype=float)
        if size.shape != (2,) or not np.all(np.isfinite(size)) or np.any(size < 0):
            raise _err(source, f"size must be two non-negative lengths [m], got {source.size!r}")
    else:
        a = float(source.half_angle)
        if not (np.isfinite(a) and 0 <= a <= np.pi):
            raise _err(source, f"half_angle must lie in [0, pi] rad, got {source.half_angle!r}")
    if np.asarray(source.position, dtype=float).shape != (3,):
        raise _err(source, f"position must be a 3-vector [m], got {source.position!r}")


def geometric_count(source, count=None):
    """Number of geometric rays (origin + direction) per spectral line.

    Parameters
    ----------
    source : SourceSpec
    count : int, optional
        Requested count instead of ``source.rays``.

    Returns
    -------
    int
        Equal to the request except for a rectangular grid aperture, which rounds it to
        a ``nx x ny`` lattice.
    """
    n = _requested(source, count)
    if source.kind == "collimated" and source.aperture == "rectangle" and source.sampling == "grid":
        nx, ny = _rect_lattice(n, float(source.size[0]), float(source.size[1]))
        return nx * ny
    return n


def ray_count(source, count=None):
    """Total number of rays :func:`generate` launches: geometric rays x spectral lines."""
    lines, _, _ = _line_weights(source)
    return geometric_count(source, count) * lines.size


def source_coherency(source):
    """The source's ``(2, 2)`` coherency (trace 1) from its validated Stokes vector."""
    try:
        s = pol.partial(source.polarization.stokes)
    except pol.PolarizationError as exc:
        raise _err(source, f"polarization: {exc}") from None
    return pol.stokes_to_coherency(s)


# ---------------------------------------------------------------------------
# Geometry of geometric rays g in [g0, g1)
# ---------------------------------------------------------------------------


def _uniforms(seed, g):
    """(len(g), 2) uniforms in [0, 1) for geometric ray indices ``g`` (sorted ranges)."""
    out = np.empty((g.size, 2))
    if g.size == 0:
        return out
    blocks = g // _RANDOM_BLOCK
    for b in np.unique(blocks):
        sel = blocks == b
        local = g[sel] - b * _RANDOM_BLOCK
        draws = np.random.default_rng([int(seed), int(b)]).random((int(local.max()) + 1, 2))
        out[sel] = draws[local]
    return out


def _geometry(source, g, n, seed):
    """Origins, directions and input frames of geometric rays ``g`` of ``n``."""
    d, x, y = source_frame(source)
    pos = np.asarray(source.position, dtype=float)
    m = g.size
    random = source.sampling == "random"
    u = _uniforms(seed, g) if random else None
    if source.kind == "collimated":
        if source.aperture == "circle":
            R = 0.5 * float(source.size[0])
            if random:
                r = R * np.sqrt(u[:, 0])
                phi = 2 * np.pi * u[:, 1]
            elif n == 1:
                r, phi = np.zeros(m), np.zeros(m)
            else:
                r = R * np.sqrt((g + 0.5) / n)  # sunflower (Vogel) pattern
                phi = g * _GOLDEN_ANGLE
            a, b = r * np.cos(phi), r * np.sin(phi)
        else:
            w, h = float(source.size[0]), float(source.size[1])
            if random:
                a, b = (u[:, 0] - 0.5) * w, (u[:, 1] - 0.5) * h
            else:
                nx, ny = _rect_lattice(n, w, h)
                i, j = g % nx, g // nx
                a, b = ((i + 0.5) / nx - 0.5) * w, ((j + 0.5) / ny - 0.5) * h
        origins = pos + a[:, None] * x + b[:, None] * y
        directions = np.broadcast_to(d, (m, 3)).copy()
        xr = np.broadcast_to(x, (m, 3)).copy()
        yr = np.broadcast_to(y, (m, 3)).copy()
        return origins, directions, xr, yr
    alpha = float(source.half_angle)
    origins = np.broadcast_to(pos, (m, 3)).copy()
    if source.kind == "point":
        one_minus = 1.0 - np.cos(alpha)
        if random:
            cos_t = 1.0 - one_minus * u[:, 0]  # uniform in solid angle
            phi = 2 * np.pi * u[:, 1]
        elif n == 1:
            cos_t, phi = np.ones(m), np.zeros(m)
        else:
            cos_t = 1.0 - one_minus * (g + 0.5) / n  # Fibonacci spiral on the cap
            phi = g * _GOLDEN_ANGLE
        sin_t = np.sqrt(np.clip(1.0 - cos_t**2, 0.0, None))
        directions = (
            (sin_t * np.cos(phi))[:, None] * x + (sin_t * np.sin(phi))[:, None] * y + cos_t[:, None] * d
        )
        directions /= np.linalg.norm(directions, axis=1, keepdims=True)
        xr, yr = _projected_frames(directions, x, y)
        return origins, directions, xr, yr
    # fan
    if random:
        phi = alpha * (2.0 * u[:, 0] - 1.0)
    elif n == 1:
        phi = np.zeros(m)
    elif alpha >= np.pi:
        phi = -np.pi + 2 * np.pi * g / n
    else:
        phi = -alpha + 2 * alpha * g / (n - 1)
    c, s = np.cos(phi)[:, None], np.sin(phi)[:, None]
    directions = c * d + s * x
    xr = -s * d + c * x
    yr = np.broadcast_to(y, (m, 3)).copy()
    return origins, directions, xr, yr


def _projected_frames(directions, x, y):
    """Per-ray frames: ``x`` projected perpendicular to each direction and normalised;
    where a ray runs along ``x`` the projection of ``y`` is used (``x_ray = y_ray x k``)."""
    xr = x - (directions @ x)[:, None] * directions
    nxr = np.linalg.norm(xr, axis=1)
    bad = nxr < NORMAL_INCIDENCE_SIN
    if np.any(bad):  # ray along x_axis: project y_axis instead
        yb = y - (directions[bad] @ y)[:, None] * directions[bad]
        yb /= np.linalg.norm(yb, axis=1, keepdims=True)
        xr[bad] = np.cross(yb, directions[bad])
        nxr[bad] = 1.0
    xr /= nxr[:, None]
    return xr, np.cross(directions, xr)


def _generate_range(source, start, stop, *, seed, index, n, lines, wls, weights, J):
    j = np.arange(start, stop, dtype=np.int64)
    line_pos = j // n
    g = j % n
    # geometry is the same for every line: compute it once for the distinct g
    if stop - start >= n:  # every geometric ray occurs
        g_unique, inverse = np.arange(n, dtype=np.int64), g
    else:  # a range shorter than n holds each geometric ray at most once
        g_unique, inverse = g, np.arange(g.size)
    o, dvec, xr, yr = _geometry(source, g_unique, n, seed)
    o, dvec, xr, yr = o[inverse], dvec[inverse], xr[inverse], yr[inverse]
    power = float(source.power) * weights[line_pos] / n
    return SourceRays(
        origins=o,
        directions=dvec,
        wavelengths=wls[line_pos],
        power=power,
        field=pol.initial_field_matrix(xr, yr),
        x_axis=xr,
        y_axis=yr,
        coherency=J,
        source_index=np.full(j.size, index, dtype=np.int64),
        ray_index=j,
        line_index=lines[line_pos].astype(np.int64),
        source_name=source.name,
        inside_solid=source.inside_solid,
    )


def _prepare(source, rng, count):
    _check(source)
    lines, wls, weights = _line_weights(source)
    n = geometric_count(source, count)
    J = source_coherency(source)
    seed = int(rng.integers(0, 2**63 - 1))
    return dict(n=n, lines=lines, wls=wls, weights=weights, J=J, seed=seed), n * lines.size


def generate(source, *, rng: np.random.Generator, count: int | None = None, index: int = 0) -> SourceRays:
    """Launch the rays of one source.

    Parameters
    ----------
    source : SourceSpec
    rng : numpy.random.Generator
        Consumed by exactly one integer draw (the seed of this source's rays).
    count : int, optional
        Geometric rays per spectral line instead of ``source.rays``.
    index : int
        Source number stored in ``source_index``.

    Returns
    -------
    SourceRays
        ``ray_count(source, count)`` rays; ``power.sum() == source.power``.

    Raises
    ------
    SourceError
        For an invalid source (with the source's name in the message).
    """
    params, total = _prepare(source, rng, count)
    return _generate_range(source, 0, total, index=index, **params)


def generate_batches(
    source, *, rng: np.random.Generator, batch_size: int, count: int | None = None, index: int = 0,
    start: int = 0, stop: int | None = None,
) -> Iterator[SourceRays]:
    """Launch the rays of one source in batches of at most ``batch_size`` rays.

    The concatenation of the batches equals ``generate(source, rng=rng, ...)`` for the
    same ``rng`` state, whatever ``batch_size`` (see the module docstring). The one
    draw from ``rng`` happens when the first batch is requested.

    Parameters
    ----------
    source : SourceSpec
    rng : numpy.random.Generator
    batch_size : int
        Largest number of rays per batch.
    count, index
        As for :func:`generate`.
    start, stop : int
        Only the rays of global index ``start <= j < stop`` (``stop`` None: to the end;
        clipped to the source's ray count). They are the same rays as in the full
        generation, so disjoint ranges partition the source.

    Yields
    ------
    SourceRays
    """
    if isinstance(batch_size, bool) or int(batch_size) != batch_size or batch_size < 1:
        raise _err(source, f"batch_size must be a positive integer, got {batch_size!r}")
    params, total = _prepare(source, rng, count)
    first = max(0, int(start))
    end = total if stop is None else min(total, int(stop))
    for b in range(first, end, int(batch_size)):
        yield _generate_range(source, b, min(end, b + int(batch_size)), index=index, **params)
