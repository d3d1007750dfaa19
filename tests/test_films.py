"""Tests of tracer.films against tmm (S. J. Byrnes, arXiv:1603.02720, 2016), closed forms
and physical laws (energy conservation, reciprocity)."""

import numpy as np
import pytest
import tmm
from hypothesis import given, settings
from hypothesis import strategies as st

from tracer import films, fresnel
from tracer.errors import TracerError

WL = 550e-9


def _random_stacks(rng, count, layers, *, lossy=True, beyond_critical=True):
    """Per-ray random stacks with a fixed layer count (indices, thicknesses, angles)."""
    n_in = rng.uniform(1.0, 2.5, count)
    n_out = rng.uniform(1.0, 2.5, count) + 1j * lossy * rng.choice([0.0, 1.0], count) * rng.uniform(0, 0.3, count)
    ns = []
    for _ in range(layers):
        re = rng.uniform(1.0, 3.0, count)
        im = lossy * rng.choice([0.0, 0.0, 1.0], count) * rng.uniform(0, 1.0, count)
        ns.append(re + 1j * im)
    ds = [rng.uniform(0, 0.8e-6, count) for _ in range(layers)]
    wl = rng.uniform(400e-9, 1000e-9, count)
    top = np.pi / 2 * 0.995 if beyond_critical else np.radians(20)
    th = rng.uniform(0, top, count)
    return n_in, ns, ds, n_out, wl, th


@pytest.mark.parametrize("layers", [1, 2, 3, 4, 5, 6])
def test_coherent_matches_tmm_random_stacks(layers):
    # Reference: tmm.coh_tmm, one ray at a time; ours: one vectorised call with per-ray
    # indices, thicknesses, wavelengths and angles (many beyond a critical angle).
    rng = np.random.default_rng(100 + layers)
    count = 60
    n_in, ns, ds, n_out, wl, th = _random_stacks(rng, count, layers)
    s = films.stack(n_in=n_in, layers=list(zip(ns, ds)), n_out=n_out, wavelength=wl, angle=th)
    for i in range(count):
        n_list = [n_in[i]] + [n[i] for n in ns] + [n_out[i]]
        d_list = [np.inf] + [d[i] for d in ds] + [np.inf]
        for pol, r, t, R, T in (("s", s.rs, s.ts, s.Rs, s.Ts), ("p", s.rp, s.tp, s.Rp, s.Tp)):
            ref = tmm.coh_tmm(pol, n_list, d_list, th[i], wl[i])
            assert R[i] == pytest.approx(ref["R"], abs=1e-9)
            assert T[i] == pytest.approx(ref["T"], abs=1e-9)
            # Amplitudes: tmm uses our convention for both s and p (mapping = identity).
            assert r[i] == pytest.approx(ref["r"], abs=1e-9)
            assert t[i] == pytest.approx(ref["t"], abs=1e-9)


def test_tmm_p_convention_mapping_explicit():
    # tmm's interface_r('p') is (n2 cos1 - n1 cos2)/(n2 cos1 + n1 cos2): checked by calling
    # tmm. At normal incidence tmm gives rp = -rs, as our convention does; a stack with one
    # layer shows the identity mapping r_p(ours) = r_p(tmm) away from normal incidence too.
    n1, n2, th = 1.0, 1.5, 0.4
    th2 = tmm.snell(n1, n2, th)
    by_formula = (n2 * np.cos(th) - n1 * np.cos(th2)) / (n2 * np.cos(th) + n1 * np.cos(th2))
    assert tmm.interface_r("p", n1, n2, th, th2) == pytest.approx(by_formula, abs=1e-15)
    s0 = films.stack(n_in=1.0, layers=[(2.0, 100e-9)], n_out=1.5, wavelength=WL, angle=0.0)
    assert s0.rp == pytest.approx(-s0.rs, abs=1e-15)
    ref = tmm.coh_tmm("p", [1.0, 2.0, 1.5], [np.inf, 100e-9, np.inf], 0.0, WL)
    assert s0.rp == pytest.approx(ref["r"], abs=1e-14)
    s1 = films.stack(n_in=1.0, layers=[(2.0, 100e-9)], n_out=1.5, wavelength=WL, angle=0.7)
    ref = tmm.coh_tmm("p", [1.0, 2.0, 1.5], [np.inf, 100e-9, np.inf], 0.7, WL)
    assert s1.rp == pytest.approx(ref["r"], abs=1e-14)
    assert s1.tp == pytest.approx(ref["t"], abs=1e-14)


