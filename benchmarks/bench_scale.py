"""Scale-out: one large trace and a sweep, on 1 and 2 local workers.

1. A trace of ``--rays`` rays (default 10^7: geometric rays x spectral lines) of the
   demo TIR prism pair, split into ray ranges (``tracer.sweep.trace_split``); checks
   that the 2-worker sum equals the 1-worker trace.
2. A sweep of ``--points`` points (default 200) of the pair's upper-prism position
   (the gap thickness) with `--sweep-rays` rays per line at each point (default 200).

Prints wall time (worker processes are started before the clock runs), the speed-up of 2 workers over 1 (target >= 1.8 on 2 free cores)
and the peak resident memory of every worker process. On a machine shared with other
work the speed-up is lower than the cores could give.

Run: ``python benchmarks/bench_scale.py [--quick] [--rays N] [--points N] [--sweep-rays N] [--start-method M]``.
"""

from __future__ import annotations

import argparse
import os
import pathlib
import resource
import sys
import time

sys.path.insert(0, str(pathlib.Path(__file__).resolve().parents[1]))

SCENE = pathlib.Path(__file__).resolve().parents[1] / "scenes" / "tir_prism_pair.toml"


def _peak_mib() -> float:
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0  # Linux: KiB


def _range_task_mem(task):
    from tracer.sweep.split_trace import _range_task

    return _range_task(task), os.getpid(), _peak_mib()


def _point_task_mem(task):
    from tracer.sweep.runner import run_task

    return run_task(task), os.getpid(), _peak_mib()


def _noop(x):
    import tracer.analysis  # noqa: F401  (imports are part of a worker's start-up)
    import tracer.engine  # noqa: F401
    import tracer.scene  # noqa: F401
    import tracer.sweep.runner  # noqa: F401
    from tracer.engine.warm import warm_up

    warm_up()  # the pool's initializer has done it; a no-op here
    return x


def _warm(backend):
    """Start the worker processes before the clock runs (a fixed cost of a pool)."""
    backend.map(_noop, list(range(backend.workers)))


def _peaks(outcomes):
    peaks = {}
    for _, pid, mib in outcomes:
        peaks[pid] = max(peaks.get(pid, 0.0), mib)
    return peaks


def bench_trace(rays: int, workers: int, start_method: str):
    from tracer.scene import load
    from tracer.sweep import get_backend, merge_summaries
    from tracer.sweep.parallel import split_range
    from tracer.sweep.split_trace import _payload, ray_totals

    scene = load(SCENE)
    lines = len(scene.sources["illumination"].spectrum.wavelengths)
    per_line = max(1, rays // lines)
    settings = {"rays": per_line, "progress": False, "max_hits": 0}
    parts = 1 if workers == 1 else 4 * workers
    totals = ray_totals(scene, per_line)
    splits = {n: split_range(t, parts) for n, t in totals.items()}
    tasks = [(_payload(scene), {n: splits[n][k] for n in totals}, settings) for k in range(parts)]
    backend = get_backend(workers, start_method=start_method)
    try:
        _warm(backend)
        t0 = time.perf_counter()
        out = backend.map(_range_task_mem, tasks, label=f"trace {workers} worker(s)")
        dt = time.perf_counter() - t0
    finally:
        backend.close()
    merged = merge_summaries([o[0] for o in out], max_paths=10**9)
    return dt, merged, _peaks(out), sum(totals.values())


def bench_sweep(points: int, workers: int, start_method: str, rays: int = 200):
    from tracer.sweep import RunOptions, get_backend, range_axis
    from tracer.sweep.axes import grid
    from tracer.sweep.runner import document_of, make_task

    doc, path, base = document_of(str(SCENE))
    # the sweep moves the geometry: drop the declared gap (and the leakage requirement
    # on it), whose thickness is checked against the placed prisms
    doc = {k: v for k, v in doc.items() if k != "gaps"}
    doc["requirements"] = {k: v for k, v in doc.get("requirements", {}).items()
                           if "gap" not in v}
    axis = range_axis("solids.upper.position[0]", 20.0015, 20.006, points)
    opts = RunOptions(settings={"rays": rays, "progress": False})
    tasks = [make_task(doc, path, base, i, p, opts) for i, p in enumerate(grid([axis]))]
    backend = get_backend(workers, start_method=start_method)
    try:
        _warm(backend)
        t0 = time.perf_counter()
        out = backend.map(_point_task_mem, tasks, label=f"sweep {workers} worker(s)")
        dt = time.perf_counter() - t0
    finally:
        backend.close()
    bad = [o[0]["error"] for o in out if not o[0]["ok"]]
    if bad:
        raise SystemExit(f"sweep point failed: {bad[0]}")
    return dt, [o[0]["row"] for o in out], _peaks(out)


def _report(name, t1, t2, p1, p2):
    print(f"{name}: 1 worker {t1:8.2f} s, 2 workers {t2:8.2f} s, speed-up {t1 / t2:4.2f}x "
          f"(target >= 1.8x on 2 free cores)")
    print(f"  peak memory: 1 worker {max(p1.values()):7.1f} MiB; 2 workers "
          + ", ".join(f"{v:7.1f} MiB" for v in p2.values()))


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--quick", action="store_true", help="10^5 rays and 40 points")
    ap.add_argument("--rays", type=int, help="rays of the large trace (default 10^7)")
    ap.add_argument("--points", type=int, help="sweep points (default 200)")
    ap.add_argument("--sweep-rays", type=int, default=200,
                    help="geometric rays per line at each sweep point (default 200, a design sweep's "
                         "usual count; a handful makes the pool's per-task cost dominate)")
    ap.add_argument("--start-method", default="spawn", choices=("spawn", "fork", "forkserver"))
    ap.add_argument("--skip-trace", action="store_true")
    ap.add_argument("--skip-sweep", action="store_true")
    a = ap.parse_args(argv)
    rays = a.rays or (100_000 if a.quick else 10_000_000)
    points = a.points or (40 if a.quick else 200)
    print(f"cores: {os.cpu_count()}, start method: {a.start_method}")
    if not a.skip_trace:
        t1, m1, p1, n = bench_trace(rays, 1, a.start_method)
        t2, m2, p2, _ = bench_trace(rays, 2, a.start_method)
        d1, d2 = m1["ledger"]["detected_w"], m2["ledger"]["detected_w"]
        same = abs(d1 - d2) <= 1e-12 * abs(d1) and m1["events"] == m2["events"]
        print(f"trace of {n} rays, {m1['events']} events: sums agree: {same}")
        _report("trace", t1, t2, p1, p2)
    if not a.skip_sweep:
        t1, r1, p1 = bench_sweep(points, 1, a.start_method, a.sweep_rays)
        t2, r2, p2 = bench_sweep(points, 2, a.start_method, a.sweep_rays)
        print(f"sweep of {points} points: tables identical: {r1 == r2}")
        _report("sweep", t1, t2, p1, p2)
    return 0


if __name__ == "__main__":
    sys.exit(main())
