"""Coating constructors: explicit stacks, quarter-wave layers, V-coats, quarter-wave
mirrors and the ideal coating.

References
----------
[1] H. A. Macleod, *Thin-Film Optical Filters*, 4th ed., CRC Press, 2010 (chapters 2-5:
    quarter-wave layers, two-layer antireflection coatings, quarter-wave stacks).
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np

from .model import Coating, CoatingError, IdealCoating, evaluate_index

__all__ = ["stack", "quarter_wave", "v_coat", "quarter_wave_mirror", "ideal"]


def _design_real(index, wavelength, where: str) -> float:
    n = evaluate_index(index, wavelength)
    if n.ndim != 0:
        raise CoatingError(f"{where}: design needs a single index, got an array of shape {n.shape}")
    n = complex(n)
    if not n.real > 0:
        raise CoatingError(f"{where}: index must have a positive real part, got {n!r}")
    return n.real


def stack(layers: Sequence, *, name: str = "stack") -> Coating:
    """Coating from explicit layers, substrate first.

    Parameters
    ----------
    layers : sequence of (index or model, thickness)
        ``thickness`` float [m].
    name : str
        Label.

    Examples
    --------
    >>> c = stack([(2.35, 58.5e-9), (1.38, 99.6e-9)], name="two layers")
    >>> len(c), c.thicknesses
    (2, (5.85e-08, 9.96e-08))
    """
    if isinstance(layers, (str, bytes)) or not isinstance(layers, Sequence):
        raise CoatingError(f"coating {name!r}: layers must be a list of (index, thickness [m]) pairs")
    return Coating(spec=tuple(layers), name=name, kind="stack")


def _quarter_thickness(n_layer: float, design_wavelength: float, n_ambient: float, design_angle: float) -> float:
    """Physical thickness of optical thickness λ0/4 at the design angle ([1] ch. 2, tilted admittances)."""
    beta = n_ambient * math.sin(design_angle)
    q2 = n_layer * n_layer - beta * beta
    if q2 <= 0:
        raise CoatingError(
            f"quarter-wave layer of index {n_layer:g} is beyond its critical angle at the design "
            f"angle {math.degrees(design_angle):g} deg from ambient index {n_ambient:g}"
        )
    return design_wavelength / (4.0 * math.sqrt(q2))


def _check_design(design_wavelength, design_angle):
    if not (isinstance(design_wavelength, (int, float)) and design_wavelength > 0):
        raise CoatingError(f"design_wavelength must be a positive number [m], got {design_wavelength!r}")
    if not (0 <= design_angle < math.pi / 2):
        raise CoatingError(f"design_angle must lie in [0, pi/2) rad, got {design_angle!r}")


def quarter_wave(*, material, design_wavelength: float, n_ambient=1.0, design_angle: float = 0.0,
                 name: str = "quarter-wave") -> Coating:
    """Single layer of optical thickness λ0/4 (at the design angle).

    Parameters
    ----------
    material : complex or index model
        Layer index.
    design_wavelength : float [m]
        Vacuum wavelength at which the layer is a quarter wave.
    n_ambient : complex or index model
        Medium the light comes from (only matters for ``design_angle``).
    design_angle : float [rad]
        Angle of incidence in the ambient medium for which the phase thickness
        ``k0 d n cos θ`` equals π/2.
    name : str
        Label.

    Notes
    -----
    ``d = λ0 / (4 sqrt(n^2 - n_ambient^2 sin^2 θ0))`` (quarter-wave layer, [1] ch. 3). On a
    substrate ``n_s`` at normal incidence ``R = ((n_s - n^2)/(n_s + n^2))^2`` ([1]).

    Examples
    --------
    >>> c = quarter_wave(material=1.38, design_wavelength=552e-9)
    >>> round(c.thicknesses[0] * 1e9, 3)
    100.0
    """
    _check_design(design_wavelength, design_angle)
    n = _design_real(material, design_wavelength, f"{name}: material")
    n0 = _design_real(n_ambient, design_wavelength, f"{name}: n_ambient")
    d = _quarter_thickness(n, design_wavelength, n0, design_angle)
    return Coating(spec=((material, d),), name=name, kind="quarter_wave", design_wavelength=design_wavelength)


def v_coat(*, high, low, substrate, design_wavelength: float, ambient=1.0, name: str = "V-coat") -> Coating:
    """Two-layer antireflection coating with zero reflectance at the design wavelength.

    Layers (substrate first): ``high`` then ``low``; normal incidence from ``ambient``.

    Parameters
    ----------
    high, low : complex or index model
        Indices of the layer on the substrate and of the outer layer.
    substrate, ambient : complex or index model
        Indices of the substrate and of the medium of incidence.
    design_wavelength : float [m]
        Wavelength of zero reflectance.
    name : str
        Label.

    Raises
    ------
    CoatingError
        When no real solution exists for these indices.

    Notes
    -----
    With phase thicknesses ``δH`` (next to the substrate), ``δL`` (outer) and real indices
    ``n0`` (ambient), ``nL``, ``nH``, ``ns``, zero reflectance (admittance ``C/B = n0`` of the
    characteristic-matrix product, [1] ch. 3, two-layer coatings) requires::

        tan^2 δH = (ns - n0) nH^2 (nL^2 - n0 ns) / ((n0 ns - nH^2)(nL^2 ns - n0 nH^2))
        tan δL  = tan δH · nL (n0 ns - nH^2) / (nH (nL^2 - n0 ns))

    (derived here from the two characteristic matrices; the real and imaginary parts of
    ``C = n0 B``). Of the two solutions (signs of ``tan δH``) the thinner total is taken.

    Examples
    --------
    >>> c = v_coat(high=2.0, low=1.38, substrate=1.52, design_wavelength=550e-9)
    >>> [round(d * 1e9, 2) for d in c.thicknesses]
    [21.67, 124.64]
    """
    _check_design(design_wavelength, 0.0)
    nH = _design_real(high, design_wavelength, f"{name}: high")
    nL = _design_real(low, design_wavelength, f"{name}: low")
    ns = _design_real(substrate, design_wavelength, f"{name}: substrate")
    n0 = _design_real(ambient, design_wavelength, f"{name}: ambient")
    num = (ns - n0) * nH**2 * (nL**2 - n0 * ns)
    den = (n0 * ns - nH**2) * (nL**2 * ns - n0 * nH**2)
    with np.errstate(divide="ignore", invalid="ignore"):
        y2 = np.float64(num) / np.float64(den) if den != 0 else (np.inf if num != 0 else np.nan)
    if not (y2 >= 0):
        raise CoatingError(
            f"{name}: no real two-layer zero-reflectance solution for high={nH:g}, low={nL:g}, "
            f"substrate={ns:g}, ambient={n0:g} (tan^2 of the inner phase thickness would be {y2:.4g}); "
            "a V-coat needs the high index above the substrate's and the low index below it, "
            "roughly nL^2 > n0 ns and nH^2 > n0 ns"
        )
    best = None
    for sign in (1.0, -1.0):
        y = sign * math.sqrt(y2) if math.isfinite(y2) else sign * math.inf
        k_den = nH * (nL**2 - n0 * ns)
        if k_den == 0:
            x = math.inf
        else:
            x = y * nL * (n0 * ns - nH**2) / k_den
        dH = math.atan(y) % math.pi  # phase thickness in (0, π)
        dL = math.atan(x) % math.pi
        if best is None or dH + dL < best[0] + best[1]:
            best = (dH, dL)
    dH, dL = best
    tH = dH * design_wavelength / (2 * math.pi * nH)
    tL = dL * design_wavelength / (2 * math.pi * nL)
    return Coating(spec=((high, tH), (low, tL)), name=name, kind="v_coat", design_wavelength=design_wavelength)


def quarter_wave_mirror(*, high, low, pairs: int, design_wavelength: float, n_ambient=1.0,
                        design_angle: float = 0.0, name: str = "quarter-wave mirror") -> Coating:
    """Quarter-wave reflector ``(HL)^N H`` (2N + 1 layers, high index at both ends).

    Parameters
    ----------
    high, low : complex or index model
        Indices of the high and low layers.
    pairs : int
        Number N of HL pairs (>= 0).
    design_wavelength : float [m]
        Centre wavelength of the stop band.
    n_ambient : complex or index model
        Medium of incidence (for ``design_angle``).
    design_angle : float [rad]
        Angle of incidence in the ambient medium at which the layers are quarter waves.
    name : str
        Label.

    Notes
    -----
    At normal incidence and the design wavelength the stack on a substrate ``ns`` has
    admittance ``Y = (nH/nL)^{2N} nH^2 / ns`` and ``R = ((n0 - Y)/(n0 + Y))^2`` ([1],
    quarter-wave stacks).

    Examples
    --------
    >>> m = quarter_wave_mirror(high=2.35, low=1.38, pairs=3, design_wavelength=550e-9)
    >>> len(m)
    7
    """
    if not isinstance(pairs, (int, np.integer)) or pairs < 0:
        raise CoatingError(f"{name}: pairs must be an integer >= 0, got {pairs!r}")
    _check_design(design_wavelength, design_angle)
    nH = _design_real(high, design_wavelength, f"{name}: high")
    nL = _design_real(low, design_wavelength, f"{name}: low")
    n0 = _design_real(n_ambient, design_wavelength, f"{name}: n_ambient")
    dH = _quarter_thickness(nH, design_wavelength, n0, design_angle)
    dL = _quarter_thickness(nL, design_wavelength, n0, design_angle)
    spec = []
    for _ in range(int(pairs)):
        spec += [(high, dH), (low, dL)]
    spec.append((high, dH))
    return Coating(spec=tuple(spec), name=name, kind="mirror", design_wavelength=design_wavelength)


def ideal(reflectance: float, *, name: str = "ideal") -> IdealCoating:
    """Lossless abstract coating with reflectance ``reflectance`` [1] for s and p.

    Examples
    --------
    >>> ideal(0.5).reflectance
    0.5
    """
    return IdealCoating(reflectance=reflectance, name=name)
