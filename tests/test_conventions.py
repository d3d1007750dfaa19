"""Conventions that two outputs must agree on: the detector Stokes frame (right-handed
about the ray, so free space is the identity; checked against py_pol, a reference
library for Jones/Mueller/Stokes calculus), one far-field map layout, and a stable path
order (numpy reference and compiled kernels give the same ghost tables on every demo
scene; lossless faces book no negative absorbed power)."""

from __future__ import annotations

import math
import warnings
from pathlib import Path

import numpy as np
import pytest

from engine_factory import beam, plane, scene
from tracer.analysis.ghosts import ghost_tables
from tracer.engine import jit, trace
from tracer.engine.result import path_rank_key
from tracer.engine.sequential import trace_sequence
from tracer.scene import load
from tracer.scene.model import DetectorSpec

with warnings.catch_warnings():
    warnings.simplefilter("ignore")
    from py_pol.mueller import Mueller
    from py_pol.stokes import Stokes
    from py_pol.utils import rotation_matrix_Mueller

ROOT = Path(__file__).resolve().parents[1]
SCENES = sorted((ROOT / "scenes").glob("*.toml"))
KERNELS = [False, True] if jit.available else [False]


def _unit(v):
    v = np.asarray(v, float)
    return v / np.linalg.norm(v)


def _free_space(k, xs, *, det_x=None, behind=False, stokes=(1, 0, 0, 0)):
    """A source along ``k`` (x_axis ``xs``) and a detector 50 mm on, facing the light
    (normal -k) or, ``behind``, two-sided with normal +k; detector x_axis ``det_x``."""
    k, xs = _unit(k), _unit(xs)
    normal = k if behind else -k
    det = plane("d", 0.05 * k, normal, x_axis=xs if det_x is None else det_x,
                two_sided=behind)
    return scene(sources=[beam(position=(0, 0, 0), direction=k, x_axis=xs, stokes=stokes)],
                 detectors=[det])


def _frames(n, seed):
    rng = np.random.default_rng(seed)
    for _ in range(n):
        k = _unit(rng.normal(size=3))
        xs = _unit(np.cross(k, rng.normal(size=3)))
        yield k, xs


# ------------------------------------------------------------------ detector Stokes frame
@pytest.mark.parametrize("compiled", KERNELS)
@pytest.mark.parametrize("behind", [False, True], ids=["facing", "two-sided-from-behind"])
def test_empty_path_mueller_is_identity(compiled, behind):
    # Free space does nothing to the polarisation: a detector sharing the source's x_axis
    # reports the identity Mueller matrix, determinant +1 (py_pol: Mueller.vacuum()).
    vacuum = np.asarray(Mueller("vacuum").vacuum().M, float).reshape(4, 4)
    assert np.array_equal(vacuum, np.eye(4))
    frames = list(_frames(4, 7)) + [((0, 0, 1), (1, 0, 0)), ((1, 0, 0), (0, 1, 0))]
    with jit.use_compiled(compiled):
        for k, xs in frames:
            res = trace(_free_space(k, xs, behind=behind), progress=False)
            M = res.mueller("d")
            np.testing.assert_allclose(M, vacuum, atol=1e-12, err_msg=str((k, xs)))
            assert np.linalg.det(M) == pytest.approx(1.0, abs=1e-12)


@pytest.mark.parametrize("theta_deg", [0.0, 17.0, 45.0, 90.0, 133.0])
def test_rotated_detector_frame_is_py_pol_rotation(theta_deg):
    # The detector's x_axis turned by theta about the beam (from the source's x_axis
    # towards its y_axis = k x x_axis): the path's Mueller matrix is py_pol's frame
    # rotation rotation_matrix_Mueller(theta), and a traced state arrives as py_pol's
    # Stokes.rotate(-theta) of the launched one (the light's azimuth is alpha - theta in
    # the turned frame). py_pol and tracer share the physical handedness (S3 > 0 clockwise
    # seen by the receiver); Stokes vectors are compared, not Jones vectors, whose phase
    # conventions differ.
    th = math.radians(theta_deg)
    want = np.asarray(rotation_matrix_Mueller(th), float).reshape(4, 4)
    for k, xs in list(_frames(2, 11)) + [((0, 0, -1), (1, 0, 0))]:
        k, xs = _unit(k), _unit(xs)
        ys = np.cross(k, xs)
        det_x = math.cos(th) * xs + math.sin(th) * ys
        res = trace(_free_space(k, xs, det_x=det_x), progress=False)
        np.testing.assert_allclose(res.mueller("d"), want, atol=1e-12)
        for s_in in [(1, 1, 0, 0), (1, 0, 1, 0), (1, 0, 0, 1), (1, 0.3, -0.5, 0.6)]:
            res = trace(_free_space(k, xs, det_x=det_x, stokes=s_in), progress=False)
            got = res.stokes("d") / res.detector_power("d")
            ref = Stokes("in").from_components(list(s_in))
            ref.rotate(angle=-th)
            np.testing.assert_allclose(got, np.asarray(ref.M, float).reshape(4), atol=1e-12)


