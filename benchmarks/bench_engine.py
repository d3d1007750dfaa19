"""Engine benchmark: a standard 3D scene of a dozen solids, non-sequential, threshold 1e-6.

How to run: ``python benchmarks/bench_engine.py [--quick] [--rays N] [--memory N]``
(embree comparison: ``pip install '.[bench]'``; about 3 min for the full run on one free core,
about 10 min for ``--memory 10000000``).

    python benchmarks/bench_engine.py            # 10^6 source rays, growth runs at 10^5 -> 10^6
    python benchmarks/bench_engine.py --quick    # 10^5 source rays, growth runs at 10^4 -> 10^5
    python benchmarks/bench_engine.py --memory 10000000   # peak memory of a batched 10^7-ray trace

Prints from one run: ray-face events per second end to end (per core: CPU time of the
process, and wall time; the process is pinned to one CPU unless ``--no-pin``); the rate of trimesh's embree intersector (``intersects_first``)
on the same geometry triangulated, and the ratio of the two; the time growth for 10x rays
and for 10x solids (12 -> 120, the same stack made longer) next to the growth of the
event count; the peak resident memory. ``--memory N`` traces N source rays in the default
batches and reports the peak resident memory of that process alone. The figures end in a
small table.

Targets: >= 1.5 million events/s per core end to end, ratio >= 0.2 to bare embree,
time growth for 10x solids close to the growth of the events, < 2 GB peak for 10^7
source rays (batched).
"""

from __future__ import annotations

import argparse
import math
import os
import resource
import sys
import time
from pathlib import Path


def _pin_to_one_cpu():
    """Pin this process to the CPU it runs on, before any library starts threads."""
    if not hasattr(os, "sched_setaffinity"):
        return None
    try:
        with open("/proc/self/stat") as fh:
            cpu = int(fh.read().rsplit(")", 1)[1].split()[36])  # field 39: last CPU
    except (OSError, ValueError, IndexError):
        cpu = max(os.sched_getaffinity(0))
    os.sched_setaffinity(0, {cpu})
    return cpu


# per-core figures: the engine and embree's worker threads share one CPU
_PINNED = _pin_to_one_cpu() if __name__ == "__main__" and "--no-pin" not in sys.argv else None

import numpy as np  # noqa: E402  (after pinning: BLAS threads inherit the CPU)

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from tracer.engine import trace  # noqa: E402
from tracer.engine.compile import compile_scene  # noqa: E402
from tracer.geometry.solid import ConvexSolid  # noqa: E402
from tracer.geometry.transforms import rotation_matrix  # noqa: E402
from tracer.materials.models import ConstantIndex  # noqa: E402
from tracer.scene.model import (DetectorSpec, FaceTreatment, GapSpec, Polarization,  # noqa: E402
                                Scene, SolidSpec, SourceSpec, Spectrum, TraceSettings)


def _box(half, R, centre):
    n0 = np.vstack([np.eye(3), -np.eye(3)])
    n = n0 @ R.T
    d = np.concatenate([half, half]) + n @ centre
    return ConvexSolid(n, d, ["px", "py", "pz", "mx", "my", "mz"])


def _wedge_prism(size, R, centre):
    # triangular prism along y, apex angle 60 deg, in the x-z plane
    a = size
    pts = np.array([[-a / 2, -a * 0.29], [a / 2, -a * 0.29], [0, a * 0.58]])
    normals, offsets = [], []
    for i in range(3):
        p, q = pts[i], pts[(i + 1) % 3]
        e = q - p
        nn = np.array([e[1], 0.0, -e[0]])
        nn = -nn / np.linalg.norm(nn)
        normals.append(nn)
        offsets.append(nn[[0, 2]] @ p)
    normals += [np.array([0, 1.0, 0]), np.array([0, -1.0, 0])]
    offsets += [a / 2, a / 2]
    n = np.array(normals)
    d = np.array(offsets)
    # make outward: the centroid must be inside
    sign = np.where(d < 0, -1.0, 1.0)
    n, d = n * sign[:, None], d * sign
    n = n @ R.T
    d = d + n @ centre
    return ConvexSolid(n, d, ["f0", "f1", "f2", "top", "bottom"])


