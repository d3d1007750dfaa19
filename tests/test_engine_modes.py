"""Monte Carlo convergence, determinism, and ledger closure on random scenes."""

import math

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from tracer.engine import trace
from tracer.scene.model import FaceTreatment

from engine_factory import beam, box, moved, plane, plate_scene, rot_x, rot_z, scene, solid, far_field


def test_monte_carlo_converges_to_tree_within_4_sigma():
    # Analogue Monte Carlo is unbiased: the detector estimate is the mean of N Bernoulli
    # outcomes times the ray power, standard error sqrt(p (1 - p) / N) (common practice,
    # no source).
    sc = plate_scene(rays=4000, threshold=1e-12)
    tree = trace(sc).detector_power("camera")
    mc = trace(sc, mode="monte-carlo")
    p = mc.detector_power("camera")
    n = 4000
    sigma = math.sqrt(tree * (1 - tree) / n)
    assert abs(p - tree) < 4 * sigma
    t = mc.ledger.totals()
    assert abs(t["residual_w"]) <= 1e-9 * t["source_w"]
    assert t["discarded_w"] == 0.0


def test_monte_carlo_independent_of_batching():
    sc = plate_scene(rays=300, threshold=1e-12)
    a = trace(sc, mode="monte-carlo", batch_size=7, chunk=5)
    b = trace(sc, mode="monte-carlo", batch_size=1000)
    assert a.detector_power("camera") == pytest.approx(b.detector_power("camera"), rel=1e-12)
    assert a.events == b.events
    c = trace(sc, mode="monte-carlo", seed=99)
    assert c.events != a.events or c.detector_power("camera") != a.detector_power("camera")


def test_random_source_same_seed_same_result():
    sc = plate_scene(rays=50, threshold=1e-9)
    from dataclasses import replace

    src = replace(sc.sources["src"], sampling="random")
    sc = replace(sc, sources={"src": src})
    a = trace(sc, batch_size=9).summary()
    b = trace(sc, batch_size=50).summary()
    assert a["ledger"]["detected_w"] == pytest.approx(b["ledger"]["detected_w"], rel=1e-12)
    assert [p["signature"] for p in a["detectors"]["camera"]["paths"]] == \
        [p["signature"] for p in b["detectors"]["camera"]["paths"]]


def test_far_field_collects_escaped_power():
    sc = plate_scene(rays=20, threshold=1e-9)
    from dataclasses import replace

    sc = replace(sc, detectors={"sky": far_field()})
    res = trace(sc)
    ff = res.far_field("sky")
    assert ff["power"].sum() == pytest.approx(res.ledger.totals()["escaped_w"], rel=1e-12)
    assert res.summary()["detectors"]["sky"]["power_w"] == pytest.approx(1.0, rel=1e-9)


def test_segments_are_recorded_up_to_the_cap():
    res = trace(plate_scene(rays=10), segments=25)
    seg = res.segments()
    assert len(seg["power"]) == 25
    assert seg["start"].shape == (25, 3)


_treat = st.sampled_from([
    FaceTreatment(), FaceTreatment(kind="absorber"), FaceTreatment(kind="mirror"),
    FaceTreatment(kind="ideal", reflectance=0.3), FaceTreatment(kind="ideal", reflectance=0.0),
])


@settings(max_examples=12, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(
    n_solids=st.integers(1, 4),
    seed=st.integers(0, 10**6),
    treatments=st.lists(_treat, min_size=6, max_size=6),
    kappa=st.sampled_from([0.0, 1e-6]),
    threshold=st.sampled_from([0.0, 1e-4, 1e-2]),
    mode=st.sampled_from(["tree", "monte-carlo"]),
)
def test_ledger_closes_on_random_scenes(n_solids, seed, treatments, kappa, threshold, mode):
    # Energy conservation: detected + absorbed + escaped + discarded + cut equals the
    # source power (common practice, no source).
    rng = np.random.default_rng(seed)
    solids = []
    names = ("px", "py", "pz", "mx", "my", "mz")
    for i in range(n_solids):
        half = rng.uniform(1e-3, 4e-3, 3)
        g = box(-half, half)
        g = moved(g, rot_x(rng.uniform(-0.6, 0.6)) @ rot_z(rng.uniform(-0.6, 0.6)),
                  (rng.uniform(-2e-3, 2e-3), rng.uniform(-2e-3, 2e-3), 0.012 * i))
        faces = {names[j]: treatments[(i + j) % 6] for j in range(6) if rng.uniform() < 0.4}
        from tracer.materials.models import ConstantIndex

        mat = ConstantIndex(rng.uniform(1.3, 2.0) + 1j * kappa, name="m", index_basis="vacuum")
        solids.append(solid(f"s{i}", g, faces=faces, material=mat))
    sc = scene(
        solids=solids,
        sources=[beam(position=(0, 0, -0.02), rays=15, diameter=4e-3, stokes=(1, 0.3, -0.2, 0.5))],
        detectors=[plane("cam", (0, 0, 0.012 * n_solids + 0.02), (0, 0, -1), size=(0.02, 0.02)),
                   plane("back", (0, 0, -0.01), (0, 0, 1), size=(0.01, 0.01)),
                   plane("side", (0.008, 0, 0.01), (-1, 0, 0), size=(0.05, 0.05), two_sided=True)],
        threshold=threshold, max_events=12, mode=mode,
    )
    res = trace(sc)
    t = res.ledger.totals()
    booked = t["detected_w"] + t["absorbed_w"] + t["escaped_w"] + t["discarded_w"] + t["cut_w"]
    assert abs(booked - t["source_w"]) <= 1e-9 * t["source_w"]
    assert t["source_w"] == pytest.approx(1.0, rel=1e-12)
    # the side and back detectors never see the beam before it meets a solid
    assert all(p["signature"] not in ("src > side", "src > back")
               for d in ("side", "back") for p in res.paths(d))
    s = res.summary()
    assert s["detectors"]["cam"]["power_w"] == pytest.approx(
        sum(p["power_w"] for p in res.paths("cam")), rel=1e-9, abs=1e-300)


def test_detector_record_bridge_conserves_power():
    from dataclasses import replace

    sc = plate_scene(rays=40, threshold=1e-9)
    sc = replace(sc, detectors={**sc.detectors, "sky": far_field()})
    res = trace(sc)
    rec = res.record("camera")
    assert rec.total_power == pytest.approx(res.detector_power("camera"), rel=1e-12)
    ff = res.record("sky")
    assert ff.total_power == pytest.approx(res.ledger.totals()["escaped_w"], rel=1e-12)


# ---------------------------------------------------------------- detector Stokes frame
@pytest.mark.parametrize("normal", [(0, 0, -1), (0, 0, 1)])
def test_free_space_keeps_circular_handedness_at_any_detector(normal):
    # A circular state keeps its handedness in free propagation, whichever way the
    # detector's axes are oriented (S3 is a property of the field about its own direction;
    # common practice, no source). The detector frame is (x_axis, k x x_axis), right-handed
    # about the ray, so the same beam reports the same Stokes vector from either side.
    import tracer
    from engine_factory import beam, plane, scene

    for stokes in [(1, 0, 0, 1), (1, 0, 0, -1), (1, 0, 1, 0), (1, 1, 0, 0)]:
        sc = scene(sources=[beam(stokes=stokes)],
                   detectors=[plane("d", (0, 0, 0.05), normal, two_sided=True, x_axis=(1, 0, 0))])
        res = tracer.trace(sc)
        s = res.stokes("d") / res.detector_power("d")
        np.testing.assert_allclose(s, np.array(stokes, float), atol=1e-12)
