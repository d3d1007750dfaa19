"""Aimed sources (``[sources.NAME.aim]``): geometry, physics at the aimed face, errors,
round trip, sweeps and tolerances of the aim's keys."""

from __future__ import annotations

import copy
import math
import tomllib

import numpy as np
import pytest

from tracer.engine import trace
from tracer.engine.sequential import trace_sequence
from tracer.geometry.intersect import intersect_many
from tracer.scene import SceneError, dump, from_dict, loads, summarize
from tracer.sweep import list_axis, sweep
from tracer.sweep.collect import collect

N = 1.5

PLATE_2D = """
format = 1
title = "aimed plate"
dimension = 2
length_unit = "mm"
ambient = "air"
[spectrum]
wavelengths = ["633 nm"]
[trace]
power_threshold = 1e-12
[materials.g]
model = "constant"
n = 1.5
[solids.plate]
material = "g"
kind = "plate"
width = "20 mm"
height = "20 mm"
thickness = "3 mm"
[solids.plate.faces.back]
coating = "absorber"
[sources.beam]
kind = "collimated"
width = "0.1 mm"
rays = 1
power = "1 mW"
[sources.beam.aim]
face = "plate.front"
angle = "30 deg"
distance = "20 mm"
[detectors.refl]
position = [-30, 0]
normal = [1, 0]
width = "400 mm"
"""

PRISM_3D = """
format = 1
title = "aimed prism (3D)"
dimension = 3
length_unit = "mm"
ambient = "air"
[spectrum]
wavelengths = ["550 nm"]
[materials.g]
model = "constant"
n = 1.5
[solids.prism]
material = "g"
kind = "dispersing_prism"
apex_angle = "60 deg"
side = "20 mm"
height = "20 mm"
rotation = [0, 0, "10 deg"]
position = [3, -2, 1]
[sources.beam]
kind = "collimated"
diameter = "0.5 mm"
rays = 1
power = "1 mW"
[sources.beam.aim]
face = "prism.entrance"
angle = "40 deg"
plane = [0, 0, 1]
distance = "15 mm"
[detectors.d]
position = [60, 0, 0]
normal = [-1, 0, 0]
width = 200
height = 200
"""


def doc_of(text):
    return tomllib.loads(text)


def load_doc(doc):
    return from_dict(copy.deepcopy(doc), path="aim.toml")


def errors_of(doc):
    try:
        from_dict(copy.deepcopy(doc), path="aim.toml")
    except SceneError as exc:
        return [(p.key, p.message) for p in exc.problems]
    return []


def has_error(doc, key, text):
    errs = errors_of(doc)
    assert any(k == key and text in m for k, m in errs), errs


def fresnel_R(n1, n2, theta):
    """(Rs, Rp) of a bare interface, Fresnel's equations written out here (Born and Wolf,
    Principles of Optics, 7th ed. 1999, sec. 1.5.2, Eqs. (21a)-(21b))."""
    st = n1 / n2 * math.sin(theta)
    ct = math.sqrt(1 - st * st)
    ci = math.cos(theta)
    rs = (n1 * ci - n2 * ct) / (n1 * ci + n2 * ct)
    rp = (n2 * ci - n1 * ct) / (n2 * ci + n1 * ct)
    return rs * rs, rp * rp


# ---------------------------------------------------------------------- geometry
def _check_hits(scene, name="beam"):
    src = scene.sources[name]
    aim = src.aim
    solid, face = aim.face.split(".")
    g = scene.solids[solid].geometry
    i = g.face_names.index(face)
    # the central ray reaches the named point after `distance`, and the point is on the face
    end = src.position + aim.distance * src.direction
    assert np.max(np.abs(end - aim.point)) <= 1e-12
    assert abs(g.face_normals[i] @ aim.point - g.face_offsets[i]) <= 1e-12
    # and an independent ray-solid intersection finds that face there first
    names = list(scene.solids)
    t, s, f = intersect_many([scene.solids[n].geometry for n in names], src.position[None, :],
                             src.direction[None, :], -1)
    assert names[int(s[0])] == solid and g.face_names[int(f[0])] == face
    hit = src.position + float(t[0]) * src.direction
    assert np.max(np.abs(hit - aim.point)) <= 1e-12
    # the angle from the inward normal, and its sign about the plane normal
    m = -g.face_normals[i]
    theta = math.atan2(float(np.cross(m, src.direction) @ aim.plane_normal), float(m @ src.direction))
    return theta


