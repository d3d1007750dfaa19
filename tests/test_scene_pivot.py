"""``pivot`` of a solid: the point its ``rotation`` turns about (closed forms, mating, errors)."""

from __future__ import annotations

import copy
import math
import tomllib

import numpy as np
import pytest

from tracer.geometry.catalog import build
from tracer.geometry.transforms import rotation_matrix
from tracer.scene import SceneError, dump, from_dict, loads, summarize

SCENE = """
format = 1
title = "pivot"
dimension = 3
length_unit = "mm"
[spectrum]
wavelengths = ["550 nm"]
[solids.p]
material = "fused-silica"
kind = "right_angle_prism"
leg = "20 mm"
rotation = ["10 deg", "20 deg", "30 deg"]
position = [4, -5, 6]
[sources.s]
kind = "collimated"
position = [-80, 0, 0]
direction = [1, 0, 0]
diameter = 1
power = "1 mW"
[detectors.d]
position = [80, 0, 0]
normal = [-1, 0, 0]
width = 10
height = 10
"""

ANGLES = np.radians([10.0, 20.0, 30.0])
POSITION = np.array([4e-3, -5e-3, 6e-3])


def doc():
    return tomllib.loads(SCENE)


def load(d):
    return from_dict(copy.deepcopy(d), path="pivot.toml")


def errors(d):
    try:
        from_dict(copy.deepcopy(d), path="pivot.toml")
    except SceneError as exc:
        return [(p.key, p.message) for p in exc.problems]
    return []


def _translate(points, t):
    return points + t


def _rotate(points, R):
    return points @ R.T


def _vertices(geometry):
    return np.concatenate([np.asarray(p, float) for p in geometry.face_polygons])


def test_pivot_is_translate_rotate_translate_back():
    # closed form: a turn about p is translate(-p), rotate, translate(+p); then `position`
    d = doc()
    d["solids"]["p"]["pivot"] = [1, 2, 3]
    placed = load(d).solids["p"].geometry
    local = build("right_angle_prism", leg=20e-3)
    p = np.array([1e-3, 2e-3, 3e-3])
    R = rotation_matrix(*ANGLES)
    expected = [_translate(_rotate(_translate(np.asarray(poly, float), -p), R), p + POSITION)
                for poly in local.face_polygons]
    for got, want in zip(placed.face_polygons, expected):
        np.testing.assert_allclose(got, want, atol=1e-15)
    # the pivot itself only moves by `position`
    nearest = np.abs(_vertices(placed) - (_rotate(_translate(_vertices(local), -p), R) + p + POSITION)).max()
    assert nearest <= 1e-15


def test_default_pivot_is_the_origin_bit_for_bit():
    plain = load(doc()).solids["p"].geometry
    d = doc()
    d["solids"]["p"]["pivot"] = [0, 0, 0]
    zero = load(d).solids["p"].geometry
    local = build("right_angle_prism", leg=20e-3)
    today = local.transformed(rotation_matrix(*ANGLES), POSITION)
    for a, b, c in zip(plain.face_polygons, zero.face_polygons, today.face_polygons):
        assert np.array_equal(a, b) and np.array_equal(a, c)


@pytest.mark.parametrize("face", ["hypotenuse", "leg_a", "top"])
def test_pivot_on_a_face_keeps_its_centroid(face):
    d = doc()
    d["solids"]["p"]["pivot"] = face
    d["solids"]["p"]["position"] = [0, 0, 0]
    placed = load(d).solids["p"].geometry
    local = build("right_angle_prism", leg=20e-3)
    np.testing.assert_allclose(placed.face_centroid(face), local.face_centroid(face), atol=1e-15)
    # its normal turns with the rotation
    np.testing.assert_allclose(placed.face_normals[placed.face_names.index(face)],
                               rotation_matrix(*ANGLES) @ local.face_normals[local.face_names.index(face)],
                               atol=1e-15)


