"""Monte Carlo tolerancing (tracer.sweep.tolerance): zero tolerances, the penta prism's
constant deviation, file tolerances, yield, sensitivities, seeds, CLI."""

import json
import math
from pathlib import Path

import numpy as np
import pytest

import tracer
from pair_scenes import ftir_pair_toml
from tracer.cli import main
from tracer.scene import loads
from tracer.sweep import (Tolerance, ToleranceError, parse_tol_option, read_tolerances, spearman,
                          tolerance_run)
from tracer.sweep.tolerance import draw_deltas

ROOT = Path(__file__).resolve().parents[1]
PENTA = ROOT / "scenes" / "penta_prism_laser.toml"

PAIR = ftir_pair_toml(title="FTIR pair with tolerances (test)", seed=4, gap="0.3 um", extra="""
[requirements.enough]
kind = "min_power"
detector = "through"
limit = "16 %"

[tolerances.gap]
key = "solids.upper.mate.gap"
dist = "normal"
sigma = "0.03 um"

[tolerances.index]
index = "glass"
dist = "uniform"
half_width = 1e-5
""")


@pytest.fixture()
def pair(tmp_path):
    p = tmp_path / "pair.toml"
    p.write_text(PAIR)
    return str(p)


def test_zero_tolerances_reproduce_the_nominal_trace(pair):
    zero = [parse_tol_option("solids.upper.mate.gap", "normal", "0 um"),
            parse_tol_option("sources.beam.position[0]", "uniform", "0 mm"),
            parse_tol_option("solids.lower.rotation[2]", "normal", "0 deg")]
    doc_scene = PAIR.split("[tolerances.gap]")[0]
    res = tolerance_run(loads(doc_scene, path=pair), zero, trials=4)
    nominal = tracer.trace(loads(doc_scene, path=pair)).summary()
    assert res.nominal["power.through"] == nominal["detectors"]["through"]["power_w"]
    for row in res.rows:
        assert row == res.nominal
    assert res.yield_fraction() == 1.0
    assert res.sensitivity("fraction.through") == []


def test_penta_prism_keeps_90_degrees_under_a_uniform_tilt():
    # constant deviation of the penta prism: a rotation about the axis normal to its
    # principal section leaves the deviation at 90 deg (e.g. Smith, Modern Optical
    # Engineering, 4th ed. 2008, ch. 8 -- common practice)
    tilt = parse_tol_option("solids.penta.rotation[2]", "uniform", "2 deg")
    res = tolerance_run(PENTA, [tilt], trials=12, settings={"rays": 7},
                        groups=("power", "sequence"), states={})
    dev = res.column("deviation_deg")
    assert np.all(np.abs(dev - 90.0) < 1e-9)
    assert np.ptp(res.deltas[:, 0]) > 1.0  # the tilts really were degrees apart
    # a tilt about the x axis turns the reflectors' edge out of the beam's plane: the
    # angle between input and output falls below 90 deg (second order, ~ t^2)
    roll = parse_tol_option("solids.penta.rotation[0]", "uniform", "2 deg")
    res2 = tolerance_run(PENTA, [roll], trials=12, settings={"rays": 7},
                         groups=("power", "sequence"), states={})
    dev2 = res2.column("deviation_deg")
    t = np.radians(res2.deltas[:, 0])
    # a 90 deg rotation about an edge tilted by t from the normal to the beam: cos(dev) = sin(t)^2
    assert np.allclose(dev2, np.degrees(np.arccos(np.sin(t) ** 2)), atol=2e-3)
    assert np.max(np.abs(dev2 - 90)) > 0.02


