"""Detector geometry and the records that accumulate what detectors receive.

Plane detectors
---------------
A plane detector (:class:`tracer.scene.model.DetectorSpec`, ``kind = "plane"``) is a
rectangle centred on ``position`` with unit normal ``n`` pointing towards the light it
detects. Its local axes are ``x = x_axis`` made perpendicular to ``n`` and
``y = n x x``; a hit at point ``q`` has local coordinates ``u = (q - position) . x`` and
``v = (q - position) . y`` [m], and lies on the detector when ``|u| <= width/2`` and
``|v| <= height/2``. Seen from the light side (looking along ``-n`` at the detector),
``u`` runs to the right and ``v`` upwards, like a screen. A ray is detected when it
crosses the plane travelling against the normal (``d . n < 0``); a ``two_sided``
detector counts both directions. Pixel maps are arrays of shape ``(ny, nx)``: row
``j`` is ``v`` bin ``j`` (from ``-height/2`` up), column ``i`` is ``u`` bin ``i`` (from
``-width/2``), ready for ``imshow(origin="lower", extent=...)``.

Far-field detectors
-------------------
A sphere at infinity (``kind = "far_field"``) bins escaping rays by direction ``k``:
polar angle ``theta = arccos(k . n)`` in [0, pi] from the detector ``normal`` and azimuth
``phi = atan2(k . y, k . x)`` in [-pi, pi) from ``x_axis`` towards ``y = n x x``, on a
grid of ``pixels = (n_azimuth, n_polar)`` equal steps. A bin's solid angle is
``dphi (cos theta_a - cos theta_b)`` (exact; the bins add up to 4 pi) and maps are
of shape ``(n_polar, n_azimuth)`` (row = polar bin from the normal, column = azimuth bin
from -pi), binned by :func:`far_field_bins` -- the one layout of the engine's
``Result.far_field``, :class:`DetectorRecord` and the plots. The natural polarisation
frame of a direction is ``(e_theta, e_phi)`` (:func:`far_field_frame`), right-handed with
``k``.

Stokes vectors handed to a record are in watts (``S0`` = the ray's power), typically
``power0 * tracer.polarization.detector_stokes(M, J, x, directions=k)`` with the
``x`` of :func:`plane_frame`: the polarisation frame is ``(x, k x x)``, right-handed about
the ray (for light arriving against the normal ``k x x = -y``, so S2 > 0 is at +45 deg
from ``u`` towards ``-v``), so a beam has one Stokes vector whichever way a detector
faces; on a far-field detector the natural frame is :func:`far_field_frame`.

Examples
--------
>>> import numpy as np
>>> from tracer.scene.model import DetectorSpec
>>> det = DetectorSpec(name="screen", kind="plane", position=np.zeros(3),
...                    normal=np.array([0.0, 0, 1]), x_axis=np.array([1.0, 0, 0]),
...                    size=(0.01, 0.01), pixels=(4, 4))
>>> t, u, v, hit = plane_hits(det, np.array([[1e-3, 2e-3, 0.1]]), np.array([[0.0, 0, -1]]))
>>> float(t[0]), float(u[0]), float(v[0]), bool(hit[0])
(0.1, 0.001, 0.002, True)
>>> rec = DetectorRecord(det)
>>> rec.add(u[hit], v[hit], np.array([1e-3]))
>>> float(rec.irradiance().sum() * rec.pixel_area)
0.001
"""

from __future__ import annotations

import numpy as np

from tracer.errors import TracerError
from tracer.frames import axis_frame
from tracer.tolerances import NORMAL_INCIDENCE_SIN

__all__ = [
    "DetectorError",
    "plane_frame",
    "plane_hits",
    "inside_outline",
    "pixel_edges",
    "far_field_angles",
    "far_field_edges",
    "far_field_solid_angles",
    "far_field_bins",
    "far_field_frame",
    "DetectorRecord",
]