def test_detector_frame_is_right_handed_about_the_ray():
    # A beam has one Stokes vector: the same linear +45 deg state read by a detector facing
    # the light and by a two-sided detector seen from behind (both x_axis = source x_axis).
    k, xs = (0.0, 0.6, 0.8), (1.0, 0.0, 0.0)
    s_in = (1, 0, 1, 0)
    a = trace(_free_space(k, xs, stokes=s_in), progress=False)
    b = trace(_free_space(k, xs, behind=True, stokes=s_in), progress=False)
    sa = a.stokes("d") / a.detector_power("d")
    sb = b.stokes("d") / b.detector_power("d")
    np.testing.assert_allclose(sa, s_in, atol=1e-12)
    np.testing.assert_allclose(sb, s_in, atol=1e-12)


def _rhomb():
    sc = load(ROOT / "scenes" / "fresnel_rhomb_retarder.toml")
    res = trace(sc, progress=False)
    sig = res.paths("analyser")[0]["signature"]
    assert sig.count(":TIR") == 2
    return sc, res, sig


def test_fresnel_rhomb_detector_agrees_with_trace_sequence():
    # The design path's Stokes vector on the exit-face detector equals the sequential
    # trace's output_stokes: S2 = cos(retardance) is small but its sign must agree.
    sc, res, sig = _rhomb()
    seq = trace_sequence(sc, sc.settings.sequence)
    # the two frames share their axes up to a half turn (which leaves Stokes unchanged)
    det = sc.detectors["analyser"]
    k = np.asarray(seq.output_direction)
    xd = _unit(np.asarray(det.x_axis) - np.dot(det.x_axis, k) * k)
    assert abs(np.dot(xd, seq.output_frame[0])) == pytest.approx(1.0, abs=1e-12)
    s_det = res.path_stokes("analyser", sig)
    s_det = s_det / s_det[0]
    s_seq = np.asarray(seq.output_stokes) / seq.output_stokes[0]
    assert abs(s_seq[2]) > 1e-5  # a sign worth comparing
    assert np.sign(s_det[2]) == np.sign(s_seq[2])
    np.testing.assert_allclose(s_det, s_seq, atol=1e-9)
    assert s_det[3] == pytest.approx(-1.0, abs=1e-6)  # the scene's documented S3 = -1


def test_fresnel_rhomb_mueller_is_py_pol_linear_retarder():
    # Two TIRs at the rhomb's acute angle 54 deg 37' in n = 1.51: a linear retarder with
    # its fast axis in the plane of incidence (the detector's x_axis here) and retardance
    # 2 delta, tan(delta/2) = cos t sqrt(sin^2 t - n^2) / sin^2 t with n = 1/1.51
    # (Born & Wolf, Principles of Optics, 7th ed. 1999, Eq. 1.5(60), from memory); the
    # normal-incidence entrance and exit add no diattenuation. Mueller matrix of the
    # retarder from py_pol (retarder_linear, azimuth of the fast axis).
    sc, res, sig = _rhomb()
    t = math.radians(54 + 37 / 60)
    n = 1 / 1.51
    delta = 2 * math.atan(math.cos(t) * math.sqrt(math.sin(t) ** 2 - n ** 2) / math.sin(t) ** 2)
    ret = np.asarray(Mueller("rhomb").retarder_linear(R=2 * delta, azimuth=0.0).M, float)
    M = res.mueller("analyser", sig)
    np.testing.assert_allclose(M / M[0, 0], ret.reshape(4, 4), atol=1e-6)


