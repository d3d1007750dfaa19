"""Non-convex (mesh) solids in the engine: an L and a U extruded from polygons.

References: Fresnel reflectance at normal incidence R = ((n - 1)/(n + 1))^2 and the
incoherent multiple-reflection sum of a plate, T = (1 - R)/(1 + R) (Hecht, Optics, 5th
ed., 2017, sec. 4.6); for a pile of N plates T = (1 - R)/(1 + (2N - 1) R) (Stokes' pile of
plates formula, e.g. Born and Wolf, Principles of Optics, 7th ed., 1999, sec. 1.6;
recalled from memory).
"""

import numpy as np
import pytest

from tracer.engine import trace
from tracer.geometry import extrude_polygon

from engine_factory import beam, plane, scene, solid

MM = 1e-3
N = 1.5
R = ((N - 1) / (N + 1)) ** 2
T = 1 - R
L_SHAPE = np.array([[0, 0], [2, 0], [2, 1], [1, 1], [1, 2], [0, 2]]) * 10 * MM
U_SHAPE = np.array([[0, 0], [3, 0], [3, 2], [2, 2], [2, 1], [1, 1], [1, 2], [0, 2]]) * 10 * MM


def _scene(outline, y, **kw):
    g = extrude_polygon(outline, height=20 * MM)
    assert not g.is_convex
    x_end = float(outline[:, 0].max())
    return scene(solids=[solid("part", g, n=N)],
                 sources=[beam(position=(-5 * MM, y, 0), direction=(1, 0, 0), x_axis=(0, 0, 1), **kw)],
                 detectors=[plane("camera", (x_end + 10 * MM, y, 0), (-1, 0, 0), size=(0.2, 0.2)),
                            plane("back", (-10 * MM, y, 0), (1, 0, 0), size=(0.2, 0.2))],
                 threshold=1e-15, max_events=400)


def test_l_shape_two_parallel_faces_is_a_plate():
    # through the long arm of the L: in at x = 0 (side_5), out at x = 20 mm (side_1)
    res = trace(_scene(L_SHAPE, 5 * MM))
    paths = res.paths("camera")
    assert paths[0]["signature"] == "src > part.side_5:T > part.side_1:T > camera"
    assert paths[0]["power_w"] == pytest.approx(T**2, rel=1e-12)
    assert paths[1]["power_w"] == pytest.approx(T**2 * R**2, rel=1e-12)
    assert res.detector_power("camera") == pytest.approx((1 - R) / (1 + R), rel=1e-10)
    assert res.detector_power("back") == pytest.approx(2 * R / (1 + R), rel=1e-10)
    assert abs(res.ledger.totals()["residual_w"]) < 1e-13


def test_u_shape_leaves_and_reenters_the_same_solid():
    # across the slot of the U: in x = 0, out x = 10 mm, in again x = 20 mm, out x = 30 mm
    res = trace(_scene(U_SHAPE, 15 * MM))
    first = res.paths("camera")[0]
    assert first["signature"] == ("src > part.side_7:T > part.side_5:T > part.side_3:T "
                                  "> part.side_1:T > camera")
    assert first["power_w"] == pytest.approx(T**4, rel=1e-12)
    assert res.detector_power("camera") == pytest.approx((1 - R) / (1 + 3 * R), rel=1e-10)
    assert abs(res.ledger.totals()["residual_w"]) < 1e-13


@pytest.mark.parametrize("mode", ["tree", "monte-carlo"])
def test_mesh_ledger_closes_for_a_cone_of_rays(mode):
    sc = _scene(L_SHAPE, 15 * MM, kind="point", half_angle=np.radians(40), rays=200)
    res = trace(sc, mode=mode, power_threshold=1e-6, max_events=64)
    t = res.ledger.totals()
    assert abs(t["residual_w"]) <= 1e-12 * t["source_w"]
    assert t["cut_w"] <= 1e-3 * t["source_w"]
    assert res.ledger.breakdown()["lost_w"] == 0.0


def test_l_shape_loaded_from_an_stl_file_through_trimesh(tmp_path):
    from tracer.geometry.mesh import load_mesh

    path = tmp_path / "l_shape.stl"
    extruded = extrude_polygon(L_SHAPE / MM, height=20.0)  # file in millimetres
    extruded.to_trimesh().export(path)
    g = load_mesh(path, unit=MM)
    assert not g.is_convex
    assert g.volume == pytest.approx(extruded.volume * MM**3, rel=1e-9)
    sc = scene(solids=[solid("part", g, n=N)],
               sources=[beam(position=(-5 * MM, 5 * MM, 0), direction=(1, 0, 0), x_axis=(0, 0, 1))],
               detectors=[plane("camera", (30 * MM, 5 * MM, 0), (-1, 0, 0), size=(0.2, 0.2))],
               threshold=1e-15, max_events=400)
    res = trace(sc)
    first = res.paths("camera")[0]
    assert [k for _, k in first["events"]] == ["transmit", "transmit", "detect"]
    assert first["power_w"] == pytest.approx(T**2, rel=1e-12)
    assert res.detector_power("camera") == pytest.approx((1 - R) / (1 + R), rel=1e-10)
    assert abs(res.ledger.totals()["residual_w"]) < 1e-13
