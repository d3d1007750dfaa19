"""Cross-check of polarisation conventions in the engine: Stokes of linear and circular
sources through free space to detectors, and Mueller matrices of simple paths (a tilted
plate: two-surface diattenuation), against values derived here (Fresnel by tmm,
Byrnes 2016; Stokes by the definition S3 = 2 Im(Ex conj(Ey)) in a right-handed frame,
exp(-i w t), S3 > 0 right-handed)."""

from __future__ import annotations

import math

import numpy as np
import pytest

from test_crosscheck_oracles import INF, ciddor, sellmeier, stokes_in_frame, tmm_T

import tracer

FREE = '''format = 1
title = "free space"
dimension = 3
length_unit = "mm"
ambient = "vacuum"
[spectrum]
wavelengths = ["550 nm"]
[sources.src]
kind = "collimated"
position = [0, 0, 0]
direction = [1, 0, 0]
x_axis = [0, 1, 0]
aperture = "circle"
diameter = "1 mm"
rays = 5
power = "1 W"
polarization = {pol}
[detectors.facing]
position = [50, 0, 0]
normal = [-1, 0, 0]
x_axis = [0, {xd}, {xdz}]
width = "10 mm"
height = "10 mm"
pixels = [4, 4]
'''


def _free(tmp_path, pol, xd=(1, 0)):
    p = tmp_path / "free.toml"
    p.write_text(FREE.format(pol=pol, xd=xd[0], xdz=xd[1]))
    r = tracer.trace(tracer.load(p))
    S = r.path_stokes("facing")
    return S / S[0]


def _expected(E, xd):
    """Stokes of field E (travelling +x) in the detector frame (x_axis, k x x_axis),
    right-handed about the propagation direction k (the documented rule: one Stokes
    vector per beam, whichever way the detector faces)."""
    xd = np.asarray(xd, float)
    return stokes_in_frame(E, xd, np.cross([1.0, 0, 0], xd))


@pytest.mark.parametrize("angle", [0.0, 30.0, 45.0, 90.0, 120.0])
@pytest.mark.parametrize("xd", [(1, 0), (0, 1)])
def test_linear_source_free_space(tmp_path, angle, xd):
    """Linear at `angle` from the source x_axis (+y) towards y_axis = k x x_axis (+z):
    E = cos a y + sin a z. S1 along the detector x_axis, S2 towards k x x_axis."""
    a = math.radians(angle)
    E = np.array([0, math.cos(a), math.sin(a)], complex)
    S = _free(tmp_path, f'{{ kind = "linear", angle = "{angle} deg" }}', xd)
    want = _expected(E, (0, xd[0], xd[1]))
    np.testing.assert_allclose(S, want, atol=1e-12)


@pytest.mark.parametrize("hand,s3", [("right", 1.0), ("left", -1.0)])
def test_circular_source_keeps_handedness(tmp_path, hand, s3):
    """Circular right (S3 = +1 in the source frame) arrives with S3 = +1 at a detector facing
    the light, whatever its x_axis (handedness about the ray is physical)."""
    for xd in [(1, 0), (0, 1)]:
        S = _free(tmp_path, f'{{ kind = "circular", handedness = "{hand}" }}', xd)
        assert S[3] == pytest.approx(s3, abs=1e-12)
        assert abs(S[1]) < 1e-12 and abs(S[2]) < 1e-12


PLATE = '''format = 1
title = "tilted plate"
dimension = 3
length_unit = "mm"
ambient = "air"
[spectrum]
wavelengths = ["632.8 nm"]
[trace]
power_threshold = 1e-12
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
x_axis = [0, 0, 1]
aperture = "circle"
diameter = "2 mm"
rays = 7
power = "1 W"
[detectors.screen]
position = [40, 0, 0]
normal = [-1, 0, 0]
x_axis = [0, 0, 1]
width = "40 mm"
height = "40 mm"
pixels = [8, 8]
'''


