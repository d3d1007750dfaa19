"""The response of a treated face, or of two solids across a thin gap, as the engine
needs it: :class:`tracer.fresnel.Coefficients` like :func:`tracer.films.stack`'s, with the
conventions of :mod:`tracer.fresnel` and the phases of the abstract treatments given in
:mod:`tracer.coatings`.
"""

from __future__ import annotations

import math

import numpy as np

from .. import films
from ..fresnel import Coefficients, power_factors
from .model import Coating, CoatingError, IdealCoating, evaluate_index

__all__ = ["face_response", "gap_response"]

_KINDS = ("uncoated", "stack", "ideal", "mirror", "absorber")


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
    # the flags carry this function's rule; coherence_length=0 lets films.stack add only its
    # own guard (an absorbing gap medium thinner than a wavelength stays coherent)
    return films.stack(n_in=na, layers=layers, n_out=nb, wavelength=wavelength, cos_angle=cos_angle,
                       coherent=flags, coherence_length=0.0)
