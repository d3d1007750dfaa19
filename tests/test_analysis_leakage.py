"""Analysis of tunnelled power (exact, from the engine's books) and of dropped hits."""

import dataclasses
import math
import re
from pathlib import Path

import numpy as np
import pytest
import tmm

from tracer.analysis import (analyse, evaluate, gap_leakage, gap_tunnel_table, ghost_table,
                             path_tunnelled_power, power_budget, run_summary)
from tracer.engine import trace
from tracer.scene.model import FaceTreatment, RequirementSpec

from engine_factory import plate_scene, prism_pair_scene

DOC = Path(__file__).resolve().parents[1] / "docs" / "json-summary.md"
D = 0.3e-6


def _absorbing_pair(**kw):
    sc = prism_pair_scene(gap_thickness=D, stokes=(1, 0, 0, 0), **kw)
    solids = dict(sc.solids)
    ab = FaceTreatment(kind="absorber")
    solids["lower"] = dataclasses.replace(solids["lower"], faces={"leg_a": ab, "leg_b": ab})
    solids["upper"] = dataclasses.replace(solids["upper"], faces={"leg_b": ab})  # one pass only
    return dataclasses.replace(sc, solids=solids)


def _first_pass():
    # entrance T (Fresnel, normal incidence; Hecht, Optics, 5th ed., 2017, sec. 4.6) x gap T
    # of glass | air 0.3 um | glass at 45 deg, unpolarised (tmm, S. J. Byrnes, coh_tmm)
    T_in = 1 - (0.5 / 2.5) ** 2
    Tg = [tmm.coh_tmm(p, [1.5, 1.0, 1.5], [np.inf, D, np.inf], math.pi / 4, 550e-9)["T"] for p in "sp"]
    return T_in * sum(Tg) / 2


def test_max_leakage_counts_light_absorbed_after_tunnelling():
    reqs = {"leak": RequirementSpec("leak", "max_leakage", 1e-3, gap="g")}
    res = trace(dataclasses.replace(_absorbing_pair(), requirements=reqs))
    # the tunnelled light is absorbed in the lower prism: the path-table bound sees nothing
    assert path_tunnelled_power(res, ["upper.hypotenuse", "lower.hypotenuse"]) == 0.0
    (v,) = evaluate(res)
    assert v.value == pytest.approx(gap_leakage(res, "g"))
    assert v.value == pytest.approx(_first_pass(), rel=1e-9)
    assert not v.passed


def test_budget_text_and_json_list_the_tunnelled_power():
    res = trace(_absorbing_pair())
    b = power_budget(res)
    g = b.tunnelled["g"]
    assert g["tunnelled_w"] == pytest.approx(_first_pass(), rel=1e-9)
    assert g["b_to_a_w"] == 0.0
    assert "crossed gap g (upper.hypotenuse | lower.hypotenuse)" in b.format_text()
    assert "of which tunnelled" in b.format_text()
    assert b.to_dict()["tunnelled"]["g"]["a_to_b_w"] == g["a_to_b_w"]
    assert gap_tunnel_table(res)["g"] == g
    s = run_summary(analyse(res))
    assert s["gaps"]["g"]["leakage"] == pytest.approx(_first_pass(), rel=1e-9)
    documented = set(re.findall(r"^\| `([a-z_0-9]+)` \|", DOC.read_text(encoding="utf-8"), flags=re.M))
    assert set(s["gaps"]["g"]) <= documented
    assert {"gaps", "hits_dropped"} <= documented
    # closure is unaffected: tunnelled power is not an account
    assert b.relative_residual < 1e-12


def test_dropped_hits_are_counted_and_warned_about():
    sc = plate_scene(rays=20, threshold=1e-9)
    full = trace(sc)
    assert full.hits_dropped == 0
    assert "warning" not in ghost_table(full, "camera").format_text()
    res = trace(sc, max_hits=15)
    kept = len(res.hits()["power"])
    total = sum(p["rays"] for d in ("camera", "back") for p in res.paths(d))
    assert kept == 15 and res.hits_dropped == total - kept
    assert res.hits_dropped_on("camera") + res.hits_dropped_on("back") == res.hits_dropped
    # powers stay complete
    assert res.detector_power("camera") == pytest.approx(full.detector_power("camera"), rel=1e-12)
    for det in ("camera", "back"):
        t = ghost_table(res, det)
        assert t.hits_dropped == res.hits_dropped_on(det)
        if t.hits_dropped:
            assert f"warning: {t.hits_dropped} hit" in t.format_text()
    s = run_summary(analyse(res))
    assert s["hits_dropped"] == res.hits_dropped
    assert s["detectors"]["camera"]["hits_dropped"] == res.hits_dropped_on("camera")
    assert res.summary()["hits_dropped"] == res.hits_dropped