@pytest.mark.parametrize("angle", [-60.0, -12.5, 0.0, 30.0, 75.0])
@pytest.mark.parametrize("point", [None, [4.0], [-7.5, 0]])
def test_aimed_ray_hits_the_named_point_2d(angle, point):
    doc = doc_of(PLATE_2D)
    doc["sources"]["beam"]["aim"]["angle"] = f"{angle} deg"
    doc["solids"]["plate"]["rotation"] = "17 deg"
    doc["solids"]["plate"]["position"] = [5, -3]
    if point is not None:
        doc["sources"]["beam"]["aim"]["point"] = point
    scene = load_doc(doc)
    theta = _check_hits(scene)
    assert theta == pytest.approx(math.radians(angle), abs=1e-13)
    # the point is the centroid moved along the face's u axis (closed form for the plate:
    # front centroid at the local origin, u = z x n)
    u = (point or [0.0])[0] * 1e-3
    c = np.array([5e-3, -3e-3, 0.0])
    n = np.array([-math.cos(math.radians(17)), -math.sin(math.radians(17)), 0.0])
    np.testing.assert_allclose(scene.sources["beam"].aim.point, c + u * np.cross([0, 0, 1.0], n),
                               atol=1e-15)


@pytest.mark.parametrize("point", [[0, 0], ["2 mm", "-3 mm"]])
@pytest.mark.parametrize("angle", ["40 deg", "-25 deg"])
def test_aimed_ray_hits_the_named_point_3d(point, angle):
    # a 3D prism turned about all three axes: the plane of incidence is given as the normal
    # that contains the face normal (its v axis)
    doc = doc_of(PRISM_3D)
    doc["solids"]["prism"]["rotation"] = ["20 deg", "-35 deg", "10 deg"]
    bare = copy.deepcopy(doc)
    bare.pop("sources")
    g = load_doc(bare).solids["prism"].geometry
    u, v, n = g.face_frame("entrance")
    aim = doc["sources"]["beam"]["aim"]
    aim["plane"] = [float(x) for x in u]  # plane normal u: the plane spanned by n and v
    aim["point"] = point
    aim["angle"] = angle
    scene = load_doc(doc)
    theta = _check_hits(scene)
    assert theta == pytest.approx(math.radians(float(angle.split()[0])), abs=1e-13)
    du, dv = (float(str(p).split()[0]) * 1e-3 for p in point)
    np.testing.assert_allclose(scene.sources["beam"].aim.point, g.face_centroid("entrance") + du * u + dv * v,
                               atol=1e-15)


def test_sign_convention_and_reversed_plane():
    # "xy": positive turns the ray from the inward normal the way x turns into y;
    # "yx" is the same plane with the opposite sign
    doc = doc_of(PLATE_2D)  # front face: inward normal +x
    d_pos = load_doc(doc).sources["beam"].direction
    np.testing.assert_allclose(d_pos, [math.cos(math.pi / 6), math.sin(math.pi / 6), 0], atol=1e-15)
    doc["sources"]["beam"]["aim"]["plane"] = "yx"
    d_rev = load_doc(doc).sources["beam"].direction
    np.testing.assert_allclose(d_rev, [math.cos(math.pi / 6), -math.sin(math.pi / 6), 0], atol=1e-15)
    doc["sources"]["beam"]["aim"]["plane"] = "xy"
    doc["sources"]["beam"]["aim"]["angle"] = "-30 deg"
    np.testing.assert_allclose(load_doc(doc).sources["beam"].direction, d_rev, atol=1e-15)


def test_aimed_x_axis_is_p_and_an_explicit_one_is_checked():
    doc = doc_of(PRISM_3D)
    doc["solids"]["prism"].pop("rotation")
    doc["sources"]["beam"]["aim"]["plane"] = "xy"
    s = load_doc(doc).sources["beam"]
    # in the plane of incidence, perpendicular to the ray: 0 deg is p, 90 deg (y_axis) is s
    assert abs(s.x_axis @ s.direction) < 1e-15 and abs(s.x_axis[2]) < 1e-15
    np.testing.assert_allclose(np.cross(s.direction, s.x_axis), [0, 0, 1], atol=1e-15)
    doc["sources"]["beam"]["x_axis"] = [0, 0, 1]
    np.testing.assert_allclose(load_doc(doc).sources["beam"].x_axis, [0, 0, 1])
    doc["sources"]["beam"]["x_axis"] = [1, 0, 0]
    has_error(doc, "sources.beam.x_axis", "perpendicular to the aimed direction")


