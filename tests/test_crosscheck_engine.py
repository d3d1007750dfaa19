"""Cross-check of engine features beyond the demo scenes: bulk absorption (Beer-Lambert),
incoherent and coherent gaps, sequential reports (optical path, lateral displacement),
and the ``tracer coefficients`` table, against closed forms and tmm (Byrnes 2016)."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest

from test_crosscheck_oracles import INF, cauchy_from_code, ciddor, sellmeier, tmm_R, tmm_T

import tracer
from tracer import cli

# relative to air (as published; common practice for glass data, no source) times the
# index of standard air: the absolute index
SILICA = lambda lam: sellmeier(lam * 1e6, (0.6961663, 0.4079426, 0.8974794),  # noqa: E731
                               (0.0684043**2, 0.1162414**2, 9.896161**2)) * ciddor(lam * 1e6)

ABSORBING_PLATE = '''format = 1
title = "absorbing plate"
dimension = 3
length_unit = "mm"
ambient = "vacuum"
[spectrum]
wavelengths = ["500 nm"]
[trace]
power_threshold = 1e-12
sequence = ["plate.front", "plate.back"]
[materials.grey]
model = "constant"
n = 1.5
k = 1e-5
index_basis = "vacuum"
[solids.plate]
material = "grey"
kind = "plate"
width = "20 mm"
height = "20 mm"
thickness = "10 mm"
[sources.beam]
kind = "collimated"
position = [-20, 0, 0]
direction = [1, 0, 0]
aperture = "circle"
diameter = "1 mm"
rays = 3
power = "1 W"
[detectors.screen]
position = [30, 0, 0]
normal = [-1, 0, 0]
width = "20 mm"
height = "20 mm"
pixels = [4, 4]
'''


def _absorbing(tmp_path):
    p = tmp_path / "abs.toml"
    p.write_text(ABSORBING_PLATE)
    sc = tracer.load(p)
    n = 1.5 + 1e-5j
    R = abs((1 - n) / (1 + n)) ** 2
    a = math.exp(-4 * math.pi * 1e-5 * 10e-3 / 500e-9)  # Beer-Lambert, alpha = 4 pi k / lambda
    return sc, R, a


def test_bulk_absorption_tree(tmp_path):
    """Plate of n = 1.5 + 1e-5 i, 10 mm, 500 nm, normal incidence: direct (1-R)^2 e^{-alpha d},
    first ghost (1-R)^2 R^2 e^{-3 alpha d} (Beer-Lambert and Fresnel)."""
    sc, R, a = _absorbing(tmp_path)
    r = tracer.trace(sc)
    p = sorted((x["power_w"] for x in r.paths("screen")), reverse=True)
    assert p[0] == pytest.approx((1 - R) ** 2 * a, rel=1e-9)
    assert p[1] == pytest.approx((1 - R) ** 2 * R**2 * a**3, rel=1e-9)


def test_bulk_absorption_sequential(tmp_path):
    """The sequential design path through the same lossy plate must include e^{-alpha d}."""
    sc, R, a = _absorbing(tmp_path)
    rep = tracer.trace_sequence(sc)
    assert rep.throughput == pytest.approx((1 - R) ** 2 * a, rel=1e-9)


def test_sequential_optical_path(tmp_path):
    """Optical path length source -> last face = 20 mm x 1 (vacuum) + 10 mm x 1.5."""
    sc, _, _ = _absorbing(tmp_path)
    rep = tracer.trace_sequence(sc)
    assert rep.optical_path_length == pytest.approx(20e-3 + 1.5 * 10e-3, rel=1e-12)


TILTED = '''format = 1
title = "tilted plate"
dimension = 3
length_unit = "mm"
ambient = "air"
[spectrum]
wavelengths = ["632.8 nm"]
[trace]
sequence = ["plate.front", "plate.back"]
[solids.plate]
material = "fused-silica"
kind = "plate"
width = "40 mm"
height = "40 mm"
thickness = "5 mm"
rotation = [0, 0, {tilt}]
[sources.beam]
kind = "collimated"
position = [-30, 0, 0]
direction = [1, 0, 0]
aperture = "circle"
diameter = "2 mm"
rays = 3
power = "1 W"
'''


@pytest.mark.parametrize("tilt", [10.0, 45.0, 60.0])
def test_tilted_plate_lateral_displacement(tmp_path, tilt):
    """Lateral displacement of a plane-parallel plate, t sin(th) (1 - cos(th)/sqrt(n^2 -
    sin^2 th)) with n relative to air (classic geometrical-optics result, e.g. Hecht,
    Optics; from memory); deviation 0; unpolarised throughput (Ts^2 + Tp^2)/2 (tmm)."""
    p = tmp_path / "t.toml"
    p.write_text(TILTED.format(tilt=tilt))
    rep = tracer.trace_sequence(tracer.load(p))
    lam = 632.8e-9
    ns, na = SILICA(lam), ciddor(0.6328)
    n = ns / na
    th = math.radians(tilt)
    d = 5e-3 * math.sin(th) * (1 - math.cos(th) / math.sqrt(n * n - math.sin(th) ** 2))
    assert rep.lateral_displacement == pytest.approx(d, rel=1e-9)
    assert rep.deviation == pytest.approx(0.0, abs=1e-9)
    Ts = tmm_T([na, ns], [INF, INF], th, lam, "s") ** 2
    Tp = tmm_T([na, ns], [INF, INF], th, lam, "p") ** 2
    assert rep.throughput == pytest.approx(0.5 * (Ts + Tp), rel=1e-9)


def test_coefficients_command_against_tmm(tmp_path, capsys):
    """`tracer coefficients` (default 517642 glass | air gap | glass, 45 deg, 550 nm) against
    tmm for every row, critical angle asin(n_gap/n_prism) and the amplitude decay length
    1/(k0 sqrt(n^2 sin^2 - n_gap^2)) (evanescent wave; common practice)."""
    js = tmp_path / "c.json"
    assert cli.main(["coefficients", "--json", str(js)]) == 0
    d = json.loads(js.read_text())
    lam = 550e-9
    na = ciddor(0.55)
    ng = cauchy_from_code(1.517, 64.2, 0.55) * na  # relative to air -> absolute
    th = math.radians(45)
    assert d["critical_angle_deg"] == pytest.approx(math.degrees(math.asin(na / ng)), abs=1e-9)
    k0 = 2 * math.pi / lam
    assert d["decay_length_m"] == pytest.approx(1 / (k0 * math.sqrt((ng * math.sin(th)) ** 2 - na**2)), rel=1e-9)
    for i, t in enumerate(d["thickness_m"]):
        for pol in "sp":
            assert d["R" + pol][i] == pytest.approx(tmm_R([ng, na, ng], [INF, t, INF], th, lam, pol), abs=1e-10)
            assert d["T" + pol][i] == pytest.approx(tmm_T([ng, na, ng], [INF, t, INF], th, lam, pol), abs=1e-10)
    capsys.readouterr()


def test_tir_pair_sequential_per_wavelength():
    """Sequential design path of the TIR pair at each line: throughput = T_AR^2 (1 - T_gap)
    for unpolarised light and the reported TIR-face leakage = mean gap T of s and p
    (tmm; quarter-wave MgF2 AR at 550 nm; air by Ciddor, glass by its code)."""
    from pathlib import Path

    sc = tracer.load(Path(__file__).resolve().parent.parent / "scenes" / "tir_prism_pair.toml")
    mg = lambda lam: sellmeier(lam * 1e6, (0.48755108, 0.39875031, 2.3120353),  # noqa: E731
                               (0.04338408**2, 0.09461442**2, 23.793604**2)) * ciddor(lam * 1e6)
    d = 550e-9 / (4 * mg(550e-9))
    for lam in [460e-9, 550e-9, 620e-9]:
        na = ciddor(lam * 1e6)
        ng, nm = cauchy_from_code(1.517, 64.2, lam * 1e6) * na, mg(lam)
        Tin = tmm_T([na, nm, ng], [INF, d, INF], 0.0, lam, "s")
        Tout = tmm_T([ng, nm, na], [INF, d, INF], 0.0, lam, "s")
        Tg = {p: tmm_T([ng, na, ng], [INF, 5e-6, INF], math.radians(45), lam, p) for p in "sp"}
        rep = tracer.trace_sequence(sc, wavelength=lam)
        assert rep.throughput == pytest.approx(Tin * Tout * (1 - 0.5 * (Tg["s"] + Tg["p"])), rel=1e-12)
        tir = rep.steps[1]
        assert tir["kind"] == "TIR"
        assert tir["leakage"] == pytest.approx(0.5 * (Tg["s"] + Tg["p"]), rel=1e-6)
        assert tir["critical_angle_deg"] == pytest.approx(math.degrees(math.asin(na / ng)), abs=1e-9)


ROTATED = TILTED.replace("rotation = [0, 0, {tilt}]", "rotation = [{rx}, {ry}, {rz}]")


@pytest.mark.parametrize("rot", [(0, 30, 40), (25, 0, 35), (10, 20, 30)])
def test_rotation_convention_extrinsic_xyz(tmp_path, rot):
    """Scene rotation [rx, ry, rz]: extrinsic about x, then y, then z (matrix Rz Ry Rx; the
    documented convention). The plate's front normal R (-1, 0, 0) fixes the angle of
    incidence of a +x beam (rotation matrices, common practice)."""
    def R(axis, deg):
        a = math.radians(deg)
        c, s = math.cos(a), math.sin(a)
        return {"x": np.array([[1, 0, 0], [0, c, -s], [0, s, c]]),
                "y": np.array([[c, 0, s], [0, 1, 0], [-s, 0, c]]),
                "z": np.array([[c, -s, 0], [s, c, 0], [0, 0, 1]])}[axis]

    p = tmp_path / "r.toml"
    p.write_text(ROTATED.format(rx=rot[0], ry=rot[1], rz=rot[2]))
    rep = tracer.trace_sequence(tracer.load(p))
    nrm = R("z", rot[2]) @ R("y", rot[1]) @ R("x", rot[0]) @ np.array([-1.0, 0, 0])
    aoi = math.degrees(math.acos(abs(nrm[0])))
    assert rep.steps[0]["angle_of_incidence_deg"] == pytest.approx(aoi, abs=1e-9)


FAR = '''format = 1
title = "point source"
dimension = 3
length_unit = "mm"
ambient = "vacuum"
[spectrum]
wavelengths = ["550 nm"]
[sources.lamp]
kind = "point"
position = [0, 0, 0]
direction = [0, 0, 1]
half_angle = "90 deg"
rays = 18000
power = "1 W"
[detectors.sky]
kind = "far_field"
axis = [0, 0, 1]
pixels = [12, 18]
'''


def test_far_field_isotropic_hemisphere(tmp_path):
    """A point source filling a hemisphere evenly in solid angle: radiant intensity
    P/(2 pi) W/sr in every polar band (exact bin solid angles; definition of intensity)."""
    p = tmp_path / "ff.toml"
    p.write_text(FAR)
    r = tracer.trace(tracer.load(p))
    I = r.record("sky").intensity()  # (n_polar, n_azimuth)
    band = I.mean(axis=1)
    np.testing.assert_allclose(band[:9], 1 / (2 * math.pi), rtol=2e-3)
    np.testing.assert_allclose(band[9:], 0.0, atol=0)


def test_monte_carlo_unbiased_plate():
    """Monte Carlo mode on the uncoated plate: detected power T^2/(1 - R^2) of the source
    (incoherent sum over all passes) within 4 standard deviations of a Bernoulli count."""
    from pathlib import Path

    sc = tracer.load(Path(__file__).resolve().parent.parent / "scenes" / "plate_ghost.toml")
    N = 20000
    r = tracer.trace(sc, mode="monte-carlo", rays=N)
    n = cauchy_from_code(1.517, 64.2, 0.55)  # glass code: relative to the surrounding air
    R = ((n - 1) / (n + 1)) ** 2
    q = (1 - R) ** 2 / (1 - R * R)
    got = r.detector_power("screen") / 1e-3
    assert abs(got - q) < 4 * math.sqrt(q * (1 - q) / N)