def test_incoherent_matches_tmm_inc_tmm():
    # Reference: tmm.inc_tmm with mixed 'c'/'i' layers (incoherent layers propagating).
    rng = np.random.default_rng(7)
    checked = 0
    while checked < 80:
        L = int(rng.integers(1, 6))
        n_in = rng.uniform(1.0, 2.0)
        n_out = rng.uniform(1.0, 2.5) + 1j * rng.choice([0.0, rng.uniform(0, 0.3)])
        ns = [rng.uniform(1.0, 3.0) + 1j * rng.choice([0, 0, rng.uniform(0, 1e-3)]) for _ in range(L)]
        ds = list(rng.uniform(0, 1e-6, L))
        coh = [bool(rng.integers(0, 2)) for _ in range(L)]
        for j in range(L):
            if not coh[j]:
                ds[j] = rng.uniform(1e-6, 100e-6)
                ns[j] = ns[j].real + 1j * rng.choice([0.0, rng.uniform(0, 1e-3)])
        th = rng.uniform(0, np.pi / 2 * 0.99)
        if any((not coh[j]) and n_in * np.sin(th) >= ns[j].real for j in range(L)):
            continue
        wl = rng.uniform(400e-9, 1000e-9)
        s = films.stack(n_in=n_in, layers=list(zip(ns, ds)), n_out=n_out, wavelength=wl, angle=th,
                        coherent=coh)
        c_list = ["i"] + ["c" if c else "i" for c in coh] + ["i"]
        for pol, R, T in (("s", s.Rs, s.Ts), ("p", s.Rp, s.Tp)):
            ref = tmm.inc_tmm(pol, [n_in] + ns + [n_out], [np.inf] + ds + [np.inf], c_list, th, wl)
            assert R == pytest.approx(ref["R"], abs=1e-9)
            assert T == pytest.approx(ref["T"], abs=1e-9)
        checked += 1


def test_incoherent_single_layer_closed_form_and_amplitudes():
    # One thick lossless slab with bare faces: T = T1 T2 / (1 - R1 R2) per polarisation
    # (incoherent sum of multiple reflections; e.g. Macleod, Thin-Film Optical Filters, 2010,
    # section on thick slabs). R = R1 + T1^2 R2 / (1 - R1 R2) for a symmetric slab.
    th = np.radians(np.linspace(0, 80, 9))
    n0, n1, n2 = 1.0, 1.5, 1.0
    s = films.stack(n_in=n0, layers=[(n1, 1e-3)], n_out=n2, wavelength=WL, angle=th, coherent=False)
    a = fresnel.coefficients(n1=n0, n2=n1, angle=th)
    b = fresnel.coefficients(n1=n1, n2=n2, cos_angle=(a.ncos_out / n1).real)
    for Ra, Ta, Rb, Tb, R, T in ((a.Rs, a.Ts, b.Rs, b.Ts, s.Rs, s.Ts), (a.Rp, a.Tp, b.Rp, b.Tp, s.Rp, s.Tp)):
        np.testing.assert_allclose(T, Ta * Tb / (1 - Ra * Rb), rtol=1e-12)
        np.testing.assert_allclose(R, Ra + Ta * Ta * Rb / (1 - Ra * Rb), rtol=1e-12)
    # Documented amplitudes: |r|^2 = R with the phase of the first-surface reflection,
    # |t|^2 * power factor = T.
    np.testing.assert_allclose(np.abs(s.rs) ** 2, s.Rs, rtol=1e-12)
    np.testing.assert_allclose(np.angle(s.rs), np.angle(a.rs), atol=1e-12)
    np.testing.assert_allclose(np.angle(s.rp[1:]), np.angle(a.rp[1:]), atol=1e-12)
    np.testing.assert_allclose(np.abs(s.ts_power) ** 2, s.Ts, rtol=1e-12)
    fs, _ = fresnel.power_factors(n_in=n0, ncos_in=s.ncos_in, n_out=n2, ncos_out=s.ncos_out)
    np.testing.assert_allclose(fs * np.abs(s.ts) ** 2, s.Ts, rtol=1e-12)


def test_per_ray_coherence_flags_equal_separate_calls():
    th = np.radians(np.linspace(0, 60, 11))
    d = np.linspace(0.1e-6, 5e-6, 11)
    flag = np.arange(11) % 3 == 0
    layers = [(1.38, 100e-9), (1.6, d), (2.1, 80e-9)]
    mixed = films.stack(n_in=1.0, layers=layers, n_out=1.52, wavelength=WL, angle=th,
                        coherent=[True, flag, True])
    coh = films.stack(n_in=1.0, layers=layers, n_out=1.52, wavelength=WL, angle=th)
    inc = films.stack(n_in=1.0, layers=layers, n_out=1.52, wavelength=WL, angle=th,
                      coherent=[True, False, True])
    for name in ("rs", "rp", "ts", "tp", "Rs", "Rp", "Ts", "Tp"):
        expect = np.where(flag, getattr(coh, name), getattr(inc, name))
        np.testing.assert_allclose(getattr(mixed, name), expect, rtol=1e-13, atol=1e-15)