def bench_scene(n_solids=12, rays=10**6, seed=3):
    """A dozen tilted glass solids (plates, cubes, prisms; 0.1 % AR on every face) along z."""
    rng = np.random.default_rng(seed)
    glass = ConstantIndex(1.5168, name="crown")
    air = ConstantIndex(1.0, name="air")
    solids, gaps = {}, {}
    z = 0.0
    ar = FaceTreatment(kind="ideal", reflectance=0.001)  # broadband AR on every face
    for i in range(n_solids):
        R = rotation_matrix(rx=rng.uniform(-0.15, 0.15), ry=rng.uniform(-0.15, 0.15))
        kind = i % 3
        if kind == 0:
            g = _box(np.array([0.02, 0.02, 0.004]), R, np.array([0, 0, z + 0.005]))
            z += 0.02
        elif kind == 1:
            g = _box(np.array([0.015, 0.015, 0.015]), R, np.array([0, 0, z + 0.017]))
            z += 0.04
        else:
            g = _wedge_prism(0.03, R @ rotation_matrix(rx=math.pi / 2), np.array([0, 0, z + 0.015]))
            z += 0.04
        faces = {f: ar for f in g.face_names}
        solids[f"s{i}"] = SolidSpec(name=f"s{i}", material=glass, material_name="crown",
                                    geometry=g, faces=faces, kind="bench")
    det = DetectorSpec(name="camera", kind="plane", position=np.array([0, 0, z + 0.05]),
                       normal=np.array([0, 0, -1.0]), x_axis=np.array([1.0, 0, 0]),
                       size=(0.2, 0.2), pixels=(64, 64))
    src = SourceSpec(name="beam", kind="collimated", position=np.array([0, 0, -0.02]),
                     direction=np.array([0, 0, 1.0]), x_axis=np.array([1.0, 0, 0]), power=1.0,
                     rays=rays, spectrum=Spectrum(np.array([550e-9]), np.array([1.0])),
                     polarization=Polarization(), aperture="circle", size=(0.02, 0.0))
    return Scene(path=None, title="benchmark", dimension=3, ambient=air, ambient_name="air",
                 spectrum=Spectrum(np.array([550e-9]), np.array([1.0])), seed=seed,
                 settings=TraceSettings(power_threshold=1e-6, max_events=64),
                 solids=solids, gaps=gaps, sources={"beam": src}, detectors={"camera": det},
                 requirements={})


def peak_mb():
    """Peak resident memory of this process so far [MB] (Linux reports KiB)."""
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0


def run_engine(scene, rays, **kw):
    """Trace and return (result, wall seconds, CPU seconds of this process)."""
    c0 = time.process_time()
    t0 = time.perf_counter()
    res = trace(scene, rays=rays, progress=False, **kw)
    return res, time.perf_counter() - t0, time.process_time() - c0


def embree_rate(scene, n_rays=200_000):
    """Rays/s (wall, CPU) of trimesh's first-hit query on the triangulated scene, or None."""
    try:
        import embreex  # noqa: F401
        import trimesh
        from trimesh.ray import ray_pyembree
    except Exception as exc:  # embreex missing: pip install '.[bench]'
        return None, None, f"embree unavailable ({exc.__class__.__name__}: {exc}); pip install '.[bench]'"
    meshes = []
    for s in scene.solids.values():
        g = s.geometry
        hull = trimesh.convex.convex_hull(g.vertices)
        meshes.append(hull)
    mesh = trimesh.util.concatenate(meshes)
    inter = ray_pyembree.RayMeshIntersector(mesh)
    rng = np.random.default_rng(0)
    o = np.column_stack([rng.uniform(-0.01, 0.01, n_rays), rng.uniform(-0.01, 0.01, n_rays),
                         np.full(n_rays, -0.02)])
    d = np.tile([0, 0, 1.0], (n_rays, 1)) + rng.normal(0, 0.05, (n_rays, 3))
    d /= np.linalg.norm(d, axis=1, keepdims=True)
    inter.intersects_first(o[:1000], d[:1000])
    c0 = time.process_time()
    t0 = time.perf_counter()
    inter.intersects_first(o, d)
    dt, cpu = time.perf_counter() - t0, time.process_time() - c0
    return n_rays / dt, n_rays / max(cpu, 1e-9), "embree (trimesh intersects_first)"


