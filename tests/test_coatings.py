"""Tests of tracer.coatings against published closed forms (Macleod, Thin-Film Optical
Filters, 4th ed., 2010) and the tmm package (S. J. Byrnes, arXiv:1603.02720, 2016)."""

import numpy as np
import pytest
import tmm

from tracer import coatings, films, fresnel
from tracer.errors import TracerError

WL = 550e-9


class Cauchy:
    """Tiny local index model n(λ) = A + B/λ^2 (λ in µm), for the model-evaluation path."""

    name = "test-cauchy"
    valid_range = (300e-9, 2e-6)
    reference = "invented for the test"

    def __init__(self, a, b):
        self.a, self.b = a, b

    def refractive_index(self, wavelength, *, extrapolate=False):
        lam_um = np.asarray(wavelength, dtype=float) * 1e6
        return (self.a + self.b / lam_um**2).astype(complex)


def _tmm(pol, n_list, d_list, th, wl):
    return tmm.coh_tmm(pol, n_list, [np.inf] + list(d_list) + [np.inf], th, wl)


def test_quarter_wave_mgf2_on_crown():
    # Macleod 2010, single-layer AR: R = ((ns - nf^2)/(ns + nf^2))^2 = 1.26 % for 1.38 on 1.52.
    c = coatings.quarter_wave(material=1.38, design_wavelength=WL)
    assert c.thicknesses[0] == pytest.approx(WL / (4 * 1.38))
    r = coatings.face_response(c, n_inside=1.52, n_outside=1.0, wavelength=WL, cos_angle=1.0, from_inside=False)
    expect = ((1.52 - 1.38**2) / (1.52 + 1.38**2)) ** 2
    assert r.Rs == pytest.approx(expect, rel=1e-12)
    assert r.Rs == pytest.approx(0.0126, abs=5e-5)
    bare = fresnel.coefficients(n1=1.0, n2=1.52, angle=0.0)
    assert r.Rs < bare.Rs / 3


def test_quarter_wave_design_angle_tilted_admittance():
    # At its design angle the layer is a quarter wave for the tilted s admittances
    # eta = n cos(theta): R_s = ((eta0 eta_s - eta1^2)/(eta0 eta_s + eta1^2))^2
    # (Macleod 2010, chapter 2, tilted admittances; quarter-wave layer).
    th0 = np.radians(45)
    c = coatings.quarter_wave(material=1.38, design_wavelength=WL, n_ambient=1.0, design_angle=th0)
    r = coatings.face_response(c, n_inside=1.52, n_outside=1.0, wavelength=WL, cos_angle=np.cos(th0),
                               from_inside=False)
    s = np.sin(th0)
    eta0, eta1, etas = np.cos(th0), np.sqrt(1.38**2 - s**2), np.sqrt(1.52**2 - s**2)
    assert r.Rs == pytest.approx(((eta0 * etas - eta1**2) / (eta0 * etas + eta1**2)) ** 2, rel=1e-12)


def test_v_coat_zero_at_design_verified_with_tmm():
    for high, low, sub in ((2.0, 1.38, 1.52), (2.35, 1.46, 1.52), (2.1, 1.38, 1.75)):
        c = coatings.v_coat(high=high, low=low, substrate=sub, design_wavelength=WL)
        dH, dL = c.thicknesses
        assert dH > 0 and dL > 0
        # light from the ambient meets the low layer first
        for pol in ("s", "p"):
            ref = _tmm(pol, [1.0, low, high, sub], [dL, dH], 0.0, WL)
            assert ref["R"] < 1e-20
        r = coatings.face_response(c, n_inside=sub, n_outside=1.0, wavelength=WL, cos_angle=1.0, from_inside=False)
        assert r.Rs < 1e-20
        off = coatings.face_response(c, n_inside=sub, n_outside=1.0, wavelength=np.array([450e-9, 700e-9]),
                                     cos_angle=1.0, from_inside=False)
        assert np.all(off.Rs > 1e-4)  # a V: zero only near the design wavelength


