"""Engine core: plate ghosts, ledger closure, determinism, path signatures."""

import numpy as np
import pytest

import tracer
from tracer.engine import trace

from engine_factory import plate_scene


def _fresnel_R(n):
    return ((n - 1) / (n + 1)) ** 2


def test_plate_ghost_series_normal_incidence():
    # Fresnel + geometric series of an uncoated plate (Hecht, Optics, 5th ed., 2017,
    # sec. 4.6 and 9.7): direct T^2, first ghost T^2 R^2, second T^2 R^4,
    # incoherent total (1 - R)/(1 + R) at normal incidence.
    n = 1.5
    R = _fresnel_R(n)
    T = 1 - R
    res = trace(plate_scene(n=n))
    paths = res.paths("camera")
    assert paths[0]["signature"] == "src > plate.entrance:T > plate.exit:T > camera"
    assert paths[0]["power_w"] == pytest.approx(T**2, rel=1e-12)
    assert paths[1]["reflections"] == 2
    assert paths[1]["power_w"] == pytest.approx(T**2 * R**2, rel=1e-12)
    assert paths[2]["power_w"] == pytest.approx(T**2 * R**4, rel=1e-12)
    # threshold 1e-12 keeps ghosts down to R^8 ~ 6e-12: the remainder is tiny
    assert res.detector_power("camera") == pytest.approx((1 - R) / (1 + R), rel=1e-9)
    back = res.detector_power("back")
    assert back == pytest.approx(1 - (1 - R) / (1 + R), rel=1e-8)
    tot = res.ledger.totals()
    assert abs(tot["residual_w"]) < 1e-12


def test_ledger_closes_and_summary_keys():
    res = trace(plate_scene(rays=50, threshold=1e-4))
    s = res.summary()
    led = s["ledger"]
    booked = led["detected_w"] + led["absorbed_w"] + led["escaped_w"] + led["discarded_w"] + led["cut_w"]
    assert booked == pytest.approx(s["source_power_w"], rel=1e-12, abs=0)
    assert abs(booked - s["source_power_w"]) <= 1e-9 * s["source_power_w"]
    assert led["discarded_w"] > 0  # R^4 ghosts fall under 1e-4
    assert s["detectors"]["camera"]["power_w"] == pytest.approx(
        sum(p["power_w"] for p in res.paths("camera")), rel=1e-12)
    assert set(s["detectors"]["camera"]["paths"][0]) >= {"signature", "power_w", "reflections"}


def test_batch_size_and_seed_do_not_change_tree_result():
    sc = plate_scene(rays=37, threshold=1e-9)
    a = trace(sc, batch_size=5, chunk=7).summary()
    b = trace(sc, batch_size=1000).summary()
    pa = {p["signature"]: p["power_w"] for p in a["detectors"]["camera"]["paths"]}
    pb = {p["signature"]: p["power_w"] for p in b["detectors"]["camera"]["paths"]}
    assert pa.keys() == pb.keys()
    for k in pa:
        assert pa[k] == pytest.approx(pb[k], rel=1e-12)
    # same seed, same settings: identical summaries
    assert trace(sc, batch_size=5, chunk=7).summary() == a


def test_cut_at_event_cap_is_booked():
    res = trace(plate_scene(threshold=0.0), max_events=3)
    t = res.ledger.totals()
    assert t["cut_w"] > 0
    assert abs(t["residual_w"]) < 1e-12


def test_unknown_setting_is_a_user_error():
    with pytest.raises(tracer.errors.TracerError, match="did you mean 'max_events'"):
        trace(plate_scene(), max_event=3)


def test_fast_field_rebuild_matches_polarization_apply_interface():
    from tracer import polarization as pol
    from tracer.engine.interact import _project, rebuild

    rng = np.random.default_rng(4)
    k = rng.normal(size=(20, 3))
    k /= np.linalg.norm(k, axis=1, keepdims=True)
    nrm = rng.normal(size=(20, 3))
    nrm /= np.linalg.norm(nrm, axis=1, keepdims=True)
    k_out = rng.normal(size=(20, 3))
    k_out /= np.linalg.norm(k_out, axis=1, keepdims=True)
    M = rng.normal(size=(20, 3, 2)) + 1j * rng.normal(size=(20, 3, 2))
    s, p = pol.sp_basis(k, nrm)
    amp_s = rng.normal(size=20) + 1j * rng.normal(size=20)
    amp_p = rng.normal(size=20) + 1j * rng.normal(size=20)
    ref = pol.apply_interface(M, k, k_out, s, amp_s, amp_p)
    p_out = np.cross(k_out, s)
    p_out /= np.linalg.norm(p_out, axis=1, keepdims=True)
    got = rebuild(s, p_out, _project(s, M), _project(p, M), amp_s, amp_p)
    assert np.allclose(got, ref, atol=1e-12)


def test_path_mueller_of_plate_direct_path():
    # At normal incidence an uncoated plate is a neutral attenuator: the direct path's
    # Mueller matrix is T^2 times a non-depolarising matrix with |M11| = |M22| = |M33| = 1
    # (Fresnel, Hecht, Optics, sec. 4.6; polarisation unchanged at normal incidence).
    R = _fresnel_R(1.5)
    res = trace(plate_scene(stokes=(1, 1, 0, 0)))
    sig = res.paths("camera")[0]["signature"]
    M = res.mueller("camera", sig)
    T2 = (1 - R) ** 2
    assert M[0, 0] == pytest.approx(T2, rel=1e-12)
    assert np.allclose(np.abs(np.diag(M)), T2, rtol=1e-12)
    S = res.path_stokes("camera", sig)
    assert S[0] == pytest.approx(T2, rel=1e-12)
    assert abs(S[1]) == pytest.approx(T2, rel=1e-12)  # linear along x stays linear
