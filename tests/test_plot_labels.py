"""Labels of the 2D ray diagram: face and solid names never overlap one another.

Checked on the demo scene where they used to crowd (the microwave prism coupler: two
right-angle prisms mated across a gap, small in a drawing that spans source and detectors).
"""

from pathlib import Path

import pytest

pytest.importorskip("matplotlib")

import tracer  # noqa: E402
from tracer import plot as P  # noqa: E402

ROOT = Path(__file__).resolve().parents[1]


@pytest.mark.parametrize("name", ["microwave_prism_coupler", "tir_prism_pair"])
def test_face_and_solid_names_do_not_overlap(name):
    scene = tracer.load(ROOT / "scenes" / f"{name}.toml")
    res = tracer.trace(scene, rays=9, segments=20000, progress=False)
    fig = P.draw_2d(scene, res, face_labels=True)
    fig.canvas.draw()
    renderer = fig.canvas.get_renderer()
    faces = {f for s in scene.solids.values() for f in s.geometry.face_names}
    labels = [t for t in fig.axes[0].texts
              if t.get_text() in faces | set(scene.solids) and abs(t.get_rotation() % 90) < 1e-6]
    assert len(labels) >= len(scene.solids) + 2  # the solid names and some faces
    boxes = [t.get_bbox_patch().get_window_extent(renderer) for t in labels]
    for i in range(len(boxes)):
        for j in range(i + 1, len(boxes)):
            a, b = boxes[i].shrunk(0.9, 0.9), boxes[j].shrunk(0.9, 0.9)
            assert not a.overlaps(b), (labels[i].get_text(), labels[j].get_text())
    # the gap's two faces are named once, in the gap's note
    gap = next(iter(scene.gaps.values()))
    note = f"{gap.solid_a}.{gap.face_a} | {gap.solid_b}.{gap.face_b}"
    assert any(note in t.get_text() for t in fig.axes[0].texts)
