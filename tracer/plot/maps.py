"""Detector maps: irradiance (linear and log), line profiles, Stokes maps, far field.

Plane-detector maps are built from the recorded hits (``Result.hits(detector)``) binned
on the detector's pixel grid by :class:`tracer.detectors.DetectorRecord`, so that

    sum(irradiance) * pixel_area = power on the detector [W]

(exactly, as long as the trace kept every hit: ``max_hits`` not reached). Pixel maps are
``(ny, nx)``, row ``j`` is the ``v`` bin ``j`` from ``-height/2`` up, column ``i`` the
``u`` bin from ``-width/2``; the image is shown as seen from the light side (``u`` to the
right, ``v`` up, see :mod:`tracer.detectors`).

The far-field map shows radiant intensity [W/sr] of the escaping power against the
direction (polar angle from the far-field detector's normal as the radius, azimuth
from its ``x_axis`` as the angle): each bin's power divided by its exact solid angle
``dphi (cos theta_a - cos theta_b)``.

Stokes maps are the normalised ``S1/S0``, ``S2/S0``, ``S3/S0`` per pixel on a diverging
colour scale from -1 to +1; pixels with less than ``min_fraction`` of the largest pixel
power are left blank (grey).
"""

from __future__ import annotations

import dataclasses

import numpy as np

from . import _style

__all__ = ["irradiance_data", "irradiance_map", "line_profile", "stokes_maps",
           "far_field_data", "far_field_map"]

#: Colour maps (matplotlib names): sequential for power, diverging for Stokes.
IRRADIANCE_CMAP = "magma"
STOKES_CMAP = "RdBu_r"
BLANK = "#e6e6e6"


def _plane_spec(result, detector):
    from tracer.errors import TracerError

    spec = result.scene.detectors.get(detector) if detector is not None else None
    if detector is None:
        planes = [d for d in result.scene.detectors.values() if d.kind == "plane"]
        if not planes:
            raise TracerError("the scene has no plane detector to map")
        spec = planes[0]
    if spec is None or spec.kind != "plane":
        names = [d.name for d in result.scene.detectors.values() if d.kind == "plane"]
        raise TracerError(f"no plane detector {detector!r}; plane detectors: {', '.join(names) or 'none'}")
    return spec


