"""tracer.plot figures: diagrams show rays, views, maps integrate, budget, saving."""

import dataclasses

import numpy as np
import pytest
from PIL import Image

import tracer
from tracer.errors import TracerError
from tracer import plot as P
from tracer.plot import colors as C

from engine_factory import beam, box, far_field, plane, plate_scene, scene, solid

GREEN = C.ray_rgb(550e-9)  # rays of the factory's default 550 nm beam


def _png(fig, tmp_path, name="fig"):
    (png,) = P.save(fig, tmp_path / name, formats=("png",), close=True)
    return np.asarray(Image.open(png).convert("RGB")).astype(float) / 255


def _ray_pixels(img, rgb=GREEN, tol=0.12):
    """Pixels within ``tol`` of the ray colour (per channel)."""
    return int(np.all(np.abs(img - np.asarray(rgb)) < tol, axis=-1).sum())


def _one_ray():
    sc = plate_scene(rays=1)
    return sc, tracer.trace(sc, segments=100)


def test_2d_diagram_shows_the_ray(tmp_path):
    sc, res = _one_ray()
    with_rays = _ray_pixels(_png(P.draw_2d(sc, res, plane="xz", legend=False), tmp_path, "a"))
    without = _ray_pixels(_png(P.draw_2d(sc, None, plane="xz", legend=False), tmp_path, "b"))
    assert without == 0
    assert with_rays > 150  # a line across the drawing, a few pixels wide


def test_wavelengths_sharing_one_path_all_stay_visible(tmp_path):
    # three lines through a plate at normal incidence follow one geometric path; each colour
    # must still show (interleaved dashes), not only the last one drawn
    wls = (460e-9, 550e-9, 620e-9)
    sc = plate_scene(rays=1)
    sc = dataclasses.replace(sc, sources={"src": beam(wavelengths=wls)})
    res = tracer.trace(sc, segments=100)
    img = _png(P.draw_2d(sc, res, plane="xz", legend=False), tmp_path, "w")
    counts = [_ray_pixels(img, C.ray_rgb(w)) for w in wls]
    assert min(counts) > 40, counts


def test_2d_diagram_cut_off_hides_weak_segments(tmp_path):
    sc, res = _one_ray()
    rays = P.diagram2d.prepare_rays(res, min_power=1e-6)
    strong = P.diagram2d.prepare_rays(res, min_power=0.5)
    assert len(strong) < len(rays)
    assert np.all(strong.relative >= 0.5)
    # opacity rises with power (log mapping), strongest drawn last (on top)
    assert np.all(np.diff(rays.level) >= 0)
    assert rays.rgba[-1, 3] == pytest.approx(1.0)


def test_2d_of_a_2d_scene_labels_gap_and_faces(tmp_path):
    # two 10 mm cubes with a 2 um air gap, a 2D scene (x-y section at z = 0)
    a = solid("a", box((-10e-3, -5e-3, -5e-3), (0, 5e-3, 5e-3),
                       names=("hyp", "top_a", "up", "in", "bot", "down")))
    b = solid("b", box((2e-6, -5e-3, -5e-3), (10e-3 + 2e-6, 5e-3, 5e-3),
                       names=("out", "top_b", "up", "hyp", "bot", "down")))
    from engine_factory import gap

    sc = scene(solids=[a, b], gaps=[gap("g", "a", "hyp", "b", "hyp", 2e-6)],
               sources=[beam(position=(-0.02, 0, 0), direction=(1, 0, 0), x_axis=(0, 1, 0))],
               detectors=[plane("cam", (0.02, 0, 0), (-1, 0, 0))])
    sc = dataclasses.replace(sc, dimension=2)
    res = tracer.trace(sc, segments=100)
    # drawn large enough for every face name to fit without overlapping another label
    fig = P.draw_2d(sc, res, face_labels=True, figsize=(14, 11))
    texts = [t.get_text() for t in fig.axes[0].texts]
    # thickness and medium name; with face labels the gap's note names its two faces
    # (they are not written again inside the solids)
    assert "2.0 µm gap1.0\na.hyp | b.hyp" in texts
    assert {"in", "out"} <= set(texts) and "hyp" not in texts
    assert "2.0 µm gap1.0" in [t.get_text() for t in P.draw_2d(sc, res).axes[0].texts]
    img = _png(fig, tmp_path)
    assert _ray_pixels(img) > 150


