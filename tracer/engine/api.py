"""``trace(scene, **settings) -> Result``: the non-sequential entry point."""

from __future__ import annotations

import difflib

import numpy as np

from .compile import EngineError, compile_scene
from .result import Result
from .tree import Options, run

__all__ = ["trace", "SETTINGS", "launch_counts"]

#: Settings :func:`trace` accepts, with their meaning.
SETTINGS = {
    "mode": '"tree" (split every ray) or "monte-carlo" (one child per event); default from the scene',
    "power_threshold": "children below this fraction of their source ray's power are discarded [1]; "
                       '"auto": chosen so that the requirement verdicts are conclusive',
    "max_events": "rays reaching this many events are cut",
    "seed": "random seed (sources with random sampling, Monte Carlo choices); default from the scene",
    "rays": "geometric rays per spectral line: an int for every source, or {source: int}",
    "batch_size": "source rays launched per batch (does not change tree results)",
    "chunk": "largest number of active rays processed in one step (memory bound)",
    "segments": "record up to this many ray segments for drawing (0: none)",
    "max_hits": "keep at most this many individual detector hits (aggregates are always kept)",
    "progress": "progress bar on stderr: True, False or None (only when stderr is a terminal)",
    "event_budget": "stop with EventBudgetExceeded once more than this many events are traced "
                    "(None: no limit)",
    "memory_budget": "stop with EventBudgetExceeded once the path tree and the active rays "
                     "would take more than this many bytes (None: no limit)",
    "scatter_rays": "tree mode: directions sampled at a scatter event (default from the scene)",
    "scatter_depth": "tree mode: scatter events per path that spawn scatter_rays directions",
    "target_share": "share of the scatter directions aimed at the scatter targets [1]",
    "ray_range": "launch only source rays start <= j < stop: (start, stop) for every source, "
                 "or {source: (start, stop)} (sources not named launch none)",
}


def _options(scene, settings) -> Options:
    unknown = [k for k in settings if k not in SETTINGS]
    if unknown:
        k = unknown[0]
        close = difflib.get_close_matches(k, list(SETTINGS), n=1)
        hint = f" (did you mean {close[0]!r}?)" if close else ""
        raise EngineError(f"unknown trace setting {k!r}{hint}; known: {', '.join(SETTINGS)}")
    st = scene.settings
    o = Options(mode=st.mode, power_threshold=st.power_threshold, max_events=st.max_events,
                seed=int(scene.seed), scatter_rays=st.scatter_rays, scatter_depth=st.scatter_depth,
                target_share=st.target_share)
    for k, v in settings.items():
        if v is not None or k == "progress":
            setattr(o, k, v)
    if o.mode not in ("tree", "monte-carlo"):
        raise EngineError(f'trace setting mode={o.mode!r}: expected "tree" or "monte-carlo"')
    if not (0 <= float(o.power_threshold) < 1):
        raise EngineError(f"power_threshold={o.power_threshold!r}: expected a fraction in [0, 1)")
    for k in ("max_events", "batch_size", "chunk"):
        v = getattr(o, k)
        if isinstance(v, bool) or int(v) != v or v < 1:
            raise EngineError(f"trace setting {k}={v!r}: expected a positive integer")
    return o


def _ray_ranges(scene, ray_range) -> dict:
    """``ray_range`` setting -> {source name: (start, stop)} (stop None: to the end)."""

    def one(where, r):
        if r is None:
            return (0, None)
        try:
            start, stop = r
        except (TypeError, ValueError):
            raise EngineError(f"{where}={r!r}: expected (start, stop) source-ray indices") from None
        vals = []
        for v in (start, stop):
            if v is None:
                vals.append(v)
                continue
            if isinstance(v, bool) or not float(v).is_integer() or v < 0:
                raise EngineError(f"{where}={r!r}: expected non-negative integer indices")
            vals.append(int(v))
        start, stop = vals
        start = 0 if start is None else start
        if stop is not None and stop < start:
            raise EngineError(f"{where}={r!r}: stop is before start")
        return (start, stop)

    if ray_range is None:
        return {n: (0, None) for n in scene.sources}
    if isinstance(ray_range, dict):
        bad = [k for k in ray_range if k not in scene.sources]
        if bad:
            raise EngineError(f"ray_range: unknown source {bad[0]!r}; sources: "
                              f"{', '.join(scene.sources)}")
        return {n: (one(f"ray_range[{n!r}]", ray_range[n]) if n in ray_range else (0, 0))
                for n in scene.sources}
    r = one("ray_range", ray_range)
    return {n: r for n in scene.sources}


def launch_counts(scene, rays=None) -> dict[str, int]:
    """Source rays each source launches (geometric rays x spectral lines).

    Parameters
    ----------
    scene : tracer.scene.model.Scene
    rays : int or dict, optional
        As the ``rays`` setting of :func:`trace` (default: the scene's own counts).

    Returns
    -------
    dict
        ``{source name: count}``; valid ``ray_range`` indices are ``0 .. count - 1``.
    """
    from .. import sources as srcmod

    counts = _source_counts(scene, rays)
    return {name: int(srcmod.ray_count(spec, counts[name])) for name, spec in scene.sources.items()}


