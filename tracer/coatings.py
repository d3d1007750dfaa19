"""Coatings, and the response of a treated face or of a gap, as the engine needs them.

A :class:`Coating` is a thin-film stack listed **from the substrate (the solid) outwards**
to the surrounding medium; light arriving from outside meets the layers in reverse order.
Every index may be a number (complex ``n + iκ``) or an index model, i.e. any object with
``refractive_index(wavelength, *, extrapolate=False) -> complex ndarray``; models are
evaluated at the ray wavelengths by :meth:`Coating.layers`.

Constructors
------------
* :func:`stack` - explicit layers ``(index or model, thickness [m])``.
* :func:`quarter_wave` - one layer of optical thickness λ0/4 at a design wavelength (and
  optionally a design angle of incidence in the ambient medium).
* :func:`v_coat` - two-layer antireflection coating (high index on the substrate, low
  index outside) whose thicknesses give zero reflectance at the design wavelength at
  normal incidence.
* :func:`quarter_wave_mirror` - the all-quarter-wave reflector ``(HL)^N H``.
* :func:`ideal` - a lossless abstraction with the same reflectance ``R`` for s and p.

The engine calls :func:`face_response` (a treated face between a solid and its
surroundings) and :func:`gap_response` (two solids across a thin gap, coatings on either
face); both return :class:`tracer.fresnel.Coefficients` like :func:`tracer.films.stack`,
with the sign, phase and power conventions of :mod:`tracer.fresnel`.

Phases of the abstract treatments (ours)
----------------------------------------
* Perfect mirror (``mirror`` with no coating): ``rs = -1``, ``rp = +1``, ``R = 1``,
  ``T = 0`` - the limit of the Fresnel coefficients for a perfect conductor
  (``n2 -> i∞``); with a ``reflectance`` R given instead: ``rs = -sqrt(R)``,
  ``rp = +sqrt(R)``, ``T = 0``, ``A = 1 - R``.
* Ideal coating of reflectance R: ``rs = -sqrt(R)``, ``rp = +sqrt(R)`` (the mirror's phases,
  so ``rp = -rs`` at normal incidence as for a physical reflection), ``Rs = Rp = R``,
  ``Ts = Tp = 1 - R`` with real positive ``ts``, ``tp`` scaled so that the power factors of
  :func:`tracer.fresnel.power_factors` return ``1 - R``. Where the exit medium is beyond
  its critical angle no wave can leave, and the bare interface's total reflection
  (with its phases) is returned instead.
* Absorber: every coefficient 0, ``A = 1``.

References
----------
[1] H. A. Macleod, *Thin-Film Optical Filters*, 4th ed., CRC Press, 2010 (chapters 2-5:
    quarter-wave layers, two-layer antireflection coatings, quarter-wave stacks).
[2] M. Born and E. Wolf, *Principles of Optics*, 7th ed., Cambridge University Press,
    1999, section 1.6.

Examples
--------
>>> from tracer import coatings
>>> c = coatings.quarter_wave(material=1.38, design_wavelength=550e-9)
>>> r = coatings.face_response(c, n_inside=1.52, n_outside=1.0, wavelength=550e-9,
...                            cos_angle=1.0, from_inside=False)
>>> round(float(r.Rs), 4)
0.0126
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from . import films
from .fresnel import CoefficientError, Coefficients, power_factors

__all__ = [
    "CoatingError",
    "Coating",
    "IdealCoating",
    "stack",
    "quarter_wave",
    "v_coat",
    "quarter_wave_mirror",
    "ideal",
    "face_response",
    "gap_response",
    "evaluate_index",
]

_KINDS = ("uncoated", "stack", "ideal", "mirror", "absorber")


class CoatingError(CoefficientError):
    """Bad coating definition or treatment (a :class:`tracer.errors.TracerError`)."""


def _is_model(x) -> bool:
    return hasattr(x, "refractive_index")


def _describe(x) -> str:
    return getattr(x, "name", None) or repr(x)


def evaluate_index(index, wavelength, *, extrapolate: bool = False) -> np.ndarray:
    """Complex index of a number or an index model at ``wavelength``.

    Parameters
    ----------
    index : complex, array_like or index model
        A number ``n + iκ`` (or array broadcast with the rays), or an object with
        ``refractive_index(wavelength, *, extrapolate=False)``.
    wavelength : array_like float [m]
        Vacuum wavelength.
    extrapolate : bool
        Passed to the model (evaluate outside its valid range).

    Returns
    -------
    complex ndarray [1]
    """
    if _is_model(index):
        return np.asarray(index.refractive_index(wavelength, extrapolate=extrapolate), dtype=np.complex128)
    try:
        return np.asarray(index, dtype=np.complex128)
    except (TypeError, ValueError):
        raise CoatingError(
            f"an index must be a number or an index model with refractive_index(wavelength), got {index!r}"
        ) from None


def _check_index(index, where: str):
    if _is_model(index):
        return index
    try:
        a = np.asarray(index, dtype=np.complex128)
    except (TypeError, ValueError):
        raise CoatingError(
            f"{where}: index must be a number or an index model with refractive_index(wavelength), "
            f"got {index!r}"
        ) from None
    if not np.all(np.isfinite(a)) or np.any(a.imag < 0):
        raise CoatingError(f"{where}: index must be finite with imaginary part >= 0 (loss), got {index!r}")
    return index


def _design_real(index, wavelength, where: str) -> float:
    n = evaluate_index(index, wavelength)
    if n.ndim != 0:
        raise CoatingError(f"{where}: design needs a single index, got an array of shape {n.shape}")
    n = complex(n)
    if not n.real > 0:
        raise CoatingError(f"{where}: index must have a positive real part, got {n!r}")
    return n.real


@dataclass(frozen=True)
class Coating:
    """A thin-film stack, layers listed from the substrate outwards.

    Attributes
    ----------
    spec : tuple of (index or model, float)
        ``(index, thickness [m])`` per layer, substrate first.
    name : str
        Label for reports.
    kind : str
        How it was built (``stack``, ``quarter_wave``, ``v_coat``, ``mirror``).
    design_wavelength : float or None [m]
        Design wavelength of the constructors that have one.
    """

    spec: tuple
    name: str = "coating"
    kind: str = "stack"
    design_wavelength: float | None = None

    def __post_init__(self):
        spec = []
        for j, item in enumerate(self.spec):
            try:
                index, d = item
            except (TypeError, ValueError):
                raise CoatingError(
                    f"coating {self.name!r} layer {j}: expected (index or material, thickness [m]), got {item!r}"
                ) from None
            _check_index(index, f"coating {self.name!r} layer {j}")
            try:
                d = float(d)
            except (TypeError, ValueError):
                raise CoatingError(
                    f"coating {self.name!r} layer {j}: thickness must be a number [m], got {d!r}"
                ) from None
            if not (math.isfinite(d) and d >= 0):
                raise CoatingError(
                    f"coating {self.name!r} layer {j}: thickness must be finite and >= 0 [m], got {d!r}"
                )
            spec.append((index, d))
        object.__setattr__(self, "spec", tuple(spec))

    def __len__(self) -> int:
        return len(self.spec)

    @property
    def thicknesses(self) -> tuple[float, ...]:
        """Layer thicknesses [m], substrate first."""
        return tuple(d for _, d in self.spec)

    def layers(self, wavelength, *, extrapolate: bool = False) -> list[tuple[np.ndarray, float]]:
        """Layers ``(index array, thickness [m])`` at ``wavelength``, substrate first.

        Parameters
        ----------
        wavelength : array_like float [m]
            Vacuum wavelength(s); model indices are evaluated there (broadcast).
        extrapolate : bool
            Allow index models outside their valid range.
        """
        return [(evaluate_index(n, wavelength, extrapolate=extrapolate), d) for n, d in self.spec]


@dataclass(frozen=True)
class IdealCoating:
    """Lossless abstract coating: reflectance ``reflectance`` for s and p (phases in the
    module docstring)."""

    reflectance: float
    name: str = "ideal"

    def __post_init__(self):
        r = float(self.reflectance)
        if not 0.0 <= r <= 1.0:
            raise CoatingError(f"ideal coating {self.name!r}: reflectance must lie in [0, 1], got {self.reflectance!r}")
        object.__setattr__(self, "reflectance", r)


# ----------------------------------------------------------------------- constructors

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


# ----------------------------------------------------------------------- responses

def _normalise_treatment(treatment):
    """-> (kind, coating, reflectance)."""
    if treatment is None:
        return "uncoated", None, None
    if isinstance(treatment, str):
        if treatment not in _KINDS:
            raise CoatingError(f"unknown face treatment {treatment!r}; expected one of {', '.join(_KINDS)}")
        return treatment, None, None
    if isinstance(treatment, Coating):
        return "stack", treatment, None
    if isinstance(treatment, IdealCoating):
        return "ideal", None, treatment.reflectance
    kind = getattr(treatment, "kind", None)
    if kind in _KINDS:
        coating = getattr(treatment, "coating", None)
        refl = getattr(treatment, "reflectance", None)
        if isinstance(coating, IdealCoating):
            return "ideal", None, coating.reflectance
        if coating is not None and not isinstance(coating, Coating):
            if hasattr(coating, "layers"):
                return kind, coating, refl
            raise CoatingError(f"face treatment {kind!r}: coating must be a tracer.coatings.Coating, got {coating!r}")
        return kind, coating, refl
    raise CoatingError(
        f"face treatment must be None, a kind ({', '.join(_KINDS)}), a Coating, an IdealCoating "
        f"or a FaceTreatment, got {treatment!r}"
    )


def _shape_of(*arrays):
    return np.broadcast_shapes(*(np.shape(a) for a in arrays))


def _constant(shape, rs, rp, ts, tp, Rs, Rp, Ts, Tp, bare):
    def full(v, dtype):
        return np.full(shape, v, dtype=dtype)

    Rs_, Rp_, Ts_, Tp_ = (full(v, float) for v in (Rs, Rp, Ts, Tp))
    return Coefficients(
        rs=full(rs, complex), rp=full(rp, complex), ts=full(ts, complex), tp=full(tp, complex),
        Rs=Rs_, Rp=Rp_, Ts=Ts_, Tp=Tp_, As=1.0 - Rs_ - Ts_, Ap=1.0 - Rp_ - Tp_,
        ncos_in=bare.ncos_in, ncos_out=bare.ncos_out, n_in=bare.n_in, n_out=bare.n_out,
    )


def face_response(treatment, *, n_inside, n_outside, wavelength, cos_angle, from_inside,
                  extrapolate: bool = False) -> Coefficients:
    """Coefficients of a treated face for rays arriving from inside or outside the solid.

    Parameters
    ----------
    treatment : None, str, Coating, IdealCoating or FaceTreatment
        ``None``/``"uncoated"``: bare interface; a :class:`Coating` or kind ``"stack"``: the
        thin-film stack; :class:`IdealCoating` or kind ``"ideal"`` (with ``reflectance``);
        ``"mirror"`` (perfect, or the ``coating`` stack, or the given ``reflectance``);
        ``"absorber"``. A :class:`tracer.scene.model.FaceTreatment` is read through its
        ``kind``, ``coating`` and ``reflectance``.
    n_inside : complex, array_like or index model
        Index of the solid (the coating's substrate).
    n_outside : complex, array_like or index model
        Index of the surrounding medium.
    wavelength : array_like float [m]
        Vacuum wavelength per ray.
    cos_angle : array_like float [1]
        Cosine of the angle of incidence in the medium the ray comes from.
    from_inside : bool or array_like bool
        ``True``: the ray arrives from inside the solid (it meets the layers substrate
        first); ``False``: from outside (layers reversed). An array chooses per ray.
    extrapolate : bool
        Allow index models outside their valid range.

    Returns
    -------
    tracer.fresnel.Coefficients
        ``t`` refers to the medium on the other side; conventions of :mod:`tracer.fresnel`.
    """
    kind, coating, refl = _normalise_treatment(treatment)
    inside = np.asarray(from_inside, dtype=bool)
    if inside.ndim > 0 and not (inside.all() or not inside.any()):
        # Mixed directions: solve both and pick per ray.
        kw = dict(n_inside=n_inside, n_outside=n_outside, wavelength=wavelength, cos_angle=cos_angle,
                  extrapolate=extrapolate)
        a = face_response(treatment, from_inside=True, **kw)
        b = face_response(treatment, from_inside=False, **kw)
        shape = np.broadcast_shapes(np.shape(a.rs), inside.shape)
        sel = np.broadcast_to(inside, shape)
        fields = {name: np.where(sel, getattr(a, name), getattr(b, name)) for name in Coefficients.__slots__}
        return Coefficients(**fields)
    inside = bool(inside.all()) if inside.ndim > 0 else bool(inside)
    n_s = evaluate_index(n_inside, wavelength, extrapolate=extrapolate)
    n_o = evaluate_index(n_outside, wavelength, extrapolate=extrapolate)
    n_in, n_out = (n_s, n_o) if inside else (n_o, n_s)

    if kind == "stack" or (kind == "mirror" and coating is not None):
        if coating is None:
            raise CoatingError("face treatment 'stack' needs a coating")
        layers = coating.layers(wavelength, extrapolate=extrapolate)
        if not inside:
            layers = layers[::-1]
        return films.stack(n_in=n_in, layers=layers, n_out=n_out, wavelength=wavelength, cos_angle=cos_angle)

    bare = films.stack(n_in=n_in, layers=[], n_out=n_out, wavelength=wavelength, cos_angle=cos_angle)
    shape = bare.rs.shape
    if kind == "uncoated":
        return bare
    if kind == "absorber":
        return _constant(shape, 0, 0, 0, 0, 0.0, 0.0, 0.0, 0.0, bare)
    if kind == "mirror":
        R = 1.0 if refl is None else float(refl)
        if not 0 <= R <= 1:
            raise CoatingError(f"mirror reflectance must lie in [0, 1], got {refl!r}")
        a = math.sqrt(R)
        return _constant(shape, -a, a, 0, 0, R, R, 0.0, 0.0, bare)
    # ideal
    if refl is None:
        raise CoatingError("face treatment 'ideal' needs a reflectance in [0, 1]")
    R = float(refl)
    if not 0 <= R <= 1:
        raise CoatingError(f"ideal coating reflectance must lie in [0, 1], got {refl!r}")
    fs, fp = power_factors(n_in=bare.n_in, ncos_in=bare.ncos_in, n_out=bare.n_out, ncos_out=bare.ncos_out)
    ok_s = fs > 0
    ok_p = fp > 0
    a = math.sqrt(R)
    T = 1.0 - R
    with np.errstate(divide="ignore", invalid="ignore"):
        ts = np.where(ok_s, np.sqrt(T / np.where(ok_s, fs, 1.0)), bare.ts)
        tp = np.where(ok_p, np.sqrt(T / np.where(ok_p, fp, 1.0)), bare.tp)
    Rs = np.where(ok_s, R, bare.Rs)
    Rp = np.where(ok_p, R, bare.Rp)
    Ts = np.where(ok_s, T, bare.Ts)
    Tp = np.where(ok_p, T, bare.Tp)
    return Coefficients(
        rs=np.where(ok_s, -a + 0j, bare.rs), rp=np.where(ok_p, a + 0j, bare.rp),
        ts=ts.astype(complex), tp=tp.astype(complex), Rs=Rs, Rp=Rp, Ts=Ts, Tp=Tp,
        As=1.0 - Rs - Ts, Ap=1.0 - Rp - Tp,
        ncos_in=bare.ncos_in, ncos_out=bare.ncos_out, n_in=bare.n_in, n_out=bare.n_out,
    )


def _gap_coating_layers(coating, wavelength, extrapolate, which):
    kind, c, refl = _normalise_treatment(coating)
    if kind == "uncoated":
        return []
    if kind in ("stack", "mirror") and c is not None:
        return c.layers(wavelength, extrapolate=extrapolate)
    raise CoatingError(
        f"gap face {which}: only uncoated faces or thin-film stacks can face a gap, got treatment {kind!r}"
        + (" without a coating" if kind in ("stack", "mirror") else "")
    )


def gap_response(*, n_a, coating_a, medium_n, thickness, coating_b, n_b, wavelength, cos_angle,
                 coherence_length=np.inf, coherence: str = "auto", extrapolate: bool = False) -> Coefficients:
    """Coefficients of solid A | A's coating | gap | B's coating reversed | solid B.

    Parameters
    ----------
    n_a, n_b : complex, array_like or index model
        Indices of the two solids (light comes from A).
    coating_a, coating_b : None, Coating or FaceTreatment
        Coatings on A's and B's faces, each listed from its own substrate outwards (B's is
        reversed here, as light meets it from outside).
    medium_n : complex, array_like or index model
        Index of the gap medium.
    thickness : array_like float [m]
        Local gap thickness per ray (>= 0).
    wavelength : array_like float [m]
        Vacuum wavelength per ray.
    cos_angle : array_like float [1]
        Cosine of the angle of incidence inside A.
    coherence_length : array_like float [m]
        Coherence length of the light (``λ^2/Δλ``; inf for monochromatic light).
    coherence : "auto", "coherent" or "incoherent"
        ``auto``: the gap layer is coherent where the gap medium is beyond its critical
        angle (evanescent field: always coherent) or where ``thickness`` is below the
        coherence length, incoherent elsewhere (per ray). ``incoherent``: incoherent
        where the field propagates in the gap, coherent where it is evanescent (per
        ray): beyond the critical angle the field in the gap does not propagate, so
        there is no phase to lose and the coherent formula (frustrated TIR) is right
        whatever the source bandwidth. ``coherent``: coherent everywhere. Coating
        layers are always coherent.
    extrapolate : bool
        Allow index models outside their valid range.

    Returns
    -------
    tracer.fresnel.Coefficients
        Transmission into B, reflection back into A.

    Examples
    --------
    >>> import numpy as np
    >>> r = gap_response(n_a=1.5168, coating_a=None, medium_n=1.0, thickness=0.3e-6,
    ...                  coating_b=None, n_b=1.5168, wavelength=550e-9,
    ...                  cos_angle=np.cos(np.radians(45)))
    >>> bool(0 < r.Ts < r.Tp < 1)
    True
    """
    if coherence not in ("auto", "coherent", "incoherent"):
        raise CoatingError(f"gap coherence must be 'auto', 'coherent' or 'incoherent', got {coherence!r}")
    na = evaluate_index(n_a, wavelength, extrapolate=extrapolate)
    nb = evaluate_index(n_b, wavelength, extrapolate=extrapolate)
    ng = evaluate_index(medium_n, wavelength, extrapolate=extrapolate)
    la = _gap_coating_layers(coating_a, wavelength, extrapolate, "A")
    lb = _gap_coating_layers(coating_b, wavelength, extrapolate, "B")[::-1]
    d = np.asarray(thickness, dtype=float)
    layers = la + [(ng, d)] + lb
    if coherence == "coherent":
        flag = True
    else:
        c = np.asarray(cos_angle, dtype=float)
        # (n cos θ)^2 in the gap for the invariant Re(n_a) sin θ (tracer.fresnel)
        nr = na.real
        q2_gap = (ng * ng - nr * nr) + (nr * c) ** 2
        evanescent = q2_gap.real < 0  # beyond the gap medium's critical angle
        if coherence == "incoherent":
            flag = evanescent
        else:
            flag = evanescent | (d < np.asarray(coherence_length, dtype=float))
        if np.ndim(flag) == 0:
            flag = bool(flag)
        elif flag.all():
            flag = True
        elif not flag.any():
            flag = False
    flags = [True] * len(la) + [flag] + [True] * len(lb)
    return films.stack(n_in=na, layers=layers, n_out=nb, wavelength=wavelength, cos_angle=cos_angle,
                       coherent=flags)