def test_quarter_wave_mgf2_on_glass():
    # R = ((n_s - n_f^2)/(n_s + n_f^2))^2 = 1.26 % for MgF2 (1.38) on 1.52 (Macleod,
    # Thin-Film Optical Filters, 2010, single-layer antireflection coating).
    s = films.stack(n_in=1.0, layers=[(1.38, WL / (4 * 1.38))], n_out=1.52, wavelength=WL, angle=0.0)
    expect = ((1.52 - 1.38**2) / (1.52 + 1.38**2)) ** 2
    assert s.Rs == pytest.approx(expect, rel=1e-12)
    assert s.Rs == pytest.approx(0.0126, abs=5e-5)


def _ftir_airy(n, theta, d, wl, pol):
    """Frustrated TIR through a gap of index 1 between two media of index n.

    Airy summation for a single film (Born & Wolf, Principles of Optics, 1999, section 1.6.4;
    equation number not recalled): transmitted amplitude t = t12 t23 e^{iβ}/(1 + r12 r23 e^{2iβ}),
    with the imaginary phase β = i κ d beyond the critical angle; the Fresnel coefficients written
    out here with the decaying gap cosine.
    """
    c1 = np.cos(theta)
    q1 = n * c1
    gamma = np.sqrt((n * np.sin(theta)) ** 2 - 1.0)  # gap: q2 = i gamma
    q2 = 1j * gamma
    if pol == "s":
        r12 = (q1 - q2) / (q1 + q2)
        t12 = 2 * q1 / (q1 + q2)
        t21 = 2 * q2 / (q1 + q2)
    else:
        c2 = q2 / 1.0
        r12 = (1.0 * c1 - n * c2) / (1.0 * c1 + n * c2)
        t12 = 2 * n * c1 / (1.0 * c1 + n * c2)
        t21 = 2 * 1.0 * c2 / (n * c2 + 1.0 * c1)
    kappa = 2 * np.pi / wl * gamma
    e = np.exp(-kappa * d)
    t = t12 * t21 * e / (1 - r12**2 * e**2)  # r23 = -r12 for identical media
    return np.abs(t) ** 2


def test_frustrated_tir_air_gap_closed_form_tmm_and_decay():
    n, theta = 1.5168, np.radians(45)
    d = np.linspace(0, 3e-6, 61)
    s = films.stack(n_in=n, layers=[(1.0, d)], n_out=n, wavelength=WL, angle=theta)
    for pol, T in (("s", s.Ts), ("p", s.Tp)):
        np.testing.assert_allclose(T, _ftir_airy(n, theta, d, WL, pol), rtol=1e-11, atol=1e-300)
        for k in (1, 10, 30):
            ref = tmm.coh_tmm(pol, [n, 1.0, n], [np.inf, d[k], np.inf], theta, WL)
            assert T[k] == pytest.approx(ref["T"], rel=1e-9)
        assert np.all(np.diff(T) < 0)  # falls monotonically with thickness
        assert T[0] == pytest.approx(1.0, abs=1e-15)
    # closed-form s transmittance 1/T = 1 + (n^2-1)^2 sinh^2(kd) / (4 n^2 cos^2 (n^2 sin^2 - 1))
    # (derived here from the characteristic matrix; it is the form quoted by Zhu et al.,
    # Am. J. Phys. 54, 601, 1986, recalled from memory).
    kappa = 2 * np.pi / WL * np.sqrt((n * np.sin(theta)) ** 2 - 1)
    alpha = (n**2 - 1) ** 2 / (4 * n**2 * np.cos(theta) ** 2 * ((n * np.sin(theta)) ** 2 - 1))
    np.testing.assert_allclose(s.Ts, 1 / (1 + alpha * np.sinh(kappa * d) ** 2), rtol=1e-11)
    # thick gaps: T follows exp(-2 kappa d)
    thick = np.array([4e-6, 5e-6])
    t2 = films.stack(n_in=n, layers=[(1.0, thick)], n_out=n, wavelength=WL, angle=theta)
    for T in (t2.Ts, t2.Tp):
        slope = np.log(T[1] / T[0]) / (thick[1] - thick[0])
        assert slope == pytest.approx(-2 * kappa, rel=1e-9)


def test_zero_thickness_is_bare_interface():
    th = np.radians(np.linspace(0, 89, 30))
    s = films.stack(n_in=1.5, layers=[(1.0, 0.0), (2.2 + 0.3j, 0.0)], n_out=1.33, wavelength=WL, angle=th)
    c = fresnel.coefficients(n1=1.5, n2=1.33, angle=th)
    for name in ("rs", "rp", "ts", "tp", "Rs", "Rp", "Ts", "Tp"):
        np.testing.assert_allclose(getattr(s, name), getattr(c, name), rtol=1e-14, atol=1e-15)
    bare = films.stack(n_in=1.5, layers=[], n_out=1.33, wavelength=WL, angle=th)
    np.testing.assert_allclose(bare.rp, c.rp, rtol=1e-15, atol=1e-16)