def test_v_coat_with_models_and_no_solution_error():
    high, low = Cauchy(1.95, 0.015), Cauchy(1.37, 0.003)
    c = coatings.v_coat(high=high, low=low, substrate=1.52, design_wavelength=WL)
    layers = c.layers(np.array([WL, 800e-9]))
    assert layers[0][0].shape == (2,)
    assert layers[0][0][0] == pytest.approx(1.95 + 0.015 / 0.55**2)
    r = coatings.face_response(c, n_inside=1.52, n_outside=1.0, wavelength=WL, cos_angle=1.0, from_inside=False)
    assert r.Rs < 1e-20
    # high index below sqrt(n0 ns)-ish: no real two-layer solution
    with pytest.raises(TracerError, match="no real two-layer"):
        coatings.v_coat(high=1.6, low=1.38, substrate=1.52, design_wavelength=WL)


@pytest.mark.parametrize("pairs", [0, 1, 3, 6, 10])
def test_quarter_wave_mirror_macleod_closed_form(pairs):
    # (HL)^N H at normal incidence: Y = (nH/nL)^(2N) nH^2/ns,
    # R = ((n0 - Y)/(n0 + Y))^2 (Macleod 2010, quarter-wave stacks), derived by applying
    # Y -> n^2/Y for each quarter-wave layer starting from the substrate.
    nH, nL, ns, n0 = 2.35, 1.38, 1.52, 1.0
    m = coatings.quarter_wave_mirror(high=nH, low=nL, pairs=pairs, design_wavelength=WL)
    assert len(m) == 2 * pairs + 1
    r = coatings.face_response(m, n_inside=ns, n_outside=n0, wavelength=WL, cos_angle=1.0, from_inside=False)
    Y = (nH / nL) ** (2 * pairs) * nH**2 / ns
    assert r.Rs == pytest.approx(((n0 - Y) / (n0 + Y)) ** 2, rel=1e-12)
    n_list = [n0] + [n for n, _ in m.spec][::-1] + [ns]
    ref = _tmm("p", n_list, [d for _, d in m.spec][::-1], 0.3, WL)
    r2 = coatings.face_response(m, n_inside=ns, n_outside=n0, wavelength=WL, cos_angle=np.cos(0.3),
                                from_inside=False)
    assert r2.Rp == pytest.approx(ref["R"], abs=1e-12)


def test_layer_order_inside_and_outside_against_tmm():
    c = coatings.stack([(2.1 + 0.01j, 70e-9), (1.45, 120e-9), (1.7, 40e-9)], name="three")
    th = 0.4
    from_out = coatings.face_response(c, n_inside=1.6, n_outside=1.0, wavelength=WL, cos_angle=np.cos(th),
                                      from_inside=False)
    ref = _tmm("s", [1.0, 1.7, 1.45, 2.1 + 0.01j, 1.6], [40e-9, 120e-9, 70e-9], th, WL)
    assert from_out.rs == pytest.approx(ref["r"], abs=1e-12)
    assert from_out.Ts == pytest.approx(ref["T"], abs=1e-12)
    from_in = coatings.face_response(c, n_inside=1.6, n_outside=1.0, wavelength=WL, cos_angle=np.cos(th),
                                     from_inside=True)
    ref = _tmm("p", [1.6, 2.1 + 0.01j, 1.45, 1.7, 1.0], [70e-9, 120e-9, 40e-9], th, WL)
    assert from_in.rp == pytest.approx(ref["r"], abs=1e-12)
    assert from_in.Tp == pytest.approx(ref["T"], abs=1e-12)
    mixed = coatings.face_response(c, n_inside=1.6, n_outside=1.0, wavelength=WL, cos_angle=np.cos(th),
                                   from_inside=np.array([True, False]))
    assert mixed.rp[0] == from_in.rp and mixed.rs[1] == from_out.rs


def test_uncoated_is_fresnel():
    th = np.linspace(0, 1.5, 7)
    r = coatings.face_response(None, n_inside=1.5, n_outside=1.0, wavelength=WL, cos_angle=np.cos(th),
                               from_inside=True)
    c = fresnel.coefficients(n1=1.5, n2=1.0, angle=th)
    np.testing.assert_allclose(r.rs, c.rs, atol=1e-15)
    np.testing.assert_allclose(r.Tp, c.Tp, atol=1e-15)


def test_perfect_mirror_is_perfect_conductor_limit():
    # rs = -1, rp = +1: the n2 -> i*inf limit of our Fresnel formulas.
    cos = np.cos(np.linspace(0, 1.4, 5))
    m = coatings.face_response("mirror", n_inside=1.5, n_outside=1.0, wavelength=WL, cos_angle=cos,
                               from_inside=True)
    limit = fresnel.coefficients(n1=1.5, n2=1e-3 + 1e9j, cos_angle=cos)
    np.testing.assert_allclose(m.rs, limit.rs, atol=1e-8)
    np.testing.assert_allclose(m.rp, limit.rp, atol=1e-8)
    assert np.all(m.Rs == 1) and np.all(m.Ts == 0) and np.all(m.As == 0)
    assert m.rs.shape == (5,)