def test_highlight_draws_one_ray_of_the_path(tmp_path):
    sc = plate_scene(rays=5)
    res = tracer.trace(sc, segments=1000)
    ghost = res.paths("camera")[1]
    rays = P.diagram2d.prepare_rays(res, highlight=ghost["signature"])
    # the ghost has 4 segments (in, back, forth, out) and the ray before the plate
    assert rays.highlight.sum() == len(ghost["events"])
    fig = P.draw_2d(sc, res, plane="xz", highlight=ghost["signature"])
    assert any("highlighted" in t.get_text() for t in fig.axes[0].texts)
    with pytest.raises(TracerError, match="no traced path"):
        P.diagram2d.prepare_rays(res, highlight="src > nowhere")


def test_bad_min_power_is_a_user_error():
    sc, res = _one_ray()
    with pytest.raises(TracerError):
        P.draw_2d(sc, res, min_power=2.0)


def test_3d_views_have_four_panels_with_rays(tmp_path):
    sc, res = _one_ray()
    fig = P.draw_3d_views(sc, res)
    assert [a.get_title(loc="left") for a in fig.axes] == ["top (x–y)", "isometric", "front (x–z)", "side (y–z)"]
    # the ray runs along z: seen in front, side and isometric views, a point from the top
    img = _png(fig, tmp_path)
    assert _ray_pixels(img) > 300
    one = _png(P.draw_view(sc, res, view="top", legend=False), tmp_path, "top")
    side = _png(P.draw_view(sc, res, view="side", legend=False), tmp_path, "side")
    assert _ray_pixels(one) < _ray_pixels(side) / 4


def test_view_plane_is_orthonormal_and_right_handed():
    for v in ("top", "front", "side", "isometric", (0.3, -0.2, -1.0)):
        p = P.diagram3d.view_plane(v)
        m = np.array([p.u, p.v, p.w])
        assert m @ m.T == pytest.approx(np.eye(3), abs=1e-12)
        assert np.linalg.det(m) == pytest.approx(1.0)
    with pytest.raises(TracerError):
        P.diagram3d.view_plane("bottom-ish")


def test_irradiance_map_integrates_to_detector_power(tmp_path):
    sc = plate_scene(rays=400)
    res = tracer.trace(sc)
    for det in ("camera", "back"):
        d = P.irradiance_data(res, det)
        assert d["irradiance"].sum() * d["pixel_area"] == pytest.approx(res.detector_power(det), rel=1e-9)
    # centred beam: centroid at the middle of the detector
    d = P.irradiance_data(res, "camera")
    assert np.abs(d["centroid"]).max() < 1e-4
    for log in (False, True):
        fig = P.irradiance_map(res, "camera", log=log)
        assert fig.axes[0].images
        img = _png(fig, tmp_path, f"m{log}")
        assert img.std() > 0.05
    assert P.line_profile(res, "camera").axes[0].get_xlabel().startswith("position")
    with pytest.raises(TracerError):
        P.line_profile(res, "camera", axis="w")
    with pytest.raises(TracerError):
        P.irradiance_map(res, "nowhere")


def test_stokes_maps_of_linear_light_at_normal_incidence(tmp_path):
    # linear polarisation along the detector's x is kept through a plate at normal
    # incidence (Fresnel rs = -rp there, common practice, no source): S1/S0 = 1
    sc = plate_scene(rays=200, stokes=(1, 1, 0, 0))
    res = tracer.trace(sc)
    d = P.irradiance_data(res, "camera")
    s = d["stokes"]
    lit = s[0] > 0
    assert lit.sum() >= 1
    assert np.allclose(s[1][lit] / s[0][lit], 1.0, atol=1e-9)
    fig = P.stokes_maps(res, "camera")
    titles = [a.get_title(loc="left") for a in fig.axes[:3]]
    assert titles == ["S1/S0", "S2/S0", "S3/S0"]
    im = fig.axes[0].images[0]
    assert im.get_clim() == (-1, 1)