def test_very_thick_evanescent_gap_finite():
    # 1000 wavelengths of air beyond the critical angle: T -> 0, R -> 1, nothing NaN/inf.
    th = np.radians([45.0, 60.0, 85.0])
    with np.errstate(over="raise", invalid="raise", divide="raise"):
        s = films.stack(n_in=1.5168, layers=[(1.0, 1000 * WL)], n_out=1.5168, wavelength=WL, angle=th)
    for a in (s.rs, s.rp, s.ts, s.tp, s.Rs, s.Rp, s.Ts, s.Tp):
        assert np.all(np.isfinite(a))
    assert np.all(s.Ts < 1e-300) and np.all(s.Tp < 1e-300)
    np.testing.assert_allclose(s.Rs, 1.0, atol=1e-14)
    np.testing.assert_allclose(s.Rp, 1.0, atol=1e-14)
    # strongly absorbing thick layer as well
    m = films.stack(n_in=1.0, layers=[(0.2 + 5j, 1e-3)], n_out=1.5, wavelength=WL, angle=0.3)
    assert np.isfinite(m.Rs) and m.Ts == 0.0 and m.As > 0


def _exact_critical_cos(n_in):
    """A cosine and a layer index for which the layer's n cos(theta) is exactly 0."""
    for c in np.linspace(0.6, 0.7, 2001):
        n = np.sqrt(n_in * n_in - (n_in * c) ** 2)
        if fresnel.ncos_transmitted(n1=n_in, n2=n, cos_angle=c) == 0:
            return c, n
    raise AssertionError("no exact critical configuration found")


def test_exactly_critical_angle_in_layer_finite_and_continuous():
    n_in = 1.5
    c, n_layer = _exact_critical_cos(n_in)
    s = films.stack(n_in=n_in, layers=[(n_layer, 0.4e-6)], n_out=n_in, wavelength=WL, cos_angle=c)
    q = fresnel.ncos_transmitted(n1=n_in, n2=n_layer, cos_angle=c)
    assert q == 0  # the layer is exactly at its critical angle
    for a in (s.rs, s.rp, s.ts, s.tp, s.Rs, s.Rp, s.Ts, s.Tp):
        assert np.isfinite(a)
    near = films.stack(n_in=n_in, layers=[(n_layer, 0.4e-6)], n_out=n_in, wavelength=WL,
                       cos_angle=np.array([c - 1e-9, c + 1e-9]))
    np.testing.assert_allclose(near.Ts, s.Ts, rtol=1e-5)
    np.testing.assert_allclose(near.Tp, s.Tp, rtol=1e-5)
    assert s.Rs + s.Ts == pytest.approx(1.0, abs=1e-13)
    ref = tmm.coh_tmm("s", [n_in, n_layer, n_in], [np.inf, 0.4e-6, np.inf], np.arccos(c), WL)
    assert s.Ts == pytest.approx(ref["T"], rel=1e-6)
    # exit medium exactly at its critical angle: no transmission, total reflection
    e = films.stack(n_in=n_in, layers=[(1.2, 0.1e-6)], n_out=n_layer, wavelength=WL, cos_angle=c)
    assert e.Ts == 0 and e.Rs == pytest.approx(1.0, abs=1e-13)


def test_normal_incidence_s_equals_p():
    s = films.stack(n_in=1.0, layers=[(2.3, 60e-9), (1.38, 99e-9), (0.5 + 2j, 10e-9)], n_out=1.52,
                    wavelength=WL, angle=0.0)
    assert s.Rs == pytest.approx(s.Rp, rel=1e-14)
    assert s.Ts == pytest.approx(s.Tp, rel=1e-14)
    assert s.rp == pytest.approx(-s.rs, rel=1e-14)
    assert s.tp == pytest.approx(s.ts, rel=1e-14)


def test_forty_layer_mirror_matches_tmm():
    nh, nl = 2.35, 1.38
    layers = []
    for k in range(40):
        n = nh if k % 2 == 0 else nl
        layers.append((n, WL / (4 * n)))
    th = np.radians([0.0, 20.0, 40.0])
    s = films.stack(n_in=1.0, layers=layers, n_out=1.52, wavelength=WL, angle=th)
    assert np.all(s.Rs > 0.999999)
    for i, t in enumerate(th):
        for pol, R, T in (("s", s.Rs, s.Ts), ("p", s.Rp, s.Tp)):
            ref = tmm.coh_tmm(pol, [1.0] + [n for n, _ in layers] + [1.52],
                              [np.inf] + [d for _, d in layers] + [np.inf], t, WL)
            assert R[i] == pytest.approx(ref["R"], abs=1e-12)
            assert T[i] == pytest.approx(ref["T"], rel=1e-7, abs=1e-20)