@pytest.mark.parametrize("tilt", [20.0, 50.0, 70.0])
def test_tilted_plate_mueller(tmp_path, tilt):
    """Direct path through a plate tilted by `tilt` about z (plane of incidence x-y, s = z):
    path Ts = Ts1 Ts2 = Ts^2 and Tp = Tp^2 (same T at both faces), so
    M00 = (Ts^2 + Tp^2)/2, M01 = (Ts^2 - Tp^2)/2 (S1 along z = s) and the diattenuation
    (Tp^2 - Ts^2)/(Tp^2 + Ts^2) (Fresnel by tmm, Byrnes 2016; Mueller calculus)."""
    p = tmp_path / "plate.toml"
    p.write_text(PLATE.format(tilt=tilt))
    r = tracer.trace(tracer.load(p))
    sig = "beam > plate.front:T > plate.back:T > screen"
    M = r.mueller("screen", sig)
    lam = 632.8e-9
    na = ciddor(0.6328)
    n = sellmeier(0.6328, (0.6961663, 0.4079426, 0.8974794),
                  (0.0684043**2, 0.1162414**2, 9.896161**2)) * na  # relative to air -> absolute
    th = math.radians(tilt)
    th2 = math.asin(na * math.sin(th) / n)
    Ts = tmm_T([na, n], [INF, INF], th, lam, "s") * tmm_T([n, na], [INF, INF], th2, lam, "s")
    Tp = tmm_T([na, n], [INF, INF], th, lam, "p") * tmm_T([n, na], [INF, INF], th2, lam, "p")
    assert tmm_T([na, n], [INF, INF], th, lam, "s") ** 2 == pytest.approx(Ts, rel=1e-12)
    assert M[0, 0] == pytest.approx((Ts + Tp) / 2, rel=1e-9)
    assert M[0, 1] == pytest.approx((Ts - Tp) / 2, abs=1e-9)
    D = math.sqrt(M[0, 1] ** 2 + M[0, 2] ** 2 + M[0, 3] ** 2) / M[0, 0]
    assert D == pytest.approx((Tp - Ts) / (Tp + Ts), rel=1e-7)
    # no retardance on transmission through lossless interfaces: M33 = +-sqrt(Ts Tp)
    assert abs(M[3, 3]) == pytest.approx(math.sqrt(Ts * Tp), rel=1e-9)


MIRROR = '''format = 1
title = "mirror"
dimension = 3
length_unit = "mm"
ambient = "vacuum"
[spectrum]
wavelengths = ["550 nm"]
[coatings.m]
kind = "mirror"
[solids.plate]
material = "fused-silica"
kind = "plate"
width = "40 mm"
height = "40 mm"
thickness = "5 mm"
rotation = [0, 0, -45]
[solids.plate.faces.front]
coating = "m"
[sources.beam]
kind = "collimated"
position = [-30, 0, 0]
direction = [1, 0, 0]
aperture = "circle"
diameter = "2 mm"
rays = 3
power = "1 W"
polarization = {{ kind = "circular", handedness = "{hand}" }}
[detectors.d2]
position = [0, 30, 0]
normal = [0, -1, 0]
width = "20 mm"
height = "20 mm"
pixels = [4, 4]
'''


@pytest.mark.parametrize("hand,s3", [("right", 1.0), ("left", -1.0)])
def test_perfect_mirror_flips_handedness(tmp_path, hand, s3):
    """A perfect mirror at 45 deg turns right-circular into left-circular (and back);
    checked with the Maxwell solver of the oracles at a perfect-conductor-like index
    n = i 1e5 (first principles) and against the engine's detector Stokes."""
    from test_crosscheck_oracles import interface_fields, stokes_physical

    p = tmp_path / "m.toml"
    p.write_text(MIRROR.format(hand=hand))
    sc = tracer.load(p)
    r = tracer.trace(sc)
    S = r.path_stokes("d2")
    k = np.array([1.0, 0, 0])
    xa = np.asarray(sc.sources["beam"].x_axis, float)
    ya = np.cross(k, xa)
    E = (xa - 1j * s3 * ya) / math.sqrt(2)
    assert stokes_physical(E, k)[3] == pytest.approx(s3)
    g = sc.solids["plate"].geometry
    nrm = np.asarray(g.face_normals[list(g.face_names).index("front")], float)
    f = interface_fields(n1=1.0, n2=1e5j, k_hat=k, normal=-nrm, E=E)
    want = stokes_physical(f["Er"], f["kr"])[3]
    assert want == pytest.approx(-s3, abs=1e-4)
    assert S[3] / S[0] == pytest.approx(want, abs=1e-4)
    assert S[0] == pytest.approx(1.0, rel=1e-12)
