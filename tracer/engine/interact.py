"""What happens at a face: coefficients, child directions and fields.

For every ray that meets a solid face, :func:`split` classifies the event and returns
the reflected child (always present) and the transmitted child (where a wave
propagates on the far side):

* ambient -> solid, solid -> ambient: bare Fresnel interface
  (:func:`tracer.fresnel.coefficients`) or the face's coating
  (:func:`tracer.coatings.face_response`);
* solid A -> solid B across a gap or cemented joint: the layer stack
  ``A | A's coating | gap medium, local thickness | B's coating reversed | B``
  (:func:`tracer.coatings.gap_response`). The local thickness is the distance from the
  hit point to B's plane (wedged gaps). The transmitted child leaves B's face at the
  point across the gap (the hit point projected on B's plane): the lateral shift inside
  a thin gap is neglected. Beyond the gap medium's critical angle the transmitted child
  is a "tunnel" event and the reflected one "TIR"; a ray from A that lands outside B's
  face footprint meets an ordinary face;
* a perfect mirror (rs = -1, rp = +1, no transmission).

Coefficients are evaluated per ray, from its own angle of incidence, vacuum
wavelength (the media's indices at that wavelength) and field. The field matrix is
carried by power-normalised amplitudes (``|t~|^2 = T``, :func:`tracer.fresnel.amplitude_factor`),
so each child's power is ``Rs Ps + Rp Pp`` (or the T analogue) with ``Ps``, ``Pp``
the parent's power in its s and p components. Whatever the children do not carry is
booked as absorbed on the face as ``parent - reflected - transmitted`` (exactly zero up
to round-off for lossless interfaces), so the ledger closes.

Directions follow Snell's law in vector form with the invariant ``n sin(theta)``:
``k_t = (n1/n2) (k - c1 n) + c2 n`` with ``c2 = sqrt(1 - (n1/n2)^2 (1 - c1^2))``
(Eq. 4.46-type vector form in Hecht, "Optics", 5th ed., 2017; recalled from memory),
``n`` the unit normal pointing into the second medium. In absorbing media the real
parts of the indices fix the directions (the inhomogeneous-wave tilt is neglected);
the coefficients use the complex index of the medium beyond the face and the real
part of the incident medium's index (its loss is booked as bulk absorption along the
segment, Beer--Lambert; an absorbing incident medium has no well-posed plane-wave
interface problem, cf. Byrnes, "Multilayer optical calculations", 2016, which
requires a lossless incident medium).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .. import fresnel
from .. import polarization as pol
from ..tolerances import NORMAL_INCIDENCE_SIN
from . import fresnel_kernel
from . import interface_kernel as kernels
from . import jit
from .compile import COATED, MIRROR, UNCOATED, CompiledScene, on_partner_face
from .paths import REFLECT, TIR, TRANSMIT, TUNNEL

__all__ = ["Split", "split", "reflect_direction", "refract_direction"]


def _dot(a, b):
    return a[..., 0] * b[..., 0] + a[..., 1] * b[..., 1] + a[..., 2] * b[..., 2]


def reflect_direction(k, normal, cos1):
    """Mirror ``k`` about the plane of ``normal``; ``cos1 = k . normal`` [1]."""
    c = 2.0 * cos1
    out = np.empty_like(k)
    for a in range(3):  # per component: long loops
        np.subtract(k[:, a], c * normal[:, a], out=out[:, a])
    return out


def refract_direction(k, normal, cos1, ratio):
    """Refracted unit direction (Snell, vector form) and a flag where it exists.

    Parameters
    ----------
    k : (N, 3) float [1]
        Incident direction.
    normal : (N, 3) float [1]
        Unit normal pointing into the second medium (``k . normal = cos1 >= 0``).
    cos1 : (N,) float [1]
    ratio : (N,) float [1]
        ``Re(n1) / Re(n2)``.

    Returns
    -------
    k_t : (N, 3) float
    ok : (N,) bool
        False beyond the critical angle (``k_t`` is then the grazing direction).

    Examples
    --------
    >>> import numpy as np
    >>> k = np.array([[np.sin(0.5), 0.0, np.cos(0.5)]])
    >>> kt, ok = refract_direction(k, np.array([[0.0, 0, 1]]), np.cos([0.5]), np.array([1 / 1.5]))
    >>> bool(np.isclose(kt[0, 0] * 1.5, np.sin(0.5))), bool(ok[0])
    (True, True)
    """
    sin2 = ratio**2 * ((1.0 - cos1) * (1.0 + cos1))
    ok = sin2 <= 1.0
    c2 = np.sqrt(np.clip(1.0 - sin2, 0.0, None))
    kt = np.empty_like(k)
    for a in range(3):  # per component: long loops
        na = normal[:, a]
        np.add(ratio * (k[:, a] - cos1 * na), c2 * na, out=kt[:, a])
    norm = np.sqrt(_dot(kt, kt))
    for a in range(3):
        kt[:, a] /= norm
    return kt, ok


@dataclass
class Split:
    """Children of an interface event (arrays over the rays that hit interfaces).

    ``r_*`` is the reflected child, ``t_*`` the transmitted child (meaningful where
    ``t_exists``); ``absorbed`` [W] is booked on the face. Field matrices are built on
    demand (:meth:`field`) for the children that survive.
    """

    r_dir: np.ndarray
    r_power: np.ndarray
    r_kind: np.ndarray
    t_exists: np.ndarray
    t_dir: np.ndarray
    t_power: np.ndarray
    t_kind: np.ndarray
    t_origin: np.ndarray
    t_medium: np.ndarray
    t_face: np.ndarray
    absorbed: np.ndarray
    s: np.ndarray
    a_s: np.ndarray
    a_p: np.ndarray
    r_amp: tuple
    t_amp: tuple

    def field(self, child: str, index=slice(None)) -> np.ndarray:
        """Field matrices (n, 3, 2) of the ``"r"`` or ``"t"`` children at ``index``."""
        d = self.r_dir if child == "r" else self.t_dir
        amp = self.r_amp if child == "r" else self.t_amp
        n = len(self.s)
        if jit.compiled():
            idx = np.arange(n)[index] if isinstance(index, slice) else np.asarray(index)
            if idx.dtype == bool:
                idx = np.nonzero(idx)[0]
            return kernels.child_fields(self.s, d, self.a_s, self.a_p, amp[0], amp[1], idx)
        if isinstance(index, slice) and index == slice(None):
            index = None
        elif (isinstance(index, np.ndarray) and index.dtype.kind in "iu" and len(index) == n
              and n and index[0] == 0 and (np.diff(index) == 1).all()):
            index = None  # every ray, in order: no gathers
        if index is None:
            return rebuild(self.s, _cross(d, self.s), self.a_s, self.a_p, amp[0], amp[1])
        s = self.s[index]
        return rebuild(s, _cross(d[index], s), self.a_s[index], self.a_p[index],
                       amp[0][index], amp[1][index])

    @property
    def r_field(self):
        return self.field("r")

    @property
    def t_field(self):
        return self.field("t")


#: Groups of at least this many rays try to solve each distinct angle once.
_SHARED_MIN = 64


def _shared_angles(cos, *same):
    """``(unique cosines, inverse)`` when rays share angles, else ``None``.

    Coefficients are elementwise functions of (indices, wavelength, angle): where the
    arrays in ``same`` are constant over the group (one material pair, one wavelength)
    and at most half of the cosines are distinct -- a collimated beam on flat faces --
    solving each distinct angle once and expanding gives the same numbers.
    """
    m = len(cos)
    if m < _SHARED_MIN:
        return None
    for a in same:
        if not (a == a[0]).all():
            return None
    u, inv = np.unique(cos, return_inverse=True)
    if 2 * len(u) > m:
        return None
    return u, inv.reshape(-1)


class _Coef:
    """Per-ray coefficients filled group by group (``index`` None: every ray at once).

    ``rs_n``, ``rp_n``, ``ts_n``, ``tp_n`` are the power-normalised amplitudes
    (``|t~|^2 = T``, ``|r~|^2 = R``) the fields are built with.
    """

    _NAMES = ("rs", "rp", "Rs", "Rp", "Ts", "Tp", "rs_n", "rp_n", "ts_n", "tp_n")

    def __init__(self, n):
        self.n = n

    def _alloc(self):
        n = self.n
        for name in self._NAMES:
            setattr(self, name, np.zeros(n, float if name[0] in "RT" else complex))

    @staticmethod
    def _values(c):
        return dict(
            rs=c.rs, rp=c.rp, Rs=c.Rs, Rp=c.Rp, Ts=c.Ts, Tp=c.Tp,
            rs_n=c.rs * fresnel.amplitude_factor(T=c.Rs, t=c.rs),
            rp_n=c.rp * fresnel.amplitude_factor(T=c.Rp, t=c.rp),
            ts_n=c.ts * fresnel.amplitude_factor(T=c.Ts, t=c.ts),
            tp_n=c.tp * fresnel.amplitude_factor(T=c.Tp, t=c.tp),
        )

    def fill(self, index, c, inverse=None):
        """Set the rays at ``index`` from coefficients ``c`` (expanded by ``inverse``)."""
        vals = self._values(c)
        if inverse is not None:
            vals = {k: v[inverse] for k, v in vals.items()}
        self._set(index, vals)

    def _set(self, index, vals):
        """Store arrays ``vals`` for the rays at ``index`` (None: they are every ray)."""
        if index is None:
            for k, v in vals.items():
                setattr(self, k, v)
            return
        if not hasattr(self, "rs"):
            self._alloc()
        for k, v in vals.items():
            getattr(self, k)[index] = v

    def mirror(self, index):
        m = self.n if index is None else len(index)
        one = np.ones(m)
        rs, rp = -one.astype(complex), one.astype(complex)
        vals = dict(rs=rs, rp=rp, Rs=one, Rp=one.copy(), Ts=np.zeros(m), Tp=np.zeros(m),
                    rs_n=rs * _unit_amp(one, rs), rp_n=rp * _unit_amp(one, rp),
                    ts_n=np.zeros(m, complex), tp_n=np.zeros(m, complex))
        self._set(index, vals)

    def finish(self):
        if not hasattr(self, "rs"):
            self._alloc()
        return self


def _coated(treatment, *, n_inside, n_outside, wavelength, cos_angle, from_inside):
    from .. import coatings

    return coatings.face_response(
        treatment, n_inside=n_inside, n_outside=n_outside, wavelength=wavelength,
        cos_angle=cos_angle, from_inside=from_inside,
    )


def _gap(cs, g, *, from_a, n1, n2, n_gap, thickness, wavelength, cos_angle, coherence_length):
    from .. import coatings

    gap = cs.gaps[g]
    fa = cs.face_index[f"{gap.solid_a}.{gap.face_a}"]
    fb = cs.face_index[f"{gap.solid_b}.{gap.face_b}"]
    ta, tb = cs.face_treatment[fa], cs.face_treatment[fb]
    first, second = (ta, tb) if from_a else (tb, ta)
    if gap.coherence == "incoherent":
        # incoherent below the critical angle; an evanescent gap is always coherent
        mode, coherence_length = "auto", np.zeros_like(thickness)
    else:
        mode = gap.coherence
    return coatings.gap_response(
        n_a=n1, coating_a=_coating_of(first), medium_n=n_gap, thickness=thickness,
        coating_b=_coating_of(second), n_b=n2, wavelength=wavelength, cos_angle=cos_angle,
        coherence_length=coherence_length, coherence=mode,
    )


def _simple_faces(cs):
    """Per global face: the :mod:`tracer.engine.fresnel_kernel` kind (-1: thin films,
    absorber, detector or an invalid treatment left to the reference path to report)
    and the reflectance of ideal coatings and partial mirrors. Cached on ``cs``."""
    got = cs.__dict__.get("_simple_faces")
    if got is not None:
        return got
    from ..coatings.response import _normalise_treatment

    n = len(cs.face_code)
    kind = np.full(n, -1, dtype=np.int64)
    refl = np.zeros(n)
    for f in range(n):
        code = cs.face_code[f]
        if code == UNCOATED:
            kind[f] = fresnel_kernel.BARE
        elif code == MIRROR:
            kind[f] = fresnel_kernel.PERFECT_MIRROR
        elif code == COATED:
            k, coating, r = _normalise_treatment(cs.face_treatment[f])
            valid = r is not None and 0.0 <= float(r) <= 1.0
            if k == "ideal" and valid:
                kind[f], refl[f] = fresnel_kernel.IDEAL, float(r)
            elif k == "mirror" and coating is None and valid:
                kind[f], refl[f] = fresnel_kernel.PARTIAL_MIRROR, float(r)
    cs.__dict__["_simple_faces"] = (kind, refl)
    return kind, refl


def _coating_of(treatment):
    """The layer stack a gap face contributes (None for bare faces)."""
    if treatment is None or treatment.kind == "uncoated":
        return None
    return treatment


def split(cs: CompiledScene, *, direction, position, field, power, medium, face,
          wavelength, wl_index, ntab, coherency, coherence_length, root=None) -> Split:
    """Children of rays meeting solid faces (see module docstring).

    Parameters
    ----------
    direction, position : (N, 3) float [1], [m]
    field : (N, 3, 2) complex [sqrt(W)]
    power : (N,) float [W]
    medium, face : (N,) int
        Medium the ray travels in (-1 ambient) and the global face id it meets.
    wavelength : (N,) float [m]
    wl_index : (N,) int
        Column of ``ntab``.
    ntab : (media, W) complex
        Index table (:meth:`CompiledScene.index_table`).
    coherency : (N, 2, 2) or (M, 2, 2) complex
        Source coherency of each ray, or (with ``root``) a table of them.
    root : (N,) int, optional
        Row of ``coherency`` for each ray (default: row ``i`` for ray ``i``).
    coherence_length : (N,) float [m]
        Source coherence length (decides coherent vs incoherent gaps in ``auto``).
    """
    n = len(power)
    k = direction
    solid = cs.face_solid[face]
    nf = cs.face_normal[face]
    inside = medium == solid
    gap = cs.face_gap[face]
    across = inside & (gap >= 0)
    any_across = bool(across.any())
    t_face = face
    t_origin = position
    if any_across:
        t_face = face.copy()
        t_origin = position.copy()
        local_d = np.zeros(n)
        ia = np.nonzero(across)[0]
        pf = cs.face_partner[face[ia]]
        nb = cs.face_normal[pf]
        dist = _dot(nb, position[ia]) - cs.face_offset[pf]
        on_b = position[ia] - dist[:, None] * nb
        ok = on_partner_face(cs, on_b, pf)
        across[ia[~ok]] = False
        ia, pf, on_b, dist = ia[ok], pf[ok], on_b[ok], dist[ok]
        t_face[ia] = pf
        t_origin[ia] = on_b
        local_d[ia] = np.abs(dist)
        any_across = bool(len(ia))
    # The incident medium's extinction is booked as bulk absorption; an absorbing
    # incident medium has no well-posed plane-wave interface problem (the tangential
    # wave number would be complex), so its coefficients use the real part.
    n1 = ntab[medium + 1, wl_index].real.astype(complex)
    n_amb = ntab[0, wl_index]
    solid_med = ntab[solid + 1, wl_index]
    if any_across:
        partner_solid = np.where(across, cs.face_solid[np.where(across, cs.face_partner[face], 0)],
                                 -1)
        n2 = np.where(inside, np.where(across, ntab[partner_solid + 1, wl_index], n_amb),
                      solid_med)
        t_medium = np.where(inside, np.where(across, partner_solid, -1), solid)
    else:
        n2 = np.where(inside, n_amb, solid_med)
        t_medium = np.where(inside, -1, solid)
    fast = jit.compiled()
    if fast:
        nhat, cos1, s_vec = kernels.frame(k, cs.face_normal, face, inside)
    else:
        sign = np.where(inside, 1.0, -1.0)
        nhat = np.empty_like(nf)
        for a in range(3):
            np.multiply(nf[:, a], sign, out=nhat[:, a])
        cos1 = np.clip(_dot(k, nhat), 0.0, 1.0)

    code = cs.face_code[face]
    co = _Coef(n)
    plain = code == UNCOATED
    mirror = code == MIRROR
    coated = code == COATED
    if any_across:
        plain &= ~across
        mirror &= ~across
        coated &= ~across
    if fast:  # closed-form faces in one compiled pass; thin films and gaps below
        simple_kind, simple_refl = _simple_faces(cs)
        sk = simple_kind[face]
        simple = sk >= 0
        if any_across:
            simple &= ~across
        co.finish()
        rows = np.nonzero(simple)[0]
        if len(rows):
            fresnel_kernel.simple_coefficients(co, rows, n1=n1, n2=n2, cos1=cos1, kind=sk[rows],
                                               reflectance=simple_refl[face[rows]])
            plain &= ~simple
            mirror &= ~simple
            coated &= ~simple
    if plain.any():
        i = None if plain.all() else np.nonzero(plain)[0]
        n1p, n2p, c1p = (n1, n2, cos1) if i is None else (n1[i], n2[i], cos1[i])
        shared = _shared_angles(c1p, n1p, n2p)
        if shared is None:
            co.fill(i, fresnel.coefficients(n1=n1p, n2=n2p, cos_angle=c1p))
        else:
            u = len(shared[0])
            co.fill(i, fresnel.coefficients(n1=n1p[:u], n2=n2p[:u], cos_angle=shared[0]),
                    shared[1])
    if mirror.any():
        co.mirror(None if mirror.all() else np.nonzero(mirror)[0])
    if coated.any():
        # one call per distinct treatment and side (faces sharing a coating are solved
        # together; a coating seen from inside and from outside are two problems)
        group = cs.face_group[face]
        ci = np.nonzero(coated)[0]
        gc = group[ci] * 2 + inside[ci]
        used = np.nonzero(np.bincount(gc))[0]
        for key in used:
            gi, from_in = divmod(int(key), 2)
            sel = ci if len(used) == 1 else ci[gc == key]
            whole = len(sel) == n
            idx = None if whole else sel
            n1s, n2s = (n1, n2) if whole else (n1[sel], n2[sel])
            n_in_solid, n_out = (n1s, n2s) if from_in else (n2s, n1s)
            wls = wavelength if whole else wavelength[sel]
            c1s = cos1 if whole else cos1[sel]
            shared = _shared_angles(c1s, n_in_solid, n_out, wls)
            inverse = None
            if shared is not None:
                u = len(shared[0])
                n_in_solid, n_out, wls, c1s = n_in_solid[:u], n_out[:u], wls[:u], shared[0]
                inverse = shared[1]
            co.fill(idx, _coated(cs.group_treatment[gi], n_inside=n_in_solid, n_outside=n_out,
                                 wavelength=wls, cos_angle=c1s, from_inside=bool(from_in)),
                    inverse)
    beyond_gap = np.zeros(n, dtype=bool)
    if any_across:
        for f in np.nonzero(np.bincount(face[across]))[0]:
            sel = across & (face == f)
            g = int(gap[np.nonzero(sel)[0][0]])
            spec = cs.gaps[g]
            n_gap = ntab[cs.n_solids + 1 + g, wl_index[sel]]
            from_a = cs.face_names[f] == f"{spec.solid_a}.{spec.face_a}"
            sin1sq = (n1[sel].real ** 2) * (1.0 - cos1[sel] ** 2)
            beyond_gap[sel] = sin1sq > n_gap.real**2
            co.fill(sel, _gap(cs, g, from_a=from_a, n1=n1[sel], n2=n2[sel], n_gap=n_gap,
                              thickness=local_d[sel], wavelength=wavelength[sel],
                              cos_angle=cos1[sel], coherence_length=coherence_length[sel]))
    co.finish()

    ratio = n1.real / n2.real
    if fast:
        if root is None:
            root = np.arange(n)
        w = kernels.waves(k, nhat, cos1, ratio, s_vec, field, coherency, root, co.Rs, co.Rp,
                          co.Ts, co.Tp, power)
        r_dir, t_dir, prop, t_exists = w["r_dir"], w["t_dir"], w["prop"], w["t_exists"]
        s, a_s, a_p = s_vec, w["a_s"], w["a_p"]
        r_power, t_power, absorbed = w["r_power"], w["t_power"], w["absorbed"]
    else:
        if root is not None:
            coherency = coherency[root]
        # directions
        r_dir = reflect_direction(k, nhat, cos1)
        t_dir, prop = refract_direction(k, nhat, cos1, ratio)
        t_exists = prop & ((co.Ts > 0) | (co.Tp > 0))
        # fields and powers
        s, p_in = sp_basis(k, nhat)
        a_s = _project(s, field)
        a_p = _project(p_in, field)
        Ps = _jpower(a_s, coherency)
        Pp = _jpower(a_p, coherency)
        r_power = co.Rs * Ps + co.Rp * Pp
        t_power = co.Ts * Ps + co.Tp * Pp
        t_power[~t_exists] = 0.0
        absorbed = power - r_power - t_power
    if cs.any_opaque:  # an opaque part is never entered: what its face transmits ends there
        op = cs.face_opaque[face] & t_exists
        if op.any():
            absorbed = absorbed + np.where(op, t_power, 0.0)
            t_power = np.where(op, 0.0, t_power)
            t_exists = t_exists & ~op
    tir = ~prop | beyond_gap
    r_kind = np.where(tir, TIR, REFLECT)
    t_kind = np.where(beyond_gap, TUNNEL, TRANSMIT)
    return Split(
        r_dir=r_dir, r_power=r_power, r_kind=r_kind,
        t_exists=t_exists, t_dir=t_dir, t_power=t_power, t_kind=t_kind,
        t_origin=t_origin, t_medium=t_medium, t_face=t_face, absorbed=absorbed,
        s=s, a_s=a_s, a_p=a_p, r_amp=(co.rs_n, co.rp_n), t_amp=(co.ts_n, co.tp_n),
    )


def sp_basis(k, normal):
    """:func:`tracer.polarization.sp_basis` for (N, 3) ``k`` and ``normal``, written out.

    The same arithmetic, element by element, so the results are identical (the engine
    tests check it); only the normal-incidence rows go through the general function.
    """
    kx, ky, kz = k[:, 0], k[:, 1], k[:, 2]
    nx, ny, nz = normal[:, 0], normal[:, 1], normal[:, 2]
    s = np.empty_like(k)
    s[:, 0] = ky * nz - kz * ny
    s[:, 1] = kz * nx - kx * nz
    s[:, 2] = kx * ny - ky * nx
    ns = np.sqrt(_dot(s, s))
    kn = np.sqrt(kx * kx + ky * ky + kz * kz)
    scale = kn * np.sqrt(nx * nx + ny * ny + nz * nz)
    normal_inc = ns < NORMAL_INCIDENCE_SIN * scale
    if normal_inc.any():
        s[normal_inc] = pol.sp_basis(k[normal_inc], normal[normal_inc])[0]
        ns[normal_inc] = 1.0
    u = np.empty_like(k)
    for a in range(3):
        s[:, a] /= ns
        np.divide(k[:, a], kn, out=u[:, a])
    return s, _cross(u, s)


def _cross(a, b):
    out = np.empty_like(a)
    out[:, 0] = a[:, 1] * b[:, 2] - a[:, 2] * b[:, 1]
    out[:, 1] = a[:, 2] * b[:, 0] - a[:, 0] * b[:, 2]
    out[:, 2] = a[:, 0] * b[:, 1] - a[:, 1] * b[:, 0]
    return out


def _project(v, field):
    """(N, 2) components ``v . M[:, :, k]`` of the field matrices along unit ``v``."""
    f = np.ascontiguousarray(field).view(float)  # (N, 3, 4): re, im of both columns
    out = np.empty((len(f), 4))
    v0, v1, v2 = v[:, 0], v[:, 1], v[:, 2]
    for j in range(4):  # one long loop per component (no short broadcast inner loops)
        o = out[:, j]
        np.multiply(v0, f[:, 0, j], out=o)
        o += v1 * f[:, 1, j]
        o += v2 * f[:, 2, j]
    return out.view(complex)


def _jpower(a, J):
    """``Re(a J a^H)`` for (N, 2) rows ``a`` and (N, 2, 2) Hermitian ``J`` [W]."""
    a0, a1 = a[:, 0], a[:, 1]
    x0, x1 = _cmul(a0.real, a0.imag, J[:, 0, 1].real, J[:, 0, 1].imag)  # a0 J01
    cross = x0 * a1.real + x1 * a1.imag  # Re(a0 J01 conj(a1))
    return (J[:, 0, 0].real * (a0.real**2 + a0.imag**2) + J[:, 1, 1].real * (a1.real**2 + a1.imag**2)
            + 2.0 * cross)


def _cmul(ar, ai, br, bi):
    """Real and imaginary parts of ``(ar + i ai)(br + i bi)``, rounded term by term.

    numpy's complex multiply may fuse the products (FMA); written out, the reference
    rounds exactly as the compiled kernels do (:mod:`tracer.engine.interface_kernel`).
    """
    return ar * br - ai * bi, ar * bi + ai * br


def rebuild(s, p_out, a_s, a_p, amp_s, amp_p):
    """Child field matrices ``s (amp_s a_s) + p_out (amp_p a_p)`` (N, 3, 2).

    The same construction as :func:`tracer.polarization.apply_interface`, written out
    for speed (the engine tests check that the two agree).
    """
    cs = np.empty((len(a_s), 4))  # re, im of both columns
    cp = np.empty((len(a_s), 4))
    for j in range(2):
        cs[:, 2 * j], cs[:, 2 * j + 1] = _cmul(amp_s.real, amp_s.imag, a_s[:, j].real,
                                               a_s[:, j].imag)
        cp[:, 2 * j], cp[:, 2 * j + 1] = _cmul(amp_p.real, amp_p.imag, a_p[:, j].real,
                                               a_p[:, j].imag)
    out = np.empty((len(cs), 3, 4))
    for i in range(3):  # one long loop per component (no short broadcast inner loops)
        si, pi = s[:, i], p_out[:, i]
        for j in range(4):
            o = out[:, i, j]
            np.multiply(si, cs[:, j], out=o)
            o += pi * cp[:, j]
    return out.view(complex)


def _unit_amp(R, r):
    """Factor making ``|r * f|^2 == R`` (1 for the usual ``R = |r|^2``)."""
    return fresnel.amplitude_factor(T=R, t=r)
