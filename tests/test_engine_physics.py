"""Physical validation of the engine against outside sources (named beside each test)."""

import cmath
import math

import numpy as np
import pytest
import tmm

from tracer.engine import trace, trace_sequence
from tracer.materials.models import ConstantIndex
from tracer.scene.model import FaceTreatment

from engine_factory import (beam, plane, prism, prism_pair_scene, right_angle, rot_x, rot_z,
                            moved, scene, solid, box, plate_scene)

MIRROR = FaceTreatment(kind="mirror")


# --------------------------------------------------------------------------- FTIR
def _airy_T(pol, n, d, wl, theta):
    """Frustrated-TIR transmittance of a symmetric layer n | 1 | n, Airy sum of the two
    interfaces (Born and Wolf, Principles of Optics, 7th ed., 1999, Eq. 1.6(57) and
    sec. 1.6.4), written here independently of tracer.fresnel."""
    q1 = n * math.cos(theta)
    q2 = cmath.sqrt(1.0 - (n * math.sin(theta)) ** 2)
    if q2.imag < 0:
        q2 = -q2
    if pol == "s":
        g1, g2 = q1, q2
    else:
        g1, g2 = q1 / n**2, q2 / 1.0
    r12 = (g1 - g2) / (g1 + g2)
    t12 = 2 * g1 / (g1 + g2)
    r23 = (g2 - g1) / (g2 + g1)
    t23 = 2 * g2 / (g2 + g1)
    b = 2 * math.pi / wl * d * q2
    t = t12 * t23 * cmath.exp(1j * b) / (1 + r12 * r23 * cmath.exp(2j * b))
    return abs(t) ** 2  # same medium on both sides (g ratio 1)


DIRECT = "src > upper.leg_a:T > upper.hypotenuse:FT > lower.leg_a:T > top"


@pytest.mark.parametrize("pol,stokes", [("s", (1, 1, 0, 0)), ("p", (1, -1, 0, 0))])
@pytest.mark.parametrize("d_over_wl", [0.0, 0.05, 0.2, 0.5, 1.0, 3.0])
def test_ftir_direct_path_vs_gap(pol, stokes, d_over_wl):
    # Entrance Fresnel T x gap-layer T x exit Fresnel T, against tmm (Byrnes,
    # "Multilayer optical calculations", 2016) and the Airy closed form.
    n, wl = 1.5, 550e-9
    d = d_over_wl * wl
    res = trace(prism_pair_scene(n=n, gap_thickness=d, stokes=stokes, threshold=1e-14))
    got = {p["signature"]: p["power_w"] for p in res.paths("top")}[DIRECT]
    Tn = 1 - ((n - 1) / (n + 1)) ** 2  # normal incidence, Hecht, Optics, Eq. 4.47-type
    ref_tmm = tmm.coh_tmm(pol, [n, 1.0, n], [np.inf, d * 1e9, np.inf], math.radians(45), wl * 1e9)["T"]
    ref_airy = _airy_T(pol, n, d, wl, math.radians(45))
    assert ref_tmm == pytest.approx(ref_airy, rel=1e-9)
    assert got == pytest.approx(Tn**2 * ref_tmm, rel=1e-9, abs=1e-300)
    t = res.ledger.totals()
    assert abs(t["residual_w"]) <= 1e-9 * t["source_w"]


def test_ftir_microwave_scale_coupling_rises_as_gap_closes():
    # Microwave prism coupler (n = 1.44, lambda = 28 mm, 45 deg on the gap): essentially
    # total reflection without the partner prism; coupling rises steadily as the gap
    # closes (common practice, no source).
    kw = dict(n=1.44, wavelength=28e-3, L=0.3, threshold=1e-12)
    alone = trace(prism_pair_scene(partner=False, gap_thickness=0.01, **kw))
    assert alone.detector_power("top") < 1e-12
    Tn = 1 - ((1.44 - 1) / 2.44) ** 2
    side = {p["signature"]: p["power_w"] for p in alone.paths("side")}
    assert side["src > upper.leg_a:T > upper.hypotenuse:TIR > upper.leg_b:T > side"] == pytest.approx(
        Tn**2, rel=1e-12)
    powers = []
    for d in (60e-3, 40e-3, 20e-3, 10e-3, 5e-3, 2e-3, 0.5e-3):
        res = trace(prism_pair_scene(gap_thickness=d, **kw))
        powers.append({p["signature"]: p["power_w"] for p in res.paths("top")}.get(DIRECT, 0.0))
    assert all(b > a for a, b in zip(powers, powers[1:]))
    assert powers[0] < 0.05 and powers[-1] > 0.8


# --------------------------------------------------------------------------- prisms
def _penta(a=0.02):
    r2 = math.sqrt(2)
    g = prism([[0, 0], [a, 0], [a, a], [0, r2 * a], [(1 - r2) * a, a]], -a / 2, a / 2,
              ["entrance", "exit", "reflector_a", "bevel", "reflector_b"])
    return solid("penta", g, n=1.5168, faces={"reflector_a": MIRROR, "reflector_b": MIRROR})


