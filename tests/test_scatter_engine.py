"""Scatter in the event loop: configuration factors, standard errors, unbiased aiming, ledger.

Outside source for the detected power: the configuration factor from a differential area
to a parallel rectangle with one corner above it (J. R. Howell, "A Catalog of Radiation
Heat Transfer Configuration Factors", 3rd ed., 2010, factor B-3; recalled from memory)::

    F = 1/(2 pi) [ A/sqrt(1+A^2) atan(B/sqrt(1+A^2)) + B/sqrt(1+B^2) atan(A/sqrt(1+B^2)) ]

with A = a/h, B = b/h; a rectangle centred above the patch is four such corners. A
Lambertian patch of reflectance rho lit with power P puts rho P F on it.
"""

import math

import numpy as np
import pytest

import tracer
from tracer.scene import loader

H, HALF = 40.0, 15.0  # mm: distance patch -> detector, half width of the square detector


def corner_factor(a, b, h):
    A, B = a / h, b / h
    return (A / math.sqrt(1 + A * A) * math.atan(B / math.sqrt(1 + A * A))
            + B / math.sqrt(1 + B * B) * math.atan(A / math.sqrt(1 + B * B))) / (2 * math.pi)


def patch_scene(*, rho=0.1, rays=200, scatter_rays=32, share=0.5, mode="tree", rest="absorbed",
                transmittance=0.0, targets=None, depol=1.0, extra="", disk=False):
    tgt = "" if targets is None else f"scatter_targets = {targets!r}\n".replace("'", '"')
    text = f"""
format = 1
title = "Lambertian patch and a coaxial square"
dimension = 3
length_unit = "mm"
ambient = "vacuum"
seed = 3

[spectrum]
wavelengths = ["633 nm"]

[trace]
mode = "{mode}"
power_threshold = 1e-12
max_events = 8
scatter_rays = {scatter_rays}
target_share = {share}
{tgt}
[coatings.white]
kind = "lambertian"
reflectance = {rho}
transmittance = {transmittance}
rest = "{rest}"
depolarization = {depol}

[solids.block]
material = "glass:517642"
kind = "plate"
width = "30 mm"
height = "30 mm"
thickness = "5 mm"
position = [0, 0, 0]
faces.front.coating = "white"

[sources.beam]
kind = "collimated"
position = [-60, 0, 0]
direction = [1, 0, 0]
aperture = "circle"
diameter = "0.01 mm"
rays = {rays}
sampling = "random"
power = "1 W"
polarization = {{ kind = "linear", angle = "30 deg" }}

[detectors.disk]
position = [{-H}, 0, 0]  # the plate's front face is the plane x = 0
normal = [1, 0, 0]
pixels = [8, 8]
""" + (f'outline = "circle"\ndiameter = "{2 * HALF} mm"\n' if disk else
       f'width = "{2 * HALF} mm"\nheight = "{2 * HALF} mm"\n') + extra
    return loader.loads(text, path="patch.toml")


def test_lambertian_patch_matches_the_configuration_factor():
    res = tracer.trace(patch_scene())
    expected = 0.1 * 1.0 * 4 * corner_factor(HALF, HALF, H)
    det = res.detector_power("disk")
    se = res.detector_standard_error("disk")
    assert se > 0
    assert abs(det - expected) < 4 * se + 1e-9 * expected
    assert se < 0.02 * expected  # aiming at the detector makes it precise


def test_lambertian_patch_and_a_coaxial_disk():
    """Configuration factor from a differential area to a parallel coaxial disk of radius r
    at distance h: F = r^2 / (r^2 + h^2) (Howell, "A Catalog of Radiation Heat Transfer
    Configuration Factors", 3rd ed., 2010, factor B-13; recalled from memory). The detector
    is round (``outline = "circle"``); aiming uses a polygon circumscribing it."""
    for mode, rays in (("tree", 300), ("monte-carlo", 30000)):
        res = tracer.trace(patch_scene(disk=True, mode=mode, rays=rays))
        expected = 0.1 * 1.0 * HALF**2 / (HALF**2 + H**2)
        det = res.detector_power("disk")
        se = res.detector_standard_error("disk")
        assert se > 0
        assert abs(det - expected) < 4 * se, (mode, det, expected, se)
        assert se < (0.02 if mode == "tree" else 0.1) * expected  # aiming makes it precise
    # the square of the same width collects more: the disk really is round
    square = tracer.trace(patch_scene(rays=300)).detector_power("disk")
    assert square > det * 1.15


