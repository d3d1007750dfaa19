"""Analysis: ghost tables, power budget, gap leakage, requirement verdicts, JSON summary.

Scenes are built in Python (tests/engine_factory.py) so that these tests do not depend
on the scene files; the physics is checked against closed forms named beside each test.
"""

import dataclasses
import json
import math

import numpy as np
import pytest

from tracer.analysis import (
    analyse,
    evaluate,
    gap_leakage,
    ghost_label,
    ghost_table,
    power_budget,
    run_summary,
)
from tracer.engine import trace
from tracer.scene.model import FaceTreatment, RequirementSpec

from engine_factory import beam, gap, plane, plate_scene, prism, scene, solid


def fresnel_normal_R(n):
    # Reflectance of one uncoated face at normal incidence, R = ((n - 1)/(n + 1))^2
    # (Hecht, Optics, 5th ed., 2017, Eq. 4.67).
    return ((n - 1) / (n + 1)) ** 2


def fresnel_powers(n1, n2, theta):
    # Fresnel power coefficients (Hecht, Optics, 5th ed., 2017, Eqs. 4.34, 4.40, 4.56-4.60),
    # written out here independently of tracer.fresnel.
    c1 = math.cos(theta)
    s2 = n1 / n2 * math.sin(theta)
    c2 = math.sqrt(1 - s2 * s2)
    rs = (n1 * c1 - n2 * c2) / (n1 * c1 + n2 * c2)
    rp = (n2 * c1 - n1 * c2) / (n2 * c1 + n1 * c2)
    return 1 - rs**2, 1 - rp**2, rs**2, rp**2


# ------------------------------------------------------------------ ghosts
def test_plate_ghost_table_matches_fresnel_series():
    # Ghosts of an uncoated plate at normal incidence (Hecht, Optics, 5th ed., 2017,
    # sec. 9.7, multiple-beam series): direct T^2, ghosts T^2 R^2, T^2 R^4, T^2 R^6.
    n = 1.5
    R = fresnel_normal_R(n)
    T = 1 - R
    res = trace(plate_scene(n=n, rays=19))
    t = ghost_table(res, "camera")
    assert t.design_rule == "strongest"
    assert [r.reflections for r in t.rows[:4]] == [0, 2, 4, 6]
    assert t.rows[0].design and not any(r.design for r in t.rows[1:])
    for k, row in enumerate(t.rows[:4]):
        assert row.rank == k + 1
        assert row.fraction == pytest.approx(T**2 * R ** (2 * k), rel=1e-9)
        assert row.ratio == pytest.approx(R ** (2 * k), rel=1e-9)
    # ghost power over design power: sum_k R^(2k), k >= 1, cut at the power threshold
    # (1e-12 keeps k <= 4 here); closed form of the geometric series R^2 / (1 - R^2).
    assert t.ghost_fraction == pytest.approx(R**2 / (1 - R**2), rel=1e-7)
    assert t.rows[1].label == "plate(entrance:T exit:R entrance:R exit:T)"
    assert t.rows[2].label == "plate(entrance:T (exit:R entrance:R)×2 exit:T)"


def test_design_path_from_declared_sequence():
    sc = plate_scene(n=1.5, rays=1)
    seq = ("plate.entrance", "plate.exit:R", "plate.entrance:R", "plate.exit", "camera")
    sc = dataclasses.replace(sc, settings=dataclasses.replace(sc.settings, sequence=seq))
    res = trace(sc)
    t = ghost_table(res, "camera")
    assert t.design_rule == "sequence"
    assert t.design.reflections == 2 and t.design.rank == 2
    # the declared design path is the first ghost; the direct beam is 1/R^2 stronger
    R = fresnel_normal_R(1.5)
    assert t.rows[0].ratio == pytest.approx(1 / R**2, rel=1e-9)
    # the sequence names the camera: the other detector falls back to its strongest path
    assert ghost_table(res, "back").design_rule == "strongest"


