"""Verdicts that never pass on discarded power: pass / fail / inconclusive, max_power,
power_threshold = "auto", the 0 W warning, behind_w and the exit codes.

Reference values: the uncoated plate at normal incidence uses the Fresnel reflectance
R = ((n - 1)/(n + 1))^2 and the incoherent multiple-reflection sums of a plate
(T^2 / (1 - R^2) through it, R + T^2 R / (1 - R^2) back), common practice, no source
(any optics textbook, e.g. Born and Wolf, Principles of Optics). The tunnelling through
the 2 um gap is checked against the ``tmm`` package (Byrnes), the entry and exit faces
against the normal-incidence Fresnel formula.
"""

from __future__ import annotations

import dataclasses
import json
import math
import sys
from pathlib import Path

import numpy as np
import pytest

sys.path.insert(0, str(Path(__file__).parent))

from engine_factory import beam, plane, plate_scene, prism_pair_scene, scene  # noqa: E402
from verdict_scenes import gap_scene  # noqa: E402

import tracer  # noqa: E402
from tracer.analysis import analyse, run_summary  # noqa: E402
from tracer.analysis.requirements import (  # noqa: E402
    Verdict, evaluate, format_verdicts, untraced_power, verdict_of, zero_power_warnings)
from tracer.cli import main  # noqa: E402
from tracer.engine import trace  # noqa: E402
from tracer.scene.model import RequirementSpec  # noqa: E402

N = 1.5
R = ((N - 1) / (N + 1)) ** 2          # 0.04
T = 1 - R
P = 2.0                                # source power [W]


def _with(sc, *reqs, auto=False):
    st = dataclasses.replace(sc.settings, auto_threshold=True) if auto else sc.settings
    return dataclasses.replace(sc, requirements={r.name: r for r in reqs}, settings=st)


def _one(sc, req, auto=False):
    res = trace(_with(sc, req, auto=auto))
    (v,) = evaluate(res)
    return res, v


# --------------------------------------------------------------------- the logic
def test_verdict_of_three_outcomes_both_comparisons():
    assert verdict_of("<=", 1.0, 0.5, 1.0) == "pass"        # worst case on the limit passes
    assert verdict_of("<=", 1.0, 1.0, 1.5) == "inconclusive"
    assert verdict_of("<=", 1.0, 1.01, 1.5) == "fail"
    assert verdict_of(">=", 1.0, 1.0, 2.0) == "pass"
    assert verdict_of(">=", 1.0, 0.5, 1.0) == "inconclusive"
    assert verdict_of(">=", 1.0, 0.5, 0.99) == "fail"
    assert verdict_of("<=", 1.0, 0.5, math.inf) == "inconclusive"


def test_passed_only_for_a_conclusive_pass():
    v = Verdict("x", "max_power", "cam", 0.0, 1e-9, "W", "<=", lower=0.0, upper=5e-9,
                untraced_w=5e-9)
    assert v.verdict == "inconclusive" and v.passed is False
    d = v.to_dict()
    assert d["verdict"] == "inconclusive" and d["passed"] is False and d["bound"] == 5e-9
    assert "lower trace.power_threshold" in v.advice() and "INCONCLUSIVE" in v.describe()
    text = format_verdicts([v])
    assert "INCONCLUSIVE" in text and "1 of 1 INCONCLUSIVE: x" in text and "all 1 passed" not in text


# ------------------------------------------------- each kind: pass, fail, inconclusive
# The plate with a threshold of 0.01: the doubly reflected child (T R^2 = 1.5e-3 of the
# source ray) is discarded, so U = P T R^2, the camera reads P T^2, the back detector
# P (R + T^2 R), and the camera has no ghost. Converged (threshold 1e-12): camera
# P T^2 / (1 - R^2), back P (R + T^2 R / (1 - R^2)).
COARSE = plate_scene(threshold=0.01, power=P)
FINE = plate_scene(threshold=1e-12, power=P)
U_COARSE = P * T * R * R
CAM = P * T * T
CAM_TRUE = P * T * T / (1 - R * R)
BACK = P * (R + T * T * R)
BACK_TRUE = P * (R + T * T * R / (1 - R * R))