# ---------------------------------------------------------------------- physics at the face
def test_brewster_aim_gives_zero_p_reflectance():
    # Brewster's angle arctan(n2/n1) (Brewster 1815): Rp = 0; there Rs = ((n^2-1)/(n^2+1))^2
    # (Fresnel's equations with theta_i + theta_t = 90 deg)
    doc = doc_of(PLATE_2D)
    doc["sources"]["beam"]["aim"]["angle"] = f"{math.atan(N)!r} rad"
    res = trace(load_doc(doc))
    row, _ = collect(res, groups=("polarization",))
    assert row["T.p.refl"] < 1e-25
    assert row["T.s.refl"] == pytest.approx(((N * N - 1) / (N * N + 1)) ** 2, rel=1e-12)
    t = res.ledger.totals()
    assert abs(t["residual_w"]) <= 1e-12 * t["source_w"]


def test_brewster_aim_in_3d_with_a_named_vertical_plane():
    # the same in 3D, in the plane "zx" on a face looking along -x: the default x_axis is p
    doc = doc_of(PLATE_2D)
    doc["dimension"] = 3
    doc["sources"]["beam"].pop("width")
    doc["sources"]["beam"]["diameter"] = "0.1 mm"
    doc["sources"]["beam"]["aim"]["plane"] = "zx"
    doc["sources"]["beam"]["aim"]["angle"] = f"{math.degrees(math.atan(N))!r} deg"
    doc["detectors"]["refl"] = {"position": [-30, 0, 0], "normal": [1, 0, 0], "width": 400, "height": 400}
    scene = load_doc(doc)
    # the turn that takes z into x (about +y) takes the inward normal +x towards -z
    assert abs(scene.sources["beam"].direction[1]) < 1e-15 and scene.sources["beam"].direction[2] < 0
    row, _ = collect(trace(scene), groups=("polarization",))
    assert row["T.p.refl"] < 1e-25
    assert row["T.s.refl"] == pytest.approx(((N * N - 1) / (N * N + 1)) ** 2, rel=1e-12)


def test_brewster_sweep_of_the_aim_angle(tmp_path):
    # sweeping sources.beam.aim.angle: the reflected s and p fractions follow Fresnel's
    # equations (Born and Wolf sec. 1.5.2), and p vanishes at Brewster's angle
    path = tmp_path / "plate.toml"
    path.write_text(PLATE_2D)
    brewster = math.degrees(math.atan(N))
    angles = [20.0, 45.0, brewster, 70.0]
    res = sweep(str(path), [list_axis("sources.beam.aim.angle", [f"{a!r} deg" for a in angles])],
                settings={"power_threshold": 1e-14})
    assert not any(res.errors)
    for a, row in zip(angles, res.rows):
        rs, rp = fresnel_R(1.0, N, math.radians(a))
        assert row["T.s.refl"] == pytest.approx(rs, rel=1e-9)
        assert row["T.p.refl"] == pytest.approx(rp, rel=1e-9, abs=1e-25)
    p = [row["T.p.refl"] for row in res.rows]
    assert p[2] < 1e-25 and min(p[0], p[1], p[3]) > 1e-4