def test_path_standard_errors_add_up_to_the_detector_error():
    """A path's standard error from its per-ray squared sums: with one path on the
    detector (a single scatter event, all on one signature) it equals the detector's."""
    res = tracer.trace(patch_scene(rays=150))
    paths = res.paths("disk")
    assert len(paths) == 1 and paths[0]["scattered"]
    assert paths[0]["standard_error_w"] == pytest.approx(res.detector_standard_error("disk"),
                                                         rel=1e-9)
    s = res.summary()["detectors"]["disk"]
    assert s["scattered_w"] == pytest.approx(res.detector_power("disk"), rel=1e-12)
    assert s["paths"][0]["standard_error_w"] == paths[0]["standard_error_w"]


def test_split_trace_gives_the_same_scatter_results():
    """Ray ranges traced apart and merged: same power, scattered power and standard
    errors (detector and path) as one trace, whatever the number of pieces."""
    from tracer.sweep import trace_split

    scene = patch_scene(rays=90, mode="tree")
    one = tracer.trace(scene).summary(max_paths=10**6)
    for parts in (2, 5):
        split = trace_split(scene, parts=parts, max_paths=10**6, workers=1)
        a, b = one["detectors"]["disk"], split["detectors"]["disk"]
        assert b["power_w"] == pytest.approx(a["power_w"], rel=1e-12)
        assert b["scattered_w"] == pytest.approx(a["scattered_w"], rel=1e-12)
        assert b["standard_error_w"] == pytest.approx(a["standard_error_w"], rel=1e-9)
        assert b["paths"][0]["standard_error_w"] == pytest.approx(
            a["paths"][0]["standard_error_w"], rel=1e-9)
        assert split["scattered_faces"]["block.front"] == pytest.approx(
            one["scattered_faces"]["block.front"], rel=1e-12)


def test_plain_and_aimed_sampling_agree_and_errors_fall_as_one_over_root_n():
    expected = 0.1 * 4 * corner_factor(HALF, HALF, H)
    plain = [tracer.trace(patch_scene(share=0.0, rays=n, scatter_rays=8)) for n in (100, 1600)]
    aimed = tracer.trace(patch_scene(share=0.5, rays=200))
    for r in plain + [aimed]:
        assert abs(r.detector_power("disk") - expected) < 4 * r.detector_standard_error("disk")
    se = [r.detector_standard_error("disk") for r in plain]
    assert se[1] / se[0] == pytest.approx(0.25, rel=0.35)  # 16x the rays: a quarter
    assert aimed.detector_standard_error("disk") < 0.5 * se[0]


def test_ledger_closes_with_scatter_and_books_the_sampling_difference():
    for kw in (dict(), dict(share=0.0), dict(mode="monte-carlo", rays=2000),
               dict(rest="specular", transmittance=0.2)):
        res = tracer.trace(patch_scene(**kw))
        t = res.ledger.totals()
        booked = (t["detected_w"] + t["absorbed_w"] + t["escaped_w"] + t["discarded_w"]
                  + t["cut_w"] + t["sampling_w"])
        assert booked == pytest.approx(t["source_w"], abs=1e-12)
        assert abs(t["residual_w"]) < 1e-12
        assert res.scattered_power()["block.front"] > 0
    # plain Lambertian sampling draws the model's own density: weights are exact
    t = tracer.trace(patch_scene(share=0.0)).ledger.totals()
    assert abs(t["sampling_w"]) < 1e-12
    # aimed sampling: weights sum to the booked power only on average
    t = tracer.trace(patch_scene(share=0.5)).ledger.totals()
    assert t["sampling_w"] != 0.0 and abs(t["sampling_w"]) < 0.05 * 0.1


def test_monte_carlo_scatter_has_the_same_mean():
    expected = 0.1 * 4 * corner_factor(HALF, HALF, H)
    res = tracer.trace(patch_scene(mode="monte-carlo", rays=40000))
    se = res.detector_standard_error("disk")
    assert se > 0
    assert abs(res.detector_power("disk") - expected) < 4 * se