def test_plate_closed_forms_of_the_test_scenes():
    res = trace(COARSE)
    assert untraced_power(res) == pytest.approx(U_COARSE, rel=1e-12)
    assert res.detector_power("camera") == pytest.approx(CAM, rel=1e-12)
    assert res.detector_power("back") == pytest.approx(BACK, rel=1e-12)
    fine = trace(FINE)
    assert fine.detector_power("camera") == pytest.approx(CAM_TRUE, rel=1e-10)
    assert fine.detector_power("back") == pytest.approx(BACK_TRUE, rel=1e-10)


@pytest.mark.parametrize("limit, expected", [
    (0.92 * P, "pass"),                 # CAM = 0.9216 P already meets it
    (0.923 * P, "inconclusive"),        # CAM < limit <= CAM + U
    (0.925 * P, "fail"),                # even CAM + U misses it
])
def test_min_power_absolute(limit, expected):
    _, v = _one(COARSE, RequirementSpec("m", "min_power", limit, detector="camera"))
    assert v.verdict == expected
    assert v.value == pytest.approx(CAM) and v.lower == v.value
    assert v.upper == pytest.approx(CAM + U_COARSE, rel=1e-12)
    assert v.passed is (expected == "pass")


@pytest.mark.parametrize("limit, expected", [
    (0.080 * P, "pass"),                # BACK + U = 0.0784 P
    (0.078 * P, "inconclusive"),        # BACK = 0.076864 P <= limit < BACK + U
    (0.070 * P, "fail"),
])
def test_max_power_absolute(limit, expected):
    _, v = _one(COARSE, RequirementSpec("x", "max_power", limit, detector="back"))
    assert (v.verdict, v.unit, v.comparison) == (expected, "W", "<=")
    assert v.value == pytest.approx(BACK, rel=1e-12)
    assert v.upper == pytest.approx(BACK + U_COARSE, rel=1e-12)


@pytest.mark.parametrize("limit, expected", [
    (0.080, "pass"), (0.078, "inconclusive"), (0.070, "fail")])
def test_max_power_fraction_of_the_source(limit, expected):
    _, v = _one(COARSE, RequirementSpec("x", "max_power", limit, detector="back", relative=True))
    assert (v.verdict, v.unit) == (expected, "1")
    assert v.value == pytest.approx(BACK / P, rel=1e-12)
    assert v.upper == pytest.approx((BACK + U_COARSE) / P, rel=1e-12)


@pytest.mark.parametrize("limit, expected", [
    (0.005, "pass"),                    # worst case U / CAM = 1.67e-3
    (0.001, "inconclusive"),            # value 0 (the ghost was discarded)
])
def test_max_ghost_fraction_coarse(limit, expected):
    _, v = _one(COARSE, RequirementSpec("g", "max_ghost_fraction", limit, detector="camera"))
    assert v.verdict == expected and v.value == 0.0
    assert v.upper == pytest.approx(U_COARSE / CAM, rel=1e-12)


def test_max_ghost_fraction_fails_when_the_ghost_is_traced():
    # the plate ghost over the direct beam: R^2 / (1 - R^2) = 1.6e-3 > 1e-3
    _, v = _one(FINE, RequirementSpec("g", "max_ghost_fraction", 0.001, detector="camera"))
    assert v.verdict == "fail"
    assert v.value == pytest.approx(R * R / (1 - R * R), rel=1e-9)


@pytest.mark.parametrize("limit, expected", [(0.14, "pass"), (0.134, "inconclusive"),
                                             (0.13, "fail")])