def test_mirror_reflectance_and_absorber():
    class Treatment:  # duck-typed FaceTreatment
        kind = "mirror"
        coating = None
        reflectance = 0.9

    m = coatings.face_response(Treatment(), n_inside=1.5, n_outside=1.0, wavelength=WL, cos_angle=0.8,
                               from_inside=False)
    assert m.Rs == pytest.approx(0.9) and m.Rp == pytest.approx(0.9) and m.As == pytest.approx(0.1)
    assert m.rs == pytest.approx(-np.sqrt(0.9)) and m.rp == pytest.approx(np.sqrt(0.9))
    a = coatings.face_response("absorber", n_inside=1.5, n_outside=1.0, wavelength=WL, cos_angle=0.8,
                               from_inside=True)
    assert a.Rs == 0 and a.Ts == 0 and a.As == 1 and a.Ap == 1


def test_ideal_coating_powers_phases_and_tir():
    beam_splitter = coatings.ideal(0.5)
    th = np.radians([0.0, 30.0, 50.0])  # 50 deg inside n=1.5 is beyond the critical angle
    r = coatings.face_response(beam_splitter, n_inside=1.5, n_outside=1.0, wavelength=WL, cos_angle=np.cos(th),
                               from_inside=True)
    np.testing.assert_allclose(r.Rs[:2], 0.5)
    np.testing.assert_allclose(r.Tp[:2], 0.5)
    np.testing.assert_allclose(r.rs[:2], -np.sqrt(0.5))
    np.testing.assert_allclose(r.rp[:2], np.sqrt(0.5))
    np.testing.assert_allclose(np.abs(r.ts_power[:2]) ** 2, 0.5, rtol=1e-13)
    np.testing.assert_allclose(np.abs(r.tp_power[:2]) ** 2, 0.5, rtol=1e-13)
    bare_tir = fresnel.coefficients(n1=1.5, n2=1.0, angle=th[2])
    assert r.Ts[2] == 0 and r.Rs[2] == pytest.approx(1.0)
    assert r.rs[2] == pytest.approx(bare_tir.rs)
    np.testing.assert_allclose(r.As, 0, atol=1e-15)


def test_gap_frustrated_tir_matches_films_and_tmm():
    n = 1.5168
    d = np.linspace(0, 2e-6, 9)
    g = coatings.gap_response(n_a=n, coating_a=None, medium_n=1.0, thickness=d, coating_b=None, n_b=n,
                              wavelength=WL, cos_angle=np.cos(np.radians(45)))
    s = films.stack(n_in=n, layers=[(1.0, d)], n_out=n, wavelength=WL, angle=np.radians(45))
    np.testing.assert_allclose(g.Ts, s.Ts, rtol=1e-14)
    ref = _tmm("p", [n, 1.0, n], [d[3]], np.radians(45), WL)
    assert g.Tp[3] == pytest.approx(ref["T"], rel=1e-9)


def test_gap_with_coatings_order_against_tmm():
    # A | A's coating (substrate outwards) | gap | B's coating reversed | B
    ca = coatings.stack([(2.0, 80e-9), (1.4, 60e-9)], name="A")
    cb = coatings.stack([(1.8, 50e-9), (1.3, 30e-9)], name="B")
    th = np.radians(30)
    g = coatings.gap_response(n_a=1.6, coating_a=ca, medium_n=1.0, thickness=0.4e-6, coating_b=cb, n_b=1.7,
                              wavelength=WL, cos_angle=np.cos(th))
    for pol, r, T in (("s", g.rs, g.Ts), ("p", g.rp, g.Tp)):
        ref = _tmm(pol, [1.6, 2.0, 1.4, 1.0, 1.3, 1.8, 1.7], [80e-9, 60e-9, 0.4e-6, 30e-9, 50e-9], th, WL)
        assert r == pytest.approx(ref["r"], abs=1e-12)
        assert T == pytest.approx(ref["T"], abs=1e-12)


