"""Cross-check of tracer.films.stack against tmm and closed forms (Airy sums, quarter-wave
stacks). Sources named beside each test."""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest

from test_crosscheck_oracles import INF, forward_root, tmm

from tracer import films


def _airy_single_layer(n1, n2, n3, d, th, wl, pol):
    """One layer between two half-spaces, summed multiple reflections (Airy):
    t = t12 t23 e^{i delta} / (1 + r12 r23 e^{2 i delta}); Born and Wolf sec. 1.6.4.
    Interface coefficients in admittance form, t of p as the E-field ratio."""
    beta = n1 * math.sin(th)
    q1 = n1 * math.cos(th)
    q2 = forward_root(n2 * n2 - beta * beta)
    q3 = forward_root(n3 * n3 - beta * beta)
    if pol == "s":
        g1, g2, g3 = q1, q2, q3
        f12 = f23 = 1.0
    else:
        g1, g2, g3 = q1 / n1**2, q2 / n2**2, q3 / n3**2
        f12, f23 = n1 / n2, n2 / n3
    r12 = (g1 - g2) / (g1 + g2)
    r23 = (g2 - g3) / (g2 + g3)
    t12 = 2 * g1 / (g1 + g2) * f12
    t23 = 2 * g2 / (g2 + g3) * f23
    e = np.exp(1j * 2 * math.pi / wl * q2 * d)
    den = 1 + r12 * r23 * e * e
    return (r12 + r23 * e * e) / den, t12 * t23 * e / den


def test_random_multilayers_against_tmm():
    """Random coherent stacks (0-8 layers, lossy layers, metal exit, 0-89 deg) against
    tmm.coh_tmm (Byrnes 2016): r, t complex and R, T for s and p."""
    rng = np.random.default_rng(12345)
    for _ in range(150):
        L = int(rng.integers(0, 9))
        n_in = float(rng.choice([1.0, 1.33, 1.5168, 1.8]))
        n_out = complex(rng.choice([1.0, 1.45, 1.5168, 2.0, 0.2 + 3j]))
        ns = [complex(rng.uniform(1.2, 2.4), rng.choice([0, 0, 0.01, 0.5])) for _ in range(L)]
        ds = list(rng.uniform(0, 400e-9, L))
        wl = float(rng.uniform(400e-9, 1100e-9))
        th = math.radians(float(rng.uniform(0, 89)))
        s = films.stack(n_in=n_in, layers=list(zip(ns, ds)), n_out=n_out, wavelength=wl, angle=th)
        for pol in "sp":
            o = tmm.coh_tmm(pol, [n_in] + ns + [n_out], [INF] + ds + [INF], th, wl)
            for key in "rtRT":
                assert abs(getattr(s, key + pol) - o[key]) < 1e-10, (key, pol, n_in, ns, ds, n_out, th)


@pytest.mark.parametrize("deg", [42.0, 45.0, 60.0, 80.0])
def test_ftir_gap_against_tmm_and_airy(deg):
    """Frustrated TIR across an air gap in n = 1.5168 glass: tmm and the Airy single-layer
    sum (Born and Wolf sec. 1.6.4) for gaps 0-2 um."""
    n, wl, th = 1.5168, 550e-9, math.radians(deg)
    for d in [0.0, 10e-9, 100e-9, 300e-9, 1e-6, 2e-6]:
        s = films.stack(n_in=n, layers=[(1.0, d)], n_out=n, wavelength=wl, angle=th)
        for pol in "sp":
            o = tmm.coh_tmm(pol, [n, 1.0, n], [INF, d, INF], th, wl)
            r, t = _airy_single_layer(n, 1.0, n, d, th, wl, pol)
            assert abs(getattr(s, "r" + pol) - o["r"]) < 1e-11
            assert abs(getattr(s, "t" + pol) - o["t"]) < 1e-11
            assert abs(getattr(s, "t" + pol) - t) < 1e-11
            assert abs(getattr(s, "r" + pol) - r) < 1e-11
            assert getattr(s, "R" + pol) + getattr(s, "T" + pol) == pytest.approx(1.0, abs=1e-12)