def test_max_leakage_three_verdicts(limit, expected):
    sc = prism_pair_scene(threshold=1e-3, gap_thickness=0.3e-6)
    res, v = _one(sc, RequirementSpec("l", "max_leakage", limit, gap="g"))
    src = res.source_power_w
    assert v.value == pytest.approx(res.tunnelled_power("g") / src, rel=1e-12)
    assert v.upper == pytest.approx(v.value + untraced_power(res) / src, rel=1e-12)
    assert v.verdict == expected


# ------------------------------------------------------------------ auto threshold
def test_auto_threshold_makes_an_inconclusive_scene_conclusive():
    req = RequirementSpec("m", "min_power", 0.923 * P, detector="camera")
    fixed = trace(_with(COARSE, req))
    assert evaluate(fixed)[0].verdict == "inconclusive" and fixed.threshold_choice is None
    res = trace(_with(COARSE, req, auto=True))
    (v,) = evaluate(res)
    assert v.verdict == "pass"          # CAM_TRUE = 0.92308 P
    assert v.value <= CAM_TRUE <= v.upper * (1 + 1e-12)   # the bounds bracket the true value
    ch = res.threshold_choice
    assert ch["chosen"] < 0.01 and len(ch["attempts"]) >= 2
    assert ch["attempts"][0]["threshold"] == 0.01 and ch["attempts"][0]["inconclusive"] == ["m"]
    assert ch["attempts"][-1]["inconclusive"] == [] and "conclusive" in ch["reason"]
    assert res.options.power_threshold == ch["chosen"]
    # the JSON summary says what was chosen
    s = run_summary(analyse(res))
    assert s["settings"]["threshold_choice"]["chosen"] == ch["chosen"]
    assert s["verdict"] == "pass" and s["passed"] is True


def test_auto_threshold_stops_at_the_cost_limit():
    req = RequirementSpec("m", "min_power", 0.923 * P, detector="camera")
    sc = _with(COARSE, req, auto=True)
    sc = dataclasses.replace(sc, settings=dataclasses.replace(sc.settings, auto_cost=1.0))
    res = trace(sc)
    ch = res.threshold_choice
    assert len(ch["attempts"]) == 1 and "cost limit" in ch["reason"]
    assert evaluate(res)[0].verdict == "inconclusive"


def test_auto_threshold_without_requirements_traces_once():
    res = trace(_with(COARSE, auto=True))
    assert len(res.threshold_choice["attempts"]) == 1
    assert res.options.power_threshold == 0.01


def test_an_explicit_threshold_setting_overrides_auto():
    req = RequirementSpec("m", "min_power", 0.923 * P, detector="camera")
    res = trace(_with(COARSE, req, auto=True), power_threshold=0.01)
    assert res.threshold_choice is None and evaluate(res)[0].verdict == "inconclusive"


# --------------------------------------------------------- the 2 um gap at 633 nm
def _gap_transmission_tmm(n_glass, wavelength, angle, d):
    tmm = pytest.importorskip("tmm")
    n_list = [n_glass, 1.0, n_glass]
    d_list = [np.inf, d, np.inf]
    ts = tmm.coh_tmm("s", n_list, d_list, angle, wavelength)["T"]
    tp = tmm.coh_tmm("p", n_list, d_list, angle, wavelength)["T"]
    return 0.5 * (ts + tp)


def _gap_scene(tmp_path, name="gap.toml", **kw):
    path = tmp_path / name
    path.write_text(gap_scene(**kw), encoding="utf-8")
    return path


def test_gap_at_former_default_threshold_is_inconclusive_not_pass(tmp_path):
    sc = tracer.load(_gap_scene(tmp_path, threshold="1e-6"))
    assert not sc.settings.auto_threshold
    res = trace(sc)
    assert res.detector_power("leak") == 0.0          # the tunnelled child was discarded
    (v,) = evaluate(res)
    assert v.verdict == "inconclusive" and not v.passed
    assert v.upper >= 1e-9
    warn = zero_power_warnings(res)
    assert any("detector leak reads 0 W" in w for w in warn)
    assert not any("detector out" in w for w in warn)