def test_lossy_layers_absorptance_matches_tmm():
    # A = 1 - R - T compared with tmm's absorp_in_each_layer (sum over the layers).
    layers = [(1.6 + 0.05j, 200e-9), (0.15 + 3.5j, 20e-9), (2.0 + 0.01j, 150e-9)]
    for th in (0.0, 0.5, 1.2):
        s = films.stack(n_in=1.0, layers=layers, n_out=1.45, wavelength=WL, angle=th)
        for pol, A, R, T in (("s", s.As, s.Rs, s.Ts), ("p", s.Ap, s.Rp, s.Tp)):
            data = tmm.coh_tmm(pol, [1.0] + [n for n, _ in layers] + [1.45],
                               [np.inf] + [d for _, d in layers] + [np.inf], th, WL)
            absorbed = np.sum(tmm.absorp_in_each_layer(data)[1:-1])
            assert A == pytest.approx(absorbed, abs=1e-10)
            assert A > 0.01
            assert R + T + A == pytest.approx(1.0, abs=1e-15)


def test_broadcast_shapes_and_scalars():
    s = films.stack(n_in=1.5, layers=[(1.0, np.array([0.1e-6, 0.2e-6]))], n_out=1.5,
                    wavelength=np.array([[500e-9], [600e-9], [700e-9]]), angle=0.9)
    assert s.Ts.shape == (3, 2) and s.ncos_in.shape == (3, 2)
    one = films.stack(n_in=1.5, layers=[], n_out=1.0, wavelength=500e-9, angle=0.1)
    assert one.Rs.shape == ()


def test_bad_input_raises_tracer_error():
    kw = dict(n_in=1.0, n_out=1.5, wavelength=WL, angle=0.1)
    with pytest.raises(TracerError, match="thickness"):
        films.stack(layers=[(1.4, -1e-9)], **kw)
    with pytest.raises(TracerError, match="pair"):
        films.stack(layers=[1.4], **kw)
    with pytest.raises(TracerError, match="flags"):
        films.stack(layers=[(1.4, 1e-7)], coherent=[True, False], **kw)
    with pytest.raises(TracerError, match="wavelength"):
        films.stack(n_in=1.0, n_out=1.5, layers=[], wavelength=0.0, angle=0.1)
    with pytest.raises(TracerError, match="broadcast"):
        films.stack(n_in=np.ones(3), n_out=1.5, layers=[], wavelength=WL, angle=np.zeros(4))


# ---------------------------------------------------------------- property tests

index_real = st.floats(1.0, 3.0)
thick = st.floats(0.0, 2e-6)
angle = st.floats(0.0, np.pi / 2 * 0.999)
wavelength = st.floats(300e-9, 2e-6)


@settings(max_examples=150, deadline=None)
@given(n_in=index_real, n_out=index_real, ns=st.lists(index_real, min_size=0, max_size=6),
       ds=st.lists(thick, min_size=6, max_size=6), th=angle, wl=wavelength)
def test_property_lossless_energy_conserved(n_in, n_out, ns, ds, th, wl):
    # R + T = 1 for lossless media (energy conservation), including beyond critical angles.
    for coherent in (True, False):  # also the incoherent power sum
        s = films.stack(n_in=n_in, layers=list(zip(ns, ds)), n_out=n_out, wavelength=wl, angle=th,
                        coherent=coherent)
        assert s.Rs + s.Ts == pytest.approx(1.0, abs=1e-9)
        assert s.Rp + s.Tp == pytest.approx(1.0, abs=1e-9)
        assert 0 <= s.Ts <= 1 + 1e-12 and 0 <= s.Tp <= 1 + 1e-12


@settings(max_examples=150, deadline=None)
@given(n_in=index_real, n_out=index_real,
       ns=st.lists(st.tuples(index_real, st.floats(0.0, 0.5)), min_size=1, max_size=5),
       ds=st.lists(thick, min_size=5, max_size=5), th=st.floats(0.0, 1.3), wl=wavelength)
def test_property_reciprocity_of_transmittance(n_in, n_out, ns, ds, th, wl):
    # Reciprocity (Stokes-Helmholtz; e.g. Born & Wolf 1999, section 1.6): T from A to B at
    # theta_A equals T from B to A at the angle with the same n sin(theta), lossy layers too.
    beta = n_in * np.sin(th)
    if beta >= n_out * 0.999:
        return
    layers = [(a + 1j * b, d) for (a, b), d in zip(ns, ds)]
    fwd = films.stack(n_in=n_in, layers=layers, n_out=n_out, wavelength=wl, angle=th)
    back = films.stack(n_in=n_out, layers=layers[::-1], n_out=n_in, wavelength=wl,
                       cos_angle=np.sqrt(1 - (beta / n_out) ** 2))
    assert fwd.Ts == pytest.approx(back.Ts, rel=1e-8, abs=1e-12)
    assert fwd.Tp == pytest.approx(back.Tp, rel=1e-8, abs=1e-12)


