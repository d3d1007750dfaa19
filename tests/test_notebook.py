"""Jupyter display (tracer.notebook): _repr_html_ of scenes, results and analysis objects."""

from pathlib import Path

import tracer
from tracer.analysis import analyse

SCENES = Path(__file__).resolve().parent.parent / "scenes"


def test_scene_repr_html_lists_parts_and_draws():
    scene = tracer.load(SCENES / "tir_prism_pair.toml")
    h = scene._repr_html_()
    for name in [*scene.solids, *scene.gaps, *scene.sources, *scene.detectors, *scene.requirements]:
        assert f"<td>{name}</td>" in h
    assert "5 µm" in h  # the gap thickness with its unit
    assert '<img alt="scene section"' in h


def test_result_and_analysis_repr_html():
    scene = tracer.load(SCENES / "plate_ghost.toml")
    result = tracer.trace(scene, rays=6, progress=False)
    analysis = analyse(result)
    h = analysis._repr_html_()
    assert "Power budget" in h and "Detector screen" in h and "Requirements" in h
    assert '<img alt="ray diagram"' in h
    design = analysis.ghosts["screen"].rows[0]
    assert f"{design.power_w:.4g}" in h and design.label in h
    assert result._repr_html_().count("<table") == h.count("<table")


def test_tables_on_their_own():
    scene = tracer.load(SCENES / "plate_ghost.toml")
    analysis = analyse(tracer.trace(scene, rays=4, progress=False))
    b = analysis.budget._repr_html_()
    assert "closure residual" in b and b.count("<tr>") == len(analysis.budget.rows) + 2
    g = analysis.ghosts["screen"]._repr_html_()
    assert "1*" in g
    v = analysis.verdicts[0]._repr_html_()
    assert analysis.verdicts[0].name in v and ("pass" in v or "fail" in v)
    failing = [x for x in analysis.verdicts if not x.passed]
    assert all('class="tracer-fail"' in x._repr_html_() for x in failing)


def test_diff_objects_display():
    from tracer.versions import diff_documents

    d = diff_documents({"a": {"x": "1 mm"}}, {"a": {"x": "2 mm"}})
    h = d._repr_html_()
    assert "a.x" in h and "&quot;1 mm&quot;" in h