def _auto_pixels(spec, loc, power, *, target: float = 4.0, max_holes: float = 0.02, minimum: int = 8):
    """Detector grid coarsened by powers of two until the lit pixels get ``target`` hits on
    average, dark pixels between lit ones are rare (at most ``max_holes`` of the lit
    count) and the lit pixels fill half the box around them (no dotted maps from a sparse
    ray grid); never below ``minimum`` pixels a side,
    never finer than the detector."""
    from tracer.detectors import DetectorRecord

    nx, ny = spec.pixels
    # the hits that shape the map: weak ghost hits landing on the same spots as the main
    # beam must not count as extra rays per pixel (a 31-ray beam with four ghosts is
    # still 31 rays)
    strong = power >= 1e-2 * power.max() if len(power) else np.zeros(0, dtype=bool)
    while True:
        rec = DetectorRecord(dataclasses.replace(spec, pixels=(nx, ny)))
        main = DetectorRecord(dataclasses.replace(spec, pixels=(nx, ny)))
        if len(power):
            rec.add(loc[:, 0], loc[:, 1], np.ones(len(power)))
            main.add(loc[strong, 0], loc[strong, 1], np.ones(int(strong.sum())))
        on = rec.power_map() > 0
        lit = int(on.sum())
        if lit == 0:
            return nx, ny
        lit_main = max(int((main.power_map() > 0).sum()), 1)
        # holes: dark pixels between lit neighbours (left and right, or above and below)
        pad = np.pad(on, 1)
        between = (pad[1:-1, :-2] & pad[1:-1, 2:]) | (pad[:-2, 1:-1] & pad[2:, 1:-1])
        holes = int((between & ~on).sum())
        rows, cols = np.nonzero(on)
        fill = lit / ((np.ptp(rows) + 1) * (np.ptp(cols) + 1))  # of the box around the light
        if int(strong.sum()) / lit_main >= target and holes <= max_holes * lit and fill >= 0.5:
            return nx, ny
        nx2 = max(minimum, nx // 2) if nx > 1 else 1
        ny2 = max(minimum, ny // 2) if ny > 1 else 1
        if (nx2, ny2) == (nx, ny):
            return nx, ny
        nx, ny = nx2, ny2


def irradiance_data(result, detector: str | None = None, *, pixels=None,
                    spread: bool = True) -> dict:
    """Binned maps of a plane detector.

    Parameters
    ----------
    result : tracer.engine.Result
    detector : str or None
        Plane detector name (default: the first plane detector).
    pixels : None, "auto" or (nx, ny)
        Grid of the maps: ``None`` the detector's own pixels; ``(nx, ny)`` another grid
        over the same rectangle; ``"auto"`` the detector's grid coarsened by powers of
        two until lit pixels receive at least 4 hits on average and dark pixels between
        lit ones are rare (smooth maps from few rays). Power is conserved whatever
        the grid.
    spread : bool
        Spread each hit over the square its ray stands for (the pitch of the hits of
        its path, :func:`tracer.detectors.ray_footprints`), so that a uniform beam of a
        ray grid gives a uniform map whatever the pixel pitch (no moire); ``False``:
        each hit on one pixel.

    Returns
    -------
    dict
        ``irradiance`` (ny, nx) [W/m²], ``power`` (ny, nx) [W], ``stokes`` (4, ny, nx)
        [W/m²], ``u_edges`` (nx+1,), ``v_edges`` (ny+1,) [m], ``pixel_area`` [m²],
        ``total_power`` [W], ``centroid`` (u, v) [m] (power-weighted; NaN without hits),
        ``detector`` (the DetectorSpec, with the grid used), ``hits`` (count).
    """
    from tracer.detectors import DetectorRecord

    spec = _plane_spec(result, detector)
    h = result.hits(spec.name)
    loc = np.asarray(h["local"], float).reshape(-1, 2)
    power = np.asarray(h["power"], float).reshape(-1)
    stokes = np.asarray(h["stokes"], float).reshape(-1, 4)
    if isinstance(pixels, str):
        if pixels != "auto":
            from tracer.errors import TracerError

            raise TracerError(f'pixels={pixels!r}: expected None, "auto" or (nx, ny)')
        pixels = _auto_pixels(spec, loc, power)
    if pixels is not None:
        spec = dataclasses.replace(spec, pixels=(int(pixels[0]), int(pixels[1])))
    rec = DetectorRecord(spec)
    if len(power):
        footprint = None
        if spread:
            from tracer.detectors import ray_footprints

            footprint = ray_footprints(loc[:, 0], loc[:, 1], np.asarray(h["node"]).reshape(-1))
        rec.add(loc[:, 0], loc[:, 1], power, stokes, footprint=footprint)
    total = float(power.sum())
    cen = (np.array([np.dot(power, loc[:, 0]), np.dot(power, loc[:, 1])]) / total
           if total > 0 else np.array([np.nan, np.nan]))
    smap = rec.stokes_maps() if len(power) else np.zeros((4,) + rec.shape)
    return dict(irradiance=rec.irradiance(), power=rec.power_map(), stokes=np.asarray(smap),
                u_edges=rec.u_edges, v_edges=rec.v_edges, pixel_area=rec.pixel_area,
                total_power=total, centroid=cen, detector=spec, hits=len(power))


def _extent(data):
    span = max(data["u_edges"][-1] - data["u_edges"][0], data["v_edges"][-1] - data["v_edges"][0])
    sym, scale = _style.length_unit(span)
    ext = [data["u_edges"][0] / scale, data["u_edges"][-1] / scale,
           data["v_edges"][0] / scale, data["v_edges"][-1] / scale]
    return ext, sym, scale


def _is_line(data):
    ny, nx = data["irradiance"].shape
    return ny == 1 or nx == 1


def irradiance_map(result, detector: str | None = None, *, log: bool = False, ax=None,
                   floor: float = 1e-6, title: str | bool = True, colorbar: bool = True,
                   centroid: bool = True, pixels=None, figsize=(5.2, 4.2)):
    """Irradiance map of a plane detector [W/m²], linear or log colour scale.

    Parameters
    ----------
    result : tracer.engine.Result
    detector : str or None
        Plane detector (default: the first).
    log : bool
        Logarithmic colour scale from ``floor`` times the peak to the peak (shows ghosts).
    ax : matplotlib Axes or None
    floor : float [1]
        Lower end of the log scale, relative to the peak irradiance.
    title : str or bool
        ``True``: detector name and the power it received.
    colorbar : bool
    centroid : bool
        Mark the power centroid with a small cross.
    pixels : None, "auto" or (nx, ny)
        Map grid (see :func:`irradiance_data`).

    Returns
    -------
    matplotlib Figure

    Notes
    -----
    A detector one pixel high (or wide) is drawn as an irradiance curve along its length.
    """
    data = irradiance_data(result, detector, pixels=pixels)
    if _is_line(data):
        return line_profile(result, data["detector"].name, ax=ax, log=log, title=title,
                            figsize=figsize, _data=data)
    fig, ax = _style.new_axes(ax, figsize=figsize)
    ext, sym, scale = _extent(data)
    img = data["irradiance"]
    with _style.style():
        norm, shown = _power_norm(img, log=log, floor=floor)
        cmap = _cmap(IRRADIANCE_CMAP, bad="black")
        im = ax.imshow(shown, origin="lower", extent=ext, cmap=cmap, norm=norm,
                       interpolation="nearest", aspect="equal")
        ax.set_xlabel(f"u [{sym}]")
        ax.set_ylabel(f"v [{sym}]")
        if centroid and np.all(np.isfinite(data["centroid"])):
            c = data["centroid"] / scale
            ax.plot(c[0], c[1], marker="+", color="#5fd3ff", ms=8, mew=1.0)
        if colorbar:
            _colorbar(fig, im, ax, "irradiance [W/m²]" + (" (log)" if log else ""), pad=0.03)
        _set_title(ax, title, data, "irradiance")
    return fig


def _power_norm(values, *, log, floor):
    """Colour normalisation of a non-negative map and the values to show.

    Log: from ``floor`` times the peak to the peak, zeros shown as "bad" (NaN); otherwise
    linear from 0 to the peak (to 1 for an empty map).
    """
    from matplotlib.colors import LogNorm, Normalize

    peak = float(values.max())
    if log and peak > 0:
        return LogNorm(vmin=peak * floor, vmax=peak), np.where(values > 0, values, np.nan)
    return Normalize(vmin=0.0, vmax=peak if peak > 0 else 1.0), values


def _colorbar(fig, mappable, ax, label, *, fraction=0.046, pad):
    cb = fig.colorbar(mappable, ax=ax, fraction=fraction, pad=pad)
    cb.set_label(label)
    cb.outline.set_linewidth(0.5)
    return cb


def _cmap(name, bad):
    m = _style.mpl()
    return m.colormaps[name].with_extremes(bad=bad)


def _set_title(ax, title, data, what):
    if not title:
        return
    if title is True:
        from tracer.units import format_power

        tot = data["total_power"]
        title = f"{data['detector'].name}: {what}, " + (format_power(tot, digits=4) if tot > 0
                                                          else "no power")
    ax.set_title(str(title), loc="left")


def line_profile(result, detector: str | None = None, *, axis: str = "both", ax=None,
                 log: bool = False, title: str | bool = True, pixels=None, figsize=(5.2, 3.4),
                 _data=None):
    """Irradiance along the detector row and/or column through the power centroid.

    Parameters
    ----------
    result : tracer.engine.Result
    detector : str or None
        Plane detector (default: the first).
    axis : "u", "v" or "both"
        ``u``: the row through the centroid (irradiance against u); ``v``: the column.
    ax : matplotlib Axes or None
    log : bool
        Logarithmic irradiance axis.
    title : str or bool
    pixels : None, "auto" or (nx, ny)
        Map grid (see :func:`irradiance_data`).

    Returns
    -------
    matplotlib Figure

    Notes
    -----
    The curves are pixel values (steps), so they integrate with the pixel pitch to the
    power in that row or column.
    """
    data = _data or irradiance_data(result, detector, pixels=pixels)
    if axis not in ("u", "v", "both"):
        from tracer.errors import TracerError

        raise TracerError(f'line_profile axis={axis!r}: expected "u", "v" or "both"')
    fig, ax = _style.new_axes(ax, figsize=figsize)
    ext, sym, scale = _extent(data)
    img = data["irradiance"]
    ny, nx = img.shape
    cu, cv = data["centroid"]
    ue, ve = data["u_edges"], data["v_edges"]
    col = int(np.clip(np.searchsorted(ue, cu) - 1, 0, nx - 1)) if np.isfinite(cu) else nx // 2
    row = int(np.clip(np.searchsorted(ve, cv) - 1, 0, ny - 1)) if np.isfinite(cv) else ny // 2
    def _at(x):
        x = x / scale
        return f"{0.0 if abs(x) < 1e-9 * (ext[1] - ext[0]) else x:.3g}"

    with _style.style():
        curves = []
        if axis in ("u", "both") and nx > 1:
            curves.append((ue / scale, img[row, :], f"along u (row at v = {_at((ve[row] + ve[row + 1]) / 2)} {sym})", "#1f4e79"))
        if axis in ("v", "both") and ny > 1:
            curves.append((ve / scale, img[:, col], f"along v (column at u = {_at((ue[col] + ue[col + 1]) / 2)} {sym})", "#b35806"))
        for edges, vals, label, color in curves:
            ax.stairs(vals, edges, color=color, lw=1.1, label=label, baseline=None)
        if log:
            ax.set_yscale("log")
            pos = img[img > 0]
            if pos.size:
                ax.set_ylim(pos.max() * 1e-7, pos.max() * 2)
        else:
            ax.set_ylim(bottom=0)
        ax.set_xlabel(f"position [{sym}]")
        ax.set_ylabel("irradiance [W/m²]")
        ax.grid(True, color=_style.GRID, lw=0.5)
        ax.set_axisbelow(True)
        if len(curves) > 1:
            ax.legend(loc="upper center", bbox_to_anchor=(0.5, -0.2), ncol=1)
        _set_title(ax, title, data, "irradiance profile")
    return fig


def stokes_maps(result, detector: str | None = None, *, axes=None, min_fraction: float = 1e-3,
                title: str | bool = True, pixels=None, figsize=(10.0, 3.4)):
    """Normalised Stokes maps S1/S0, S2/S0, S3/S0 of a plane detector.

    Parameters
    ----------
    result : tracer.engine.Result
    detector : str or None
        Plane detector (default: the first).
    axes : sequence of 3 matplotlib Axes or None
        Where to draw; a new 1 x 3 figure when ``None``.
    min_fraction : float [1]
        Pixels with less power than this fraction of the peak pixel are blank.
    title : str or bool
    pixels : None, "auto" or (nx, ny)
        Map grid (see :func:`irradiance_data`).

    Returns
    -------
    matplotlib Figure

    Notes
    -----
    Stokes vectors are in the detector frame ``(x_axis, k x x_axis)``, right-handed about
    the ray direction ``k``: S1 > 0 linear along the detector's u (``x_axis``), S2 > 0
    linear at +45° from u towards ``k x x_axis`` (towards -v for light arriving against
    the normal), S3 > 0 right-handed circular in the convention of
    :mod:`tracer.polarization`.
    """
    data = irradiance_data(result, detector, pixels=pixels)
    plt = _style.pyplot()
    with _style.style():
        if axes is None:
            fig, axes = plt.subplots(1, 3, figsize=figsize, constrained_layout=True)
        else:
            fig = axes[0].figure
        s = data["stokes"]
        s0 = s[0]
        mask = s0 <= max(float(s0.max()), 0.0) * min_fraction
        ext, sym, scale = _extent(data)
        line = _is_line(data)
        cmap = _cmap(STOKES_CMAP, bad=BLANK)
        im = None
        for k, ax in zip((1, 2, 3), axes):
            with np.errstate(invalid="ignore", divide="ignore"):
                val = np.where(mask, np.nan, s[k] / np.where(s0 > 0, s0, 1.0))
            if line:
                x = data["u_edges"] if val.shape[1] > 1 else data["v_edges"]
                ax.stairs(val.ravel(), x / scale, color="#5a3d8a", lw=1.1, baseline=None)
                ax.set_ylim(-1.05, 1.05)
                ax.axhline(0, color=_style.GRID, lw=0.6, zorder=0)
                ax.set_xlabel(f"position [{sym}]")
            else:
                im = ax.imshow(val, origin="lower", extent=ext, cmap=cmap, vmin=-1, vmax=1,
                               interpolation="nearest", aspect="equal")
                ax.set_xlabel(f"u [{sym}]")
                ax.set_facecolor(BLANK)
            ax.set_title(f"S{k}/S0", loc="left")
        axes[0].set_ylabel(f"v [{sym}]" if not line else "normalised Stokes")
        if im is not None:
            _colorbar(fig, im, list(axes), "normalised Stokes parameter", fraction=0.025, pad=0.02)
        if title:
            from tracer.units import format_power

            text = (f"{data['detector'].name}: Stokes maps, {format_power(data['total_power'], digits=4)}"
                    if title is True else str(title))
            fig.suptitle(text, x=0.01, ha="left", fontsize=10, fontweight="bold")
    return fig


def far_field_data(result, name: str | None = None) -> dict:
    """Escaped power by direction on a far-field detector.

    Parameters
    ----------
    result : tracer.engine.Result
    name : str or None
        Far-field detector (default: the first).

    Returns
    -------
    dict
        ``power`` (n_polar, n_azimuth) [W], ``intensity`` (n_polar, n_azimuth) [W/sr],
        ``solid_angle`` (n_polar, n_azimuth) [sr], ``azimuth_edges`` (over [-pi, pi]),
        ``polar_edges`` [rad], ``total_power`` [W] (the layout of ``Result.far_field``).
    """
    ff = result.far_field(name)
    ae = np.asarray(ff["azimuth_edges"], float)
    pe = np.asarray(ff["polar_edges"], float)
    power = np.asarray(ff["power"], float)
    omega = np.asarray(ff["solid_angle"], float)  # exact bin solid angle
    return dict(power=power, intensity=power / omega, solid_angle=omega, azimuth_edges=ae,
                polar_edges=pe, total_power=float(power.sum()))


def far_field_map(result, name: str | None = None, *, log: bool = True, ax=None,
                  floor: float = 1e-6, max_polar: float | None = None, title: str | bool = True,
                  figsize=(5.0, 4.6)):
    """Radiant intensity [W/sr] of the escaping power by direction (polar plot).

    Parameters
    ----------
    result : tracer.engine.Result
    name : str or None
        Far-field detector (default: the first).
    log : bool
        Logarithmic colour scale from ``floor`` times the peak.
    ax : matplotlib polar Axes or None
    floor : float [1]
    max_polar : float [rad] or None
        Largest polar angle shown (default: the whole sphere, 180°).
    title : str or bool

    Returns
    -------
    matplotlib Figure

    Notes
    -----
    Radius: polar angle from the far-field detector's normal [deg]; angle: azimuth
    from its ``x_axis`` towards ``normal x x_axis``.
    """
    data = far_field_data(result, name)
    fig, ax = _style.new_axes(ax, figsize=figsize, projection="polar")
    inten = data["intensity"]
    with _style.style():
        norm, shown = _power_norm(inten, log=log, floor=floor)
        cmap = _cmap(IRRADIANCE_CMAP, bad="black")
        mesh = ax.pcolormesh(data["azimuth_edges"], np.degrees(data["polar_edges"]), shown,
                             cmap=cmap, norm=norm, shading="flat")
        ax.set_ylim(0, np.degrees(max_polar) if max_polar else 180.0)
        ax.set_facecolor("black")
        ax.tick_params(labelsize=7, colors=_style.INK)
        ax.set_rlabel_position(22.5)
        for lab in ax.get_yticklabels():
            lab.set_color("white")
        ax.grid(color="#ffffff", alpha=0.25, lw=0.5)
        _colorbar(fig, mesh, ax, "radiant intensity [W/sr]" + (" (log)" if log else ""), pad=0.1)
        if title:
            from tracer.units import format_power

            ffs = result.compiled.far_fields
            nm = name or (ffs[0].name if ffs else "far field")
            tot = data["total_power"]
            text = (f"{nm}: far field, " + (f"{format_power(tot, digits=4)} escaping" if tot > 0
                                             else "no escaping power")
                    if title is True else str(title))
            ax.set_title(text, loc="left", pad=14)
    return fig