@settings(max_examples=150, deadline=None)
@given(n=index_real, n_other=index_real, d=thick, d2=thick, th=angle, wl=wavelength)
def test_property_matched_layer_invisible(n, n_other, d, d2, th, wl):
    # A layer with the index of the medium it sits in changes nothing but the phase of t.
    plain = films.stack(n_in=n, layers=[(n_other, d2)], n_out=n_other, wavelength=wl, angle=th)
    extra = films.stack(n_in=n, layers=[(n, d), (n_other, d2)], n_out=n_other, wavelength=wl, angle=th)
    assert extra.Rs == pytest.approx(plain.Rs, abs=1e-10)
    assert extra.Rp == pytest.approx(plain.Rp, abs=1e-10)
    assert extra.Ts == pytest.approx(plain.Ts, abs=1e-10)
    assert extra.Tp == pytest.approx(plain.Tp, abs=1e-10)
    alone = films.stack(n_in=n, layers=[(n, d)], n_out=n, wavelength=wl, angle=th)
    assert abs(alone.rs) < 1e-12 and abs(alone.rp) < 1e-12
    assert alone.Ts == pytest.approx(1.0, abs=1e-12)


def test_index_models_accepted_and_bad_index_rejected():
    class Const:  # tiny local index model
        def refractive_index(self, wavelength, *, extrapolate=False):
            return np.full(np.shape(wavelength), 1.38 + 0j)

    wl = np.array([500e-9, 600e-9])
    a = films.stack(n_in=1.0, layers=[(Const(), 100e-9)], n_out=1.52, wavelength=wl, angle=0.2)
    b = films.stack(n_in=1.0, layers=[(1.38, 100e-9)], n_out=1.52, wavelength=wl, angle=0.2)
    np.testing.assert_array_equal(a.rs, b.rs)
    with pytest.raises(TracerError, match="refractive index"):
        films.stack(n_in="glass", layers=[], n_out=1.52, wavelength=WL, angle=0.2)
    with pytest.raises(TracerError, match="index model"):
        fresnel.coefficients(n1=Const(), n2=1.5, angle=0.1)


def test_lossy_incident_medium_stack_matches_tmm():
    # Reference: tmm.coh_tmm (S. J. Byrnes, arXiv:1603.02720, 2016) with a dissipative incoming
    # medium: th_0 complex with n0 sin th_0 = Re(n0) sin(theta) real, on tmm's forward branch.
    rng = np.random.default_rng(21)
    for _ in range(150):
        n_in = rng.uniform(1.3, 2.2) + 1j * rng.choice([1e-6, 1e-3, 0.05])
        L = int(rng.integers(0, 4))
        ns = [rng.uniform(1.0, 2.4) + 1j * rng.choice([0.0, 0.0, 0.2]) for _ in range(L)]
        ds = list(rng.uniform(10e-9, 400e-9, L))
        n_out = rng.uniform(1.0, 2.0) + 1j * rng.choice([0.0, 0.1])
        th = rng.uniform(0, np.pi / 2 * 0.99)
        s = films.stack(n_in=n_in, layers=list(zip(ns, ds)), n_out=n_out, wavelength=WL, angle=th)
        th0 = np.lib.scimath.arcsin(n_in.real * np.sin(th) / n_in)
        if not tmm.is_forward_angle(n_in, th0):
            th0 = np.pi - th0
        for pol, r, t, R, T in (("s", s.rs, s.ts, s.Rs, s.Ts), ("p", s.rp, s.tp, s.Rp, s.Tp)):
            ref = tmm.coh_tmm(pol, [n_in, *ns, n_out], [np.inf, *ds, np.inf], th0, WL)
            assert r == pytest.approx(ref["r"], abs=1e-10)
            assert t == pytest.approx(ref["t"], abs=1e-10)
            assert R == pytest.approx(ref["R"], abs=1e-10)
            assert T == pytest.approx(ref["T"], abs=1e-10)
        if L == 0:  # no layers: the bare interface of tracer.fresnel
            c = fresnel.coefficients(n1=n_in, n2=n_out, angle=th)
            assert s.rs == pytest.approx(c.rs, abs=1e-14) and s.Tp == pytest.approx(c.Tp, abs=1e-14)


