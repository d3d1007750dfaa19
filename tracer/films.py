"""Layered stacks: characteristic-matrix solver, coherent and incoherent.

A stack is a semi-infinite medium of incidence ``n_in``, any number of planar layers
``(n_j, d_j)`` and a semi-infinite exit medium ``n_out``. Light travels through the layers
in the order they are listed. The tangential wave vector is the invariant
``β = n_in sin θ_in``; in each medium ``q = n cos θ = sqrt(n^2 - β^2)`` is taken on the
forward-wave branch of :mod:`tracer.fresnel` (decaying field beyond the critical angle or
in an absorbing medium), and all sign and power conventions are those of
:mod:`tracer.fresnel`: with no layers :func:`stack` equals
:func:`tracer.fresnel.coefficients`. For an absorbing medium of incidence the invariant
is real, ``β = Re(n_in) sin θ`` with ``θ`` the given (real) angle, and ``q_in`` is the
forward root of ``n_in^2 - β^2`` (the complex angle of :mod:`tracer.fresnel`, section
"Absorbing medium of incidence"); ``A = 1 - R - T`` then also holds the interference of
the incident and reflected waves in that medium.

Method (coherent)
-----------------
For s the transverse field pair is ``(E_y, H_x)``, for p it is ``(H_y, E_x)``; in a layer of
phase thickness ``δ = k0 d q`` (``k0 = 2π/λ``) the pair at the front follows from the pair at
the back through the characteristic matrix ([1] section 1.6.2, [2] chapter 2; derived
again here for our ``exp(-iωt)`` convention)::

    M = [[cos δ, -i sin δ / g], [-i g sin δ, cos δ]],   g = q (s),  g = q / n^2 (p).

For an evanescent or lossy layer ``cos δ`` and ``sin δ`` grow as ``exp(Im δ)``; we multiply
each matrix by ``exp(iδ)`` (modulus <= 1), which turns its entries into the bounded
``(1 + e^{2iδ}) / 2`` and ``k0 d · expm1(2iδ) / (2iδ)`` (times ``1`` or ``g^2``, with the
``1/g`` of ``sin δ / g`` cancelled analytically). The product of the factors,
``exp(i Σ δ)``, multiplies the transmitted amplitude only. So a layer thousands of decay
lengths thick gives ``t -> 0`` without overflow, a layer at exactly its critical angle
(``q = 0``) takes the analytic limit ``sin δ / q -> k0 d``, and a zero-thickness layer is
exactly the identity. With ``[B, C] = M_1 ... M_L [1, g_out]``::

    r = (g_in B - C) / (g_in B + C),   t_g = 2 g_in / (g_in B + C)

and ``t = t_g`` for s, ``t = t_g n_in / n_out`` for p (the p solution is carried by the
magnetic field, ``H = n E`` in our units). Power coefficients use the factors of
:func:`tracer.fresnel.power_factors` (those of [3]); absorptance ``A = 1 - R - T``.

Method (incoherent)
-------------------
A layer flagged incoherent (thicker than the coherence length) loses its phase: the layers
are grouped into coherent sub-stacks separated by the incoherent layers, each sub-stack is
solved coherently in both directions (powers ``R, T`` forward and ``R', T'`` backward), and
the multiple reflections inside each incoherent layer are summed in power with the single
pass transmission ``P = |exp(iδ)|^2``, from the back of the stack towards the front::

    T_tot <- T P T_tot / (1 - R' P^2 R_tot)
    R_tot <- R + T T' P^2 R_tot / (1 - R' P^2 R_tot)

(for one layer with bare faces ``T = T1 T2 / (1 - R1 R2)``; the same sum as the power
transfer matrices of section 6 of [3]).

Coherence rule
--------------
The power sum is the average of the coherent result over the layer's round-trip phase.
That average describes real light only when the phase really spreads over many cycles
across the band while the interface coefficients and the single-pass attenuation stay
fixed: the layer must be optically thick compared with the coherence length. For a
lossless layer the sum is a convex average and stays physical at any thickness; for a
thin absorbing layer it is not a physical state at all (a 10 nm metal film summed in
power gives R > 1 and A < 0, the same numbers as ``tmm.inc_tmm`` with that layer flagged
``'i'``: the interface coefficients seen from inside an absorbing layer only make sense
together with its phase). So a layer flagged incoherent is solved incoherently only
where its round-trip optical path ``2 Re(n cos θ) d`` exceeds the coherence length
``coherence_length`` (default ``λ``, the shortest coherence length light can have,
``Δλ = λ``), and, for an absorbing layer, also exceeds ``λ`` whatever the coherence length
given; elsewhere it stays coherent inside the incoherent stack, as in the usual
incoherent treatment (section 6 of [3]: thin layers coherent, thick substrates
incoherent). This also keeps an evanescent layer (``Re(n cos θ) = 0``: no phase to lose,
frustrated TIR) and a zero-thickness layer coherent. A thick absorbing layer solved incoherently has
``P -> 0`` (no overflow: ``P`` is a decaying exponential) and a thick absorbing layer kept
coherent the bounded matrices above, so ``T -> 0`` without NaN either way. With this
rule ``0 <= R, T, A <= 1`` for any passive stack (``tests/test_films.py``, property
tests).

Amplitudes in incoherent mode are not defined physically. We return
``r = sqrt(R) · exp(i arg r_1)`` with ``r_1`` the coherent reflection of the first sub-stack
(the first-surface reflection), and ``t = sqrt(T / f) · exp(i arg t_1)`` with ``f`` the power
factor of the whole stack (so that ``|t|^2 f = T`` and
:func:`tracer.fresnel.amplitude_factor` works as for coherent stacks) and ``t_1`` the
single-pass coherent term (product of the sub-stack transmissions and the layer phases
``exp(iδ)``); ``t = 0`` where ``f = 0``.

Arrays: every index, thickness, wavelength and angle broadcasts with the others (N rays,
each with its own angle, wavelength, even its own layer index or thickness). The loop runs
over layers, never over rays.

References
----------
[1] M. Born and E. Wolf, *Principles of Optics*, 7th ed., Cambridge University Press,
    1999, section 1.6.
[2] H. A. Macleod, *Thin-Film Optical Filters*, 4th ed., CRC Press, 2010, chapter 2.
[3] S. J. Byrnes, "Multilayer optical calculations", arXiv:1603.02720, 2016 (the ``tmm``
    package).

Examples
--------
>>> import numpy as np
>>> from tracer import films
>>> # quarter-wave MgF2 on glass at its design wavelength: R = ((1.52 - 1.38^2)/(1.52 + 1.38^2))^2
>>> s = films.stack(n_in=1.0, layers=[(1.38, 550e-9 / (4 * 1.38))], n_out=1.52,
...                 wavelength=550e-9, angle=0.0)
>>> round(float(s.Rs), 5)
0.01259
>>> # frustrated TIR: 45 deg in glass across a 0.3 um air gap
>>> s = films.stack(n_in=1.5168, layers=[(1.0, 0.3e-6)], n_out=1.5168,
...                 wavelength=550e-9, angle=np.radians(45))
>>> bool(0 < s.Ts < 1 and abs(s.Rs + s.Ts - 1) < 1e-12)
True
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np

from .fresnel import (
    CoefficientError,
    Coefficients,
    _as_index,
    _forward_root,
    cosine_of,
    power_factors,
)

__all__ = ["stack", "Coefficients"]


def _abs2(z: np.ndarray) -> np.ndarray:
    return z.real * z.real + z.imag * z.imag


#: Below this |2iδ| the factor expm1(2iδ)/(2iδ) comes from its Taylor series, above it
#: from exp(2iδ) - 1 (relative round-off <= eps/0.25 there).
_SERIES_RADIUS = 0.25
#: 1/(k+1)! for k = 15 .. 0: Horner coefficients of expm1(x)/x = sum x^k/(k+1)!, truncation
#: error below 0.25^16/17! ~ 1e-24 inside the series radius.
_PHI_COEFFS = tuple(1.0 / math.factorial(k + 1) for k in range(15, -1, -1))


def _phi_series(x):
    """``expm1(x) / x`` by its Taylor series (|x| <= _SERIES_RADIUS)."""
    acc = np.full_like(x, _PHI_COEFFS[0])
    for c in _PHI_COEFFS[1:]:
        acc *= x
        acc += c
    return acc


def _layer_matrix_terms(q, d, k0):
    """Bounded terms of ``exp(iδ) M`` for a layer: ``h``, ``-i F`` and ``exp(iδ)``.

    ``h = (1 + e^{2iδ}) / 2`` and ``F = exp(iδ) sin δ / q = k0 d expm1(2iδ) / (2iδ)``
    (limit ``k0 d`` at ``δ = 0``: zero thickness or exactly critical, ``q = 0``).
    ``|exp(iδ)| <= 1`` on the forward branch.
    """
    kd = k0 * d
    x = q * (2j * kd)  # 2 i δ, Re(x) <= 0 on the forward branch
    half = x * 0.5
    p = np.exp(half, out=half)  # exp(iδ)
    em1 = p * p
    em1 -= 1.0  # exp(2iδ) - 1
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        F = em1 / x
    small = _abs2(x) < _SERIES_RADIUS**2
    if small.any():
        xs = x[small]
        phi = _phi_series(xs)
        F[small] = phi
        em1[small] = xs * phi
    h = em1
    h *= 0.5
    h += 1.0  # (1 + e^{2iδ}) / 2
    F *= -1j * kd  # -i k0 d expm1(x)/x
    return h, F, p


def _coherent(n_in, q_in, n_out, q_out, layers, k0):
    """Coherent amplitudes ``rs, ts, rp, tp`` of a stack (module docstring, coherent).

    ``layers`` is a list of ``(n, n2, q, d)`` with ``n2 = n^2`` of each layer, in the order
    light meets them. ``q_in``, ``q_out`` and every layer's ``q`` are arrays of the full
    ray shape (at least 1-d), so the in-place updates below are safe; for 10^6 rays the
    cost is memory traffic, not arithmetic.
    """
    # Start at the exit medium: [B, C] = [1, g_out], g = q (s) and q / n^2 (p).
    Bs = Bp = None
    Cs = q_out
    Cp = q_out * (1.0 / (n_out * n_out))
    P = None  # product of exp(iδ) over the layers
    for _, n2, q, d in reversed(layers):
        h, mF, p = _layer_matrix_terms(q, d, k0)
        if P is None:
            P = p  # owned: p is not used after this loop
        else:
            P *= p
        mFq2 = q * q
        mFq2 *= mF  # -i F q^2
        # s: B' = h B - iF C ; C' = -i q^2 F B + h C   (p: F -> F n^2, F q^2 -> F q^2 / n^2)
        if Bs is None:  # B = 1
            Bs = mF * Cs
            Bs += h
            Cs = h * Cs
            Cs += mFq2
            Bp = Cp * n2
            Bp *= mF
            Bp += h
            Cp = h * Cp
            Cp += mFq2 / n2
        else:
            t = mF * Cs
            Bs_new = h * Bs
            Bs_new += t
            Cs *= h
            Bs *= mFq2
            Cs += Bs
            Bs = Bs_new
            t = Cp * n2
            t *= mF
            Bp_new = h * Bp
            Bp_new += t
            Cp *= h
            Bp *= mFq2
            Bp /= n2
            Cp += Bp
            Bp = Bp_new
    g_in_p = q_in * (1.0 / (n_in * n_in))
    if Bs is None:  # bare interface
        num_s, den_s = q_in - Cs, q_in + Cs
        num_p, den_p = g_in_p - Cp, g_in_p + Cp
    else:
        a = q_in * Bs
        num_s, den_s = a - Cs, a
        den_s += Cs
        a = g_in_p * Bp
        num_p, den_p = a - Cp, a
        den_p += Cp
    degenerate = (den_s == 0) | (den_p == 0)
    any_deg = bool(np.any(degenerate))
    if any_deg:  # grazing incidence on an invisible stack (0/0): r = 0, t = 1
        den_s = np.where(degenerate, 1.0, den_s)
        den_p = np.where(degenerate, 1.0, den_p)
    inv_s = np.reciprocal(den_s, out=den_s)
    inv_p = np.reciprocal(den_p, out=den_p)
    rs = num_s * inv_s
    rp = num_p * inv_p
    ts = (2 * q_in) * inv_s
    tp = (2 * g_in_p * (n_in / n_out)) * inv_p
    if P is not None:
        ts *= P
        tp *= P
    if any_deg:
        rs = np.where(degenerate, 0, rs)
        rp = np.where(degenerate, 0, rp)
        ts = np.where(degenerate, 1, ts)
        tp = np.where(degenerate, 1, tp)
    return rs, ts, rp, tp, any_deg and degenerate


def _coherent_powers(n_in, q_in, n_out, q_out, layers, k0):
    rs, ts, rp, tp, degenerate = _coherent(n_in, q_in, n_out, q_out, layers, k0)
    fs, fp = power_factors(n_in=n_in, ncos_in=q_in, n_out=n_out, ncos_out=q_out)
    Ts = fs * _abs2(ts)
    Tp = fp * _abs2(tp)
    if degenerate is not False:
        Ts = np.where(degenerate, 1.0, Ts)
        Tp = np.where(degenerate, 1.0, Tp)
    return rs, ts, rp, tp, _abs2(rs), Ts, _abs2(rp), Tp


def _incoherent(n_in, q_in, n_out, q_out, layers, k0, flags):
    """Partly incoherent stack (module docstring, incoherent). ``flags[j]`` True = coherent."""
    # Media bounding the coherent groups: ambient, each incoherent layer, exit.
    media = [(n_in, q_in, None)]
    groups = [[]]
    for layer, coh in zip(layers, flags):
        if coh:
            groups[-1].append(layer)
        else:
            n, _, q, d = layer
            media.append((n, q, d))
            groups.append([])
    media.append((n_out, q_out, None))

    G = len(groups)
    fwd = []
    bwd = []
    for g in range(G):
        na, qa, _ = media[g]
        nb, qb, _ = media[g + 1]
        fwd.append(_coherent_powers(na, qa, nb, qb, groups[g], k0))
        if g < G - 1:
            rev = groups[g][::-1]
            bwd.append(_coherent_powers(nb, qb, na, qa, rev, k0))
    out = []
    for pol in (0, 1):  # s, p
        iR, iT = (4, 5) if pol == 0 else (6, 7)
        R_tot = fwd[G - 1][iR]
        T_tot = fwd[G - 1][iT]
        for g in range(G - 2, -1, -1):
            _, q_l, d_l = media[g + 1]
            P = np.exp(-2.0 * k0 * d_l * q_l.imag)  # single-pass power |exp(iδ)|^2
            Rg, Tg = fwd[g][iR], fwd[g][iT]
            Rb, Tb = bwd[g][iR], bwd[g][iT]
            PR = (P * P) * R_tot
            with np.errstate(divide="ignore", invalid="ignore"):
                den = 1.0 - Rb * PR
                den = np.where(den > 0, den, 1.0)
                T_new = Tg * P * T_tot / den
                R_new = Rg + Tg * Tb * PR / den
            R_tot, T_tot = R_new, T_new
        out.append((R_tot, T_tot))
    (Rs, Ts), (Rp, Tp) = out
    # Amplitudes: sqrt of power, phase of the first-pass coherent terms.
    r1s, r1p = fwd[0][0], fwd[0][2]
    t1s = fwd[0][1]
    t1p = fwd[0][3]
    for g in range(1, G):
        _, q_l, d_l = media[g]
        ph = np.exp(1j * k0 * d_l * q_l)
        t1s = t1s * ph * fwd[g][1]
        t1p = t1p * ph * fwd[g][3]
    fs, fp = power_factors(n_in=n_in, ncos_in=q_in, n_out=n_out, ncos_out=q_out)
    rs = np.sqrt(Rs) * np.exp(1j * np.angle(r1s))
    rp = np.sqrt(Rp) * np.exp(1j * np.angle(r1p))
    with np.errstate(divide="ignore", invalid="ignore"):
        ts = np.where(fs > 0, np.sqrt(Ts / np.where(fs > 0, fs, 1.0)), 0.0) * np.exp(1j * np.angle(t1s))
        tp = np.where(fp > 0, np.sqrt(Tp / np.where(fp > 0, fp, 1.0)), 0.0) * np.exp(1j * np.angle(t1p))
    return rs, ts, rp, tp, Rs, Ts, Rp, Tp


def _index(n, wavelength):
    """A number/array as complex, or an index model evaluated at ``wavelength``."""
    if hasattr(n, "refractive_index"):
        return _as_index(n.refractive_index(wavelength))
    return _as_index(n)


def _parse_layers(layers, wavelength):
    if layers is None:
        return []
    if isinstance(layers, (str, bytes)) or not isinstance(layers, (Sequence, np.ndarray)):
        raise CoefficientError(
            "layers must be a list of (index, thickness [m]) pairs, "
            f"got {type(layers).__name__}"
        )
    out = []
    for j, item in enumerate(layers):
        try:
            n, d = item
        except (TypeError, ValueError):
            raise CoefficientError(
                f"layers[{j}] must be a pair (index, thickness [m]), got {item!r}"
            ) from None
        n = _index(n, wavelength)
        d = np.asarray(d, dtype=float)
        if np.any(d < 0) or np.any(np.isinf(d)):
            raise CoefficientError(
                f"layers[{j}]: thickness must be finite and >= 0 [m], got {d!r}"
            )
        out.append((n, d))
    return out


def _parse_flags(coherent, count):
    if isinstance(coherent, (bool, np.bool_)):
        return [bool(coherent)] * count
    try:
        flags = list(coherent)
    except TypeError:
        raise CoefficientError(
            "coherent must be True, False or one flag per layer"
        ) from None
    if len(flags) != count:
        raise CoefficientError(
            f"coherent has {len(flags)} flags but the stack has {count} layers"
        )
    out = []
    for f in flags:
        a = np.asarray(f, dtype=bool)
        out.append(bool(a) if a.ndim == 0 else a)
    return out


def _effective_flags(flags, ldata, wl, coherence_length):
    """Per layer: True where it is solved coherently (module docstring, "Coherence rule").

    A layer flagged incoherent is solved incoherently only where its round-trip optical
    path ``2 Re(n cos θ) d`` exceeds the coherence length ``L`` (default ``λ``), and for an
    absorbing layer also ``λ``.
    """
    if all(f is True for f in flags):
        return flags
    if coherence_length is None:
        L = wl
    else:
        L = np.asarray(coherence_length, dtype=float)
        if np.any(np.isnan(L)) or np.any(L < 0):
            raise CoefficientError(
                "coherence_length must be >= 0 [m] (inf for monochromatic light), "
                f"got {coherence_length!r}"
            )
    out = []
    for f, (_, n2, q, d) in zip(flags, ldata):
        if f is True:
            out.append(True)
            continue
        limit = np.where(n2.imag > 0, np.maximum(L, wl), L)  # absorbing: at least λ
        with np.errstate(invalid="ignore"):
            thick = (2.0 * q.real) * d > limit
        eff = np.logical_or(f, ~thick)
        if eff.all():
            out.append(True)
        elif not eff.any():
            out.append(False)
        else:
            out.append(eff)
    return out


def stack(*, n_in, layers, n_out, wavelength, angle=None, cos_angle=None, coherent=True,
          coherence_length=None) -> Coefficients:
    """Amplitude and power coefficients of a layered stack for s and p.

    Parameters
    ----------
    n_in : array_like complex [1] or index model
        Index of the semi-infinite medium of incidence.
    layers : sequence of (index, thickness) pairs
        Layers in the order light meets them; ``index`` array_like complex [1] (or an
        index model, evaluated at ``wavelength``) and ``thickness`` array_like float [m]
        (>= 0), each broadcast with the rays.
    n_out : array_like complex [1] or index model
        Index of the semi-infinite exit medium.
    wavelength : array_like float [m]
        Vacuum wavelength.
    angle : array_like float [rad], optional
        Angle of incidence inside ``n_in``, in ``[0, π/2]`` (for an absorbing ``n_in``: the
        real angle fixing the invariant ``Re(n_in) sin θ``, see :mod:`tracer.fresnel`).
    cos_angle : array_like float [1], optional
        Its cosine, instead of ``angle``.
    coherent : bool or sequence of bool (or bool arrays over the rays), default True
        ``True``: every layer coherent. ``False``: every layer may be incoherent (phase
        discarded, multiple reflections summed in power) where it is thicker than the
        coherence length (rule below). A sequence gives one flag per layer; a flag may
        itself be an array broadcast with the rays (each ray is solved with its own
        pattern).
    coherence_length : array_like float [m], optional
        Coherence length of the light (``λ^2/Δλ``, inf for monochromatic light),
        broadcast with the rays. A layer flagged incoherent is solved incoherently only
        where its round-trip optical path ``2 Re(n cos θ) d`` exceeds the coherence
        length, and for an absorbing layer also ``λ``; elsewhere it stays coherent
        (module docstring, "Coherence rule"). Default ``λ``, the shortest coherence
        length light can have; ``0`` sums every propagating lossless layer in power.

    Returns
    -------
    tracer.fresnel.Coefficients
        ``rs, rp, ts, tp, Rs, Rp, Ts, Tp, As, Ap`` and ``ncos_in, ncos_out, n_in, n_out``,
        broadcast to the common shape of all inputs. Amplitudes of incoherent stacks as
        documented in the module docstring.

    Raises
    ------
    tracer.fresnel.CoefficientError
        Malformed layers, negative or infinite thickness, bad angle, non-positive
        wavelength, mismatched coherence flags, negative coherence length.
    """
    c_in = cosine_of(angle=angle, cos_angle=cos_angle)
    wl = np.asarray(wavelength, dtype=float)
    if np.any(~(wl > 0)):
        raise CoefficientError(f"wavelength must be > 0 [m], got {wavelength!r}")
    n_in = _index(n_in, wl)
    n_out = _index(n_out, wl)
    lay = _parse_layers(layers, wl)
    flags = _parse_flags(coherent, len(lay))

    shapes = [c_in.shape, wl.shape, n_in.shape, n_out.shape]
    for n, d in lay:
        shapes += [n.shape, d.shape]
    for f in flags:
        if not isinstance(f, bool):
            shapes.append(f.shape)
    try:
        shape = np.broadcast_shapes(*shapes)
    except ValueError:
        raise CoefficientError(
            f"stack inputs do not broadcast together: shapes {shapes}"
        ) from None

    k0 = (2 * np.pi) / wl
    work = shape if shape else (1,)  # internal arrays: full ray shape, at least 1-d
    c_w = np.broadcast_to(c_in, work)
    lossy_in = n_in.imag != 0
    if not np.any(lossy_in):
        q_in = n_in * c_w
        # (n cos θ)^2 = (n^2 - n_in^2) + q_in^2: invariant n_in sin θ_in, exact for matched media
        q_in2 = q_in * q_in
        n_in2 = n_in * n_in
    else:
        # absorbing medium of incidence: real invariant β = Re(n_in) sin θ, complex angle
        # in n_in (tracer.fresnel, "Absorbing medium of incidence")
        n_in2 = n_in.real * n_in.real
        q_in2 = (n_in.real * c_w) ** 2
        q_in = np.where(lossy_in, _forward_root((n_in * n_in - n_in2) + q_in2), n_in * c_w)
    q_out = _forward_root((n_out * n_out - n_in2) + q_in2)
    ldata = []
    for n, d in lay:
        n2 = n * n
        ldata.append((n, n2, _forward_root((n2 - n_in2) + q_in2), d))

    flags = _effective_flags(flags, ldata, wl, coherence_length)
    if all(f is True for f in flags):
        res = _coherent_powers(n_in, q_in, n_out, q_out, ldata, k0)
    elif all(isinstance(f, bool) for f in flags):
        res = _incoherent(n_in, q_in, n_out, q_out, ldata, k0, flags)
    else:
        res = _mixed(n_in, q_in, n_out, q_out, ldata, k0, flags, work)
    rs, ts, rp, tp, Rs, Ts, Rp, Tp = (_full(a, shape) for a in res)
    return Coefficients(
        rs=rs, rp=rp, ts=ts, tp=tp, Rs=Rs, Rp=Rp, Ts=Ts, Tp=Tp,
        As=1.0 - Rs - Ts, Ap=1.0 - Rp - Tp,
        ncos_in=_full(q_in, shape), ncos_out=_full(q_out, shape),
        n_in=np.broadcast_to(n_in, shape), n_out=np.broadcast_to(n_out, shape),
    )


def _full(a, shape):
    """``a`` with the ray shape: internal 1-element arrays back to 0-d, others broadcast."""
    a = np.asarray(a)
    if a.shape != shape:
        if a.size == 1 and shape == ():
            return a.reshape(())
        a = np.broadcast_to(a, shape).copy()
    return a


def _mixed(n_in, q_in, n_out, q_out, ldata, k0, flags, shape):
    """Per-ray coherence patterns: solve each distinct pattern on its own rays."""
    size = int(np.prod(shape))

    def flat(a):
        return np.broadcast_to(a, shape).reshape(size)

    F = np.stack([flat(np.asarray(f, dtype=bool)) for f in flags])  # (L, size)
    codes = np.zeros(size, dtype=np.int64)
    for j in range(F.shape[0]):
        codes |= F[j].astype(np.int64) << j
    complex_out = [np.empty(size, complex) for _ in range(4)]
    real_out = [np.empty(size, float) for _ in range(4)]
    args = [flat(n_in), flat(q_in), flat(n_out), flat(q_out), flat(k0)]
    lflat = [tuple(flat(a) for a in layer) for layer in ldata]
    for code in np.unique(codes):
        idx = np.nonzero(codes == code)[0]
        pattern = [bool((code >> j) & 1) for j in range(len(flags))]
        sub = [a[idx] for a in args]
        sl = [tuple(a[idx] for a in layer) for layer in lflat]
        if all(pattern):
            res = _coherent_powers(sub[0], sub[1], sub[2], sub[3], sl, sub[4])
        else:
            res = _incoherent(sub[0], sub[1], sub[2], sub[3], sl, sub[4], pattern)
        rs, ts, rp, tp, Rs, Ts, Rp, Tp = res
        for out, val in zip(complex_out, (rs, ts, rp, tp)):
            out[idx] = val
        for out, val in zip(real_out, (Rs, Ts, Rp, Tp)):
            out[idx] = val
    rs, ts, rp, tp = (a.reshape(shape) for a in complex_out)
    Rs, Ts, Rp, Tp = (a.reshape(shape) for a in real_out)
    return rs, ts, rp, tp, Rs, Ts, Rp, Tp