def test_pivot_centroid_keeps_the_volume_centroid():
    d = doc()
    d["solids"]["p"]["pivot"] = "centroid"
    placed = load(d).solids["p"].geometry
    local = build("right_angle_prism", leg=20e-3)
    # a right-angle prism's cross-section centroid is a third of the way along each leg
    np.testing.assert_allclose(local.centroid, [20e-3 / 3, 20e-3 / 3, 0], atol=1e-15)
    np.testing.assert_allclose(placed.centroid, local.centroid + POSITION, atol=1e-15)


def test_pivot_in_2d_turns_about_z_through_the_point():
    d = doc()
    d["dimension"] = 2
    d["solids"]["p"]["rotation"] = "90 deg"
    d["solids"]["p"]["position"] = [0, 0]
    d["solids"]["p"]["pivot"] = [10, 0]
    d["sources"]["s"] = {"kind": "collimated", "position": [-80, 0], "direction": [1, 0], "width": 1,
                         "power": "1 mW"}
    d["detectors"]["d"] = {"position": [80, 0], "normal": [-1, 0], "width": 10}
    g = load(d).solids["p"].geometry
    # the local corner (0, 0) turns a quarter about (10, 0): to (10, -10)
    verts = _vertices(g)[:, :2]
    assert np.min(np.linalg.norm(verts - [10e-3, -10e-3], axis=1)) < 1e-15


def test_mating_to_a_pivoted_solid():
    # a solid mated to one turned about a pivot follows the placed face: faces
    # anti-parallel, the stated gap measured from the geometry
    d = doc()
    d["solids"]["p"]["pivot"] = "hypotenuse"
    d["solids"]["q"] = {"material": "fused-silica", "kind": "right_angle_prism", "leg": "20 mm",
                        "mate": {"to": "p.hypotenuse", "face": "hypotenuse", "gap": "5 um"}}
    d["sources"]["s"]["position"] = [-80, 0, 40]
    scene = load(d)
    gp, gq = scene.solids["p"].geometry, scene.solids["q"].geometry
    n_p = gp.face_normals[gp.face_names.index("hypotenuse")]
    n_q = gq.face_normals[gq.face_names.index("hypotenuse")]
    np.testing.assert_allclose(n_q, -n_p, atol=1e-14)
    gap = scene.gaps["q.mate"]
    assert gap.thickness == pytest.approx(5e-6, rel=1e-9)
    c = gq.face_centroid("hypotenuse") - gp.face_centroid("hypotenuse")
    assert float(c @ n_p) == pytest.approx(5e-6, rel=1e-9)


def test_pivot_errors():
    d = doc()
    d["solids"]["p"]["pivot"] = "hypotenuze"
    assert any(k == "solids.p.pivot" and 'did you mean "hypotenuse"?' in m for k, m in errors(d))
    d["solids"]["p"]["pivot"] = [1, 2]
    assert any(k == "solids.p.pivot" and "3 items" in m for k, m in errors(d))
    d["solids"]["p"]["pivot"] = ["1 deg", 0, 0]
    assert any(k == "solids.p.pivot[0]" for k, _ in errors(d))
    d = doc()
    d["solids"]["q"] = {"material": "fused-silica", "kind": "right_angle_prism", "leg": "20 mm",
                        "pivot": [1, 0, 0],
                        "mate": {"to": "p.hypotenuse", "face": "hypotenuse"}}
    assert any(k == "solids.q.pivot" and "mate" in m for k, m in errors(d))


def test_pivot_round_trip_and_tolerance():
    d = doc()
    d["solids"]["p"]["pivot"] = "leg_b"
    d["tolerances"] = {"tilt": {"key": "solids.p.rotation[2]", "sigma": "0.1 deg"},
                       "pivot_x": {"key": "solids.q.pivot[0]", "sigma": 0.1}}
    d["solids"]["q"] = {"material": "fused-silica", "kind": "plate", "width": 5, "height": 5,
                        "thickness": 1, "position": [0, 30, 0], "rotation": [0, 0, 10]}
    first = load(d)
    text = dump(first)
    assert 'pivot = "leg_b"' in text
    again = loads(text, path="pivot.toml")
    assert summarize(again) == summarize(first)
    assert dump(again) == text
    assert math.isfinite(first.solids["q"].geometry.volume)