def test_lossy_incident_medium_matched_stack_is_transparent():
    # A layer of the incidence medium itself, between it and the same medium, changes nothing:
    # r = 0, t = exp(i k0 d q) (common practice, no source); the complex angle of the incidence
    # medium makes the stack exactly invisible, rays in and out alike.
    n = 1.7 + 0.01j
    th = np.linspace(0, 1.4, 8)
    s = films.stack(n_in=n, layers=[(n, 200e-9)], n_out=n, wavelength=WL, angle=th)
    np.testing.assert_allclose(np.abs(s.rs), 0, atol=1e-15)
    np.testing.assert_allclose(s.ts, np.exp(1j * 2 * np.pi / WL * 200e-9 * s.ncos_in), rtol=1e-13)
    np.testing.assert_allclose(s.ncos_out, s.ncos_in, rtol=0)


def test_lossy_incident_medium_partly_incoherent_matches_tmm_inc_tmm():
    # Reference: tmm.inc_tmm (S. J. Byrnes, arXiv:1603.02720, 2016), complex th_0 with
    # n0 sin th_0 = Re(n0) sin(theta) real; a thick incoherent layer between coherent ones.
    n_in = 1.6 + 1e-4j
    ns, ds, coh = [2.0, 1.45, 2.1], [100e-9, 20e-6, 80e-9], [True, False, True]
    for th in (0.0, 0.5, 0.9):
        s = films.stack(n_in=n_in, layers=list(zip(ns, ds)), n_out=1.5, wavelength=WL, angle=th,
                        coherent=coh)
        th0 = np.lib.scimath.arcsin(n_in.real * np.sin(th) / n_in)
        if not tmm.is_forward_angle(n_in, th0):
            th0 = np.pi - th0
        for pol, R, T in (("s", s.Rs, s.Ts), ("p", s.Rp, s.Tp)):
            ref = tmm.inc_tmm(pol, [n_in, *ns, 1.5], [np.inf, *ds, np.inf], ["i", "c", "i", "c", "i"],
                              th0, WL)
            assert R == pytest.approx(ref["R"], abs=1e-12)
            assert T == pytest.approx(ref["T"], abs=1e-12)


# ------------------------------------------- coherence rule: passive stacks stay physical


def test_thin_metal_in_incoherent_stack_stays_coherent():
    # The case of the issue: 10 nm of an absorbing metal (0.05 + 3.9j) summed in power gives
    # Rs = 1.13, As = -0.65 (tmm.inc_tmm with the layer flagged 'i' gives the same
    # unphysical numbers). A layer thinner than the coherence length stays coherent, so the
    # result is tmm.inc_tmm with the layer 'c' (S. J. Byrnes, arXiv:1603.02720, 2016).
    n_list, d_nm = [1.0, 0.05 + 3.9j, 1.5], [np.inf, 10.0, np.inf]
    s = films.stack(n_in=1.0, layers=[(0.05 + 3.9j, 10e-9)], n_out=1.5, wavelength=550e-9,
                    angle=0.5, coherent=False)
    for pol, R, T, A in (("s", s.Rs, s.Ts, s.As), ("p", s.Rp, s.Tp, s.Ap)):
        bad = tmm.inc_tmm(pol, n_list, d_nm, ["i", "i", "i"], 0.5, 550.0)
        assert bad["R"] > 1 or pol == "p"  # the power sum itself is unphysical for s
        ref = tmm.inc_tmm(pol, n_list, d_nm, ["i", "c", "i"], 0.5, 550.0)
        assert R == pytest.approx(ref["R"], abs=1e-12)
        assert T == pytest.approx(ref["T"], abs=1e-12)
        assert 0 <= A <= 1
    assert s.Rs == pytest.approx(0.45444582, abs=1e-6)  # tmm coherent value (the line above)


def test_thick_absorbing_layers_give_zero_transmission_without_warnings():
    # Beer-Lambert (common practice, no source): T ~ exp(-4 pi kappa d / lambda) -> 0; no NaN,
    # no overflow or invalid-value warnings whatever the thickness, coherent or not.
    import warnings

    th = np.radians([0.0, 30.0, 60.0, 89.0])
    for n in (0.05 + 3.9j, 1.5 + 0.01j, 3.0 + 40.0j):
        for d in (1e-6, 1e-4, 1e-2, 1.0, 1e3):
            for coherent in (True, False, [False, True]):
                with warnings.catch_warnings():
                    warnings.simplefilter("error")
                    s = films.stack(n_in=1.0, layers=[(n, d), (1.38, 100e-9)], n_out=1.5,
                                    wavelength=WL, angle=th, coherent=coherent)
                for R, T in ((s.Rs, s.Ts), (s.Rp, s.Tp)):
                    assert np.all(np.isfinite(R)) and np.all(np.isfinite(T))
                    if 4 * np.pi * n.imag * d / WL > 800:
                        np.testing.assert_array_equal(T, 0.0)
                    assert np.all((R >= 0) & (R <= 1) & (T >= 0) & (R + T <= 1 + 1e-12))


