"""Recorded segments: rays leaving the assembly end in a clipped segment flagged escaping."""

import numpy as np
import pytest

from tracer.engine import trace
from tracer.engine.escape import drawing_box, scene_box
from tracer.plot._rays import prepare_rays

from engine_factory import beam, box, plane, scene, solid


def _plate(**kw):
    plate = solid("plate", box((-5e-3, -5e-3, 0), (5e-3, 5e-3, 1e-3),
                               names=("right", "back", "exit", "left", "front", "entrance")))
    return scene(solids=[plate], sources=[beam(**kw)],
                 detectors=[plane("camera", (0, 0, 0.01), (0, 0, -1))], threshold=1e-9)


def test_escaping_segments_carry_the_escaped_power_to_the_drawing_box():
    res = trace(_plate(), segments=10_000)
    seg = res.segments()
    esc = seg["escaping"]
    assert esc.dtype == bool and esc.any() and not esc.all()
    # every escaping ray has its segment: their powers add up to the escaped account
    assert seg["power"][esc].sum() == pytest.approx(res.ledger.totals()["escaped_w"], rel=1e-12)
    # they start on the entrance face (z = 0) going -z, and end on the enlarged box
    assert np.allclose(seg["start"][esc][:, 2], 0.0, atol=1e-12)
    lo, hi = drawing_box(*scene_box(res.compiled))
    assert np.allclose(seg["end"][esc][:, 2], lo[2], rtol=1e-12)
    d = seg["end"][esc] - seg["start"][esc]
    assert np.allclose(d[:, :2], 0.0, atol=1e-15) and np.all(d[:, 2] < 0)
    # the drawing box holds the scene box with 30 % to spare on every axis
    slo, shi = scene_box(res.compiled)
    assert np.all(hi - lo >= 1.3 * (shi - slo) - 1e-15)
    # segments that end on a face or a detector are not flagged
    assert np.all(seg["end"][~esc][:, 2] <= 0.01 + 1e-12)


def test_a_source_ray_that_misses_everything_is_drawn():
    res = trace(_plate(position=(0.08, 0, -0.01)), segments=10)
    seg = res.segments()
    assert len(seg["power"]) == 1 and bool(seg["escaping"][0])
    assert np.allclose(seg["start"][0], [0.08, 0, -0.01])
    assert seg["end"][0, 2] > 0.01  # beyond the camera plane
    rays = prepare_rays(res)
    assert len(rays) == 1 and bool(rays.escaping[0])


def test_segment_cap_counts_escaping_segments():
    res = trace(_plate(), segments=3)
    assert len(res.segments()["power"]) == 3
    assert trace(_plate()).segments()["escaping"].shape == (0,)
