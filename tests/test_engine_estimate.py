"""Run estimate (tracer/engine/estimate.py) and the engine's event and memory budgets."""

from __future__ import annotations

from pathlib import Path

import pytest

import tracer
from tracer.cli import main
from tracer.engine import estimate as est
from tracer.engine.tree import EventBudgetExceeded

PLATE = str(Path(__file__).parent.parent / "scenes" / "plate_ghost.toml")


def test_estimate_is_close_to_the_trace():
    # a uniform grid beam on a plate: every ray has the same events, so the pilot's rate
    # is the whole trace's (common practice, no source)
    scene = tracer.load(PLATE)
    e = est.estimate(scene)
    res = tracer.trace(scene)
    assert e.rays == 100 and not e.events_lower_bound
    assert e.events == pytest.approx(res.events, rel=0.05)
    big = est.estimate(scene, rays=10**7)
    assert big.events == pytest.approx(res.events * 10**5, rel=0.05)
    assert big.memory > e.memory


def test_check_fits_refuses_with_the_estimate_and_the_override():
    scene = tracer.load(PLATE)
    with pytest.raises(est.TooLarge) as info:
        est.check_fits(scene, memory_budget=1e6)
    text = str(info.value)
    assert "--allow-large" in text and "source rays" in text and "memory" in text
    with pytest.raises(est.TooLarge) as info:
        est.check_fits(scene, rays=10**7, event_budget=1e6)
    assert "events" in str(info.value)
    assert est.check_fits(scene, memory_budget=1e6, allow_large=True).rays == 100


def test_trace_stops_at_its_budgets():
    scene = tracer.load(PLATE)
    with pytest.raises(EventBudgetExceeded) as info:
        tracer.trace(scene, event_budget=10)
    assert info.value.events > 10
    with pytest.raises(EventBudgetExceeded) as info:
        tracer.trace(scene, memory_budget=100.0)
    assert "memory budget" in str(info.value)
    assert tracer.trace(scene, event_budget=10**6, memory_budget=1e9).events > 0


def test_cli_refuses_a_run_that_would_not_fit(monkeypatch, capsys):
    monkeypatch.setattr(est, "machine_memory", lambda: 1e6)
    assert main(["run", "-q", PLATE]) == 2
    err = capsys.readouterr().err
    assert "would not fit this machine" in err and "--allow-large" in err
    assert "Traceback" not in err
    assert main(["run", "-q", PLATE, "--allow-large"]) in (0, 1)


def test_report_and_ghosts_refuse_too(monkeypatch, capsys, tmp_path):
    monkeypatch.setattr(est, "machine_memory", lambda: 1e6)
    assert main(["report", PLATE, "--out", str(tmp_path), "--no-figures", "-q"]) == 2
    assert main(["ghosts", PLATE, "-q"]) == 2
    err = capsys.readouterr().err
    assert err.count("--allow-large") == 2 and "Traceback" not in err


def test_sweep_and_tolerance_refuse_what_would_not_fit(monkeypatch, capsys):
    coupler = str(Path(__file__).parent.parent / "scenes" / "microwave_prism_coupler.toml")
    monkeypatch.setattr(est, "EVENT_BUDGET", 1000)  # every point's events count
    code = main(["sweep", coupler, "--vary", "solids.output.mate.gap", "2mm", "4mm", "3",
                 "--workers", "1", "-q"])
    assert code == 2
    assert main(["tolerance", coupler, "--trials", "5", "--workers", "1", "-q"]) == 2
    err = capsys.readouterr().err
    assert err.count("--allow-large") == 2 and "Traceback" not in err


def test_estimate_of_an_automatic_threshold_is_its_first_trace():
    # "auto" is estimated at the first threshold the automatic choice tries, and the
    # message says the retraces may cost up to auto_cost times as much
    from tracer import tolerances

    scene = tracer.load(PLATE)
    e = est.estimate(scene, power_threshold="auto")
    first = tracer.trace(scene, power_threshold=tolerances.AUTO_THRESHOLD_START)
    assert e.auto_cost == pytest.approx(tolerances.AUTO_THRESHOLD_COST)
    assert e.events == pytest.approx(first.events, rel=0.05)
    assert "up to 30 times" in e.text()
    assert est.estimate(scene, power_threshold=1e-3).auto_cost is None
