"""Angular map of a design path: output direction change per input tilt.

The angular map (angular magnification) of a path is the derivative of the output ray's
direction with respect to the input ray's direction -- common practice for afocal
systems and prisms, no source. Facts of the trade checked here: a plate with parallel
faces leaves every direction unchanged (identity); a right-angle (Porro) prism used as a
retroreflector returns every in-plane direction reversed, so an in-plane tilt comes back
inverted while the component along the roof edge is kept (Hecht, Optics, 5th ed., 2017,
sec. 5.5); a penta prism turns every in-plane direction by 90 deg (Smith, Modern Optical
Engineering, 4th ed., 2008, ch. 8; recalled from memory). For a dispersing prism Snell's
law differentiated at both faces gives d(theta_out)/d(theta_in) = -(cos t1 cos t2') /
(cos t1' cos t2) in the principal plane (derived here from Snell's law; t1, t2 outside
angles, t1', t2' inside, t1' + t2' = apex).
"""

import math

import numpy as np
import pytest

from tracer.engine import trace_sequence

from engine_factory import beam, box, prism, right_angle, rot_z, scene, solid
from test_engine_physics import _penta


@pytest.mark.parametrize("incidence_deg", [0.0, 30.0, 55.0])
def test_plate_angular_map_is_identity(incidence_deg):
    g = box((-0.02, -0.02, 0), (0.02, 0.02, 0.003), names=("px", "py", "exit", "mx", "my", "entrance"))
    d = np.array([math.sin(math.radians(incidence_deg)), 0.0, math.cos(math.radians(incidence_deg))])
    sc = scene(solids=[solid("plate", g, n=1.6)],
               sources=[beam(position=np.array([0, 0, 0.0]) - 0.01 * d, direction=d,
                             x_axis=(0, 1, 0))])
    rep = trace_sequence(sc, ["plate.entrance", "plate.exit"])
    assert rep.complete and rep.neighbours_complete
    np.testing.assert_allclose(rep.angular_map, np.eye(2), atol=1e-8)
    s = rep.summary()
    assert np.allclose(s["angular_map"], np.eye(2), atol=1e-8)
    assert len(s["angular_map_world"]) == 3


@pytest.mark.parametrize("tilt_deg", [0.0, 4.0])
def test_right_angle_retro_inverts_in_plane_tilt(tilt_deg):
    L = 0.02
    d = rot_z(math.radians(tilt_deg)) @ (-np.array([1.0, 1.0, 0]) / math.sqrt(2))
    hit = np.array([0.6 * L, 0.4 * L, 0])
    # source x_axis along the roof edge (z, out of the principal plane)
    sc = scene(solids=[solid("prism", right_angle(L), n=1.5168)],
               sources=[beam(position=hit - 0.02 * d, direction=d, x_axis=(0, 0, 1))])
    rep = trace_sequence(sc, ["prism.hypotenuse", "prism.leg_a", "prism.leg_b", "prism.hypotenuse"])
    assert rep.complete and rep.neighbours_complete
    x0 = np.array([0, 0, 1.0])
    y0 = np.cross(d, x0)  # in the principal plane
    W = np.asarray(rep.angular_map_world)
    on_input_axes = np.array([[x0 @ W[:, 0], x0 @ W[:, 1]], [y0 @ W[:, 0], y0 @ W[:, 1]]])
    # out-of-plane tilt kept (+1), in-plane tilt inverted (-1)
    np.testing.assert_allclose(on_input_axes, np.diag([1.0, -1.0]), atol=1e-7)
    # a plane-reflecting prism with the same entrance and exit face maps directions
    # like positions: the angular map equals the image map in the output frame
    np.testing.assert_allclose(rep.angular_map, rep.image_map, atol=1e-6)
    assert abs(np.linalg.det(rep.angular_map) - 1) < 1e-7  # two reflections: proper


@pytest.mark.parametrize("tilt_deg", [-4.0, 0.0, 3.0])
def test_penta_prism_angular_map_is_identity(tilt_deg):
    a = 0.02
    d = rot_z(math.radians(tilt_deg)) @ np.array([0, 1.0, 0])
    sc = scene(solids=[_penta(a)],
               sources=[beam(position=np.array([a / 2, 0, 0]) - 0.01 * d, direction=d,
                             x_axis=(0, 0, 1))])
    rep = trace_sequence(sc, ["penta.entrance", "penta.reflector_a", "penta.reflector_b",
                              "penta.exit"])
    assert rep.complete
    np.testing.assert_allclose(rep.angular_map, np.eye(2), atol=1e-7)


# 53.13 deg = asin(n sin(A/2)) is minimum deviation for n = 1.6, A = 60 deg: magnification 1
@pytest.mark.parametrize("theta1_deg", [45.0, 53.13010235415598, 65.0])
def test_dispersing_prism_in_plane_angular_magnification(theta1_deg):
    n = 1.6
    A = math.radians(60)
    side = 0.03
    b = 2 * side * math.sin(A / 2)
    apex_y = side * math.cos(A / 2)
    g = prism([[-b / 2, 0], [b / 2, 0], [0, apex_y]], -0.02, 0.02, ["base", "exit", "entrance"])
    mid = np.array([-b / 4, apex_y / 2, 0])
    nrm = np.array([-math.cos(A / 2), math.sin(A / 2), 0])
    t1 = math.radians(theta1_deg)
    d = rot_z(t1) @ (-nrm)
    # the source y axis (k x x) lies in the principal plane when x_axis is z
    sc = scene(solids=[solid("p", g, n=n)],
               sources=[beam(position=mid - 0.05 * d, direction=d, x_axis=(0, 0, 1))])
    rep = trace_sequence(sc, ["p.entrance", "p.exit"], tilt=1e-5)
    assert rep.complete
    t1i = math.asin(math.sin(t1) / n)
    t2i = A - t1i
    t2 = math.asin(n * math.sin(t2i))
    m = math.cos(t1) * math.cos(t2i) / (math.cos(t1i) * math.cos(t2))
    assert abs(rep.angular_map[1, 1]) == pytest.approx(m, rel=1e-6)
    assert abs(rep.angular_map[0, 1]) < 1e-8 and abs(rep.angular_map[1, 0]) < 1e-8