@pytest.mark.parametrize("tilt_deg", [-5, -2.5, 0, 2.5, 5])
def test_penta_prism_deviates_90_deg_for_any_in_plane_tilt(tilt_deg):
    # Penta prism: constant 90 deg deviation (Smith, Modern Optical Engineering, 4th ed.,
    # 2008, ch. 8; recalled from memory).
    a = 0.02
    d = rot_z(math.radians(tilt_deg)) @ np.array([0, 1.0, 0])
    sc = scene(solids=[_penta(a)],
               sources=[beam(position=np.array([a / 2, 0, 0]) - 0.01 * d, direction=d,
                             x_axis=(0, 0, 1))])
    rep = trace_sequence(sc, ["penta.entrance", "penta.reflector_a", "penta.reflector_b",
                              "penta.exit"])
    assert rep.complete
    assert math.degrees(rep.deviation) == pytest.approx(90.0, abs=1e-9)
    assert rep.handedness == 1  # two reflections: image not mirrored


@pytest.mark.parametrize("tilt_deg", [-5, 0, 3, 5])
def test_right_angle_prism_retro_180_deg_in_plane(tilt_deg):
    # Porro/right-angle prism used as a retroreflector in its principal plane: two TIRs
    # on perpendicular legs reverse the in-plane direction (Hecht, Optics, 5th ed., 2017,
    # sec. 5.5).
    L = 0.02
    d = rot_z(math.radians(tilt_deg)) @ (-np.array([1.0, 1.0, 0]) / math.sqrt(2))
    hit = np.array([0.6 * L, 0.4 * L, 0])
    sc = scene(solids=[solid("prism", right_angle(L), n=1.5168)],
               sources=[beam(position=hit - 0.02 * d, direction=d, x_axis=(0, 0, 1))])
    rep = trace_sequence(sc, ["prism.hypotenuse", "prism.leg_a", "prism.leg_b",
                              "prism.hypotenuse"])
    assert rep.complete
    assert math.degrees(rep.deviation) == pytest.approx(180.0, abs=1e-6)
    kinds = [s["kind"] for s in rep.steps]
    assert kinds == ["transmit", "TIR", "TIR", "transmit"]
    assert all(s["tir_margin_deg"] > 0 for s in rep.steps if s["kind"] == "TIR")
    assert rep.steps[1]["leakage"] == 0.0


@pytest.mark.parametrize("tilt", [(0, 0), (3, 0), (0, -4), (2, 2)])
@pytest.mark.parametrize("entry", [(0.25, 0.3), (0.4, 0.2), (0.3, 0.35)])
def test_corner_cube_returns_antiparallel(tilt, entry):
    # Trihedral corner cube: three reflections on mutually perpendicular faces reverse
    # any direction (Hecht, Optics, 5th ed., 2017, sec. 5.5), within its acceptance.
    from engine_factory import _solid

    s = 0.02
    n = np.array([[-1.0, 0, 0], [0, -1.0, 0], [0, 0, -1.0], np.ones(3) / math.sqrt(3)])
    g = _solid(n, np.array([0, 0, 0, s / math.sqrt(3)]), ["ra", "rb", "rc", "entrance"])
    axis = -np.ones(3) / math.sqrt(3)
    d = rot_x(math.radians(tilt[0])) @ rot_z(math.radians(tilt[1])) @ axis
    u, v = entry
    p_face = s * np.array([u, v, 1 - u - v])
    src = p_face - 0.05 * d
    sc = scene(solids=[solid("cc", g, n=1.5168)],
               sources=[beam(position=src, direction=d, x_axis=(1, -1, 0))],
               detectors=[plane("back", src - 0.01 * d, d, size=(0.2, 0.2))], threshold=1e-9)
    res = trace(sc)
    best = res.paths("back")[0]
    assert best["signature"].count(":TIR") == 3
    h = res.hits("back")
    k = h["direction"][h["node"] == best["node"]][0]
    assert np.dot(k, d) == pytest.approx(-1.0, abs=1e-12)


def _dove(a=0.01, L=0.05):
    run = a  # 45 deg ends
    return prism([[-L / 2, 0], [L / 2, 0], [L / 2 - run, a], [-L / 2 + run, a]], -a / 2, a / 2,
                  ["base", "exit", "upper", "entrance"])


def _dove_report(angle):
    a, L = 0.01, 0.05
    yc = 0.45 * a
    g = moved(moved(_dove(a, L), np.eye(3), (0, -yc, 0)), rot_x(angle), (0, yc, 0))
    sc = scene(solids=[solid("dove", g, n=1.5168)],
               sources=[beam(position=(-0.05, yc, 0), direction=(1, 0, 0), x_axis=(0, 1, 0))])
    return trace_sequence(sc, ["dove.entrance", "dove.base", "dove.exit"])


