"""One large trace split into ray ranges, traced in parallel, and summed.

Why the sum equals the single trace: every source's rays are generated from one seed
drawn from ``numpy.random.default_rng([scene seed, source index])``; the random
numbers of geometric ray ``g`` come from a block generator keyed by ``g // 65536``
(:mod:`tracer.sources`), so ray ``j`` of a source is the same ray whichever range it
is generated in. In tree mode each source ray's tree of children is independent of
the others; in Monte Carlo mode each decision's uniform is a hash of (seed, source, ray
index, event number) (:mod:`tracer.engine.montecarlo`). So tracing the ranges
``[0, k1), [k1, k2), ...`` of every source separately and adding their ledgers and path
powers gives the single trace's numbers to round-off (the order of floating-point
additions differs), for grid and random sampling, in tree and Monte Carlo mode.

The pieces are summed as plain data: :func:`merge_summaries` adds the
:meth:`tracer.engine.Result.summary` of every range (ledger accounts, source and
detector powers, per-path powers and ray counts matched by path signature).

Coupling: :func:`trace_range` builds the engine's launch plan itself from the
engine's own option checks and the sources' range generator, the same steps as
:func:`tracer.engine.trace` with the rays restricted to a range.
"""

from __future__ import annotations

import numpy as np

from .parallel import Backend, get_backend, split_range

__all__ = ["trace_range", "trace_split", "merge_summaries", "ray_totals"]

#: Summary keys that are the same in every piece (taken from the first).
_SAME = ("title", "mode", "seed", "power_threshold", "max_events")


def ray_totals(scene, rays=None) -> dict[str, int]:
    """Rays each source launches (geometric rays x spectral lines) for ``rays``."""
    from .. import sources as srcmod
    from ..engine.api import _source_counts

    counts = _source_counts(scene, rays)
    return {name: int(srcmod.ray_count(spec, counts[name])) for name, spec in scene.sources.items()}


def _range_batches(srcmod, spec, *, rng, batch_size, count, index, start, stop):
    prepare = getattr(srcmod, "_prepare", None)
    generate_range = getattr(srcmod, "_generate_range", None)
    if prepare is not None and generate_range is not None:
        params, total = prepare(spec, rng, count)
        stop = min(stop, total)
        for s in range(start, stop, batch_size):
            yield generate_range(spec, s, min(stop, s + batch_size), index=index, **params)
        return
    # fallback through the public generator: skip the batches outside the range
    done = 0
    for rays in srcmod.generate_batches(spec, rng=rng, batch_size=batch_size, count=count, index=index):
        lo, hi = done, done + len(rays)
        done = hi
        if hi <= start or lo >= stop:
            continue
        if lo >= start and hi <= stop:
            yield rays
        else:  # pragma: no cover - only with a batch size not dividing the range
            raise RuntimeError("internal: ray range not aligned with batches")


def trace_range(scene, ranges: dict[str, tuple[int, int]], **settings):
    """Trace only rays ``[start, stop)`` of each source (others: none).

    Parameters
    ----------
    scene : tracer.scene.model.Scene
    ranges : dict
        ``{source name: (start, stop)}``; a source not named launches no ray.
    **settings
        As for :func:`tracer.engine.trace`.

    Returns
    -------
    tracer.engine.Result
    """
    from .. import sources as srcmod
    from ..engine.api import _options, _source_counts
    from ..engine.compile import compile_scene
    from ..engine.result import Result
    from ..engine.tree import run

    opts = _options(scene, settings)
    cs = compile_scene(scene)
    counts = _source_counts(scene, opts.rays)
    wls, cohs = [], []
    for spec in scene.sources.values():
        w = np.asarray(spec.spectrum.wavelengths, dtype=float)
        wls.append(w)
        cohs.append(np.broadcast_to(spec.spectrum.coherence_length(), w.shape))
    if wls:
        allw, allc = np.concatenate(wls), np.concatenate(cohs)
        uw, inv = np.unique(allw, return_inverse=True)
        uc = np.full(len(uw), np.inf)
        np.minimum.at(uc, inv, allc)
    else:
        uw, uc = np.array([550e-9]), np.array([np.inf])
    plan = []
    for i, (name, spec) in enumerate(scene.sources.items()):
        start, stop = ranges.get(name, (0, 0))
        rng = np.random.default_rng([int(opts.seed), i])
        it = _range_batches(srcmod, spec, rng=rng, batch_size=int(opts.batch_size),
                            count=counts[name], index=i, start=int(start), stop=int(stop))
        plan.append((name, (max(0, int(stop) - int(start)), it)))
    ledger, tree, rec, launched = run(cs, plan, opts, wavelengths=uw, coherence=uc)
    return Result(scene=scene, compiled=cs, options=opts, ledger=ledger, tree=tree,
                  recorder=rec, launched=launched)


def _scene_of(payload):
    kind, data = payload[0], payload[1:]
    if kind == "scene":
        return data[0]
    from ..scene import from_dict

    doc, path, base_dir = data
    return from_dict(doc, path=path, base_dir=base_dir)


def _range_task(task) -> dict:
    payload, ranges, settings = task
    scene = _scene_of(payload)
    return trace_range(scene, ranges, **settings).summary(max_paths=1 << 62)