# ------------------------------------------------------------------ far-field layout
def test_far_field_single_layout_and_known_beam_position():
    # One layout (n_polar, n_azimuth), azimuth over [-pi, pi] from x_axis towards
    # normal x x_axis, polar from the normal: a beam at azimuth 100 deg, polar 60 deg
    # lands in column floor((100 + 180) / 30) = 9 and row floor(60 / 30) = 2 of a
    # (6, 12) map, in Result.far_field, record() and detectors.far_field_bins alike.
    from tracer.detectors import far_field_bins

    sky = DetectorSpec(name="sky", kind="far_field", position=np.zeros(3),
                       normal=np.array([0.0, 0, 1]), x_axis=np.array([1.0, 0, 0]),
                       size=(0.0, 0.0), pixels=(12, 6))
    az, pol = math.radians(100), math.radians(60)
    k = np.array([math.sin(pol) * math.cos(az), math.sin(pol) * math.sin(az), math.cos(pol)])
    sc = scene(sources=[beam(position=(0, 0, 0), direction=k, rays=5, diameter=1e-3)],
               detectors=[sky])
    res = trace(sc, progress=False)
    ff = res.far_field("sky")
    assert ff["power"].shape == (6, 12) == ff["solid_angle"].shape
    assert ff["azimuth_edges"][0] == -np.pi and ff["azimuth_edges"][-1] == np.pi
    assert len(ff["polar_edges"]) == 7
    assert ff["power"][2, 9] == pytest.approx(1.0, rel=1e-12)
    assert ff["power"].sum() == pytest.approx(1.0, rel=1e-12)
    rec = res.record("sky")
    assert rec.power_map().shape == (6, 12)
    np.testing.assert_array_equal(rec.power_map(), ff["power"])
    np.testing.assert_array_equal(far_field_bins(sky, k[None], np.array([1.0])), ff["power"])
    from tracer.plot import far_field_data

    data = far_field_data(res, "sky")
    assert data["intensity"][2, 9] == pytest.approx(1.0 / ff["solid_angle"][2, 9])


# ------------------------------------------------------------------ path order
def test_equal_power_paths_are_ordered_by_signature():
    # powers equal to round-off rank by signature, whichever carries the larger last bit
    paths = [(1.0 / 6, "c"), (1.0 / 6 + 2e-17, "b"), (1.0 / 6 - 2e-17, "a"), (0.5, "z")]
    for perm in [paths, paths[::-1], paths[1:] + paths[:1]]:
        ranked = sorted(perm, key=lambda p: path_rank_key(*p))
        assert [s for _, s in ranked] == ["z", "a", "b", "c"]
    # really different powers still rank by power
    assert sorted([(1.0, "a"), (1.0 + 1e-6, "b")], key=lambda p: path_rank_key(*p))[0][1] == "b"


def test_corner_cube_equal_subapertures_listed_by_signature():
    # with 60 rays four sub-aperture paths of the corner cube get 10 rays each: equal
    # power to round-off (their last bits differ), listed by signature
    res = trace(load(ROOT / "scenes" / "corner_cube_retroreflector.toml"), rays=60, progress=False)
    equal = [p for p in res.paths("return") if p["rays"] == 10]
    assert len(equal) == 4
    powers = [p["power_w"] for p in equal]
    assert max(powers) - min(powers) <= 1e-12 * max(powers)
    assert [p["signature"] for p in equal] == sorted(p["signature"] for p in equal)
    assert [p["rank"] for p in ghost_tables(res)["return"].to_dict()["paths"][1:5]] == [2, 3, 4, 5]


def _table_rows(table):
    return [(r.rank, r.signature, r.label, r.reflections, r.rays, r.design, r.equivalent, r.ghost)
            for r in table.rows]


@pytest.mark.skipif(not jit.available, reason="numba not installed")
@pytest.mark.parametrize("path", SCENES, ids=[p.stem for p in SCENES])
def test_ghost_tables_same_with_numpy_and_compiled_kernels(path):
    sc = load(path)
    with jit.use_compiled(False):
        ref = trace(sc, rays=60, progress=False)
    with jit.use_compiled(True):
        got = trace(sc, rays=60, progress=False)
    ta, tb = ghost_tables(ref), ghost_tables(got)
    assert list(ta) == list(tb)
    for name in ta:
        a, b = ta[name], tb[name]
        assert _table_rows(a) == _table_rows(b), name
        assert (a.design_rule, a.kind) == (b.design_rule, b.kind)
        np.testing.assert_allclose([r.power_w for r in a.rows], [r.power_w for r in b.rows],
                                   rtol=1e-12, atol=0)
        assert a.format_text(limit=None) == b.format_text(limit=None)
    # lossless faces book no negative absorbed power; the ledger still closes
    for res in (ref, got):
        led = res.ledger.breakdown()
        assert all(v >= 0 for v in led["absorbed_faces"].values()), led["absorbed_faces"]
        assert all(v >= 0 for v in led["absorbed_bulk"].values())
        assert abs(led["residual_w"]) <= 1e-12 * res.source_power_w
