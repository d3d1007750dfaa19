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

:func:`trace_range` is :func:`tracer.engine.trace` with its public ``ray_range``
setting.
"""

from __future__ import annotations

from .parallel import Backend, get_backend, split_range

__all__ = ["trace_range", "trace_split", "merge_summaries", "ray_totals"]

#: Summary keys that are the same in every piece (taken from the first).
_SAME = ("title", "mode", "seed", "power_threshold", "max_events")


def ray_totals(scene, rays=None) -> dict[str, int]:
    """Rays each source launches (geometric rays x spectral lines) for ``rays``."""
    from ..engine import launch_counts

    return launch_counts(scene, rays)


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
    from ..engine import trace

    return trace(scene, ray_range={n: (int(a), int(b)) for n, (a, b) in ranges.items()},
                 **settings)


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


def _merge_paths(lists, max_paths, rays=None):
    """Paths matched by signature, powers, ray counts and squared sums added; a path's
    standard error recomputed from the sums and its source's ``rays`` (source -> count)."""
    from ..engine.result import path_standard_error

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
                if "sum_sq_w2" in p:
                    q["sum_sq_w2"] = q.get("sum_sq_w2", 0.0) + p["sum_sq_w2"]
    if rays is not None:
        for q in acc.values():
            if "sum_sq_w2" in q:
                n = int(rays.get(q["signature"].split(" > ", 1)[0], 0))
                q["standard_error_w"] = path_standard_error(q["power_w"], q["sum_sq_w2"], n)
    merged = sorted(acc.values(), key=lambda p: (-p["power_w"], p["signature"]))
    return merged[:max_paths], len(merged)


def _standard_error(moments, rays) -> float:
    """Detector standard error [W] from per-source [sum, sum of squares] and ray counts
    (:meth:`tracer.engine.ledger.Ledger.standard_error`)."""
    var = 0.0
    for src, (a, b) in moments.items():
        n = int(rays.get(src, 0))
        if n > 1:
            var += max(n * b - a * a, 0.0) / (n - 1)
    return float(var ** 0.5)


def merge_summaries(summaries: list[dict], *, max_paths: int = 50) -> dict:
    """Add the summaries of traces of disjoint ray sets.

    Ledger accounts, source powers and ray counts, events, detector powers and hits,
    dropped hits and the power tunnelled through each gap add; paths are matched by
    signature and their powers, ray counts and squared sums add. Standard errors of
    sampled scatter are recomputed from the added raw moments (per source: sum and sum of
    squares over its rays, and the rays counted), so they equal the single trace's to
    round-off. For an exact merge the pieces should keep all their paths
    (``summary(max_paths=<large>)``).

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
    rays = None
    if any("sampled_rays" in s for s in summaries):
        rays = {}
        for s in summaries:
            rays = _add(rays, s.get("sampled_rays", {}))
        out["sampled_rays"] = rays
    if any("scattered_faces" in s for s in summaries):
        faces: dict = {}
        for s in summaries:
            faces = _add(faces, s.get("scattered_faces", {}))
        out["scattered_faces"] = faces
    dets: dict = {}
    for name, d in first.get("detectors", {}).items():
        parts = [s["detectors"][name] for s in summaries]
        merged = {k: v for k, v in d.items()
                  if k not in ("paths", "power_w", "hits", "paths_total", "hits_dropped",
                               "behind_w", "scattered_w", "standard_error_w",
                               "sampled_moments")}
        merged["power_w"] = float(sum(p["power_w"] for p in parts))
        if "scattered_w" in d:
            merged["scattered_w"] = float(sum(p.get("scattered_w", 0.0) for p in parts))
        if "sampled_moments" in d:
            moments: dict = {}
            for p in parts:
                for src, (a, b) in p.get("sampled_moments", {}).items():
                    m = moments.setdefault(src, [0.0, 0.0])
                    m[0] += a
                    m[1] += b
            merged["sampled_moments"] = moments
            merged["standard_error_w"] = _standard_error(moments, rays or {})
        if "hits" in d:
            merged["hits"] = int(sum(p.get("hits", 0) for p in parts))
        if "hits_dropped" in d:
            merged["hits_dropped"] = int(sum(p.get("hits_dropped", 0) for p in parts))
        if "behind_w" in d:
            merged["behind_w"] = float(sum(p.get("behind_w", 0.0) for p in parts))
        paths, total = _merge_paths([p.get("paths", []) for p in parts], max_paths, rays)
        merged["paths"] = paths
        if "paths_total" in d:
            merged["paths_total"] = total
        dets[name] = merged
    out["detectors"] = dets
    ledger: dict = {}
    for s in summaries:
        ledger = _add(ledger, s.get("ledger", {}))
    out["ledger"] = ledger
    if any("gaps" in s for s in summaries):
        gaps: dict = {}
        for s in summaries:
            gaps = _add(gaps, s.get("gaps", {}))
        out["gaps"] = gaps
    if any("hits_dropped" in s for s in summaries):
        out["hits_dropped"] = int(sum(int(s.get("hits_dropped", 0)) for s in summaries))
    return out