def test_scatter_signatures_and_unpolarised_light():
    res = tracer.trace(patch_scene())
    sigs = [p["signature"] for p in res.paths(detector="disk")]
    assert sigs and all("block.front:SR" in s for s in sigs)
    # the source is linearly polarised at 30 deg; the scattered light arrives unpolarised
    s = np.asarray(res.stokes("disk"))
    assert s[0] > 0
    assert abs(s[1]) < 1e-9 * s[0] and abs(s[2]) < 1e-9 * s[0] and abs(s[3]) < 1e-9 * s[0]
    # with no depolarisation the scattered light keeps a degree of polarisation of 1
    kept = np.asarray(tracer.trace(patch_scene(depol=0.0)).stokes("disk"))
    assert np.sqrt(kept[1] ** 2 + kept[2] ** 2 + kept[3] ** 2) > 0.3 * kept[0]


def test_results_do_not_depend_on_batch_size():
    a = tracer.trace(patch_scene(rays=64), batch_size=7)
    b = tracer.trace(patch_scene(rays=64), batch_size=64)
    assert a.detector_power("disk") == pytest.approx(b.detector_power("disk"), rel=1e-12)
    assert a.detector_standard_error("disk") == pytest.approx(b.detector_standard_error("disk"),
                                                              rel=1e-9)


def test_sampled_power_widens_the_verdict():
    """A limit within three standard errors above the estimate is not a pass; far above it
    is (the inconclusive rule with the error bar)."""
    from tracer.analysis.requirements import evaluate

    res = tracer.trace(patch_scene(share=0.0, rays=50, scatter_rays=4))
    value, se = res.detector_power("disk"), res.detector_standard_error("disk")
    assert se > 0
    for limit, verdict in ((value + se, "inconclusive"), (value + 4 * se, "pass"),
                           (value - 4 * se, "fail")):
        scene = patch_scene(share=0.0, rays=50, scatter_rays=4,
                            extra=f"""
[requirements.stray]
kind = "max_power"
detector = "disk"
limit = "{limit!r} W"
""")
        v, = evaluate(tracer.trace(scene, power_threshold=1e-12))
        assert v.verdict == verdict, (limit, v)
        assert v.sampling_error == pytest.approx(3 * se, rel=1e-9)


def _rough_scene(sigma, extra_coating=""):
    return f"""
format = 1
dimension = 3
length_unit = "mm"
ambient = "vacuum"

[spectrum]
wavelengths = ["633 nm"]

[trace]
power_threshold = 1e-12
max_events = 4
scatter_rays = 8

[coatings.polished]
kind = "rough"
rms_roughness = "{sigma}"
correlation_length = "20 um"
{extra_coating}

[solids.block]
material = "glass:517642"
kind = "plate"
width = "30 mm"
height = "30 mm"
thickness = "5 mm"
faces.front.coating = "polished"

[sources.beam]
kind = "collimated"
position = [-60, 0, 0]
direction = [1, 0, 0]
aperture = "circle"
diameter = "0.01 mm"
rays = 4
power = "1 W"

[detectors.disk]
position = [-40, 0, 0]
normal = [1, 0, 0]
width = "30 mm"
height = "30 mm"
"""


def test_rough_face_scatters_its_tis_share():
    """Bennett & Porteus (JOSA 51, 123, 1961): the specular reflectance falls to
    R exp(-(4 pi sigma / lambda)^2) at normal incidence, the rest of R scatters."""
    from tracer import fresnel
    from tracer.scatter import REFLECT_SIDE, RoughSurface

    res = tracer.trace(loader.loads(_rough_scene("2 nm"), path="rough.toml"))
    n = complex(res.compiled.media[1].refractive_index(633e-9))
    r = float(fresnel.coefficients(n1=1.0, n2=n, angle=0.0).Rs)
    tis = (4 * np.pi * 2e-9 / 633e-9) ** 2
    eta = RoughSurface(rms_roughness=2e-9, correlation_length=20e-6).propagating_share(
        REFLECT_SIDE, sin_i=0.0, wavelength=633e-9, n1=1.0, n2=n.real)
    scattered = res.scattered_power()["block.front"]
    # reflection scatter from outside, plus transmission scatter into the glass and the
    # scatter of light coming back from inside: at least the first-bounce reflected share
    assert scattered > r * (1 - np.exp(-tis)) * eta
    t = (2 * np.pi * 2e-9 * (1 - n.real) / 633e-9) ** 2
    first = r * (1 - np.exp(-tis)) * eta + (1 - r) * (1 - np.exp(-t))
    assert scattered == pytest.approx(first, rel=0.05)