class DetectorError(TracerError, ValueError):
    """A detector specification is not usable."""


def _err(det, message):
    return DetectorError(f"detector '{det.name}': {message}")


def plane_frame(det):
    """Unit normal ``n``, ``x`` (``x_axis`` made perpendicular to ``n``) and ``y = n x x``.

    Parameters
    ----------
    det : DetectorSpec

    Returns
    -------
    n, x, y : (3,) float [1]

    Raises
    ------
    DetectorError
        When the normal is zero or ``x_axis`` is parallel to it.
    """
    return axis_frame(
        det.normal, det.x_axis, error=lambda message: _err(det, message), axis_name="normal",
        axis_shown=np.asarray(det.normal).tolist(), parallel_to="the normal",
        x_expected="a direction in the detector plane",
    )


def _check_plane(det):
    size = np.asarray(det.size, dtype=float)
    if size.shape != (2,) or not np.all(np.isfinite(size)) or np.any(size <= 0):
        raise _err(det, f"size must be two positive lengths [m] (width, height), got {det.size!r}")
    _check_pixels(det)


def _check_pixels(det):
    px = tuple(det.pixels)
    if len(px) != 2 or any(isinstance(p, bool) or int(p) != p or p < 1 for p in px):
        raise _err(det, f"pixels must be two positive integers, got {det.pixels!r}")
    return int(px[0]), int(px[1])


def inside_outline(u, v, half, round_):
    """Whether local points lie on a detector: within the rectangle of half sizes ``half``,
    or, where ``round_``, within the ellipse of those semi-axes (a disk when equal).

    Parameters
    ----------
    u, v : (N,) float [m]
        Local coordinates along the detector's x and y axes.
    half : (2,) or (N, 2) float [m]
    round_ : bool or (N,) bool

    >>> inside_outline(np.array([0.9, 0.8]), np.array([0.0, 0.8]), np.array([1.0, 1.0]), True)
    array([ True, False])
    """
    half = np.asarray(half, dtype=float)
    hx, hy = half[..., 0], half[..., 1]
    box = (np.abs(u) <= hx) & (np.abs(v) <= hy)
    with np.errstate(over="ignore", invalid="ignore"):  # far misses overflow: outside
        disk = (u / hx) ** 2 + (v / hy) ** 2 <= 1.0
    return np.where(round_, disk, box)


def plane_hits(det, origins, directions, *, t_min=0.0):
    """Where rays cross a plane detector.

    Parameters
    ----------
    det : DetectorSpec
        A ``plane`` detector.
    origins : (N, 3) float [m]
    directions : (N, 3) float [1]
        Unit directions (``t`` is then a distance).
    t_min : float [m]
        Smallest accepted ray parameter; crossings at ``t <= t_min`` are ignored. A
        small negative value accepts rays that start just past a plane lying on a face.

    Returns
    -------
    t : (N,) float [m]
        Ray parameter of the crossing, ``inf`` where there is no hit.
    u, v : (N,) float [m]
        Local coordinates of the crossing, NaN where there is no hit.
    hit : (N,) bool
        Crossing in the accepted direction, beyond ``t_min``, within the rectangle.
    """
    _check_plane(det)
    n, x, y = plane_frame(det)
    o = np.atleast_2d(np.asarray(origins, dtype=float))
    d = np.atleast_2d(np.asarray(directions, dtype=float))
    p0 = np.asarray(det.position, dtype=float).reshape(3)
    dn = d @ n
    facing = dn != 0 if det.two_sided else dn < 0
    with np.errstate(divide="ignore", invalid="ignore"):
        t = np.where(facing, ((p0 - o) @ n) / np.where(dn == 0, 1.0, dn), np.inf)
    ok = facing & (t > t_min) & np.isfinite(t)
    q = o + np.where(ok, t, 0.0)[:, None] * d - p0
    u, v = q @ x, q @ y
    half = 0.5 * np.asarray(det.size, dtype=float)
    ok &= inside_outline(u, v, half, getattr(det, "outline", "rectangle") == "circle")
    t = np.where(ok, t, np.inf)
    return t, np.where(ok, u, np.nan), np.where(ok, v, np.nan), ok