def test_gap_with_the_default_threshold_reads_its_nanowatts(tmp_path):
    sc = tracer.load(_gap_scene(tmp_path))
    assert sc.settings.auto_threshold                    # "auto" is the default
    res = trace(sc)
    leak = res.detector_power("leak")
    # closed form: 10 mW x entry face T x gap tunnelling (tmm) x exit face T
    n = complex(sc.solids["lower"].material.refractive_index(633e-9)).real
    n_air = complex(sc.ambient.refractive_index(633e-9)).real
    rel = n / n_air
    t_face = 1 - ((rel - 1) / (rel + 1)) ** 2
    expected = 10e-3 * t_face * _gap_transmission_tmm(rel, 633e-9, math.radians(45), 2e-6) * t_face
    assert 2e-9 < expected < 1e-8                        # "a few nW"
    assert leak == pytest.approx(expected, rel=5e-3)
    (v,) = evaluate(res)
    assert v.verdict == "fail"                           # 5.8 nW > 1 nW, conclusively
    assert not any("leak" in w for w in zero_power_warnings(res))


def test_gap_never_passes_on_discarded_power(tmp_path):
    """Whatever the threshold, a 1 nW limit on a 5.8 nW leak never passes."""
    for thr in ("1e-5", "1e-6", "1e-7", "1e-9"):
        res = trace(tracer.load(_gap_scene(tmp_path, threshold=thr)))
        (v,) = evaluate(res)
        assert v.verdict in ("fail", "inconclusive"), thr
        if res.detector_power("leak") == 0.0:
            assert v.verdict == "inconclusive"


# ------------------------------------------------------------- CLI and outputs
def _cli(capsys, *argv):
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    assert "Traceback" not in out + err
    return code, out, err


def test_cli_exits_1_for_inconclusive_and_0_for_pass(tmp_path, capsys):
    js = tmp_path / "s.json"
    code, out, _ = _cli(capsys, "run", _gap_scene(tmp_path, threshold="1e-6"), "--json", js)
    assert code == 1
    assert "INCONCLUSIVE" in out and "worst case" in out and "warning: detector leak reads 0 W" in out
    data = json.loads(js.read_text(encoding="utf-8"))
    assert data["verdict"] == "inconclusive" and data["passed"] is False
    (r,) = data["requirements"]
    assert r["verdict"] == "inconclusive" and r["kind"] == "max_power" and r["bound"] > 1e-9
    assert any("leak" in w for w in data["warnings"])
    # --quiet still prints the table of a run that did not pass
    code, out, _ = _cli(capsys, "run", _gap_scene(tmp_path, threshold="1e-6"), "--quiet")
    assert code == 1 and "INCONCLUSIVE" in out
    # a limit the worst case meets: a conclusive pass, exit 0
    code, out, _ = _cli(capsys, "run", _gap_scene(tmp_path, "p.toml", threshold="1e-6",
                                                   limit="50 nW"), "--quiet")
    assert code == 0
    # auto: the nW are read, the requirement fails conclusively, and the choice is printed
    code, out, _ = _cli(capsys, "run", _gap_scene(tmp_path, "a.toml"))
    assert code == 1 and "FAIL" in out and "power threshold auto:" in out


def test_html_report_shows_inconclusive(tmp_path):
    from tracer.report import build_report

    rep = build_report(tracer.load(_gap_scene(tmp_path, threshold="1e-6")), figures=False)
    html = rep.html
    assert "INCONCLUSIVE" in html and "verdict-box inconclusive" in html
    assert "reads 0 W" in html
    assert not rep.passed


def test_sweep_rows_do_not_count_inconclusive_as_pass(tmp_path):
    from tracer.sweep.collect import collect

    res = trace(tracer.load(_gap_scene(tmp_path, threshold="1e-6")))
    row, _ = collect(res, groups=("requirements",))
    assert row["pass.leak_max"] is False and row["verdict.leak_max"] == "inconclusive"