def test_minimum_deviation_of_an_equilateral_prism():
    # At minimum deviation the passage is symmetric: angle of incidence arcsin(n sin(A/2)) on
    # both faces, the ray inside parallel to the base, deviation 2 arcsin(n sin(A/2)) - A
    # (the textbook prism formula, e.g. Hecht, Optics, 4th ed. 2002, sec. 5.5.1)
    A = math.radians(60)
    theta = math.asin(N * math.sin(A / 2))
    doc = doc_of(PRISM_3D)
    doc["dimension"] = 2
    doc["solids"]["prism"]["rotation"] = "23 deg"
    doc["solids"]["prism"]["position"] = [4, 1]
    del doc["sources"]["beam"]["diameter"]
    doc["sources"]["beam"]["width"] = "0.1 mm"
    doc["sources"]["beam"]["aim"] = {"face": "prism.entrance", "angle": f"{theta!r} rad",
                                     "distance": "15 mm"}
    doc["detectors"]["d"] = {"position": [80, 0], "normal": [-1, 0], "width": 400}
    scene = load_doc(doc)
    rep = trace_sequence(scene, ["prism.entrance", "prism.exit"])
    assert rep.complete
    assert rep.deviation == pytest.approx(2 * theta - A, abs=1e-12)
    entry, exit_ = rep.steps[0], rep.steps[1]
    aoi = "angle_of_incidence_deg"
    assert entry[aoi] == pytest.approx(math.degrees(theta), abs=1e-10)
    assert exit_[aoi] == pytest.approx(math.degrees(A / 2), abs=1e-10)  # inside, at the exit face
    # and it leaves at theta again: the output ray is the input mirrored about the bisector
    k_in, k_out = rep.input_direction, rep.output_direction
    assert math.acos(np.clip(k_in @ k_out, -1, 1)) == pytest.approx(2 * theta - A, abs=1e-12)
    # the ray inside runs parallel to the base: along the prism's rotated x axis
    g = scene.solids["prism"].geometry
    base_n = g.face_normals[g.face_names.index("base")]
    np.testing.assert_allclose(base_n, [math.sin(math.radians(23)), -math.cos(math.radians(23)), 0],
                               atol=1e-15)


def test_angle_inside_equals_snell_and_limits():
    A = math.radians(60)
    doc = doc_of(PLATE_2D)
    doc["sources"]["beam"]["aim"].pop("angle")
    doc["sources"]["beam"]["aim"]["angle_inside"] = "30 deg"
    s = load_doc(doc).sources["beam"]
    theta = math.asin(N * math.sin(A / 2))  # Snell's law, the ambient is air
    assert s.aim.angle == pytest.approx(theta, abs=1e-14)
    assert s.aim.angle_inside == pytest.approx(A / 2, abs=1e-15)
    assert s.aim.wavelength == pytest.approx(633e-9)
    # beyond arcsin(1/n) no outside ray refracts there
    doc["sources"]["beam"]["aim"]["angle_inside"] = "45 deg"
    has_error(doc, "sources.beam.aim.angle_inside", "below 41.81")


def test_angle_inside_traced_ray_is_refracted_to_that_angle():
    # the refracted ray in the glass, from the engine's own recorded segments, makes the
    # requested angle with the inward normal (TIR margin set-ups start from this)
    doc = doc_of(PLATE_2D)
    doc["sources"]["beam"]["aim"].pop("angle")
    doc["sources"]["beam"]["aim"]["angle_inside"] = "-20 deg"
    doc["solids"]["plate"].pop("faces")
    scene = load_doc(doc)
    rep = trace_sequence(scene, ["plate.front:T", "plate.back"])
    assert rep.steps[1]["angle_of_incidence_deg"] == pytest.approx(20, abs=1e-10)


def test_angle_inside_with_several_wavelengths_needs_one():
    doc = doc_of(PLATE_2D)
    doc["spectrum"]["wavelengths"] = ["500 nm", "600 nm"]
    doc["sources"]["beam"]["aim"].pop("angle")
    doc["sources"]["beam"]["aim"]["angle_inside"] = "20 deg"
    has_error(doc, "sources.beam.aim", 'missing key "wavelength"')
    doc["sources"]["beam"]["aim"]["wavelength"] = "600 nm"
    assert load_doc(doc).sources["beam"].aim.wavelength == pytest.approx(600e-9)


# ---------------------------------------------------------------------- errors
def _edit(path, value):
    def f(d):
        keys = path.split(".")
        for k in keys[:-1]:
            d = d.setdefault(k, {})
        if value is None:
            d.pop(keys[-1])
        else:
            d[keys[-1]] = value
    return f