def pixel_edges(det):
    """Pixel edges of a plane detector: ``u_edges (nx+1,)``, ``v_edges (ny+1,)`` [m]."""
    _check_plane(det)
    nx, ny = _check_pixels(det)
    w, h = float(det.size[0]), float(det.size[1])
    return np.linspace(-0.5 * w, 0.5 * w, nx + 1), np.linspace(-0.5 * h, 0.5 * h, ny + 1)


def _frame_and_unit_directions(det, directions):
    """``plane_frame(det)`` and the directions as unit ``(N, 3)`` rows."""
    frame = plane_frame(det)
    d = np.atleast_2d(np.asarray(directions, dtype=float))
    return (*frame, d / np.linalg.norm(d, axis=1, keepdims=True))


def far_field_angles(det, directions):
    """Azimuth and polar angle of directions about a far-field detector's axes.

    Parameters
    ----------
    det : DetectorSpec
    directions : (N, 3) float [1]

    Returns
    -------
    azimuth : (N,) float [rad], in [-pi, pi]
    polar : (N,) float [rad], in [0, pi]
    """
    n, x, y, d = _frame_and_unit_directions(det, directions)
    polar = np.arccos(np.clip(d @ n, -1.0, 1.0))
    azimuth = np.arctan2(d @ y, d @ x)
    return azimuth, polar


def far_field_edges(det):
    """Bin edges ``azimuth_edges (n_az+1,)`` over [-pi, pi], ``polar_edges (n_pol+1,)``
    over [0, pi] [rad]."""
    n_az, n_pol = _check_pixels(det)
    return np.linspace(-np.pi, np.pi, n_az + 1), np.linspace(0.0, np.pi, n_pol + 1)


def far_field_solid_angles(det):
    """Solid angle of every far-field bin, ``(n_polar, n_azimuth)`` [sr].

    ``dOmega = dphi (cos theta_a - cos theta_b)``, exact for a bin bounded by two
    azimuths and two polar angles; the bins sum to 4 pi.

    Examples
    --------
    >>> from tracer.scene.model import DetectorSpec
    >>> det = DetectorSpec(name="sky", kind="far_field", position=np.zeros(3),
    ...                    normal=np.array([0.0, 0, 1]), x_axis=np.array([1.0, 0, 0]),
    ...                    size=(0.0, 0.0), pixels=(36, 18))
    >>> round(float(far_field_solid_angles(det).sum() / np.pi), 12)
    4.0
    """
    az, pol_edges = far_field_edges(det)
    band = np.cos(pol_edges[:-1]) - np.cos(pol_edges[1:])
    return band[:, None] * np.diff(az)[None, :]


def far_field_bins(det, directions, weights=None):
    """Sum of ``weights`` per far-field bin, ``(n_polar, n_azimuth)`` (the one layout).

    Row ``j`` is polar bin ``j`` from the detector's ``normal`` (0 to pi), column ``i``
    azimuth bin ``i`` from ``x_axis`` towards ``normal x x_axis`` (-pi to pi), the edges of
    :func:`far_field_edges` and the angles of :func:`far_field_angles`; the engine's map
    (``Result.far_field``) and :class:`DetectorRecord` both bin with it.

    Parameters
    ----------
    det : DetectorSpec
    directions : (N, 3) float [1]
    weights : (N,) float, optional
        E.g. power [W]; counts when omitted.

    Returns
    -------
    (n_polar, n_azimuth) float

    Examples
    --------
    >>> from tracer.scene.model import DetectorSpec
    >>> det = DetectorSpec(name="sky", kind="far_field", position=np.zeros(3),
    ...                    normal=np.array([0.0, 0, 1]), x_axis=np.array([1.0, 0, 0]),
    ...                    size=(0.0, 0.0), pixels=(4, 2))
    >>> far_field_bins(det, np.array([[-1.0, 1, -0.1]]), np.array([2.0]))  # 135 deg, 94 deg
    array([[0., 0., 0., 0.],
           [0., 0., 0., 2.]])
    """
    d = np.atleast_2d(np.asarray(directions, dtype=float)).reshape(-1, 3)
    azimuth_edges, polar_edges = far_field_edges(det)
    if d.shape[0] == 0:
        return np.zeros((polar_edges.size - 1, azimuth_edges.size - 1))
    az, polar = far_field_angles(det, d)
    out, _, _ = np.histogram2d(polar, az, bins=[polar_edges, azimuth_edges], weights=weights)
    return out


