"""The scattered-light figure: checks on its artists and an image comparison.

The numbers it shows come from the trace (tested in tests/test_scatter_engine.py); here
the figure must show exactly those numbers, and keep its look (image comparison against
tests/baseline_images/, text hidden so that font rendering does not count).
"""

from pathlib import Path

import matplotlib

matplotlib.use("Agg")

import numpy as np  # noqa: E402
import pytest  # noqa: E402
from matplotlib.collections import LineCollection  # noqa: E402
from matplotlib.testing.compare import compare_images  # noqa: E402

import tracer  # noqa: E402
from tracer import plot as P  # noqa: E402
from tracer.analysis.scatter_sources import scatter_ranking  # noqa: E402
from tracer.plot.scatter_view import SCATTER_COLOR  # noqa: E402

from test_scatter_engine import patch_scene  # noqa: E402

BASELINE = Path(__file__).parent / "baseline_images" / "scatter_figure.png"


@pytest.fixture(scope="module")
def traced():
    scene = patch_scene(rest="specular", rays=60, disk=True)
    maps = tracer.trace(scene)
    draw = tracer.trace(scene, rays=6, segments=20000)
    return maps, draw


def test_ranking_bars_show_the_ranked_faces_in_ppm(traced):
    maps, draw = traced
    fig = P.scatter_figure(maps, "disk", draw_result=draw)
    rank_ax = fig.axes[2]
    bars = list(rank_ax.patches)
    ranking = scatter_ranking(maps, "disk")
    want = [f["power_w"] / maps.source_power_w * 1e6 for f in ranking["faces"]]
    assert len(want) == 1 and len(bars) == 1
    assert bars[0].get_width() == pytest.approx(want[0], rel=1e-12)
    assert "block.front" in rank_ax.get_yticklabels()[0].get_text()
    assert "ppm of source" in rank_ax.get_xlabel()


def test_detector_panel_holds_only_the_scattered_power(traced):
    maps, draw = traced
    fig = P.scatter_figure(maps, "disk", draw_result=draw)
    image = fig.axes[1].images[0]
    shown = np.nansum(np.asarray(image.get_array(), dtype=float))
    scattered = scatter_ranking(maps, "disk")["scattered_w"] / maps.source_power_w * 1e6
    assert shown == pytest.approx(scattered, rel=1e-9)  # the specular 4 % is left out
    assert shown < 0.5 * maps.detector_power("disk") / maps.source_power_w * 1e6


def test_scene_panel_colours_scattered_rays_and_outlines_the_face(traced):
    from matplotlib.colors import to_rgba

    maps, draw = traced
    fig = P.scatter_figure(maps, "disk", draw_result=draw)
    ax = fig.axes[0]
    target = np.array(to_rgba(SCATTER_COLOR)[:3])
    coloured = [c for c in ax.collections if isinstance(c, LineCollection)
                and len(c.get_colors()) and np.allclose(c.get_colors()[0][:3], target)]
    n_scattered = int(np.sum(np.asarray(draw.tree.scatters)[draw.segments()["node"]] > 0))
    assert coloured and sum(len(c.get_segments()) for c in coloured) <= n_scattered
    assert any(line.get_gid() == "face-1" for line in ax.lines)
    assert any(t.get_text() == "1" for t in ax.texts)


def test_a_detector_without_scatter_says_so():
    res = tracer.trace(tracer.load(Path(tracer.__file__).parents[1] / "scenes" / "plate_ghost.toml"),
                       rays=5)
    fig = P.scatter_figure(res)
    texts = [t.get_text() for ax in fig.axes for t in ax.texts]
    assert any("no scattered light" in t for t in texts)


def test_unknown_detector_is_a_user_error(traced):
    from tracer.errors import TracerError

    with pytest.raises(TracerError, match="unknown plane detector 'nope'"):
        P.scatter_figure(traced[0], "nope")


def test_the_figure_keeps_its_look(traced, tmp_path):
    maps, draw = traced
    fig = P.scatter_figure(maps, "disk", draw_result=draw)
    for text in fig.findobj(matplotlib.text.Text):
        text.set_visible(False)
    out = tmp_path / "scatter_figure.png"
    fig.savefig(out, dpi=60)
    if not BASELINE.exists():  # pragma: no cover - first run writes the baseline
        BASELINE.write_bytes(out.read_bytes())
        pytest.fail("baseline image written; check it in and run again")
    diff = compare_images(str(BASELINE), str(out), tol=8)
    assert diff is None, diff