def test_very_thick_evanescent_layers():
    """Gaps of 10 um to 1 m beyond the critical angle: t follows the Airy sum (which is
    numerically safe here, |e^{i delta}| << 1) to 1e-9 relative; no overflow, R -> 1."""
    n, wl, th = 1.5168, 550e-9, math.radians(45)
    for d in [1e-5, 3e-5, 1e-4]:
        s = films.stack(n_in=n, layers=[(1.0, d)], n_out=n, wavelength=wl, angle=th)
        for pol in "sp":
            r, t = _airy_single_layer(n, 1.0, n, d, th, wl, pol)
            assert abs(getattr(s, "t" + pol) - t) <= 1e-9 * abs(t)
            assert abs(getattr(s, "r" + pol) - r) < 1e-12
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        s = films.stack(n_in=n, layers=[(1.0, 1.0)], n_out=n, wavelength=wl, angle=th)
    assert float(s.Ts) == 0.0 and float(s.Rs) == pytest.approx(1.0, abs=1e-14)
    assert np.isfinite(complex(s.rp))


def test_exactly_critical_gap_is_continuous():
    """At exactly the gap's critical angle (q = 0) the layer matrix has the limit
    sin(delta)/q -> k0 d; compare with tmm just either side (1e-8 rad) of the critical
    angle (tmm, Byrnes 2016) and with the closed form t_s = 2q/(2q - i k0 d q^2)."""
    n, wl, d = 1.5168, 550e-9, 200e-9
    thc = math.asin(1 / n)
    s = films.stack(n_in=n, layers=[(1.0, d)], n_out=n, wavelength=wl,
                    cos_angle=math.sqrt(1 - 1 / n**2))
    for pol in "sp":
        lo = tmm.coh_tmm(pol, [n, 1.0, n], [INF, d, INF], thc - 1e-8, wl)["T"]
        hi = tmm.coh_tmm(pol, [n, 1.0, n], [INF, d, INF], thc + 1e-8, wl)["T"]
        assert float(getattr(s, "T" + pol)) == pytest.approx(0.5 * (lo + hi), abs=1e-6)
    q, k0 = n * math.sqrt(1 - 1 / n**2), 2 * math.pi / wl
    ts = 2 * q / (2 * q - 1j * k0 * d * q * q)
    assert abs(complex(s.ts) - ts) < 1e-12


def test_forty_layer_quarter_wave_mirror():
    """(HL)^20 quarter-wave mirror, 40 layers, H = 2.35, L = 1.38 on 1.52: at the design
    wavelength R = ((1 - Y)/(1 + Y))^2; each quarter wave maps the admittance Y -> n^2/Y,
    so with L next to the substrate and H outermost Y = (nH/nL)^40 ns (Macleod, Thin-Film
    Optical Filters, quarter-wave stacks; derived here); and tmm elsewhere."""
    nH, nL, ns, wl0 = 2.35, 1.38, 1.52, 600e-9
    layers = [(nH, wl0 / (4 * nH)), (nL, wl0 / (4 * nL))] * 20
    Y = (nH / nL) ** 40 * ns
    R0 = ((1 - Y) / (1 + Y)) ** 2
    s = films.stack(n_in=1.0, layers=layers, n_out=ns, wavelength=wl0, angle=0.0)
    assert float(s.Rs) == pytest.approx(R0, abs=1e-12)
    for wl in [450e-9, 600e-9, 700e-9]:
        for deg in [0.0, 30.0, 60.0]:
            s = films.stack(n_in=1.0, layers=layers, n_out=ns, wavelength=wl, angle=math.radians(deg))
            for pol in "sp":
                o = tmm.coh_tmm(pol, [1.0] + [a for a, _ in layers] + [ns],
                                [INF] + [b for _, b in layers] + [INF], math.radians(deg), wl)
                assert abs(getattr(s, "r" + pol) - o["r"]) < 1e-10
                assert abs(getattr(s, "T" + pol) - o["T"]) < 1e-10