def far_field_frame(det, directions):
    """Polarisation frame ``(e_theta, e_phi)`` of each direction about ``det``'s axes.

    ``e_theta`` points towards growing polar angle, ``e_phi`` towards growing azimuth;
    ``e_theta x e_phi = k`` (right-handed with the direction). Along the poles, where
    the frame is undefined, ``e_theta`` is taken along ``x_axis`` (or ``-x_axis`` at the
    south pole) -- the limit at zero azimuth.

    Parameters
    ----------
    det : DetectorSpec
    directions : (N, 3) float [1]

    Returns
    -------
    e_theta, e_phi : (N, 3) float [1]
    """
    n, x, y, d = _frame_and_unit_directions(det, directions)
    phi_vec = np.cross(n, d)
    norm = np.linalg.norm(phi_vec, axis=1)
    pole = norm < NORMAL_INCIDENCE_SIN
    e_phi = np.where(pole[:, None], y, phi_vec / np.where(pole, 1.0, norm)[:, None])
    e_theta = np.cross(e_phi, d)
    e_theta /= np.linalg.norm(e_theta, axis=1, keepdims=True)
    return e_theta, e_phi


#: Rays spread per block in :meth:`DetectorRecord.add` (bounds the temporary arrays).
_SPREAD_CHUNK = 8192


def _box_fractions(x, half, edges):
    """(N, bins) fraction of each box ``[x - half, x + half]`` in each bin of ``edges``."""
    lo = (x - half)[:, None]
    width = (2.0 * half)[:, None]
    cum = np.clip((edges[None, :] - lo) / width, 0.0, 1.0)
    return np.diff(cum, axis=1)


def ray_footprints(u, v, groups, *, min_rays: int = 4):
    """Half-width of the square each hit stands for, from the spacing of its neighbours.

    A grid of source rays lands on a detector as a grid of points; each ray stands for
    one cell of it. Binning the points alone gives every pixel an integer number of
    rays, so a uniform beam shows a moire pattern wherever the ray pitch and the pixel
    pitch do not match. The pitch of the hits of each group (one path, say) is taken as
    the median distance from each distinct hit point to its nearest distinct neighbour;
    rays of several wavelengths on one spot count once.

    Parameters
    ----------
    u, v : (N,) float [m]
        Hit coordinates.
    groups : (N,) int
        Group of each hit (the path-tree node: hits of one path share a grid).
    min_rays : int
        Groups with fewer distinct points keep point deposits (half-width 0).

    Returns
    -------
    (N,) float [m]
        Half the pitch of the hit's group (0 for small groups).

    Examples
    --------
    >>> import numpy as np
    >>> g = np.arange(5) * 1e-3
    >>> u, v = np.meshgrid(g, g)
    >>> h = ray_footprints(u.ravel(), v.ravel(), np.zeros(25, dtype=int))
    >>> float(h[0])
    0.0005
    """
    from scipy.spatial import cKDTree

    u = np.asarray(u, dtype=float).reshape(-1)
    v = np.asarray(v, dtype=float).reshape(-1)
    groups = np.asarray(groups).reshape(-1)
    out = np.zeros(u.size)
    if u.size == 0:
        return out
    order = np.argsort(groups, kind="stable")
    bounds = np.flatnonzero(np.r_[True, groups[order][1:] != groups[order][:-1], True])
    for a, b in zip(bounds[:-1], bounds[1:]):
        idx = order[a:b]
        pts = np.unique(np.round(np.column_stack([u[idx], v[idx]]), 12), axis=0)
        if len(pts) < min_rays:
            continue
        dist, _ = cKDTree(pts).query(pts, k=2)
        pitch = float(np.median(dist[:, 1]))
        out[idx] = 0.5 * pitch
    return out