def test_landing_centroid_and_rms_of_a_uniform_disc():
    # A collimated beam of diameter D centred at x = 2 mm through the plate at normal
    # incidence lands centred at x = 2 mm; the RMS radius of a uniformly filled disc of
    # radius a is a / sqrt(2) (second moment of a uniform disc: common practice, no source).
    D = 2e-3
    sc = plate_scene(n=1.5, rays=400, threshold=1e-6, position=(2e-3, 0, -0.01))
    sc = dataclasses.replace(sc, sources={"src": dataclasses.replace(sc.sources["src"], size=(D, 0.0))})
    t = ghost_table(trace(sc), "camera")
    row = t.rows[0]
    assert row.centroid[0] == pytest.approx(2e-3, abs=0.01 * D)
    assert abs(row.centroid[1]) < 0.01 * D
    assert row.rms_radius == pytest.approx((D / 2) / math.sqrt(2), rel=0.03)
    # the ghost lands on the same spot at normal incidence
    assert t.rows[1].centroid[0] == pytest.approx(row.centroid[0], abs=1e-9)


def test_degree_of_polarisation_of_oblique_plate_paths():
    # Unpolarised light transmitted through both faces of a plate at angle theta keeps
    # Ts^2 of s and Tp^2 of p, so its degree of polarisation is (Tp^2 - Ts^2)/(Tp^2 + Ts^2)
    # (Fresnel power coefficients, Hecht, Optics, 5th ed., 2017, sec. 4.6 and 8.6).
    n, theta = 1.5, math.radians(56.0)
    Ts, Tp, _, _ = fresnel_powers(1.0, n, theta)
    d = (math.sin(theta), 0.0, math.cos(theta))
    sc = plate_scene(n=n, rays=1, direction=d, position=(-0.01 * math.tan(theta), 0, -0.01))
    sc = dataclasses.replace(sc, detectors={"camera": plane("camera", (0, 0, 0.01), (0, 0, -1), size=(0.1, 0.1))})
    t = ghost_table(trace(sc), "camera")
    direct = t.rows[0]
    assert direct.reflections == 0
    assert direct.fraction == pytest.approx((Ts**2 + Tp**2) / 2, rel=1e-9)
    assert direct.dop == pytest.approx((Tp**2 - Ts**2) / (Tp**2 + Ts**2), rel=1e-6)
    # a linearly polarised (s) source stays fully polarised on every path
    sc_s = plate_scene(n=n, rays=1, direction=d, position=(-0.01 * math.tan(theta), 0, -0.01),
                       x_axis=(0, 1, 0), stokes=(1, 1, 0, 0))
    sc_s = dataclasses.replace(sc_s, detectors=sc.detectors)
    for row in ghost_table(trace(sc_s), "camera").rows:
        assert row.dop == pytest.approx(1.0, abs=1e-9)


def test_ghost_label_folds_repeats_and_names_sources():
    ev = [("a.in", "transmit"), ("a.h", "TIR"), ("b.h", "tunnel"), ("b.out", "transmit"), ("cam", "detect")]
    assert ghost_label(ev) == "a(in:T h:TIR) b(h:FT out:T)"
    assert ghost_label(ev, source="led") == "led: a(in:T h:TIR) b(h:FT out:T)"
    assert ghost_label([("a.x", "reflect")] * 3) == "a(x:R×3)"
    assert ghost_label([("cam", "detect")]) == "(direct)"


def test_unknown_detector_is_a_user_error():
    from tracer.errors import TracerError

    with pytest.raises(TracerError, match="unknown detector 'nope'"):
        ghost_table(trace(plate_scene()), "nope")