def memory_run(rays):
    """Trace ``rays`` source rays in the default batches; print time and peak memory."""
    sc = bench_scene()
    res, dt, cpu = run_engine(sc, rays)
    t = res.ledger.totals()
    print(f"memory run: {rays:,} source rays, {res.events:,} events, {len(res.tree):,} paths, "
          f"{cpu:.0f} s CPU ({dt:.0f} s wall), {res.events / cpu / 1e6:.3f} M events/s per core")
    print(f"ledger residual: {t['residual_w']:.3e} W of {t['source_w']:.3f} W")
    print(f"peak memory: {peak_mb():.0f} MB (target < 2048 MB)")


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true", help="10^5 rays, small growth runs")
    ap.add_argument("--rays", type=int, default=None)
    ap.add_argument("--memory", type=int, default=None, metavar="N",
                    help="only trace N source rays (batched) and report the peak memory")
    ap.add_argument("--no-pin", action="store_true",
                    help="do not pin the process (and embree's threads) to one CPU")
    args = ap.parse_args(argv)
    if _PINNED is not None:
        print(f"pinned to CPU {_PINNED} (per-core figures; --no-pin to let embree use every core)")
    if args.memory:
        memory_run(args.memory)
        return
    rays = args.rays or (10**5 if args.quick else 10**6)
    sc = bench_scene()
    trace(sc, rays=1000, progress=False)  # warm-up (imports, caches)
    res, dt, cpu = run_engine(sc, rays)
    ev = res.events
    t = res.ledger.totals()
    rate = ev / cpu
    print(f"scene: {len(sc.solids)} solids, {sum(len(s.geometry.face_names) for s in sc.solids.values())} faces")
    print(f"source rays: {rays:,}  events: {ev:,}  paths: {len(res.tree):,}  "
          f"time: {cpu:.2f} s CPU, {dt:.2f} s wall")
    print(f"end-to-end rate: {rate / 1e6:.3f} M events/s per core (CPU time); "
          f"{ev / dt / 1e6:.3f} M events/s wall")
    print(f"ledger residual: {t['residual_w']:.3e} W of {t['source_w']:.3f} W; "
          f"detected {t['detected_w']:.4f} W, discarded {t['discarded_w']:.2e} W")
    e_wall, e_cpu, label = embree_rate(sc)
    ratio = None
    if e_wall is None:
        print(f"bare intersector: {label}")
    else:
        ratio = rate / e_cpu
        print(f"bare intersector: {e_cpu / 1e6:.3f} M rays/s per core ({e_wall / 1e6:.3f} M rays/s "
              f"wall) [{label}]")
        print(f"ratio engine/bare (per core): {ratio:.3f}")
    print(f"peak memory so far: {peak_mb():.0f} MB")
    small = max(rays // 10, 1000)
    r1, _, c1 = run_engine(sc, small)
    r10, _, c10 = run_engine(sc, small * 10)
    print(f"time growth for 10x rays ({small:,} -> {small * 10:,}): {c10 / c1:.2f}x "
          f"(events {r10.events / r1.events:.2f}x)")
    s1, _, cs1 = run_engine(bench_scene(n_solids=12), small)
    s10, _, cs10 = run_engine(bench_scene(n_solids=120), small)
    print(f"time growth for 10x solids (12 -> 120, {small:,} rays): {cs10 / cs1:.2f}x "
          f"(events {s1.events:,} -> {s10.events:,}, {s10.events / s1.events:.2f}x; "
          f"time per event {cs10 / s10.events / (cs1 / s1.events):.2f}x)")
    print(f"peak memory: {peak_mb():.0f} MB")
    print()
    print("| figure | value | target |")
    print("| --- | --- | --- |")
    print(f"| events/s per core, {rays:,} rays | {rate / 1e6:.2f} M | >= 1.5 M |")
    if ratio is not None:
        print(f"| ratio to bare embree (per core) | {ratio:.3f} | >= 0.2 |")
    print(f"| 10x rays: time / events growth | {c10 / c1:.2f}x / {r10.events / r1.events:.2f}x | ~ equal |")
    print(f"| 10x solids: time / events growth | {cs10 / cs1:.2f}x / {s10.events / s1.events:.2f}x "
          f"| ~ equal |")
    print(f"| peak memory, this run | {peak_mb():.0f} MB | < 2 GB (10^7 rays: --memory) |")


if __name__ == "__main__":
    main()
