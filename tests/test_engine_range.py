"""The public ray_range setting of tracer.trace: disjoint ranges add up to the full trace."""

import dataclasses

import pytest

from tracer.engine import EngineError, launch_counts, trace
from tracer.sweep import merge_summaries, trace_split

from engine_factory import beam, prism_pair_scene


def _two_source_scene():
    sc = prism_pair_scene(gap_thickness=0.25e-6, stokes=(1, 0, 0, 0))
    src = dict(sc.sources)
    a = src["src"]
    src["src"] = beam(position=a.position, direction=a.direction, x_axis=(0, 0, 1), rays=23,
                      diameter=2e-3, sampling="random", wavelengths=(550e-9, 633e-9))
    src["other"] = beam(name="other", position=a.position, direction=a.direction,
                        x_axis=(0, 0, 1), rays=11, diameter=1e-3, power=0.5)
    return dataclasses.replace(sc, sources=src)


def test_launch_counts_are_rays_times_lines():
    sc = _two_source_scene()
    assert launch_counts(sc) == {"src": 46, "other": 11}
    assert launch_counts(sc, rays=5) == {"src": 10, "other": 5}


@pytest.mark.parametrize("mode", ["tree", "monte-carlo"])
def test_disjoint_ranges_sum_to_the_full_trace(mode):
    sc = _two_source_scene()
    full = trace(sc, mode=mode, batch_size=7)
    pieces = [trace(sc, mode=mode, batch_size=7, ray_range=r)
              for r in [(0, 10), (10, 30), (30, None)]]
    assert sum(p.launched.sum() for p in pieces) == full.launched.sum()
    for k in ("detected_w", "escaped_w", "discarded_w", "absorbed_w", "source_w"):
        assert sum(p.ledger.totals()[k] for p in pieces) == pytest.approx(
            full.ledger.totals()[k], rel=1e-12, abs=1e-18)
    assert sum(p.tunnelled_power("g") for p in pieces) == pytest.approx(
        full.tunnelled_power("g"), rel=1e-12)
    merged = merge_summaries([p.summary(max_paths=10**6) for p in pieces], max_paths=10**6)
    s = full.summary(max_paths=10**6)
    assert merged["gaps"]["g"]["a_to_b_w"] == pytest.approx(s["gaps"]["g"]["a_to_b_w"], rel=1e-12)
    assert merged["gaps"]["g"]["faces"] == s["gaps"]["g"]["faces"]
    pa = {p["signature"]: p["power_w"] for p in merged["detectors"]["top"]["paths"]}
    pb = {p["signature"]: p["power_w"] for p in s["detectors"]["top"]["paths"]}
    assert pa.keys() == pb.keys()
    for k in pa:
        assert pa[k] == pytest.approx(pb[k], rel=1e-12)


def test_per_source_ranges_and_unnamed_sources():
    sc = _two_source_scene()
    res = trace(sc, ray_range={"other": (2, 5)})
    assert list(res.launched) == [0, 3]
    assert res.source_power_w == pytest.approx(0.5 * 3 / 11, rel=1e-12)
    # a range past the end is clipped
    assert list(trace(sc, ray_range=(40, 1000)).launched) == [6, 0]


def test_trace_split_keeps_gap_books():
    sc = _two_source_scene()
    single = trace(sc).summary(max_paths=10**6)
    split = trace_split(sc, parts=3, max_paths=10**6)
    assert split["gaps"]["g"]["tunnelled_w"] == pytest.approx(single["gaps"]["g"]["tunnelled_w"],
                                                              rel=1e-12)
    assert split["hits_dropped"] == single["hits_dropped"] == 0


@pytest.mark.parametrize("bad", [(3, 1), (-1, 4), (0.5, 2), "all", {"nope": (0, 1)}])
def test_bad_ranges_are_user_errors(bad):
    with pytest.raises(EngineError, match="ray_range"):
        trace(_two_source_scene(), ray_range=bad)