# ------------------------------------------------------------------ budget
def test_budget_closes_and_matches_incoherent_plate_totals():
    # Incoherent multiple reflections in a lossless plate at normal incidence:
    # transmitted (1 - R)/(1 + R), reflected 2R/(1 + R) (Hecht, Optics, 5th ed., 2017,
    # sec. 9.7; common practice).
    n = 1.5
    R = fresnel_normal_R(n)
    res = trace(plate_scene(n=n, rays=5))
    b = power_budget(res)
    assert b.source_power_w == pytest.approx(1.0)
    assert sum(r.power_w for r in b.rows) + b.residual_w == pytest.approx(b.source_power_w, rel=1e-12)
    assert b.relative_residual < 1e-12
    cam = next(r for r in b.rows if r.category == "detector" and r.name == "camera")
    back = next(r for r in b.rows if r.category == "detector" and r.name == "back")
    assert cam.fraction == pytest.approx((1 - R) / (1 + R), rel=1e-9)
    assert back.fraction == pytest.approx(2 * R / (1 + R), rel=1e-8)
    text = b.format_text()
    assert "closure residual" in text and "camera" in text
    csv = b.to_csv().splitlines()
    assert csv[0] == "category,name,power_w,fraction_of_source"
    assert csv[-1].startswith("closure residual,")


def test_budget_books_threshold_and_event_cap():
    res = trace(plate_scene(rays=3, threshold=1e-3))  # R^4 ghosts (~2e-3 * T^2 R^2) fall below
    b = power_budget(res)
    assert b.category_total("discarded") > 0
    assert b.category_total("discarded") == pytest.approx(b.totals["discarded_w"], rel=1e-12)
    res = trace(plate_scene(rays=3, threshold=0.0), max_events=3)
    b = power_budget(res)
    assert b.category_total("cut") > 0
    assert abs(b.residual_w) < 1e-12


def test_budget_lists_absorbing_faces():
    # an absorbing exit face takes everything that reaches it: T of the source power
    n = 1.5
    R = fresnel_normal_R(n)
    sc = plate_scene(n=n, rays=1)
    plate = sc.solids["plate"]
    faces = dict(plate.faces, exit=FaceTreatment("absorber"))
    sc = dataclasses.replace(sc, solids={"plate": dataclasses.replace(plate, faces=faces)})
    b = power_budget(trace(sc))
    row = next(r for r in b.rows if r.category == "absorbed (face)")
    assert row.name == "plate.exit"
    assert row.fraction == pytest.approx(1 - R, rel=1e-12)


# ------------------------------------------------------------------ leakage
def _tir_pair(d, *, rays=1):
    """Two 45° prisms with a gap of thickness d [m] on the hypotenuse; the beam starts
    inside the lower prism and meets the hypotenuse at 45°. The lower prism's other faces
    absorb; the upper prism's faces are ideal antireflection (R = 0)."""
    L, h = 0.01, 0.002
    s = d / math.sqrt(2)
    lower = solid("lower", prism([(0, 0), (L, 0), (0, L)], 0, h, ["leg_x", "hyp", "leg_y"]), n=1.5,
                  faces={"leg_x": FaceTreatment("absorber"), "leg_y": FaceTreatment("absorber"),
                         "bottom": FaceTreatment("absorber"), "top": FaceTreatment("absorber")})
    ar = FaceTreatment("ideal", reflectance=0.0)
    upper = solid("upper", prism([(L + s, s), (L + s, L + s), (s, L + s)], 0, h, ["leg_x", "leg_y", "hyp"]),
                  n=1.5, faces={"leg_x": ar, "leg_y": ar})
    src = beam(position=(0.002, 0.003, 0.001), direction=(1, 0, 0), x_axis=(0, 0, 1), rays=rays,
               inside="lower")
    return scene(solids=[lower, upper], sources=[src],
                 detectors=[plane("out", (0.03, 0.003, 0.001), (-1, 0, 0), size=(0.02, 0.02))],
                 gaps=[gap("tir", "lower", "hyp", "upper", "hyp", d)], threshold=1e-12)