def test_incoherent_against_tmm_inc():
    """Partly incoherent stacks (thick layers flagged incoherent) against tmm.inc_tmm
    (Byrnes 2016, section 6): R and T for s and p."""
    rng = np.random.default_rng(7)
    for _ in range(80):
        L = int(rng.integers(1, 6))
        n_in = float(rng.choice([1.0, 1.5168]))
        n_out = complex(rng.choice([1.0, 1.45, 1.5168, 0.2 + 3j]))
        ns = [complex(rng.uniform(1.2, 2.4), rng.choice([0, 0, 1e-4, 0.01])) for _ in range(L)]
        ds = list(rng.uniform(10e-9, 400e-9, L))
        flags = [bool(x) for x in rng.integers(0, 2, L)]
        for j in range(L):
            if not flags[j]:
                ds[j] = float(rng.uniform(5e-6, 1e-3))
        wl = float(rng.uniform(400e-9, 1100e-9))
        th = math.radians(float(rng.uniform(0, 38 if n_in > 1.2 else 80)))
        s = films.stack(n_in=n_in, layers=list(zip(ns, ds)), n_out=n_out, wavelength=wl, angle=th,
                        coherent=flags)
        for pol in "sp":
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                o = tmm.inc_tmm(pol, [n_in] + ns + [n_out], [INF] + ds + [INF],
                                ["i"] + ["c" if f else "i" for f in flags] + ["i"], th, wl)
            assert getattr(s, "R" + pol) == pytest.approx(o["R"], abs=1e-10)
            assert getattr(s, "T" + pol) == pytest.approx(o["T"], abs=1e-10)


def test_incoherent_plate_closed_form():
    """A thick bare plate, incoherent: T = T1 T2/(1 - R1 R2) = 2n/(n^2 + 1) at normal
    incidence (sum of multiple reflections in power; common practice)."""
    n = 1.5
    s = films.stack(n_in=1.0, layers=[(n, 1e-3)], n_out=1.0, wavelength=550e-9, angle=0.0,
                    coherent=False)
    assert float(s.Ts) == pytest.approx(2 * n / (n * n + 1), abs=1e-14)


@pytest.mark.parametrize("nH,nL,ns", [(2.0, 1.38, 1.52), (2.16, 1.38, 1.45), (2.35, 1.46, 1.52)])
def test_v_coat_design_zero_reflectance(nH, nL, ns):
    """tracer.coatings.v_coat thicknesses give R = 0 at the design wavelength, normal
    incidence from n0 = 1 (tmm with the layers met outside-in: L then H)."""
    from tracer import coatings

    c = coatings.v_coat(high=nH, low=nL, substrate=ns, design_wavelength=550e-9)
    dH, dL = c.thicknesses
    assert tmm.coh_tmm("s", [1.0, nL, nH, ns], [INF, dL, dH, INF], 0.0, 550e-9)["R"] < 1e-20


def test_quarter_wave_constructors():
    """Single quarter wave: R = ((ns - n^2)/(ns + n^2))^2; (HL)^3 H mirror: Y = (nH/nL)^6
    nH^2/ns, R = ((1 - Y)/(1 + Y))^2 (Macleod, quarter-wave layers and stacks); a layer
    designed for 45 deg in air has phase thickness pi/2 there (tmm)."""
    from tracer import coatings

    q = coatings.quarter_wave(material=1.38, design_wavelength=550e-9)
    R = tmm.coh_tmm("s", [1.0, 1.38, 1.52], [INF, q.thicknesses[0], INF], 0.0, 550e-9)["R"]
    assert R == pytest.approx(((1.52 - 1.38**2) / (1.52 + 1.38**2)) ** 2, abs=1e-14)
    m = coatings.quarter_wave_mirror(high=2.35, low=1.38, pairs=3, design_wavelength=550e-9)
    ns_ = [1.0] + [n for n, _ in m.spec[::-1]] + [1.52]
    ds_ = [INF] + [d for _, d in m.spec[::-1]] + [INF]
    Y = (2.35 / 1.38) ** 6 * 2.35**2 / 1.52
    assert tmm.coh_tmm("s", ns_, ds_, 0.0, 550e-9)["R"] == pytest.approx(((1 - Y) / (1 + Y)) ** 2, abs=1e-12)
    q45 = coatings.quarter_wave(material=1.38, design_wavelength=550e-9, n_ambient=1.0,
                                design_angle=math.radians(45))
    delta = 2 * math.pi / 550e-9 * q45.thicknesses[0] * math.sqrt(1.38**2 - 0.5)
    assert delta == pytest.approx(math.pi / 2, rel=1e-12)