AIM = "sources.beam.aim"
CASES = [
    ("direction and aim", _edit("sources.beam.direction", [1, 0]), "sources.beam.direction",
     'not both (remove "direction")'),
    ("position and aim", _edit("sources.beam.position", [0, 0]), "sources.beam.position",
     "not both"),
    ("angle 90", _edit(f"{AIM}.angle", "90 deg"), f"{AIM}.angle", "between -90 deg and 90 deg"),
    ("angle -95", _edit(f"{AIM}.angle", -95), f"{AIM}.angle", "between -90 deg and 90 deg"),
    ("angle unit", _edit(f"{AIM}.angle", "3 mm"), f"{AIM}.angle", "expected an angle"),
    ("no angle", _edit(f"{AIM}.angle", None), AIM, 'exactly one of "angle"'),
    ("both angles", _edit(f"{AIM}.angle_inside", "10 deg"), AIM, "not both"),
    ("unknown face", _edit(f"{AIM}.face", "plate.frnt"), f"{AIM}.face", 'did you mean "front"?'),
    ("unknown solid", _edit(f"{AIM}.face", "plat.front"), f"{AIM}.face", 'did you mean "plate"?'),
    ("malformed face", _edit(f"{AIM}.face", "front"), f"{AIM}.face", 'expected "solid.face"'),
    ("2D plane", _edit(f"{AIM}.plane", "zx"), f"{AIM}.plane", 'expected plane = "xy"'),
    ("plane name", _edit(f"{AIM}.plane", "xw"), f"{AIM}.plane", "unknown value"),
    ("zero distance", _edit(f"{AIM}.distance", 0), f"{AIM}.distance", "positive"),
    ("no distance", _edit(f"{AIM}.distance", None), AIM, 'missing key "distance"'),
    ("point outside", _edit(f"{AIM}.point", [15]), f"{AIM}.point", "lies outside face plate.front"),
    ("point on the edge", _edit(f"{AIM}.point", [10, 0]), f"{AIM}.point", "on the edge of"),
    ("2D point v", _edit(f"{AIM}.point", [1, 2]), f"{AIM}.point", "[u] or [u, 0]"),
    ("unknown key", _edit(f"{AIM}.angel", 3), f"{AIM}.angel", 'did you mean "angle"?'),
    ("wavelength without angle_inside", _edit(f"{AIM}.wavelength", "500 nm"), f"{AIM}.wavelength",
     '"angle_inside" only'),
    ("blocked", _edit("solids.block", {"material": "g", "kind": "plate", "width": 40, "height": 20,
                                        "thickness": 1, "position": [-10, 0]}),
     f"{AIM}.distance", "meets block.front"),
    ("inside", _edit("solids.block", {"material": "g", "kind": "plate", "width": 60, "height": 20,
                                       "thickness": 10, "position": [-25, 0]}),
     f"{AIM}.distance", 'inside solid "block"'),
]


@pytest.mark.parametrize("what,edit,key,text", CASES, ids=[c[0] for c in CASES])
def test_aim_errors(what, edit, key, text):
    doc = doc_of(PLATE_2D)
    edit(doc)
    has_error(doc, key, text)


def test_aim_errors_3d_plane():
    doc = doc_of(PRISM_3D)
    doc["sources"]["beam"]["aim"].pop("plane")
    has_error(doc, "sources.beam.aim", 'missing key "plane"')
    doc["solids"]["prism"]["rotation"] = ["20 deg", "-35 deg", "10 deg"]
    bare = copy.deepcopy(doc)
    bare.pop("sources")
    g = load_doc(bare).solids["prism"].geometry
    n = g.face_frame("entrance")[2]
    doc["sources"]["beam"]["aim"]["plane"] = [float(x) for x in n]
    has_error(doc, "sources.beam.aim.plane", "is parallel to face prism.entrance")
    doc["sources"]["beam"]["aim"]["plane"] = "xy"  # the turned prism's normal leaves the x-y plane
    has_error(doc, "sources.beam.aim.plane", "the nearest such plane has the normal")


def test_error_names_the_file():
    doc = doc_of(PLATE_2D)
    doc["sources"]["beam"]["aim"]["angle"] = "90 deg"
    with pytest.raises(SceneError) as exc:
        from_dict(doc, path="scenes/brewster.toml")
    assert "scenes/brewster.toml: sources.beam.aim.angle: expected an angle of incidence" in str(exc.value)