@pytest.mark.parametrize("d", [0.15e-6, 0.4e-6])
def test_gap_leakage_equals_frustrated_tir_transmission(d):
    # Frustrated TIR across an air gap between n = 1.5 prisms at 45°: the tunnelled
    # fraction of unpolarised light is (Ts + Tp)/2 of the prism | gap | prism layer,
    # computed by the reference library tmm (S. J. Byrnes, coh_tmm).
    tmm = pytest.importorskip("tmm")
    th = math.pi / 4
    Ts = tmm.coh_tmm("s", [1.5, 1.0, 1.5], [np.inf, d, np.inf], th, 550e-9)["T"]
    Tp = tmm.coh_tmm("p", [1.5, 1.0, 1.5], [np.inf, d, np.inf], th, 550e-9)["T"]
    res = trace(_tir_pair(d))
    leak = gap_leakage(res, "tir")
    assert leak == pytest.approx((Ts + Tp) / 2, rel=1e-6)
    assert leak == pytest.approx(res.detector_power("out") / res.source_power_w, rel=1e-9)


def test_requirements_verdicts():
    n = 1.5
    R = fresnel_normal_R(n)
    T = 1 - R
    sc = plate_scene(n=n, rays=3)
    reqs = {
        "enough": RequirementSpec("enough", "min_power", 0.9, detector="camera", relative=True),
        "too_much": RequirementSpec("too_much", "min_power", 0.99, detector="camera", relative=True),
        "watts": RequirementSpec("watts", "min_power", 0.5, detector="camera", relative=False),
        "ghosts_ok": RequirementSpec("ghosts_ok", "max_ghost_fraction", 3e-3, detector="camera"),
        "ghosts_strict": RequirementSpec("ghosts_strict", "max_ghost_fraction", 1e-3, detector="camera"),
    }
    res = trace(dataclasses.replace(sc, requirements=reqs))
    v = {x.name: x for x in evaluate(res)}
    assert [x.name for x in evaluate(res)] == list(reqs)
    assert v["enough"].passed and not v["too_much"].passed
    assert v["enough"].value == pytest.approx((1 - R) / (1 + R), rel=1e-9) and v["enough"].unit == "1"
    assert v["watts"].unit == "W" and v["watts"].passed
    # ghost fraction R^2/(1 - R^2) = 1.7e-3 for n = 1.5 (Hecht, as above)
    assert v["ghosts_ok"].value == pytest.approx(R**2 / (1 - R**2), rel=1e-6)
    assert v["ghosts_ok"].passed and not v["ghosts_strict"].passed
    assert T > 0


def test_max_leakage_requirement():
    d = 0.4e-6
    sc = _tir_pair(d)
    reqs = {"leak": RequirementSpec("leak", "max_leakage", 1e-6, gap="tir")}
    res = trace(dataclasses.replace(sc, requirements=reqs))
    (v,) = evaluate(res)
    assert v.kind == "max_leakage" and v.subject == "tir"
    assert not v.passed and v.value > 1e-6
    assert v.value == pytest.approx(gap_leakage(res, "tir"))


# ------------------------------------------------------------------ JSON summary
def test_run_summary_is_strict_json_with_documented_keys():
    sc = plate_scene(n=1.5, rays=4)
    reqs = {"enough": RequirementSpec("enough", "min_power", 0.9, detector="camera", relative=True)}
    a = analyse(trace(dataclasses.replace(sc, requirements=reqs)))
    s = run_summary(a)
    text = json.dumps(s, allow_nan=False)
    back = json.loads(text)
    assert back["schema"] == "tracer-run-summary" and back["schema_version"] == 2
    assert back["tool"]["name"] == "tracer" and back["tool"]["version"]
    assert back["source_power_w"] == pytest.approx(1.0)
    assert set(back["settings"]) >= {"mode", "power_threshold", "max_events", "seed"}
    assert back["seed"] == back["settings"]["seed"]
    cam = back["detectors"]["camera"]
    assert cam["power_w"] == pytest.approx(sum(p["power_w"] for p in cam["paths"]), rel=1e-12)
    assert set(cam["paths"][0]) >= {"signature", "power_w", "reflections"}
    led = back["ledger"]
    booked = sum(led[k] for k in ("detected_w", "absorbed_w", "escaped_w", "discarded_w", "cut_w",
                                  "sampling_w"))
    assert booked + led["residual_w"] == pytest.approx(back["source_power_w"], rel=1e-12)
    (r,) = back["requirements"]
    assert set(r) >= {"name", "passed", "value", "limit"} and r["passed"] is True
    assert back["passed"] is True


