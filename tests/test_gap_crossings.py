"""Every crossing of a gap is booked: tunnelled (frustrated TIR) and refracted, per direction.

References:
* Fresnel power reflectance of one interface, s polarisation,
  ``Rs = ((n1 cos t1 - n2 cos t2) / (n1 cos t1 + n2 cos t2))^2`` and normal incidence
  ``R = ((n - 1) / (n + 1))^2`` (Hecht, "Optics", 5th ed., 2017, sec. 4.6; recalled from
  memory).
* Incoherent transmission of a thick layer between two interfaces, the sum of the
  multiple reflections ``T = T1 T2 / (1 - R1 R2)`` (common practice, e.g. the incoherent
  substrate of H. A. Macleod, "Thin-Film Optical Filters", 4th ed., 2010; recalled from
  memory).
* Coherent thin layer: the ``tmm`` package (S. J. Byrnes, "Multilayer optical
  calculations", arXiv:1603.02720, 2016), ``coh_tmm`` for glass | air, d | glass.
* Fan geometry: Snell's law at the entrance face and the 45 deg hypotenuse, computed
  here from the materials' published indices.
"""

import dataclasses
import json
import math
from pathlib import Path

import numpy as np
import pytest
import tmm

from tracer.analysis import evaluate, gap_crossings, gap_leakage, power_budget, run_summary, analyse
from tracer.analysis.leakage import leakage_notes
from tracer.engine import jit, trace, trace_sequence
from tracer.engine.ledger import Ledger
from tracer.errors import TracerError
from tracer.scene import load
from tracer.scene.model import FaceTreatment

from engine_factory import prism_pair_scene

SCENES = Path(__file__).resolve().parents[1] / "scenes"
CONE = SCENES / "tir_prism_pair_cone.toml"
PAIR = SCENES / "tir_prism_pair.toml"
WL = 550e-9


def _with_absorbers(sc, faces):
    solids = dict(sc.solids)
    for name, face in faces:
        s = solids[name]
        solids[name] = dataclasses.replace(s, faces={**s.faces, face: FaceTreatment(kind="absorber")})
    return dataclasses.replace(sc, solids=solids)


def _one_pass(sc):
    # exit faces absorb: the light meets the gap once, from upper (A) to lower (B)
    return _with_absorbers(sc, [("upper", "leg_b"), ("lower", "leg_a"), ("lower", "leg_b")])


def _rs(n1, n2, theta1):
    s2 = n1 * math.sin(theta1) / n2
    c1, c2 = math.cos(theta1), math.sqrt(1 - s2 * s2)
    return ((n1 * c1 - n2 * c2) / (n1 * c1 + n2 * c2)) ** 2


# s polarised: the source x_axis is z, the s direction at the hypotenuse
S_POL = (1, 1, 0, 0)


def test_refracted_crossing_of_a_thick_gap_is_the_incoherent_fresnel_series():
    # n = 1.3: the critical angle against air is 50.3 deg, so the 45 deg ray is refracted
    # through a 50 um air gap, incoherently (T1 T2 / (1 - R1 R2), R2 = R1 by reciprocity)
    n = 1.3
    sc = _one_pass(prism_pair_scene(n=n, gap_thickness=50e-6, stokes=S_POL, threshold=1e-14))
    sc = dataclasses.replace(sc, gaps={"g": dataclasses.replace(sc.gaps["g"],
                                                                 coherence="incoherent")})
    res = trace(sc)
    r = _rs(n, 1.0, math.radians(45))
    t_gap = (1 - r) ** 2 / (1 - r * r)
    t_in = 1 - ((n - 1) / (n + 1)) ** 2
    expected = t_in * t_gap  # source power 1 W
    g = gap_crossings(res, "g")
    assert g["refracted_w"] == pytest.approx(expected, rel=1e-10)
    assert g["crossed_w"] == g["refracted_w"]
    assert g["tunnelled_w"] == 0.0
    assert g["refracted_a_to_b_w"] == g["refracted_w"] and g["refracted_b_to_a_w"] == 0.0
    assert g["refracted_share"] == 1.0
    # the leakage (default: every crossing) sees it; tunnelling alone does not
    assert gap_leakage(res, "g") == pytest.approx(expected, rel=1e-10)
    assert gap_leakage(res, "g", mechanism="tunnelled") == 0.0
    assert res.tunnelled_power("g") == 0.0