def _group_sum(ids, columns):
    """Unique ids and the column sums per id (vectorised)."""
    uniq, inv = np.unique(ids, return_inverse=True)
    sums = np.stack([np.bincount(inv, weights=c, minlength=uniq.size) for c in columns.T], axis=1)
    return uniq, sums


class DetectorRecord:
    """Accumulates the rays one detector receives (plane or far field).

    Parameters
    ----------
    spec : DetectorSpec
    keep_hits : bool
        Also keep every hit (coordinates, power, Stokes, path id) for later analysis.

    Notes
    -----
    Plane records take ``add(u, v, power, stokes, path_ids)``; far-field records take
    ``add_directions(directions, power, stokes, path_ids)``. Both keep the total power
    and ray count, power and Stokes maps, and per-path moments: for plane detectors the
    power-weighted centroid and RMS size in ``(u, v)``, for far-field detectors the
    power-weighted mean direction. Records of the same detector from separate batches
    combine with :meth:`merge`.
    """

    def __init__(self, spec, *, keep_hits: bool = False):
        self.spec = spec
        self.kind = spec.kind
        if spec.kind == "plane":
            plane_frame(spec)
            self.u_edges, self.v_edges = pixel_edges(spec)
            shape = (self.v_edges.size - 1, self.u_edges.size - 1)
            self.pixel_area = float(np.diff(self.u_edges)[0] * np.diff(self.v_edges)[0])
            self._ncols = 6  # count, P, Pu, Pv, Pu^2, Pv^2
        elif spec.kind == "far_field":
            plane_frame(spec)
            self.azimuth_edges, self.polar_edges = far_field_edges(spec)
            shape = (self.polar_edges.size - 1, self.azimuth_edges.size - 1)
            self.solid_angles = far_field_solid_angles(spec)
            self._ncols = 5  # count, P, P dx, P dy, P dz
        else:
            raise _err(spec, f"kind must be 'plane' or 'far_field', got {spec.kind!r}")
        self.shape = shape
        self.total_power = 0.0
        self.ray_count = 0
        self._power_map = np.zeros(shape)
        self._count_map = np.zeros(shape, dtype=np.int64)
        self._stokes_map = None  # (4, *shape) [W] once Stokes vectors arrive
        self._path_ids = np.zeros(0, dtype=np.int64)
        self._moments = np.zeros((0, self._ncols))
        self.keep_hits = keep_hits
        self._hits: list[dict] = []

    # ----------------------------------------------------------------- accumulation

    def _check_arrays(self, n, power, stokes, path_ids):
        power = np.asarray(power, dtype=float).reshape(-1)
        if power.size != n:
            raise ValueError(f"power has {power.size} entries for {n} rays")
        if stokes is not None:
            stokes = np.asarray(stokes, dtype=float).reshape(n, 4)
        if path_ids is None:
            path_ids = np.full(n, -1, dtype=np.int64)
        else:
            path_ids = np.asarray(path_ids).reshape(-1).astype(np.int64)
            if path_ids.size != n:
                raise ValueError(f"path_ids has {path_ids.size} entries for {n} rays")
        return power, stokes, path_ids

    def _accumulate_maps(self, rows, cols, power, stokes, directions=None):
        """Bin by ``(rows, cols)`` on a plane, by ``directions`` (:func:`far_field_bins`)
        on a far-field detector."""
        if self.kind == "plane":
            def bins(w=None):
                return np.histogram2d(rows, cols, bins=[self.v_edges, self.u_edges], weights=w)[0]
        else:
            def bins(w=None):
                return far_field_bins(self.spec, directions, w)
        self._power_map += bins(power)
        self._count_map += bins().astype(np.int64)
        if stokes is not None:
            if self._stokes_map is None:
                if self.ray_count > 0:
                    raise ValueError("Stokes vectors given after rays without them")
                self._stokes_map = np.zeros((4,) + self.shape)
            for i in range(4):
                self._stokes_map[i] += bins(stokes[:, i])
        elif self._stokes_map is not None and power.size:
            raise ValueError("rays without Stokes vectors added to a record that has them")

    def _spread(self, u, v, power, stokes, half):
        """Deposit the power (and Stokes vectors) of rays with a footprint ``h > 0``.

        Spread over the pixels by the overlap of the box ``[u - h, u + h] x [v - h, v + h]``
        with each pixel, renormalised to the part of the box inside the detector (a ray
        that reaches the detector brings all its power); rays outside the detector
        bring nothing, as with point deposits.
        """
        sel = np.nonzero(half > 0)[0]
        a, b = self.v_edges, self.u_edges
        for start in range(0, len(sel), _SPREAD_CHUNK):
            i = sel[start:start + _SPREAD_CHUNK]
            w = [power[i]] + ([] if stokes is None else [stokes[i, k] for k in range(4)])
            maps = [self._power_map] + ([] if stokes is None else list(self._stokes_map))
            on = (u[i] >= b[0]) & (u[i] <= b[-1]) & (v[i] >= a[0]) & (v[i] <= a[-1])
            w = [wk * on for wk in w]
            fu = _box_fractions(u[i], half[i], b)
            fv = _box_fractions(v[i], half[i], a)
            inside = fu.sum(axis=1) * fv.sum(axis=1)
            scale = np.where(inside > 0, 1.0 / np.where(inside > 0, inside, 1.0), 0.0)
            for m, wk in zip(maps, w):
                m += (fv * (wk * scale)[:, None]).T @ fu

    def _accumulate_paths(self, path_ids, columns):
        ids = np.concatenate([self._path_ids, path_ids])
        cols = np.concatenate([self._moments, columns])
        self._path_ids, self._moments = _group_sum(ids, cols)

    def add(self, u, v, power, stokes=None, path_ids=None, footprint=None):
        """Add hits on a plane detector.

        Parameters
        ----------
        u, v : (N,) float [m]
            Local hit coordinates (from :func:`plane_hits`); entries with NaN (misses)
            are ignored.
        power : (N,) float [W]
        stokes : (N, 4) float [W], optional
            Stokes vectors in the detector frame, ``S0`` = power.
        path_ids : (N,) int, optional
            Path of each ray (``-1`` when not given).
        footprint : (N,) float [m], optional
            Half-width of the square each ray stands for (see :func:`ray_footprints`):
            its power and Stokes vector are spread over the pixels that square covers
            (the part inside the detector, so that no power is lost), instead of
            falling on one pixel. Counts stay per hit point.
        """
        if self.kind != "plane":
            raise ValueError("add() is for plane detectors; use add_directions()")
        u = np.asarray(u, dtype=float).reshape(-1)
        v = np.asarray(v, dtype=float).reshape(-1)
        power, stokes, path_ids = self._check_arrays(u.size, power, stokes, path_ids)
        keep = np.isfinite(u) & np.isfinite(v)
        if footprint is not None:
            footprint = np.broadcast_to(np.asarray(footprint, dtype=float), u.shape)
        if not np.all(keep):
            u, v, power, path_ids = u[keep], v[keep], power[keep], path_ids[keep]
            stokes = None if stokes is None else stokes[keep]
            footprint = None if footprint is None else footprint[keep]
        if footprint is not None and np.any(footprint > 0):
            point = footprint <= 0  # counts per hit point; power and Stokes spread below
            self._accumulate_maps(v, u, power * point,
                                  None if stokes is None else stokes * point[:, None])
            self._spread(u, v, power, stokes, footprint)
        else:
            self._accumulate_maps(v, u, power, stokes)
        one = np.ones_like(power)
        self._accumulate_paths(path_ids, np.stack([one, power, power * u, power * v, power * u * u, power * v * v], 1))
        self.total_power += float(power.sum())
        self.ray_count += int(power.size)
        if self.keep_hits:
            self._hits.append(dict(u=u, v=v, power=power, stokes=stokes, path_ids=path_ids))

    def add_directions(self, directions, power, stokes=None, path_ids=None):
        """Add rays to a far-field detector, binned by direction.

        Parameters
        ----------
        directions : (N, 3) float [1]
        power : (N,) float [W]
        stokes : (N, 4) float [W], optional
            Stokes vectors, e.g. in the frame of :func:`far_field_frame`.
        path_ids : (N,) int, optional
        """
        if self.kind != "far_field":
            raise ValueError("add_directions() is for far-field detectors; use add()")
        d = np.atleast_2d(np.asarray(directions, dtype=float)).reshape(-1, 3)
        d = d / np.linalg.norm(d, axis=1, keepdims=True)
        power, stokes, path_ids = self._check_arrays(d.shape[0], power, stokes, path_ids)
        self._accumulate_maps(None, None, power, stokes, directions=d)
        one = np.ones_like(power)
        self._accumulate_paths(path_ids, np.column_stack([one, power, power[:, None] * d]))
        self.total_power += float(power.sum())
        self.ray_count += int(power.size)
        if self.keep_hits:
            self._hits.append(dict(directions=d, power=power, stokes=stokes, path_ids=path_ids))

    def merge(self, other: DetectorRecord) -> DetectorRecord:
        """Add another record of the same detector into this one (returns self)."""
        if other.spec.name != self.spec.name or other.shape != self.shape or other.kind != self.kind:
            raise ValueError("records of different detectors cannot be merged")
        if (self._stokes_map is None) != (other._stokes_map is None) and self.ray_count and other.ray_count:
            raise ValueError("one record has Stokes maps and the other has not")
        self._power_map += other._power_map
        self._count_map += other._count_map
        if other._stokes_map is not None:
            self._stokes_map = other._stokes_map.copy() if self._stokes_map is None else self._stokes_map + other._stokes_map
        self._accumulate_paths(other._path_ids, other._moments)
        self.total_power += other.total_power
        self.ray_count += other.ray_count
        self._hits.extend(other._hits)
        return self

    # ----------------------------------------------------------------- results

    def power_map(self):
        """Power per pixel or bin [W], shape :attr:`shape`."""
        return self._power_map.copy()

    def count_map(self):
        """Number of rays per pixel or bin."""
        return self._count_map.copy()

    def irradiance(self):
        """Irradiance map of a plane detector [W/m^2], shape ``(ny, nx)``."""
        if self.kind != "plane":
            raise ValueError("irradiance is for plane detectors; use intensity()")
        return self._power_map / self.pixel_area

    def intensity(self):
        """Radiant intensity map of a far-field detector [W/sr], ``(n_polar, n_azimuth)``."""
        if self.kind != "far_field":
            raise ValueError("intensity is for far-field detectors; use irradiance()")
        return self._power_map / self.solid_angles

    def stokes_maps(self):
        """Stokes maps ``(4, *shape)``: [W/m^2] for planes, [W/sr] for the far field;
        ``None`` when no Stokes vectors were given."""
        if self._stokes_map is None:
            return None
        area = self.pixel_area if self.kind == "plane" else self.solid_angles
        return self._stokes_map / area

    def dop_map(self):
        """Degree of polarisation per pixel [1] (NaN where no power)."""
        if self._stokes_map is None:
            return None
        s = self._stokes_map
        with np.errstate(invalid="ignore", divide="ignore"):
            return np.sqrt(np.sum(s[1:] ** 2, axis=0)) / np.where(s[0] > 0, s[0], np.nan)

    def total_stokes(self):
        """Sum of the Stokes vectors of all rays [W], or ``None``."""
        return None if self._stokes_map is None else self._stokes_map.sum(axis=(1, 2))

    def path_ids(self):
        """Path ids seen, sorted."""
        return self._path_ids.copy()

    def _moments_of(self, path):
        if path is None:
            return self._moments.sum(axis=0)
        i = np.searchsorted(self._path_ids, path)
        if i >= self._path_ids.size or self._path_ids[i] != path:
            raise KeyError(f"path {path} did not reach detector '{self.spec.name}'")
        return self._moments[i]

    def path_power(self, path=None):
        """Power [W] of one path (all paths when ``None``)."""
        return float(self._moments_of(path)[1])

    def centroid(self, path=None):
        """Power-weighted centroid ``(u, v)`` [m] (plane detectors)."""
        m = self._plane_moments(path)
        return m[2] / m[1], m[3] / m[1]

    def rms_size(self, path=None):
        """Power-weighted RMS sizes about the centroid [m]: ``(radial, along u, along v)``.

        ``radial = sqrt(<(u - u0)^2 + (v - v0)^2>)``; for a uniform disk of radius R it
        is ``R / sqrt(2)``.
        """
        m = self._plane_moments(path)
        P = m[1]
        var_u = max(m[4] / P - (m[2] / P) ** 2, 0.0)
        var_v = max(m[5] / P - (m[3] / P) ** 2, 0.0)
        return float(np.sqrt(var_u + var_v)), float(np.sqrt(var_u)), float(np.sqrt(var_v))

    def _plane_moments(self, path):
        if self.kind != "plane":
            raise ValueError("centroid and RMS size are for plane detectors")
        m = self._moments_of(path)
        if m[1] <= 0:
            raise ValueError(f"no power on detector '{self.spec.name}' for path {path}")
        return m

    def mean_direction(self, path=None):
        """Power-weighted mean direction (unit) of a far-field record."""
        if self.kind != "far_field":
            raise ValueError("mean_direction is for far-field detectors")
        m = self._moments_of(path)
        v = m[2:5]
        return v / np.linalg.norm(v)

    def path_table(self):
        """Per-path summary: list of dicts sorted by decreasing power.

        Keys: ``path``, ``rays``, ``power`` [W], and for plane detectors ``centroid``
        (u, v) [m] and ``rms`` (radial RMS) [m]; for far-field detectors ``direction``.
        """
        rows = []
        for pid, m in zip(self._path_ids.tolist(), self._moments):
            row = dict(path=pid, rays=int(round(m[0])), power=float(m[1]))
            if m[1] > 0:
                if self.kind == "plane":
                    row["centroid"] = (float(m[2] / m[1]), float(m[3] / m[1]))
                    row["rms"] = self.rms_size(pid)[0]
                else:
                    row["direction"] = tuple(float(c) for c in m[2:5] / np.linalg.norm(m[2:5]))
            rows.append(row)
        rows.sort(key=lambda r: -r["power"])
        return rows

    def hits(self):
        """All kept hits as one dict of arrays (requires ``keep_hits=True``)."""
        if not self.keep_hits:
            raise ValueError("this record was made without keep_hits=True")
        if not self._hits:
            return {}
        out = {}
        for key in self._hits[0]:
            vals = [h[key] for h in self._hits]
            out[key] = None if any(v is None for v in vals) else np.concatenate(vals)
        return out