def test_gap_auto_coherence_per_ray():
    # Rays 0,1: below the critical angle (20 deg), thick gap > coherence length -> incoherent
    # (tmm inc_tmm); ray 2: same angle, thin gap < coherence length -> coherent (coh_tmm);
    # ray 3: beyond the critical angle (50 deg), gap > coherence length -> still coherent.
    n = 1.5
    th = np.radians([20.0, 20.0, 20.0, 50.0])
    d = np.array([30e-6, 40e-6, 2e-6, 0.5e-6])
    lc = 10e-6 * np.array([1, 1, 1, 0.01])
    g = coatings.gap_response(n_a=n, coating_a=None, medium_n=1.0, thickness=d, coating_b=None, n_b=n,
                              wavelength=WL, cos_angle=np.cos(th), coherence_length=lc)
    for i in (0, 1):
        ref = tmm.inc_tmm("s", [n, 1.0, n], [np.inf, d[i], np.inf], ["i", "i", "i"], th[i], WL)
        assert g.Ts[i] == pytest.approx(ref["T"], abs=1e-12)
    for i in (2, 3):
        ref = _tmm("s", [n, 1.0, n], [d[i]], th[i], WL)
        assert g.Ts[i] == pytest.approx(ref["T"], rel=1e-9)
    assert 0 < g.Ts[3] < 0.5
    forced = coatings.gap_response(n_a=n, coating_a=None, medium_n=1.0, thickness=d, coating_b=None, n_b=n,
                                   wavelength=WL, cos_angle=np.cos(th), coherence="coherent")
    assert forced.Ts[0] == pytest.approx(_tmm("s", [n, 1.0, n], [d[0]], th[0], WL)["T"], rel=1e-8)


def test_models_accepted_for_every_index():
    glass, gap = Cauchy(1.50, 0.004), Cauchy(1.0, 0.0)
    wl = np.array([500e-9, 600e-9])
    g = coatings.gap_response(n_a=glass, coating_a=None, medium_n=gap, thickness=0.2e-6, coating_b=None,
                              n_b=glass, wavelength=wl, cos_angle=np.cos(np.radians(45)))
    n = glass.refractive_index(wl)
    s = films.stack(n_in=n, layers=[(1.0, 0.2e-6)], n_out=n, wavelength=wl, angle=np.radians(45))
    np.testing.assert_allclose(g.Tp, s.Tp, rtol=1e-14)
    f = coatings.face_response(coatings.stack([(gap, 0.0)]), n_inside=glass, n_outside=1.0, wavelength=wl,
                               cos_angle=1.0, from_inside=True)
    np.testing.assert_allclose(f.Rs, ((n.real - 1) / (n.real + 1)) ** 2, rtol=1e-12)


def test_bad_treatments_raise_tracer_error():
    kw = dict(n_inside=1.5, n_outside=1.0, wavelength=WL, cos_angle=1.0, from_inside=True)
    with pytest.raises(TracerError, match="unknown face treatment"):
        coatings.face_response("shiny", **kw)
    with pytest.raises(TracerError, match="reflectance"):
        coatings.face_response("ideal", **kw)
    with pytest.raises(TracerError, match="reflectance"):
        coatings.ideal(1.5)
    with pytest.raises(TracerError, match="thickness"):
        coatings.stack([(1.38, -5e-9)])
    with pytest.raises(TracerError, match="layer 0"):
        coatings.stack([1.38])
    with pytest.raises(TracerError, match="gap face B"):
        coatings.gap_response(n_a=1.5, coating_a=None, medium_n=1.0, thickness=1e-6, coating_b="absorber",
                              n_b=1.5, wavelength=WL, cos_angle=1.0)
    with pytest.raises(TracerError, match="coherence"):
        coatings.gap_response(n_a=1.5, coating_a=None, medium_n=1.0, thickness=1e-6, coating_b=None,
                              n_b=1.5, wavelength=WL, cos_angle=1.0, coherence="sometimes")
    with pytest.raises(TracerError, match="pairs"):
        coatings.quarter_wave_mirror(high=2.3, low=1.4, pairs=-1, design_wavelength=WL)