def test_refracted_crossing_of_a_thin_gap_equals_tmm():
    n, d = 1.3, 0.4e-6
    sc = _one_pass(prism_pair_scene(n=n, gap_thickness=d, stokes=S_POL, threshold=1e-14))
    res = trace(sc)
    t_gap = tmm.coh_tmm("s", [n, 1.0, n], [np.inf, d, np.inf], math.radians(45), WL)["T"]
    t_in = 1 - ((n - 1) / (n + 1)) ** 2
    assert res.crossed_power("g", mechanism="refracted") == pytest.approx(t_in * t_gap, rel=1e-9)
    assert res.crossed_power("g") == res.crossed_power("g", mechanism="refracted")


def test_tunnelled_and_refracted_are_told_apart_and_add_up():
    # n = 1.5 at 45 deg is beyond the 41.8 deg critical angle: the same pair tunnels only
    sc = _one_pass(prism_pair_scene(n=1.5, gap_thickness=0.3e-6, stokes=S_POL, threshold=1e-14))
    res = trace(sc)
    t_gap = tmm.coh_tmm("s", [1.5, 1.0, 1.5], [np.inf, 0.3e-6, np.inf], math.radians(45), WL)["T"]
    assert res.tunnelled_power("g") == pytest.approx(0.96 * t_gap, rel=1e-9)
    assert res.crossed_power("g", mechanism="refracted") == 0.0
    assert res.crossed_power("g") == res.tunnelled_power("g")


def test_ledger_books_crossings_per_direction_and_mechanism():
    led = Ledger(["s0", "s1"], detectors=[], faces=["a.h", "b.h", "a.x"],
                 bulks=["ambient", "a", "b"], gaps=[("g", 0, 1)])
    T, R = Ledger.TRANSMIT_KIND, Ledger.TUNNEL_KIND
    # from a.h to b.h (A to B) and back; a.x is no gap face; the last row does not cross
    led.book_crossings(source=np.array([0, 0, 1, 0, 1, 0]),
                       face=np.array([0, 0, 1, 1, 2, 0]),
                       to_face=np.array([1, 1, 0, 0, 2, 0]),
                       kind=np.array([T, R, T, R, T, T]),
                       power=np.array([1.0, 2.0, 4.0, 8.0, 16.0, 32.0]))
    assert led.refracted("g", side=0) == 1.0 and led.tunnelled("g", side=0) == 2.0
    assert led.refracted("g", side=1) == 4.0 and led.tunnelled("g", side=1) == 8.0
    assert led.crossed("g") == 15.0
    assert led.crossed("g", source=1) == 4.0
    other = Ledger(["s0", "s1"], detectors=[], faces=["a.h", "b.h", "a.x"],
                   bulks=["ambient", "a", "b"], gaps=[("g", 0, 1)])
    other.merge(led)
    assert other.crossed("g") == 15.0 and other.refracted("g") == 5.0


def test_summary_lists_both_directions_of_each_mechanism():
    # bare exit faces: light comes back across the gap (B to A) after reflections
    sc = prism_pair_scene(n=1.3, gap_thickness=0.4e-6, stokes=S_POL, threshold=1e-12)
    res = trace(sc)
    g = res.summary()["gaps"]["g"]
    assert g["crossed_w"] == pytest.approx(g["tunnelled_w"] + g["refracted_w"], rel=1e-14)
    assert g["a_to_b_w"] + g["b_to_a_w"] == pytest.approx(g["tunnelled_w"], rel=1e-14)
    assert g["refracted"]["b_to_a_w"] > 0.0
    for m in ("crossed", "tunnelled", "refracted"):
        assert g[m]["a_to_b_w"] + g[m]["b_to_a_w"] == pytest.approx(g[f"{m}_w"], rel=1e-14)
    assert g["per_source"]["src"]["crossed_w"] == g["crossed_w"]
    assert g["tir_possible"] is True
    # energy still closes: crossings are not accounts
    t = res.ledger.totals()
    assert abs(t["residual_w"]) < 1e-12