def test_too_rough_face_is_refused_with_its_key():
    with pytest.raises(tracer.errors.TracerError, match=r"coatings\.polished\.rms_roughness"):
        tracer.trace(loader.loads(_rough_scene("40 nm"), path="rough.toml"))


def test_unknown_specular_part_names_the_key():
    with pytest.raises(tracer.errors.TracerError, match=r"coatings\.polished\.specular.*unknown coating"):
        loader.loads(_rough_scene("2 nm", 'specular = "nope"'), path="rough.toml")


def test_faces_that_light_up_the_detector_are_ranked():
    from tracer.analysis.scatter_sources import format_scatter_ranking, scatter_ranking

    res = tracer.trace(patch_scene())
    r = scatter_ranking(res, "disk")
    assert [f["face"] for f in r["faces"]] == ["block.front"]
    assert r["scattered_w"] == pytest.approx(res.detector_power("disk"))
    assert r["specular_w"] == 0.0
    assert "block.front" in format_scatter_ranking(res, "disk")


def test_ghost_table_separates_specular_ghosts_from_scattered_light():
    """Rest specular: the front face's Fresnel reflection (about 4 %, common practice, no
    source) comes straight back onto the detector's centre beside the scattered light."""
    from tracer.analysis.ghosts import ghost_table

    res = tracer.trace(patch_scene(rest="specular", rays=100))
    table = ghost_table(res, "disk")
    assert table.design is not None and not table.design.scattered
    assert table.design_rule == "strongest"
    scattered = [r for r in table.rows if r.scattered]
    assert scattered and all("SR" in r.label for r in scattered)
    assert all(r.standard_error_w > 0 for r in scattered)
    assert table.scattered_power_w == pytest.approx(sum(r.power_w for r in scattered))
    assert table.scattered_power_w + table.design_group_power_w + table.specular_ghost_power_w \
        == pytest.approx(table.power_w, rel=1e-12)
    assert table.standard_error_w == res.detector_standard_error("disk")
    text = table.format_text()
    assert text.index("specular paths:") < text.index("scattered light (paths with a scatter")
    assert "± s.e. [W]" in text and "one standard error" in text
    d = table.to_dict()
    assert d["scattered_paths"] == len(scattered) and d["paths"][0]["scattered"] is False
    assert "light" in table.to_csv().splitlines()[0]
    # a detector lit by scattered light only has no design path
    only = ghost_table(tracer.trace(patch_scene(rays=50)), "disk")
    assert only.design is None and only.design_rule == "none"
    assert "no specular path reached it" in only.format_text()


def test_max_scattered_power_requirement_judges_the_scattered_light_only():
    from tracer.analysis.ghosts import ghost_table
    from tracer.analysis.requirements import evaluate, untraced_power

    # plain sampling: no sampling account, so the bounds are the standard errors alone
    res = tracer.trace(patch_scene(rest="specular", rays=100, share=0.0))
    scattered = ghost_table(res, "disk").scattered_power_w
    se = res.detector_standard_error("disk")
    total = res.detector_power("disk")
    assert total > 2 * scattered  # the specular reflection dominates the detector
    u = untraced_power(res)  # power the event cap cut, which could all be scattered light
    for limit, verdict in ((scattered + 4 * se + u, "pass"), (scattered - 4 * se, "fail"),
                           (scattered + se, "inconclusive")):
        scene = patch_scene(rest="specular", rays=100, share=0.0, extra=f"""
[requirements.scatter]
kind = "max_scattered_power"
detector = "disk"
limit = "{limit!r} W"
""")
        v, = evaluate(tracer.trace(scene))
        assert v.value == pytest.approx(scattered, rel=1e-12)
        assert v.verdict == verdict, (limit, v)
        assert "scattered power on disk" in v.describe()
