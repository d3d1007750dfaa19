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
                transmittance=0.0, targets=None, depol=1.0, extra=""):
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
width = "{2 * HALF} mm"
height = "{2 * HALF} mm"
pixels = [8, 8]
""" + extra
    return loader.loads(text, path="patch.toml")


def test_lambertian_patch_matches_the_configuration_factor():
    res = tracer.trace(patch_scene())
    expected = 0.1 * 1.0 * 4 * corner_factor(HALF, HALF, H)
    det = res.detector_power("disk")
    se = res.detector_standard_error("disk")
    assert se > 0
    assert abs(det - expected) < 4 * se + 1e-9 * expected
    assert se < 0.02 * expected  # aiming at the detector makes it precise


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
