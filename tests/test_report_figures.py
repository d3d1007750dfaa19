"""The drawing run behind ray diagrams: few rays, same settings, maps from the full trace."""

from pathlib import Path

import tracer
from tracer.report.figures import DIAGRAM_RAYS, drawing_result

SCENES = Path(__file__).parents[1] / "scenes"


def test_many_rays_are_redrawn_with_a_few_and_the_same_settings():
    scene = tracer.load(SCENES / "plate_ghost.toml")
    full = tracer.trace(scene, rays=300, power_threshold=1e-8, seed=3, progress=False)
    drawn = drawing_result(full)
    assert drawn is not full
    assert int(sum(drawn.launched)) == DIAGRAM_RAYS
    assert drawn.options.power_threshold == 1e-8 and drawn.options.seed == 3
    assert len(drawn.segments()["start"]) > 0


def test_a_small_trace_with_segments_is_drawn_as_it_is():
    scene = tracer.load(SCENES / "plate_ghost.toml")
    small = tracer.trace(scene, rays=5, segments=500, progress=False)
    assert drawing_result(small) is small