def test_cone_demo_fails_by_refraction():
    scene = load(CONE)
    res = trace(scene)
    g = gap_crossings(res, "tir")
    assert g["crossed"] >= 0.10  # of the source power
    assert g["refracted_w"] >= 0.10 * g["source_w"]
    assert g["refracted_share"] > 0.99
    verdicts = {v.name: v for v in evaluate(res)}
    leak = verdicts["gap_leakage"]
    assert not leak.passed
    assert leak.value == pytest.approx(g["crossed"], rel=1e-12)
    notes = "\n".join(leakage_notes(res, list(verdicts.values())))
    assert "refracted" in notes and "fails mostly by refraction" in notes
    # the JSON summary names the refracted share under gaps.tir
    summary = json.loads(json.dumps(run_summary(analyse(res))))
    assert summary["gaps"]["tir"]["refracted_w"] == pytest.approx(g["refracted_w"], rel=1e-12)
    assert summary["gaps"]["tir"]["refracted_share"] > 0.99
    (req,) = [r for r in summary["requirements"] if r["name"] == "gap_leakage"]
    assert req["mechanism"] == "crossed" and not req["passed"]
    # judging tunnelling alone would pass: the hidden failure the issue reported
    assert gap_leakage(res, "tir", mechanism="tunnelled") < scene.requirements["gap_leakage"].limit


def test_collimated_demo_passes_for_the_right_reason():
    res = trace(load(PAIR))
    g = gap_crossings(res, "tir")
    assert g["refracted_w"] == 0.0
    assert g["crossed_w"] == g["tunnelled_w"] > 0.0
    assert all(v.passed for v in evaluate(res))


def test_cemented_joint_prints_no_tunnelling_line():
    # cement denser than both solids: no TIR possible at the joint
    sc = prism_pair_scene(n=1.5, gap_thickness=10e-6, gap_n=1.56, threshold=1e-9)
    res = trace(sc)
    assert res.gap_tir_possible("g") is False
    text = power_budget(res).format_text()
    assert "crossed gap g" in text and "cemented joint" in text
    assert "tunnelled" not in text
    assert res.summary()["gaps"]["g"]["tir_possible"] is False


@pytest.mark.skipif(not jit.available, reason="numba not installed")
@pytest.mark.parametrize("mode", ["tree", "monte-carlo"])
def test_compiled_and_numpy_book_the_same_crossings(mode):
    scene = load(CONE)
    rays = 121 if mode == "tree" else 3000
    with jit.use_compiled(False):
        ref = trace(scene, rays=rays, mode=mode, progress=False)
    with jit.use_compiled(True):
        got = trace(scene, rays=rays, mode=mode, progress=False)
    np.testing.assert_allclose(got.ledger.refract, ref.ledger.refract, rtol=1e-12, atol=0)
    np.testing.assert_allclose(got.ledger.tunnel, ref.ledger.tunnel, rtol=1e-12, atol=0)
    assert ref.crossed_power("tir", mechanism="refracted") > 0.05 * ref.source_power_w


def test_monte_carlo_estimates_the_tree_crossings():
    scene = load(CONE)
    tree = trace(scene, progress=False)
    mc = trace(scene, rays=4000, mode="monte-carlo", progress=False)
    p = tree.crossed_power("tir") / tree.source_power_w
    # binomial standard error of the fraction of rays that cross (a few crossings per ray
    # at most; 5 sigma)
    assert mc.crossed_power("tir") / mc.source_power_w == pytest.approx(
        p, abs=5 * math.sqrt(p * (1 - p) / (4000 * 3)) + 0.01)