# ---------------------------------------------------------------------- writing, sweeping, tolerances
def test_round_trip_writes_the_aim_back():
    doc = doc_of(PRISM_3D)
    first = load_doc(doc)
    text = dump(first)
    assert "[sources.beam.aim]" in text and "direction" not in text.split("[sources.beam]")[1].split("[")[0]
    again = loads(text, path="aim.toml")
    assert summarize(again) == summarize(first)
    assert dump(again) == text
    s = summarize(first)["sources"]["beam"]["aim"]
    assert s["face"] == "prism.entrance" and s["angle_rad"] == pytest.approx(math.radians(40))


def test_aim_angle_can_be_toleranced():
    doc = doc_of(PLATE_2D)
    doc["tolerances"] = {"tilt": {"key": "sources.beam.aim.angle", "sigma": "0.1 deg"},
                         "dist": {"key": "sources.beam.aim.distance", "sigma": 1}}
    load_doc(doc)
    doc["tolerances"]["tilt"]["key"] = "sources.beam.aim.angl"
    assert any(k.startswith("tolerances.tilt") for k, _ in errors_of(doc))


# ---------------------------------------------------------------------- the demo
def test_brewster_window_demo_against_outside_indices():
    # Brewster's angle from Malitson's silica formula over Ciddor's standard air (written out
    # in test_crosscheck_oracles), and the window's s and p transmittance from tmm (Byrnes,
    # "Multilayer optical calculations", 2016) at the scene's angle
    from pathlib import Path

    import tracer
    from test_crosscheck_oracles import INF, ciddor, sellmeier, tmm_T

    lam = 632.8e-9
    n_air = ciddor(lam * 1e6)
    n_glass = sellmeier(lam * 1e6, (0.6961663, 0.4079426, 0.8974794),
                        (0.0684043**2, 0.1162414**2, 9.896161**2)) * n_air
    scene = tracer.load(Path(__file__).resolve().parents[1] / "scenes" / "brewster_window.toml")
    src = scene.sources["laser"]
    assert src.aim.angle == pytest.approx(math.atan(n_glass / n_air), abs=math.radians(1e-4))
    np.testing.assert_allclose(src.direction, [1, 0, 0], atol=1e-12)
    _check_hits(scene, "laser")
    row, _ = collect(trace(scene), groups=("polarization",))
    th = src.aim.angle
    th_in = math.asin(n_air / n_glass * math.sin(th))
    for pol in ("s", "p"):
        t = (tmm_T([n_air, n_glass], [INF, INF], th, lam * 1e9, pol)
             * tmm_T([n_glass, n_air], [INF, INF], th_in, lam * 1e9, pol))
        assert row[f"Tdesign.{pol}.screen"] == pytest.approx(t, rel=1e-9)
    assert row["Tdesign.p.screen"] == pytest.approx(1.0, abs=1e-12)


@pytest.mark.parametrize("inside_deg", [-3.0, 0.0, 3.0, 10.0])
def test_angle_inside_sets_the_tir_margin_of_a_right_angle_prism(inside_deg):
    # the refracted ray turned by delta from leg_a's inward normal (+y) meets the hypotenuse
    # (normal (1, 1)/sqrt 2) at 45 deg + delta; the TIR margin is that minus the critical
    # angle arcsin(1/n) (Snell's law; common practice, no source)
    doc = doc_of(PLATE_2D)
    doc["solids"] = {"p": {"material": "g", "kind": "right_angle_prism", "leg": "20 mm"}}
    doc["sources"]["beam"]["aim"] = {"face": "p.leg_a", "angle_inside": f"{inside_deg} deg",
                                     "distance": "10 mm"}
    doc["detectors"]["refl"] = {"position": [-30, 10], "normal": [1, 0], "width": "400 mm"}
    scene = load_doc(doc)
    rep = trace_sequence(scene, ["p.leg_a:T", "p.hypotenuse:R", "p.leg_b"])
    hyp = rep.steps[1]
    assert hyp["angle_of_incidence_deg"] == pytest.approx(45 + inside_deg, abs=1e-10)
    assert hyp["kind"] == "TIR"
    assert hyp["tir_margin_deg"] == pytest.approx(45 + inside_deg - math.degrees(math.asin(1 / N)),
                                                  abs=1e-10)
