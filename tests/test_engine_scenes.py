"""Every demo scene traces and its ledger closes (common practice, no source)."""

from pathlib import Path

import pytest

from tracer.engine import trace

SCENES = sorted((Path(__file__).resolve().parents[1] / "scenes").glob("*.toml"))


@pytest.mark.parametrize("path", SCENES, ids=[p.stem for p in SCENES])
def test_demo_scene_ledger_closes(path):
    from tracer.scene import load

    res = trace(load(path), progress=False)
    t = res.ledger.totals()
    booked = t["detected_w"] + t["absorbed_w"] + t["escaped_w"] + t["discarded_w"] + t["cut_w"] + t["sampling_w"]
    assert abs(booked - t["source_w"]) <= 1e-9 * t["source_w"]
    s = res.summary()
    assert s["source_power_w"] == pytest.approx(t["source_w"])
    for name, d in s["detectors"].items():
        assert d["power_w"] >= 0


def test_demo_scenes_exist():
    assert len(SCENES) >= 1