# ------------------------------------------------------------------ behind_w
def test_behind_w_collimated_beam_crossing_from_behind():
    """A collimated beam of power P crossing a one-sided detector from behind: behind_w = P,
    nothing recorded, the light escapes unchanged; two-sided: all recorded, behind 0."""
    src = beam(rays=9, diameter=2e-3, power=P, direction=(0, 0.6, 0.8), position=(0, -0.0075, -0.01))
    back = scene(sources=[src], detectors=[plane("d", (0, 0, 0), (0, 0, 1))])
    res = trace(back)
    assert res.behind_power("d") == pytest.approx(P, rel=1e-12)
    assert res.detector_power("d") == 0.0
    assert res.ledger.totals()["escaped_w"] == pytest.approx(P, rel=1e-12)
    s = run_summary(analyse(res))
    assert s["detectors"]["d"]["behind_w"] == pytest.approx(P)
    assert any("from behind" in w and "two_sided" in w for w in s["warnings"])
    two = scene(sources=[src], detectors=[plane("d", (0, 0, 0), (0, 0, 1), two_sided=True)])
    res2 = trace(two)
    assert res2.behind_power("d") == 0.0 and res2.detector_power("d") == pytest.approx(P)
    front = scene(sources=[src], detectors=[plane("d", (0, 0, 0), (0, 0, -1))])
    res3 = trace(front)
    assert res3.behind_power("d") == 0.0 and res3.detector_power("d") == pytest.approx(P)
    # a detector the beam misses (beyond its rectangle) counts nothing
    aside = scene(sources=[src], detectors=[plane("d", (0.5, 0, 0), (0, 0, 1), size=(0.1, 0.1))])
    assert trace(aside).behind_power("d") == 0.0


def test_behind_w_after_a_plate_is_the_plate_transmission():
    """Behind an uncoated plate: the incoherent transmission P T^2 / (1 - R^2)."""
    sc = plate_scene(threshold=1e-12, power=P)
    dets = dict(sc.detectors)
    dets["camera"] = plane("camera", (0, 0, 0.01), (0, 0, 1))      # facing away from the light
    res = trace(dataclasses.replace(sc, detectors=dets))
    assert res.detector_power("camera") == 0.0
    assert res.behind_power("camera") == pytest.approx(CAM_TRUE, rel=1e-10)
    # the back detector (z = -5 mm, facing the plate) is crossed from behind by the source
    # beam on its way in (the beam starts at z = -10 mm): all of P
    assert res.behind_power("back") == pytest.approx(P, rel=1e-12)
    with tracer.engine.jit.use_compiled(False):
        ref = trace(dataclasses.replace(sc, detectors=dets))
    assert ref.behind_power("camera") == pytest.approx(res.behind_power("camera"), rel=1e-12)


def test_behind_w_adds_up_over_ray_ranges():
    src = beam(rays=9, diameter=2e-3, power=P)
    sc = scene(sources=[src], detectors=[plane("d", (0, 0, 0), (0, 0, 1))])
    n = tracer.engine.launch_counts(sc)["src"]
    parts = [trace(sc, ray_range=r).behind_power("d") for r in [(0, 4), (4, n)]]
    assert sum(parts) == pytest.approx(P, rel=1e-12)


# ------------------------------------------------------------------ scene keys
def test_scene_keys_auto_threshold_and_max_power(tmp_path):
    sc = tracer.load(_gap_scene(tmp_path, limit="0.1 ppm"))
    (req,) = sc.requirements.values()
    assert req.kind == "max_power" and req.relative and req.limit == pytest.approx(1e-7)
    assert sc.settings.auto_threshold and sc.settings.auto_cost == 30.0
    sc = tracer.load(_gap_scene(tmp_path, "b.toml", threshold='"auto"\nauto_cost = 5'))
    assert sc.settings.auto_threshold and sc.settings.auto_cost == 5.0
    from tracer.scene.summary import format_summary, summarize

    assert "power threshold auto" in format_summary(summarize(sc))
    sc = tracer.load(_gap_scene(tmp_path, "c.toml", threshold="1e-7", limit="3 nW"))
    assert not sc.settings.auto_threshold and sc.settings.power_threshold == 1e-7
    (req,) = sc.requirements.values()
    assert not req.relative and req.limit == pytest.approx(3e-9)