def test_scene_face_treatment_contract():
    # The engine passes tracer.scene.model.FaceTreatment objects straight through.
    from tracer.scene.model import FaceTreatment

    kw = dict(n_inside=1.52, n_outside=1.0, wavelength=WL, cos_angle=1.0, from_inside=False)
    qw = coatings.quarter_wave(material=1.38, design_wavelength=WL)
    a = coatings.face_response(FaceTreatment(kind="stack", coating=qw, coating_name="MgF2"), **kw)
    assert a.Rs == pytest.approx(((1.52 - 1.38**2) / (1.52 + 1.38**2)) ** 2, rel=1e-12)
    b = coatings.face_response(FaceTreatment(kind="ideal", reflectance=0.3), **kw)
    assert b.Rs == pytest.approx(0.3)
    c = coatings.face_response(FaceTreatment(kind="mirror"), **kw)
    assert c.rs == -1 and c.rp == 1
    d = coatings.face_response(FaceTreatment(), **kw)
    assert d.Rs == pytest.approx(((1.52 - 1) / 2.52) ** 2)
    g = coatings.gap_response(n_a=1.5, coating_a=FaceTreatment(kind="stack", coating=qw), medium_n=1.0,
                              thickness=0.1e-6, coating_b=FaceTreatment(), n_b=1.5, wavelength=WL, cos_angle=0.9)
    ref = _tmm("s", [1.5, 1.38, 1.0, 1.5], [qw.thicknesses[0], 0.1e-6], np.arccos(0.9), WL)
    assert g.Ts == pytest.approx(ref["T"], abs=1e-12)


def test_gap_incoherent_mode_tunnels_beyond_the_critical_angle():
    # coherence="incoherent": incoherent where the gap propagates (tmm inc_tmm), coherent where
    # it is evanescent (frustrated TIR, tmm coh_tmm), per ray. Glass 1.5 | air | glass 1.5:
    # critical angle arcsin(1/1.5) = 41.8 deg.
    n = 1.5
    th = np.radians([10.0, 30.0, 41.0, 43.0, 45.0, 60.0])
    d = 0.4e-6
    g = coatings.gap_response(n_a=n, coating_a=None, medium_n=1.0, thickness=d, coating_b=None, n_b=n,
                              wavelength=WL, cos_angle=np.cos(th), coherence="incoherent")
    for i, t in enumerate(th):
        for pol, R, T in (("s", g.Rs[i], g.Ts[i]), ("p", g.Rp[i], g.Tp[i])):
            if n * np.sin(t) < 1.0:
                ref = tmm.inc_tmm(pol, [n, 1.0, n], [np.inf, d, np.inf], ["i", "i", "i"], t, WL)
            else:
                ref = _tmm(pol, [n, 1.0, n], [d], t, WL)
            assert T == pytest.approx(ref["T"], abs=1e-12)
            assert R == pytest.approx(ref["R"], abs=1e-12)
    assert np.all(g.Ts[3:] > 1e-3)  # tunnelling, not blocked
    # the same per ray when every ray is on one side (scalar flag paths)
    beyond = coatings.gap_response(n_a=n, coating_a=None, medium_n=1.0, thickness=d, coating_b=None,
                                   n_b=n, wavelength=WL, cos_angle=np.cos(th[3:]), coherence="incoherent")
    coherent = coatings.gap_response(n_a=n, coating_a=None, medium_n=1.0, thickness=d, coating_b=None,
                                     n_b=n, wavelength=WL, cos_angle=np.cos(th[3:]), coherence="coherent")
    np.testing.assert_array_equal(beyond.Ts, coherent.Ts)
    np.testing.assert_array_equal(beyond.Tp, coherent.Tp)
    below = coatings.gap_response(n_a=n, coating_a=None, medium_n=1.0, thickness=d, coating_b=None,
                                  n_b=n, wavelength=WL, cos_angle=np.cos(th[:3]), coherence="incoherent")
    np.testing.assert_allclose(below.Ts, g.Ts[:3], rtol=1e-14)
    # with coatings on both faces: the coating layers stay coherent inside the inc sum
    ca = coatings.stack([(2.0, 80e-9)], name="A")
    t = np.radians(20.0)
    g = coatings.gap_response(n_a=n, coating_a=ca, medium_n=1.0, thickness=d, coating_b=None, n_b=n,
                              wavelength=WL, cos_angle=np.cos(t), coherence="incoherent")
    ref = tmm.inc_tmm("s", [n, 2.0, 1.0, n], [np.inf, 80e-9, d, np.inf], ["i", "c", "i", "i"], t, WL)
    assert g.Ts == pytest.approx(ref["T"], abs=1e-12)