def _payload(scene):
    if getattr(scene, "raw", None) is not None:
        import os
        from pathlib import Path

        base = Path(scene.path).resolve().parent if scene.path else Path(os.getcwd())
        return ("doc", scene.raw, scene.path, str(base))
    return ("scene", scene)


def trace_split(scene, *, parts: int | None = None, backend: Backend | None = None,
                workers: int | None = None, scheduler: str | None = None,
                max_paths: int = 50, progress: bool | None = None, **settings) -> dict:
    """Trace ``scene`` as ``parts`` ray ranges on a backend; the summed summary.

    Parameters
    ----------
    scene : Scene
        Sent to the workers as its parsed document (``Scene.raw``, reloaded there) or,
        for a scene built in Python, pickled.
    parts : int, optional
        Number of ray ranges (default: 4 per worker, so that uneven ranges balance).
    backend, workers, scheduler
        Where to run (see :func:`tracer.sweep.parallel.get_backend`).
    max_paths : int
        Paths kept per detector in the merged summary.
    progress : bool or None
        Progress bar (stderr, terminal only when None).
    **settings
        As for :func:`tracer.engine.trace` (``rays``, ``mode``, ``seed``, ...).

    Returns
    -------
    dict
        Shaped like :meth:`tracer.engine.Result.summary`, plus ``parts``.
    """
    own = backend is None
    if own:
        backend = get_backend(workers, scheduler)
    try:
        if parts is None:
            parts = 4 * max(1, int(backend.workers)) if backend.workers > 1 else 1
        totals = ray_totals(scene, settings.get("rays"))
        splits = {n: split_range(t, parts) for n, t in totals.items()}
        payload = _payload(scene)
        tasks = [(payload, {n: splits[n][k] for n in totals}, dict(settings, progress=False))
                 for k in range(int(parts))]
        pieces = backend.map(_range_task, tasks, label="tracing", progress=progress)
    finally:
        if own:
            backend.close()
    out = merge_summaries(pieces, max_paths=max_paths)
    out["parts"] = int(parts)
    return out


def _add(a, b):
    """Sum of two plain-data trees of numbers (dicts by key union)."""
    if isinstance(a, dict) and isinstance(b, dict):
        out = dict(a)
        for k, v in b.items():
            out[k] = _add(out[k], v) if k in out else v
        return out
    if isinstance(a, bool) or isinstance(b, bool):
        return a
    if isinstance(a, (int, float)) and isinstance(b, (int, float)):
        return a + b
    return a


def _merge_paths(lists, max_paths):
    acc: dict[str, dict] = {}
    for paths in lists:
        for p in paths:
            q = acc.get(p["signature"])
            if q is None:
                acc[p["signature"]] = dict(p)
            else:
                q["power_w"] += p["power_w"]
                if "rays" in p:
                    q["rays"] = q.get("rays", 0) + p["rays"]
    merged = sorted(acc.values(), key=lambda p: (-p["power_w"], p["signature"]))
    return merged[:max_paths], len(merged)


def merge_summaries(summaries: list[dict], *, max_paths: int = 50) -> dict:
    """Add the summaries of traces of disjoint ray sets.

    Ledger accounts, source powers and ray counts, events, detector powers and hits add;
    paths are matched by signature and their powers and ray counts add. For an exact
    merge the pieces should keep all their paths (``summary(max_paths=<large>)``).

    >>> a = {"title": "t", "events": 3, "source_power_w": 1.0, "sources": {},
    ...      "detectors": {"d": {"kind": "plane", "power_w": 0.5, "hits": 1, "paths_total": 1,
    ...      "paths": [{"signature": "s > d", "power_w": 0.5, "reflections": 0, "rays": 1}]}},
    ...      "ledger": {"source_w": 1.0}}
    >>> m = merge_summaries([a, a])
    >>> m["events"], m["detectors"]["d"]["power_w"], m["detectors"]["d"]["paths"][0]["rays"]
    (6, 1.0, 2)
    """
    if not summaries:
        raise ValueError("merge_summaries: nothing to merge")
    first = summaries[0]
    out = {k: first[k] for k in _SAME if k in first}
    out["events"] = sum(int(s.get("events", 0)) for s in summaries)
    out["source_power_w"] = float(sum(s.get("source_power_w", 0.0) for s in summaries))
    sources: dict = {}
    for s in summaries:
        sources = _add(sources, s.get("sources", {}))
    out["sources"] = sources
    dets: dict = {}
    for name, d in first.get("detectors", {}).items():
        parts = [s["detectors"][name] for s in summaries]
        merged = {k: v for k, v in d.items() if k not in ("paths", "power_w", "hits", "paths_total")}
        merged["power_w"] = float(sum(p["power_w"] for p in parts))
        if "hits" in d:
            merged["hits"] = int(sum(p.get("hits", 0) for p in parts))
        paths, total = _merge_paths([p.get("paths", []) for p in parts], max_paths)
        merged["paths"] = paths
        if "paths_total" in d:
            merged["paths_total"] = total
        dets[name] = merged
    out["detectors"] = dets
    ledger: dict = {}
    for s in summaries:
        ledger = _add(ledger, s.get("ledger", {}))
    out["ledger"] = ledger
    return out