def test_far_field_table_ranks_escaping_paths():
    # without the back detector, the plate's reflected light (2R/(1 + R) of the source,
    # Hecht as above) escapes and the far-field detector sees it, path by path
    from engine_factory import far_field

    n = 1.5
    R = fresnel_normal_R(n)
    sc = plate_scene(n=n, rays=1)
    sc = dataclasses.replace(sc, detectors={"camera": sc.detectors["camera"], "sky": far_field("sky")})
    res = trace(sc)
    t = ghost_table(res, "sky")
    assert t.kind == "far_field" and t.design_rule == "strongest"
    assert t.power_w == pytest.approx(2 * R / (1 + R), rel=1e-8)
    assert sum(r.power_w for r in t.rows) == pytest.approx(t.power_w, rel=1e-9)
    assert t.rows[0].label == "plate(entrance:R)" and t.rows[0].fraction == pytest.approx(R, rel=1e-12)
    assert t.rows[0].centroid is None
    assert "x [mm]" not in t.format_text()


def test_labels_name_the_source_when_there_are_several():
    sc = plate_scene(n=1.5, rays=1)
    src = sc.sources["src"]
    other = dataclasses.replace(src, name="aux", position=np.array([1e-3, 0, -0.01]))
    sc = dataclasses.replace(sc, sources={"src": src, "aux": other})
    t = ghost_table(trace(sc), "camera")
    labels = {r.label for r in t.rows}
    assert "src: plate(entrance:T exit:T)" in labels and "aux: plate(entrance:T exit:T)" in labels
    # two equal sources: the total source power is 2 W and each direct path carries T^2 / 2
    R = fresnel_normal_R(1.5)
    assert t.rows[0].fraction == pytest.approx((1 - R) ** 2 / 2, rel=1e-9)


def test_corner_cube_sub_aperture_paths_are_design_signal_not_ghosts():
    # A corner cube returns light by its three reflectors in any of six orders, one per
    # sub-aperture; all six orders are the retroreflection the part is built for (common
    # practice, no source). They share the faces and events of the design path, so they
    # are equivalent to it; a path with a partial reflection is not.
    from pathlib import Path

    from tracer.scene import load

    sc = load(Path(__file__).resolve().parents[1] / "scenes" / "corner_cube_retroreflector.toml")
    res = trace(sc, progress=False)
    t = ghost_table(res, "return")
    retro = [r for r in t.rows if r.reflections == 3 and ":R" not in r.label]  # TIR only
    assert len(retro) == 6
    assert all(not r.ghost for r in retro) and sum(r.design for r in retro) == 1
    assert t.design_group_power_w == pytest.approx(sum(r.power_w for r in retro), rel=1e-12)
    ghosts = [r for r in t.rows if r.ghost]
    assert all(":R" in r.label or r.reflections != 3 for r in ghosts)
    assert t.ghost_power_w == pytest.approx(sum(r.power_w for r in ghosts), rel=1e-12, abs=0)
    d = t.to_dict()
    assert d["design_group_paths"] == 6
    assert sum(p["equivalent_to_design"] for p in d["paths"]) == 5
    assert "equivalent to the design path" in t.format_text()


def test_plate_ghosts_are_not_equivalent_to_the_direct_path():
    res = trace(plate_scene(), progress=False)
    t = ghost_table(res, "camera")
    assert len(t.rows) >= 3 and not any(r.equivalent for r in t.rows)
    assert t.design_group_power_w == t.design_power_w