def test_dove_prism_inverts_and_rotates_image_twice_the_prism_angle():
    # Dove prism: one reflection inverts the image; rotating the prism by a about the
    # axis rotates the image by 2a (Hecht, Optics, 5th ed., 2017, sec. 5.5.2).
    ref = _dove_report(0.0)
    assert ref.complete and ref.handedness == -1
    assert ref.steps[1]["kind"] == "TIR"
    assert math.degrees(ref.deviation) == pytest.approx(0.0, abs=1e-9)
    for deg in (10.0, 25.0, 40.0):
        rep = _dove_report(math.radians(deg))
        assert rep.complete and rep.handedness == -1
        turn = (rep.image_rotation - ref.image_rotation + math.pi) % (2 * math.pi) - math.pi
        assert math.degrees(turn) == pytest.approx(2 * deg, abs=1e-4)


@pytest.mark.parametrize("wl", [450e-9, 550e-9, 700e-9])
def test_dispersing_prism_minimum_deviation(wl):
    # Minimum deviation D of a prism of apex A: n = sin((A + D)/2) / sin(A/2)
    # (Hecht, Optics, 5th ed., 2017, Eq. 5.14), with n(lambda) of fused silica
    # (Malitson 1965, through tracer.materials).
    from tracer import materials

    glass = materials.get("fused-silica")
    A = math.radians(60)
    side = 0.03
    b = 2 * side * math.sin(A / 2)
    apex_y = side * math.cos(A / 2)
    g = prism([[-b / 2, 0], [b / 2, 0], [0, apex_y]], -0.02, 0.02, ["base", "exit", "entrance"])
    # entrance face normal (outward) and a point on it
    mid = np.array([-b / 4, apex_y / 2, 0])
    nrm = np.array([-math.cos(A / 2), math.sin(A / 2), 0])

    def deviation(theta):
        d = rot_z(theta) @ (-nrm)  # turned towards the apex side
        sc = scene(solids=[solid("p", g, material=glass)],
                   sources=[beam(position=mid - 0.05 * d, direction=d, x_axis=(0, 0, 1),
                                 wavelengths=(wl,))])
        rep = trace_sequence(sc, ["p.entrance", "p.exit"])
        assert rep.complete
        return rep.deviation

    lo, hi = math.radians(30), math.radians(70)
    gr = (math.sqrt(5) - 1) / 2
    for _ in range(80):  # golden-section search for the minimum
        m1, m2 = hi - gr * (hi - lo), lo + gr * (hi - lo)
        if deviation(m1) < deviation(m2):
            hi = m2
        else:
            lo = m1
    D = deviation((lo + hi) / 2)
    n = float(glass.refractive_index(np.array([wl]))[0].real)
    assert math.sin((A + D) / 2) / math.sin(A / 2) == pytest.approx(n, abs=1e-9)


def test_fresnel_rhomb_makes_circular_light():
    # Fresnel rhomb: two TIRs at 54.6 deg in n = 1.51 give 45 deg retardance each, so
    # linear light at 45 deg leaves circular (Born and Wolf, Principles of Optics, 7th ed.,
    # 1999, sec. 1.5.4).
    a = math.radians(54.6)
    s = 0.01
    L = 2 * s * math.sin(a) ** 2 / math.cos(a)
    c, sn = s * math.cos(a), s * math.sin(a)
    g = prism([[0, 0], [L, 0], [L + c, sn], [c, sn]], -s / 2, s / 2,
              ["reflector_a", "exit", "reflector_b", "entrance"])
    d = np.array([math.sin(a), -math.cos(a), 0])
    mid = np.array([c / 2, sn / 2, 0])
    sc = scene(solids=[solid("rhomb", g, n=1.51)],
               sources=[beam(position=mid - 0.01 * d, direction=d, x_axis=(0, 0, 1),
                             stokes=(1, 0, 1, 0))])
    rep = trace_sequence(sc, ["rhomb.entrance", "rhomb.reflector_a", "rhomb.reflector_b",
                              "rhomb.exit"])
    assert rep.complete
    S = rep.output_stokes
    assert abs(S[3]) / S[0] > 0.99
    assert math.degrees(rep.retardance) == pytest.approx(90.0, abs=1.0)
    assert math.degrees(rep.deviation) == pytest.approx(0.0, abs=1e-9)


def test_bulk_absorption_beer_lambert():
    # Beer-Lambert attenuation exp(-alpha L), alpha = 4 pi kappa / lambda (Hecht, Optics,
    # 5th ed., 2017, sec. 4.8), booked in the solid's bulk.
    kappa, t, wl = 2e-7, 5e-3, 550e-9
    mat = ConstantIndex(1.5 + 1j * kappa, name="lossy", index_basis="vacuum")
    sc = plate_scene(thickness=t)
    sc.solids["plate"] = solid("plate", sc.solids["plate"].geometry, material=mat)
    res = trace(sc)
    direct = res.paths("camera")[0]["power_w"]
    R = ((1.5 - 1) / 2.5) ** 2
    alpha = 4 * math.pi * kappa / wl
    assert direct == pytest.approx((1 - R) ** 2 * math.exp(-alpha * t), rel=1e-9)
    b = res.ledger.breakdown()
    assert b["absorbed_bulk"]["plate"] > 0
    assert abs(b["residual_w"]) < 1e-12