def test_mechanism_key_is_parsed_and_checked(tmp_path):
    text = CONE.read_text()
    assert load(CONE).requirements["gap_leakage"].mechanism == "crossed"
    f = tmp_path / "t.toml"
    f.write_text(text.replace('mechanism = "crossed"', 'mechanism = "tunnelled"'))
    assert load(f).requirements["gap_leakage"].mechanism == "tunnelled"
    f.write_text(text.replace('mechanism = "crossed"', ''))
    assert load(f).requirements["gap_leakage"].mechanism == "crossed"
    f.write_text(text.replace('mechanism = "crossed"', 'mechanism = "leaked"'))
    with pytest.raises(TracerError) as err:
        load(f)
    msg = str(err.value)
    assert "requirements.gap_leakage.mechanism" in msg and "refracted" in msg and "leaked" in msg
    f.write_text(text.replace('limit = "85 %"', 'limit = "85 %"\nmechanism = "crossed"'))
    with pytest.raises(TracerError) as err:
        load(f)
    assert "requirements.illumination_throughput.mechanism" in str(err.value)


def _fan_closed_form(scene, wl):
    """Fraction of the uniform fan whose internal incidence on the hypotenuse is below the
    critical angle, and the worst-case margin [deg] (Snell at leg_a, then 45 deg - tilt)."""
    src = scene.sources["illumination"]
    n_air = float(np.real(scene.ambient.refractive_index(np.array([wl]))[0]))
    n_glass = float(np.real(scene.solids["lower"].material.refractive_index(np.array([wl]))[0]))
    n_gap = float(np.real(scene.gaps["tir"].medium.refractive_index(np.array([wl]))[0]))
    crit = math.asin(n_gap / n_glass)
    a = float(src.half_angle)
    # tilt inside the glass for a fan angle phi: n_air sin(phi) = n_glass sin(phi')
    inner = lambda phi: math.asin(n_air * math.sin(phi) / n_glass)  # noqa: E731
    # below critical where 45 deg - phi' < crit, i.e. phi' > 45 deg - crit (one side only)
    phi_lim = math.asin(n_glass * math.sin(math.radians(45) - crit) / n_air)
    fraction = max(a - phi_lim, 0.0) / (2 * a)
    worst = math.degrees(math.radians(45) - inner(a) - crit)
    return fraction, worst


def test_path_report_fraction_below_critical_matches_snell():
    scene = load(CONE)
    wl = float(scene.sources["illumination"].spectrum.wavelengths[0])
    rep = trace_sequence(scene, spread_rays=4001)
    step = next(s for s in rep.steps if s["face"] == "lower.hypotenuse")
    fraction, worst = _fan_closed_form(scene, wl)
    assert step["below_critical_fraction"] == pytest.approx(fraction, abs=1.5 / 4001)
    assert step["worst_tir_margin_deg"] == pytest.approx(worst, abs=1e-9)
    assert fraction > 0.2 and worst < 0
    assert rep.warnings and "lower.hypotenuse" in rep.warnings[0]
    s = rep.summary()
    assert s["spread"]["kind"] == "fan" and s["steps"][1]["below_critical_fraction"] == step[
        "below_critical_fraction"]


def test_path_report_collimated_pair_has_no_warning():
    rep = trace_sequence(load(PAIR))
    step = next(s for s in rep.steps if s["face"] == "lower.hypotenuse")
    assert step["below_critical_fraction"] == 0.0
    assert step["worst_tir_margin_deg"] == pytest.approx(step["tir_margin_deg"], abs=1e-9)
    assert rep.warnings == []


@pytest.mark.parametrize("old, new", [('half_angle = "12 deg"', 'half_angle = "5 deg"'),
                                      ("crown-517642", "dense-flint-755276")])
def test_cone_demo_passes_with_the_changes_its_comment_suggests(tmp_path, old, new):
    f = tmp_path / "fixed.toml"
    f.write_text(CONE.read_text().replace(old, new))
    res = trace(load(f))
    assert all(v.passed for v in evaluate(res))
    assert gap_crossings(res, "tir")["refracted_w"] == 0.0


def test_path_command_warns_and_writes_the_spread(tmp_path, capsys):
    from tracer.cli import main

    js = tmp_path / "p.json"
    code = main(["path", str(CONE), "--json", str(js)])
    out = capsys.readouterr().out
    assert code == 0
    assert "worst TIR margin" in out and "WARNING" in out and "below the critical angle" in out
    data = json.loads(js.read_text())
    step = data["steps"][1]
    assert step["below_critical_fraction"] > 0.2 and step["worst_tir_margin_deg"] < 0
    assert data["spread"]["kind"] == "fan" and data["warnings"]