def test_file_tolerances_index_yield_and_ranking(pair):
    tols, rest = read_tolerances(load_doc(pair))
    assert [t.name for t in tols] == ["gap", "index"]
    assert tols[1].paths == ("materials.glass.n",)
    assert "tolerances" not in rest
    res = tolerance_run(pair, trials=40, groups=("power", "requirements"), states={})
    n_values = {v["materials.glass.n"] for v in res.values}
    assert len(n_values) == 40 and all(abs(n - 1.5) <= 1e-5 for n in n_values)
    frac = res.column("fraction.through")
    # yield = trials whose requirement passed, as the verdicts say
    assert res.yield_fraction() == pytest.approx(np.mean(frac >= 0.16))
    assert 0 < res.yield_fraction() < 1
    rank = res.sensitivity("fraction.through")
    assert rank[0][0] == "gap" and rank[0][1] > 0.9 and rank[0][2] < -0.9  # thicker: less T
    worst = res.worst(3)
    assert worst[0]["margin"] == pytest.approx((frac.min() - 0.16) / 0.16)
    assert worst[0]["margin"] <= worst[1]["margin"] <= worst[2]["margin"]


def load_doc(path):
    import tomllib

    return tomllib.loads(Path(path).read_text())


def test_trials_do_not_depend_on_workers(pair):
    a = tolerance_run(pair, trials=6, groups=("power",), states={})
    b = tolerance_run(pair, trials=6, groups=("power",), states={}, workers=2)
    assert a.rows == b.rows
    assert np.array_equal(a.deltas, b.deltas)


def test_draws_depend_on_trial_and_tolerance_only():
    g = Tolerance("g", ("a",), "normal", 2.0, "um")
    u = Tolerance("u", ("b",), "uniform", 0.5, "deg")
    d1 = draw_deltas([g], 3000, seed=9)
    d2 = draw_deltas([g, u], 3000, seed=9)
    assert np.array_equal(d1[:, 0], d2[:, 0])
    assert abs(d2[:, 0].mean()) < 0.15 and d2[:, 0].std() == pytest.approx(2.0, rel=0.05)
    assert np.all(np.abs(d2[:, 1]) <= 0.5) and d2[:, 1].std() == pytest.approx(0.5 / math.sqrt(3), rel=0.05)


def test_spearman_against_known_values():
    # Spearman's rho of a monotonic relation is exactly 1; with one swap of ranks in
    # n = 5 it is 1 - 6 * 2 / (5 * 24) = 0.9 (Spearman 1904, the d^2 formula)
    x = np.arange(5.0)
    assert spearman(x, np.exp(x)) == pytest.approx(1.0)
    assert spearman(x, [0, 2, 1, 3, 4]) == pytest.approx(0.9)
    assert spearman(x, np.ones(5)) == 0.0


@pytest.mark.parametrize("table, words", [
    ({"a": {"key": "x.y", "dist": "gauss", "sigma": 1}}, ['tolerances.a.dist', "normal"]),
    ({"a": {"key": "x.y", "dist": "normal"}}, ['missing "sigma"']),
    ({"a": {"key": "x.y", "dist": "uniform", "sigma": 1}}, ['takes "half_width"']),
    ({"a": {"key": "x.y", "sgma": 1}}, ['unknown key "sgma"', 'did you mean "sigma"']),
    ({"a": {"index": "bk7", "sigma": 1e-4}}, ["catalog materials cannot take a delta-n"]),
    ({"a": {"key": "x.y", "sigma": "-1 um"}}, ["non-negative"]),
])
def test_malformed_file_tolerances(table, words):
    with pytest.raises(ToleranceError) as exc:
        read_tolerances({"tolerances": table, "materials": {}})
    for w in words:
        assert w in str(exc.value)


def test_cli_tolerance(pair, tmp_path, capsys):
    out = tmp_path / "tol"
    rc = main(["tolerance", pair, "--trials", "8", "--out", str(out), "--oat",
               "--tol", "sources.beam.position[0]", "normal", "0.01mm"])
    assert rc == 0
    text = capsys.readouterr().out
    assert "yield" in text and "gap" in text
    data = json.loads((out / "tolerance.json").read_text())
    assert data["trials"] == 8 and "yield" in data["requirements"]["enough"]
    assert data["one_at_a_time"]["fraction.through"][0]["tolerance"] == "gap"
    assert (out / "tolerance.csv").read_text().startswith("trial,tol:gap [um],tol:index")
    assert any(p.name.startswith("hist-") for p in out.iterdir())
    assert main(["tolerance", pair, "--trials", "8", "--min-yield", "0.999", "-q"]) == 1
    assert main(["tolerance", pair, "--tol", "x.y", "gauss", "1"]) == 2