@pytest.mark.parametrize("threshold, limit, needle", [
    ('"sometimes"', "1 nW", 'trace.power_threshold: expected "auto" or a fraction'),
    ("1e-6", "1 km", "requirements.leak_max.limit: expected a power"),
    ("1e-6", "2", "requirements.leak_max.limit"),
])
def test_bad_keys_are_clear_errors(tmp_path, capsys, threshold, limit, needle):
    path = _gap_scene(tmp_path, threshold=threshold, limit=limit)
    code, out, err = _cli(capsys, "check", path)
    assert code == 2 and needle in out + err and str(path.name) in out + err


# ------------------------------------------- untraced power on a detector's side
def test_untraced_near_a_detector():
    res = trace(COARSE)
    # the discarded child (T R^2 of the beam) is born inside the plate, the solid the
    # camera's light last leaves
    assert res.untraced_near("camera") == (pytest.approx(U_COARSE, rel=1e-12), ["plate"])
    tot = res.ledger.totals()
    assert res.ledger.untraced.sum() == pytest.approx(tot["discarded_w"] + tot["cut_w"], rel=1e-12)
    s = run_summary(analyse(res))
    assert s["detectors"]["camera"]["untraced_near_w"] == pytest.approx(U_COARSE)
    assert s["detectors"]["camera"]["untraced_near_solids"] == ["plate"]


def test_untraced_near_cannot_be_told_without_light(tmp_path):
    res = trace(tracer.load(_gap_scene(tmp_path, threshold="1e-6")))
    assert res.untraced_near("leak") is None
    s = run_summary(analyse(res))
    assert s["detectors"]["leak"]["untraced_near_w"] is None


def test_threshold_option_auto_overrides_a_fixed_scene_threshold(tmp_path, capsys):
    js = tmp_path / "auto.json"
    code, out, _ = _cli(capsys, "run", _gap_scene(tmp_path, threshold="1e-6"), "--threshold",
                        "auto", "--json", js)
    data = json.loads(js.read_text(encoding="utf-8"))
    assert code == 1 and data["verdict"] == "fail"
    assert data["settings"]["threshold_choice"]["chosen"] < 1e-6
    assert data["detectors"]["leak"]["power_w"] > 1e-9
    with pytest.raises(SystemExit) as exc:
        main(["run", str(_gap_scene(tmp_path, threshold="1e-6")), "--threshold", "often"])
    assert exc.value.code == 2 and '"auto"' in capsys.readouterr().err


def test_tolerance_yield_counts_inconclusive_trials_as_not_passing():
    from tracer.sweep.tolerance_result import ToleranceResult

    rows = [{"req.r": 0.5, "pass.r": True, "verdict.r": "pass"},
            {"req.r": 0.0, "pass.r": False, "verdict.r": "inconclusive"},
            {"req.r": 2.0, "pass.r": False, "verdict.r": "fail"},
            {"req.r": 0.1, "pass.r": True, "verdict.r": "pass"}]
    tr = ToleranceResult(tolerances=[], deltas=np.zeros((4, 0)), values=[{}] * 4, rows=rows,
                         nominal=rows[0], requirements={"r": ("<=", 1.0)})
    assert tr.yield_fraction() == 0.5 and tr.yield_fraction("r") == 0.5
    assert tr.inconclusive_count("r") == 1
    assert "1 trial(s) inconclusive" in tr.format_text()