def test_far_field_map_integrates_to_escaped_power(tmp_path):
    plate = solid("plate", box((-5e-3, -5e-3, 0), (5e-3, 5e-3, 1e-3)))
    sc = scene(solids=[plate], sources=[beam(rays=50, diameter=2e-3, direction=(0.2, 0, 1))],
               detectors=[far_field()])
    res = tracer.trace(sc)
    ff = P.far_field_data(res)
    esc = res.ledger.totals()["escaped_w"]
    assert np.sum(ff["intensity"] * ff["solid_angle"]) == pytest.approx(esc, rel=1e-9)
    assert ff["solid_angle"].sum() == pytest.approx(4 * np.pi, rel=1e-12)
    fig = P.far_field_map(res)
    assert _png(fig, tmp_path).std() > 0.05


def test_budget_figure_from_rows_and_result(tmp_path):
    rows = [("detector", "camera", 0.9), ("escaped", "a.exit", 0.099),
            ("discarded", "power threshold", 1e-3), ("absorbed (face)", "a.x", 1e-16)]
    fig = P.budget_figure(rows)
    ax = fig.axes[0]
    assert len(ax.patches) == 3  # the 1e-16 W account is below the floor
    assert [t.get_text() for t in ax.get_yticklabels()] == ["camera", "a.exit", "power threshold"]
    sc = plate_scene(rays=20)
    fig = P.budget_figure(tracer.trace(sc))
    assert len(fig.axes[0].patches) >= 2
    _png(fig, tmp_path)


def test_save_writes_svg_and_png(tmp_path):
    sc, res = _one_ray()
    files = P.save(P.draw_2d(sc, res, plane="xz"), tmp_path / "d.svg")
    assert sorted(f.suffix for f in files) == [".png", ".svg"]
    assert all(f.stat().st_size > 1000 for f in files)
    assert "<svg" in files[0].with_suffix(".svg").read_text()[:500]
    dpi = Image.open(files[0].with_suffix(".png")).info.get("dpi", (0, 0))[0]
    assert 150 <= round(dpi) <= 200


def test_every_function_draws_into_a_given_axes():
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    sc = plate_scene(rays=50)
    res = tracer.trace(sc, segments=500)
    fig, ax = plt.subplots()
    assert P.draw_2d(sc, res, ax=ax, plane="xz") is fig
    fig, ax = plt.subplots()
    assert P.draw_view(sc, res, ax=ax) is fig
    fig, ax = plt.subplots()
    assert P.irradiance_map(res, "camera", ax=ax) is fig
    fig, ax = plt.subplots()
    assert P.budget_figure(res, ax=ax) is fig
    fig, axes = plt.subplots(1, 3)
    assert P.stokes_maps(res, "camera", axes=axes) is fig
    plt.close("all")


def test_auto_pixels_coarsen_and_conserve_power():
    sc = plate_scene(rays=300)
    sc = dataclasses.replace(sc, detectors={k: dataclasses.replace(d, pixels=(256, 256), size=(4e-3, 4e-3))
                                            for k, d in sc.detectors.items()})
    res = tracer.trace(sc)
    fine = P.irradiance_data(res, "camera")
    auto = P.irradiance_data(res, "camera", pixels="auto")
    assert fine["irradiance"].shape == (256, 256)
    assert auto["irradiance"].shape[0] < 256
    for d in (fine, auto, P.irradiance_data(res, "camera", pixels=(10, 5))):
        assert d["irradiance"].sum() * d["pixel_area"] == pytest.approx(res.detector_power("camera"), rel=1e-9)
    with pytest.raises(TracerError):
        P.irradiance_data(res, "camera", pixels="fine")


def test_budget_names_detectors_without_power():
    rows = [("detector", "camera", 1.0), ("detector", "leak", 0.0)]
    fig = P.budget_figure(rows)
    assert any("no power on leak" in t.get_text() for t in fig.axes[0].texts)
