"""Backends (serial, local processes, Dask) and the ray-range split of one trace (tracer.sweep)."""

import io

import numpy as np
import pytest

import tracer
from pair_scenes import ftir_pair_toml
from tracer.scene import loads
from tracer.sweep import (ParallelError, ProcessBackend, SerialBackend, get_backend, list_axis,
                          merge_summaries, parallel_map, sweep, task_seed, trace_split)
from tracer.sweep.parallel import Progress, split_range

SCENE = ftir_pair_toml(title="FTIR pair for the parallel tests", seed=5, gap="0.2 um",
                       wavelengths='"633 nm", "550 nm"', diameter=2, rays=40, sampling="random",
                       angle="30 deg")


@pytest.fixture(scope="module")
def scene():
    return loads(SCENE, path="pair.toml")


def _square(x):
    return x * x


def _rng_task(index):
    from tracer.sweep import task_rng

    return float(task_rng(11, index).random())


def test_seeds_are_spawned_children_of_the_seed_sequence():
    # NumPy: SeedSequence(s).spawn(n)[i] has spawn_key (i,)
    kids = np.random.SeedSequence(42).spawn(3)
    for i, ss in enumerate(kids):
        assert task_seed(42, i) == int(ss.generate_state(1, np.uint64)[0] >> np.uint64(1))
    assert len({task_seed(42, i) for i in range(100)}) == 100


def test_split_range_covers_everything():
    for total in (0, 1, 7, 100):
        for parts in (1, 2, 3, 8):
            r = split_range(total, parts)
            assert r[0][0] == 0 and r[-1][1] == total
            assert all(a[1] == b[0] for a, b in zip(r, r[1:]))
            sizes = [b - a for a, b in r]
            assert max(sizes) - min(sizes) <= 1


def test_process_pool_keeps_task_order_and_matches_serial():
    tasks = list(range(20))
    with ProcessBackend(2) as b:
        got = b.map(_square, tasks)
        rng = b.map(_rng_task, tasks)
    assert got == [x * x for x in tasks]
    assert rng == SerialBackend().map(_rng_task, tasks)


def test_get_backend_choices_and_errors():
    assert isinstance(get_backend(), SerialBackend)
    assert isinstance(get_backend(1), SerialBackend)
    b = get_backend(2)
    assert isinstance(b, ProcessBackend) and b.workers == 2
    b.close()
    with pytest.raises(ParallelError):
        get_backend(-1)
    with pytest.raises(ParallelError):
        get_backend(2, "tcp://127.0.0.1:1")
    with pytest.raises(ParallelError):
        ProcessBackend(2, start_method="teleport")


def test_progress_only_when_asked_or_on_a_terminal():
    buf = io.StringIO()
    p = Progress(3, "x", stream=buf)  # StringIO is not a terminal
    for _ in range(3):
        p.update()
    assert buf.getvalue() == ""
    buf = io.StringIO()
    p = Progress(2, "sweep", enabled=True, stream=buf)
    p.update()
    p.update()
    assert "sweep [" in buf.getvalue() and buf.getvalue().endswith("\n")


def _compare(a, b, rtol=1e-12):
    la, lb = a["ledger"], b["ledger"]
    for k in ("source_w", "detected_w", "escaped_w", "discarded_w", "absorbed_w"):
        assert la[k] == pytest.approx(lb[k], rel=rtol, abs=1e-18)
    assert la["escaped_faces"].keys() == lb["escaped_faces"].keys()
    for k in la["escaped_faces"]:
        assert la["escaped_faces"][k] == pytest.approx(lb["escaped_faces"][k], rel=rtol)
    pa = {p["signature"]: p for p in a["detectors"]["through"]["paths"]}
    pb = {p["signature"]: p for p in b["detectors"]["through"]["paths"]}
    assert pa.keys() == pb.keys()
    for s in pa:
        assert pa[s]["power_w"] == pytest.approx(pb[s]["power_w"], rel=rtol)
        assert pa[s]["rays"] == pb[s]["rays"]
    assert a["events"] == b["events"]
    assert a["sources"]["beam"]["rays"] == b["sources"]["beam"]["rays"]


@pytest.mark.parametrize("mode", ["tree", "monte-carlo"])
def test_split_trace_sums_to_the_single_trace(scene, mode):
    # random sampling and (in Monte Carlo mode) random event choices: the sum over ray
    # ranges must equal one trace, ray for ray
    single = tracer.trace(scene, mode=mode, rays=300, batch_size=64).summary(max_paths=10**6)
    parts = trace_split(scene, parts=3, mode=mode, rays=300, batch_size=64, max_paths=10**6)
    _compare(single, parts)
    assert parts["parts"] == 3


def test_split_trace_on_two_processes(scene):
    single = tracer.trace(scene, rays=200).summary(max_paths=10**6)
    with ProcessBackend(2) as b:
        split = trace_split(scene, backend=b, rays=200, max_paths=10**6)
    _compare(single, split)


def test_merge_of_one_piece_is_the_piece(scene):
    s = tracer.trace(scene, rays=20).summary(max_paths=10**6)
    _compare(s, merge_summaries([s], max_paths=10**6), rtol=0)


def _sweep_rows(**kw):
    return sweep(SCENE_DOC(), [list_axis("solids.upper.mate.gap", ["0.1 um", "0.3 um", "0.6 um"])],
                 settings={"rays": 30}, **kw).rows


def SCENE_DOC():
    import tomllib

    return tomllib.loads(SCENE)


def test_sweep_identical_for_one_and_two_workers():
    one = _sweep_rows(workers=1)
    two = _sweep_rows(workers=2)
    assert one == two
    per_task = _sweep_rows(workers=2, seeds="per-task")
    assert per_task == _sweep_rows(seeds="per-task")
    assert per_task != one  # other random rays: the seeds really changed


def test_dask_local_cluster_gives_the_same_results(scene):
    distributed = pytest.importorskip("distributed")
    from tracer.sweep import DaskBackend

    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=False,
                                  dashboard_address=None) as cluster, \
            distributed.Client(cluster) as client:
        backend = DaskBackend(client=client)
        assert backend.workers == 2
        rows = _sweep_rows(backend=backend)
        split = trace_split(scene, backend=backend, rays=200, max_paths=10**6)
        assert parallel_map(_rng_task, range(5), backend=backend) == [_rng_task(i) for i in range(5)]
    assert rows == _sweep_rows()
    _compare(tracer.trace(scene, rays=200).summary(max_paths=10**6), split)