def _tmm_flags(n_in, ns, ds, th, wl, coherent, coherence_length):
    """Our documented coherence rule: ``q = n cos θ = sqrt(n^2 - (n_in sin θ)^2)`` (principal
    root: the forward wave for a real n_in and κ >= 0)."""
    if coherent is True:
        return [True] * len(ns)
    L = wl if coherence_length is None else coherence_length
    out = []
    for n, d in zip(ns, ds):
        q = np.sqrt(complex(n) ** 2 - (n_in * np.sin(th)) ** 2)
        limit = max(L, wl) if complex(n).imag > 0 else L
        out.append(not (2 * q.real * d > limit))
    return out


passive_layer = st.tuples(
    st.floats(1.0, 3.0),
    st.one_of(st.just(0.0), st.floats(0.0, 5.0), st.floats(1e-7, 1e-2).map(float)),
    # no subnormal thicknesses: tmm itself loses precision there (R < 0 for 1e-308 m)
    st.one_of(st.just(0.0), st.floats(1e-11, 100e-6), st.floats(1e-11, 200e-9)),
)


@settings(max_examples=300, deadline=None)
@given(n_in=st.floats(1.0, 2.5), n_out=st.floats(1.0, 2.5),
       layers=st.lists(passive_layer, min_size=0, max_size=5),
       th=st.floats(0.0, np.radians(89.0)), wl=st.floats(400e-9, 1.2e-6),
       coherent=st.one_of(st.just(True), st.just(False), st.lists(st.booleans(), min_size=5, max_size=5)),
       coherence_length=st.one_of(st.none(), st.just(0.0), st.floats(0.0, 50e-6)))
def test_property_passive_stacks_are_physical_and_match_tmm(n_in, n_out, layers, th, wl, coherent,
                                                            coherence_length):
    # Any passive stack (n >= 1, kappa >= 0, 0..100 um, 0..89 deg, s and p, coherent and
    # incoherent): 0 <= R, T, A <= 1 and R + T + A = 1 (energy conservation), and R, T equal
    # tmm.inc_tmm (Byrnes, arXiv:1603.02720, 2016) with each layer 'c' or 'i' by the rule.
    import warnings

    ns = [complex(n, k) for n, k, _ in layers]
    ds = [d for _, _, d in layers]
    flags = coherent if isinstance(coherent, bool) else coherent[: len(ns)]
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        s = films.stack(n_in=n_in, layers=list(zip(ns, ds)), n_out=n_out, wavelength=wl, angle=th,
                        coherent=flags, coherence_length=coherence_length)
    if isinstance(flags, bool):
        flags = [flags] * len(ns)
    eff = [bool(f) or g for f, g in zip(flags, _tmm_flags(n_in, ns, ds, th, wl, False, coherence_length))]
    c_list = ["i"] + ["c" if f else "i" for f in eff] + ["i"]
    for pol, R, T, A in (("s", s.Rs, s.Ts, s.As), ("p", s.Rp, s.Tp, s.Ap)):
        for v in (R, T, A):
            assert -1e-9 <= v <= 1 + 1e-9
        assert R + T + A == pytest.approx(1.0, abs=1e-12)
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")  # tmm's own note on nearly opaque layers
            ref = tmm.inc_tmm(pol, [n_in, *ns, n_out], [np.inf, *[d * 1e9 for d in ds], np.inf],
                              c_list, th, wl * 1e9)
        if not (np.isfinite(ref["R"]) and np.isfinite(ref["T"])):
            continue  # tmm overflows in thick evanescent layers (its limit, not ours: bounds above)
        assert R == pytest.approx(ref["R"], abs=1e-7)
        assert T == pytest.approx(ref["T"], abs=1e-7)


def test_coherence_length_decides_which_layers_are_summed_in_power():
    # A 20 um lossless slab: coherent (fringes) for a long coherence length, the power sum
    # T1 T2 / (1 - R1 R2) for a short one (tmm.inc_tmm 'c' / 'i', Byrnes 2016).
    kw = dict(n_in=1.0, layers=[(1.5, 20e-6)], n_out=1.0, wavelength=WL, angle=0.2, coherent=False)
    long = films.stack(coherence_length=1e-3, **kw)
    short = films.stack(coherence_length=5e-6, **kw)
    ref_c = tmm.inc_tmm("s", [1.0, 1.5, 1.0], [np.inf, 20e3, np.inf], ["i", "c", "i"], 0.2, 550.0)
    ref_i = tmm.inc_tmm("s", [1.0, 1.5, 1.0], [np.inf, 20e3, np.inf], ["i", "i", "i"], 0.2, 550.0)
    assert long.Ts == pytest.approx(ref_c["T"], abs=1e-9)
    assert short.Ts == pytest.approx(ref_i["T"], abs=1e-12)
    with pytest.raises(TracerError, match="coherence_length"):
        films.stack(coherence_length=-1.0, **kw)