def _source_counts(scene, rays):
    if rays is None:
        return {n: None for n in scene.sources}
    if isinstance(rays, dict):
        bad = [k for k in rays if k not in scene.sources]
        if bad:
            raise EngineError(f"rays: unknown source {bad[0]!r}; sources: {', '.join(scene.sources)}")
        return {n: rays.get(n) for n in scene.sources}
    return {n: int(rays) for n in scene.sources}


def trace(scene, **settings) -> Result:
    """Trace a scene non-sequentially and return a :class:`Result`.

    Parameters
    ----------
    scene : tracer.scene.model.Scene
    **settings
        See :data:`SETTINGS` (``mode``, ``power_threshold``, ``max_events``, ``seed``,
        ``rays``, ``batch_size``, ``chunk``, ``segments``, ``max_hits``, ``progress``,
        ``ray_range``). Unset values come from ``scene.settings`` and ``scene.seed``.

    Returns
    -------
    Result

    Notes
    -----
    With ``power_threshold = "auto"`` in the scene (the default of scene files that do
    not set it) and no ``power_threshold`` setting, the scene is traced again with lower
    thresholds until every requirement's verdict is conclusive, within the scene's
    ``auto_cost`` (:mod:`tracer.analysis.auto_threshold`); the result's
    ``threshold_choice`` says what was chosen and why (``None`` otherwise). Traces of a
    ``ray_range`` use the scene's first threshold and are not repeated.

    Every source's rays are generated by :func:`tracer.sources.generate_batches` with a
    random generator seeded by ``(seed, source index)``, so results are reproducible
    and do not depend on ``batch_size``.

    ``ray_range`` selects source rays by their index ``j`` within each source (the
    launch order of :mod:`tracer.sources`: line-major, ``j = line * n + geometric
    ray``; :func:`launch_counts` gives each source's count): ``(start, stop)`` applies
    to every source, ``{name: (start, stop)}`` to the named sources and launches no
    ray from the others. A ray is the same ray whichever range it is traced in (and in
    Monte Carlo mode takes the same decisions), so the ledgers, tunnelled powers and
    path powers of traces of disjoint ranges add up to the full trace's (to round-off).

    Examples
    --------
    >>> from pathlib import Path
    >>> import tracer
    >>> scene = tracer.load(Path(tracer.__file__).parents[1] / "scenes" / "plate_ghost.toml")
    >>> n = launch_counts(scene)["beam"]
    >>> full = trace(scene).detector_power("screen")
    >>> parts = [trace(scene, ray_range=r).detector_power("screen") for r in [(0, 3), (3, n)]]
    >>> abs(sum(parts) - full) < 1e-15
    True
    """
    st = scene.settings
    thr = settings.get("power_threshold")
    wants_auto = isinstance(thr, str) and thr.strip().lower() == "auto"
    if wants_auto or thr is None:
        settings.pop("power_threshold", None)
        if (wants_auto or getattr(st, "auto_threshold", False)) and settings.get("ray_range") is None:
            from ..analysis.auto_threshold import trace_auto

            return trace_auto(scene, _trace_once, **settings)
    return _trace_once(scene, **settings)


def _trace_once(scene, **settings) -> Result:
    """:func:`trace` with the threshold as set (no automatic choice)."""
    from .. import sources as srcmod

    opts = _options(scene, settings)
    cs = compile_scene(scene)
    counts = _source_counts(scene, opts.rays)
    wls, cohs = [], []
    for spec in scene.sources.values():
        w = np.asarray(spec.spectrum.wavelengths, dtype=float)
        wls.append(w)
        cohs.append(np.broadcast_to(spec.spectrum.coherence_length(), w.shape))
    if wls:
        allw = np.concatenate(wls)
        allc = np.concatenate(cohs)
        uw, inv = np.unique(allw, return_inverse=True)
        uc = np.full(len(uw), np.inf)
        np.minimum.at(uc, inv, allc)
    else:  # no source: the scene's own spectrum (never a wavelength the scene did not ask for)
        uw = np.unique(np.asarray(scene.spectrum.wavelengths, dtype=float))
        uc = np.full(len(uw), np.inf)
    plan = []
    ranges = _ray_ranges(scene, getattr(opts, "ray_range", None))
    for i, (name, spec) in enumerate(scene.sources.items()):
        rng = np.random.default_rng([int(opts.seed), i])
        n = srcmod.ray_count(spec, counts[name])
        start, stop = ranges[name]
        stop = n if stop is None else min(int(stop), n)
        start = min(int(start), stop)
        it = srcmod.generate_batches(spec, rng=rng, batch_size=int(opts.batch_size),
                                     count=counts[name], index=i, start=start, stop=stop)
        plan.append((name, (stop - start, it)))
    ledger, tree, rec, launched = run(cs, plan, opts, wavelengths=uw, coherence=uc)
    return Result(scene=scene, compiled=cs, options=opts, ledger=ledger, tree=tree,
                  recorder=rec, launched=launched)
