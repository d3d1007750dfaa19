"""The result of a trace: ledger, path table, detector records.

:class:`Result` keeps everything a trace produced and answers questions about it;
:meth:`Result.summary` returns plain data (dicts, lists, floats, ints, strings) ready
for JSON.

Power on a path: in tree mode every path's power is exact (the sum over source rays
of the power that followed that path); in Monte Carlo mode it is an estimate.
Polarisation: Stokes vectors are in each detector's frame ``(x_axis, k x x_axis)``,
right-handed about the ray's direction ``k`` (S1 > 0 along the detector's ``x_axis``;
for a detector facing the light ``k x x_axis = -normal x x_axis``), so a beam has one
Stokes vector whichever way a detector faces; path Mueller matrices map the source's
Stokes vector (in the source's input frame, per unit source power) to the detector's
(free space between a source and a detector sharing its ``x_axis`` is the identity),
and are meaningful in tree mode only (Monte Carlo rescales fields to the carried power).

Path order: paths are listed strongest first; powers equal to
``PATH_POWER_TIE_DIGITS`` significant digits are ordered by signature
(:func:`path_rank_key`), so round-off never reorders a table.

Gap crossings: the power that crossed each gap, booked by the engine at each crossing,
split by mechanism: tunnelled (frustrated TIR, beyond the gap medium's critical angle)
and refracted (ordinary refraction below it) (:meth:`Result.crossed_power`,
:meth:`Result.tunnelled_power`, ``summary()["gaps"]``).

>>> from pathlib import Path
>>> import tracer
>>> scene = tracer.load(Path(tracer.__file__).parents[1] / "scenes" / "tir_prism_pair.toml")
>>> res = tracer.trace(scene, rays=3, power_threshold=1e-30)
>>> leak = res.tunnelled_power("tir")
>>> 0 < leak < 1e-15 * res.source_power_w, res.summary()["gaps"]["tir"]["tunnelled_w"] == leak
(True, True)
>>> res.hits_dropped
0
"""

from __future__ import annotations

import numpy as np

from ..tolerances import PATH_POWER_TIE_DIGITS
from .paths import DETECT, KIND_NAMES

__all__ = ["Result", "path_rank_key", "path_standard_error"]


def path_rank_key(power, signature):
    """Sort key of a path: falling power rounded to ``PATH_POWER_TIE_DIGITS`` significant
    digits, then signature (stable whatever the round-off of the power).

    >>> sorted([(1.0 + 1e-15, "b"), (1.0, "a"), (2.0, "c")],
    ...        key=lambda p: path_rank_key(*p))
    [(2.0, 'c'), (1.0, 'a'), (1.000000000000001, 'b')]
    """
    return (-float(f"{float(power):.{PATH_POWER_TIE_DIGITS - 1}e}"), str(signature))


def path_standard_error(power, sum_sq, rays) -> float:
    """Standard error [W] of a path's sampled power.

    Parameters
    ----------
    power : float [W]
        The path's power: the sum over the source's rays of the power each put on it.
    sum_sq : float [W^2]
        The sum over those rays of the squared power each put on it (0 when the path
        rests on no sampling: tree mode without a scatter event on it).
    rays : int
        Source rays of the path's source (each an independent sample).

    ``sqrt((N sum x^2 - (sum x)^2) / (N - 1))``: the standard error of a sum of N
    independent samples, the same estimator as :meth:`Ledger.standard_error`.

    >>> path_standard_error(2.0, 2.0, 4)   # x = 1, 1, 0, 0: var 1/3 per ray, sum 4/3
    1.1547005383792515
    >>> path_standard_error(1.0, 0.0, 10)  # exact path
    0.0
    """
    if not sum_sq > 0 or rays < 2:
        return 0.0
    return float(np.sqrt(max(rays * sum_sq - power * power, 0.0) / (rays - 1)))


class Result:
    """Everything one trace produced (see the module docstring)."""

    def __init__(self, *, scene, compiled, options, ledger, tree, recorder, launched):
        self.scene = scene
        self.compiled = compiled
        self.options = options
        self.ledger = ledger
        self.tree = tree
        self._rec = recorder
        self.launched = launched
        self._nodes = recorder.node_table()
        self._slot = {int(n): i for i, n in enumerate(self._nodes["nodes"])}
        self._hits = None
        #: How ``power_threshold = "auto"`` chose the threshold (None: set explicitly).
        self.threshold_choice = None

    # ------------------------------------------------------------------ basics
    def _repr_html_(self) -> str:  # Jupyter (tracer.notebook)
        from ..notebook import result_html
        return result_html(self)

    @property
    def source_names(self) -> list[str]:
        return list(self.ledger.sources)

    @property
    def detector_names(self) -> list[str]:
        """Plane detectors, then far-field detectors."""
        return list(self.compiled.detector_names) + [d.name for d in self.compiled.far_fields]

    @property
    def events(self) -> int:
        """Number of ray-face (or ray-detector) events traced."""
        return int(self._rec.events)

    @property
    def source_power_w(self) -> float:
        return float(self.ledger.launched.sum())

    def detector_power(self, name: str) -> float:
        """Power reaching detector ``name`` [W] (far field: all escaped power)."""
        cs = self.compiled
        if name in cs.detector_names:
            i = cs.detector_names.index(name)
            return float(self.ledger.books[:, self.ledger.detector(i)].sum())
        if name in [d.name for d in cs.far_fields]:
            return self.ledger.totals()["escaped_w"]
        raise KeyError(self._unknown_detector(name))

    def detector_standard_error(self, name: str) -> float:
        """Standard error [W] of the sampled part of detector ``name``'s power: light that
        met a scatter event in tree mode, everything in Monte Carlo mode
        (:meth:`Ledger.standard_error`); 0 when nothing on it was sampled. Far-field
        detectors: not estimated (0)."""
        cs = self.compiled
        if name in cs.detector_names:
            return self.ledger.standard_error(cs.detector_names.index(name))
        if name in [d.name for d in cs.far_fields]:
            return 0.0
        raise KeyError(self._unknown_detector(name))

    def scattered_power(self) -> dict:
        """Power scattered at each face [W], booked at the scatter events (faces that
        scattered nothing are left out)."""
        led = self.ledger
        tot = led.scattered.sum(axis=0)
        return {n: float(v) for n, v in zip(led.faces, tot) if v != 0}

    # ------------------------------------------------------------------ gaps
    @property
    def gap_names(self) -> list[str]:
        """Gaps of the traced scene, in scene order."""
        return list(getattr(self.ledger, "gaps", []))

    def tunnelled_power(self, gap: str | None = None, *, source: str | None = None,
                        direction: str | None = None) -> float:
        """Power [W] that tunnelled through ``gap`` (every gap when None).

        Booked by the engine at each tunnel event (frustrated TIR across a gap beyond
        its medium's critical angle): the power of the tunnelled child as it crosses,
        whatever happens to it afterwards (detected, escaped, absorbed, discarded or
        cut). Every crossing counts, so light that tunnels A to B and later B to A is
        counted in both directions. Exact in tree mode (down to the power threshold:
        children are booked before the threshold test, but discarded rays tunnel no
        further); an unbiased estimate in Monte Carlo mode.

        Parameters
        ----------
        gap : str, optional
            Gap name.
        source : str, optional
            Only the power of this source.
        direction : {"a->b", "b->a"}, optional
            Only crossings from the gap's solid A into solid B, or back.
        """
        return self.crossed_power(gap, source=source, direction=direction,
                                  mechanism="tunnelled")

    def crossed_power(self, gap: str | None = None, *, source: str | None = None,
                      direction: str | None = None, mechanism: str = "crossed") -> float:
        """Power [W] that crossed ``gap`` from one of its faces to the other.

        Booked like :meth:`tunnelled_power`, for every transmitted child that leaves
        from the partner face: ``mechanism="tunnelled"`` counts only the crossings
        beyond the gap medium's critical angle (frustrated TIR), ``"refracted"`` only
        the ordinary refractions below it, ``"crossed"`` (default) both.
        ``gap``, ``source`` and ``direction`` as for :meth:`tunnelled_power`.
        """
        led = self.ledger
        gi = None
        if gap is not None:
            if gap not in self.gap_names:
                raise KeyError(f"unknown gap {gap!r}; the scene has "
                               f"{', '.join(self.gap_names) or 'no gap'}")
            gi = self.gap_names.index(gap)
        si = None
        if source is not None:
            if source not in led.sources:
                raise KeyError(f"unknown source {source!r}; sources: {', '.join(led.sources)}")
            si = led.sources.index(source)
        side = None
        if direction is not None:
            key = str(direction).replace(" ", "").lower()
            sides = {"a->b": 0, "ab": 0, "a_to_b": 0, "b->a": 1, "ba": 1, "b_to_a": 1}
            if key not in sides:
                raise ValueError(f'direction={direction!r}: expected "a->b" or "b->a"')
            side = sides[key]
        books = {"crossed": led.crossed, "tunnelled": led.tunnelled,
                 "refracted": led.refracted}
        if mechanism not in books:
            raise ValueError(f'mechanism={mechanism!r}: expected "crossed", "tunnelled" or '
                             '"refracted"')
        if gi is None and not self.gap_names:
            return 0.0
        return books[mechanism](gi, source=si, side=side)

    def gap_tir_possible(self, gap: str) -> bool:
        """Whether light can meet ``gap`` beyond its medium's critical angle at any traced
        wavelength (a solid on either side denser than the gap medium). False for a
        cemented joint, whose cement is at least as dense as both solids."""
        cs = self.compiled
        gi = self.gap_names.index(gap)
        spec = cs.gaps[gi]
        wls = sorted({float(w) for s in getattr(self.scene, "sources", {}).values()
                      for w in np.asarray(s.spectrum.wavelengths, dtype=float).ravel()})
        if not wls:
            return True
        tab = cs.index_table(np.asarray(wls)).real
        rows = [cs.solid_names.index(spec.solid_a) + 1, cs.solid_names.index(spec.solid_b) + 1]
        n_gap = tab[cs.n_solids + 1 + gi]
        return bool((np.maximum(tab[rows[0]], tab[rows[1]]) > n_gap).any())

    def behind_power(self, detector: str, *, source: str | None = None) -> float:
        """Power [W] that crossed one-sided plane detector ``detector`` from behind.

        A one-sided detector records light arriving on its front (against its
        ``normal``) and is transparent from behind: light crossing it from behind goes
        on unchanged and is not part of its reading. That power is counted here (0 for
        two-sided and far-field detectors); flip ``normal`` or set ``two_sided`` if it
        should be recorded.
        """
        cs = self.compiled
        if detector in [d.name for d in cs.far_fields]:
            return 0.0
        if detector not in cs.detector_names:
            raise KeyError(self._unknown_detector(detector))
        led = self.ledger
        si = None
        if source is not None:
            if source not in led.sources:
                raise KeyError(f"unknown source {source!r}; sources: {', '.join(led.sources)}")
            si = led.sources.index(source)
        return led.behind_power(cs.detector_names.index(detector), source=si)

    def untraced_near(self, detector: str):
        """Discarded and cut power [W] left on the detector's side of the assembly.

        The detector's side is the set of solids its light last leaves: the solid of the
        last face of every path recorded on it. The power returned was discarded (under
        the power threshold) or cut (at the event cap) as it was born at a face of one of
        those solids, so it had already reached that part of the assembly; where it would
        have gone is unknown. Not a bound (light discarded elsewhere may also have come
        here; the verdicts use all the discarded and cut power).

        Returns
        -------
        (float, list of str) or None
            The power and the solids; None when no path reaches the detector (or it is a
            far-field detector), so the side cannot be told.
        """
        cs = self.compiled
        if detector not in cs.detector_names:
            if detector in [d.name for d in cs.far_fields]:
                return None
            raise KeyError(self._unknown_detector(detector))
        solids = set()
        for n in self.path_nodes(detector):
            ev = self.tree.events(n)
            faces = [f for f, _ in ev if 0 <= f < cs.n_faces]
            if faces:
                solids.add(int(cs.face_solid[faces[-1]]))
        if not solids:
            return None
        sel = np.isin(cs.face_solid[: cs.n_faces], sorted(solids))
        power = float(self.ledger.untraced[:, sel].sum())
        return power, [cs.solid_names[s] for s in sorted(solids)]

    @property
    def hits_dropped(self) -> int:
        """Detector hits not kept individually because ``max_hits`` was reached.

        Counts plane-detector hits and, when the scene has far-field detectors, the
        escaped rays not kept for their records. Powers, ledger and path aggregates
        are always complete; only hit lists, maps and landing statistics built from
        kept hits (``hits``, ``record``, centroids, RMS radii) miss these.
        """
        return int(self._rec.hits_dropped) + int(self._rec.far_dropped)

    def hits_dropped_on(self, detector: str) -> int:
        """Hits of ``detector`` that were not kept (see :attr:`hits_dropped`)."""
        cs = self.compiled
        if detector in cs.detector_names:
            return int(self._rec.dropped_per_detector[cs.detector_names.index(detector)])
        if detector in [d.name for d in cs.far_fields]:
            return int(self._rec.far_dropped)
        raise KeyError(self._unknown_detector(detector))

    def _unknown_detector(self, name):
        from ..errors import TracerError  # noqa: F401

        return f"unknown detector {name!r}; the scene has {', '.join(self.detector_names) or 'none'}"

    # ------------------------------------------------------------------ paths
    def path_nodes(self, detector: str) -> np.ndarray:
        """Path-tree nodes that end on plane detector ``detector``, by falling power."""
        cs = self.compiled
        if detector not in cs.detector_names:
            raise KeyError(self._unknown_detector(detector))
        gid = cs.n_faces + cs.detector_names.index(detector)
        t = self.tree
        all_nodes = self._nodes["nodes"]
        sel = (t.face[all_nodes] == gid) & (t.kind[all_nodes] == DETECT) & (self._nodes["count"] > 0)
        nodes = all_nodes[sel]
        pw = self._nodes["power"][sel]
        sig = [t.signature(n) for n in nodes]
        order = sorted(range(len(nodes)), key=lambda i: path_rank_key(pw[i], sig[i]))
        return nodes[order] if len(nodes) else nodes

    def paths(self, detector: str) -> list[dict]:
        """Paths reaching ``detector``: signature, power_w, reflections, rays, events."""
        t = self.tree
        out = []
        for n in self.path_nodes(detector):
            ev = t.events(n)
            i = self._slot[int(n)]
            power = float(self._nodes["power"][i])
            sum_sq = float(self._nodes["sum_sq"][i])
            out.append(dict(
                signature=t.signature(n),
                power_w=power,
                reflections=t.reflections(n),
                rays=int(self._nodes["count"][i]),
                events=[(t.face_names[f], KIND_NAMES[k]) for f, k in ev],
                node=int(n),
                scattered=bool(t.scatters[int(n)] > 0),
                standard_error_w=path_standard_error(
                    power, sum_sq, int(self.ledger.rays[int(t.root[int(n)])])),
                sum_sq_w2=sum_sq,
            ))
        return out

    def escaped_paths(self, limit: int = 20) -> list[dict]:
        """Strongest paths by power escaping after their last event (ties by signature,
        :func:`path_rank_key`)."""
        esc = self._nodes["escaped"]
        nodes = np.nonzero(esc > 0)[0]
        sig = {int(n): self.tree.signature(n) for n in nodes}
        nodes = sorted((int(n) for n in nodes), key=lambda n: path_rank_key(esc[n], sig[n]))
        return [dict(signature=sig[n], power_w=float(esc[n]),
                     reflections=self.tree.reflections(n)) for n in nodes[:limit]]

    def mueller(self, detector: str, signature: str | None = None) -> np.ndarray:
        """Mueller matrix of a path (or of all paths) onto ``detector``.

        Maps the source's Stokes vector (input frame of the source, unit power) to the
        Stokes vector on the detector [W per W of source power of the rays that took
        the path]; ``M[0, 0]`` is the path's throughput for unpolarised light.
        """
        nodes = self.path_nodes(detector)
        if signature is not None:
            nodes = np.array([n for n in nodes if self.tree.signature(n) == signature])
            if len(nodes) == 0:
                raise KeyError(f"no path {signature!r} on detector {detector!r}")
        sl = [self._slot[int(n)] for n in nodes]
        m = self._nodes["mueller"][sl].sum(axis=0).reshape(4, 4)
        p0 = self._nodes["p0"][sl].sum()
        return m / p0 if p0 > 0 else np.zeros((4, 4))

    def path_stokes(self, detector: str, signature: str | None = None) -> np.ndarray:
        """Summed Stokes vector [W] of a path (or all paths) on ``detector``."""
        nodes = self.path_nodes(detector)
        if signature is not None:
            nodes = np.array([n for n in nodes if self.tree.signature(n) == signature],
                             dtype=np.int64)
        sl = [self._slot[int(n)] for n in nodes]
        return self._nodes["stokes"][sl].sum(axis=0)

    # ------------------------------------------------------------------ hits
    def hits(self, detector: str | None = None) -> dict:
        """Recorded detector hits as arrays (up to ``max_hits`` in all).

        Keys: detector (index), node, position (N,3) [m], local (N,2) [m] in the
        detector's (x, y), direction, power [W], wavelength [m], stokes (N,4) [W],
        jones (N,2,2), source, ray_id.
        """
        if self._hits is None:
            parts = self._rec.hits
            keys = ("detector", "node", "position", "local", "direction", "power",
                    "wavelength", "stokes", "jones", "source", "ray_id")
            if parts:
                self._hits = {k: np.concatenate([p[k] for p in parts]) for k in keys}
            else:
                shapes = {"position": (0, 3), "local": (0, 2), "direction": (0, 3),
                          "stokes": (0, 4), "jones": (0, 2, 2)}
                self._hits = {k: np.zeros(shapes.get(k, (0,))) for k in keys}
        h = self._hits
        if detector is None:
            return h
        cs = self.compiled
        if detector not in cs.detector_names:
            raise KeyError(self._unknown_detector(detector))
        sel = h["detector"] == cs.detector_names.index(detector)
        return {k: v[sel] for k, v in h.items()}

    def stokes(self, detector: str) -> np.ndarray:
        """Total Stokes vector [W] on ``detector`` in its frame (all paths)."""
        return self.path_stokes(detector)

    def far_field(self, name: str | None = None) -> dict:
        """Escaped power binned by direction for a far-field detector.

        Returns a dict with ``power`` (n_polar, n_azimuth) [W], ``azimuth_edges``
        (n_azimuth + 1, over [-pi, pi]) and ``polar_edges`` (n_polar + 1, over [0, pi])
        [rad] and ``solid_angle`` (n_polar, n_azimuth) [sr]; polar angle from the
        detector's ``normal``, azimuth from its ``x_axis`` towards ``normal x x_axis``.
        The layout and edges of :meth:`record` and :func:`tracer.detectors.far_field_bins`
        (row = polar bin, column = azimuth bin, ready for ``imshow(origin="lower")``).
        """
        from .. import detectors as detmod

        ffs = self.compiled.far_fields
        if not ffs:
            raise KeyError("the scene has no far-field detector")
        d = ffs[0] if name is None else next((f for f in ffs if f.name == name), None)
        if d is None:
            raise KeyError(self._unknown_detector(name))
        i = self.compiled.far_fields.index(d)
        azimuth_edges, polar_edges = detmod.far_field_edges(d)
        return dict(power=self._rec.far_maps[i].copy(), azimuth_edges=azimuth_edges,
                    polar_edges=polar_edges, solid_angle=detmod.far_field_solid_angles(d))

    def record(self, name: str, *, keep_hits: bool = False):
        """A :class:`tracer.detectors.DetectorRecord` of detector ``name`` (maps, per-path
        centroids) filled from the recorded hits; path ids are path-tree nodes.

        Plane detectors use the kept hits, far-field detectors the kept escaped rays
        (without Stokes vectors); at most ``max_hits`` of each in all.
        """
        from .. import detectors as detmod

        spec = self.scene.detectors.get(name)
        if spec is None:
            raise KeyError(self._unknown_detector(name))
        rec = detmod.DetectorRecord(spec, keep_hits=keep_hits)
        if spec.kind == "plane":
            h = self.hits(name)
            if len(h["power"]):
                rec.add(h["local"][:, 0], h["local"][:, 1], h["power"], h["stokes"],
                        h["node"].astype(np.int64))
        else:
            parts = self._rec.far
            if parts:
                rec.add_directions(np.concatenate([p["direction"] for p in parts]),
                                   np.concatenate([p["power"] for p in parts]), None,
                                   np.concatenate([p["node"] for p in parts]).astype(np.int64))
        return rec

    def segments(self) -> dict:
        """Recorded segments (up to the ``segments`` setting, in tracing order).

        Keys: start, end (N, 3) [m], power [W], wavelength [m], node (the path-tree
        node of the ray's last event before the segment) and escaping (N,) bool: True
        for the last segment of a ray that leaves the assembly (or of a source ray that
        meets nothing), drawn from its start to where it leaves the scene's extent
        enlarged by 30 % (:mod:`tracer.engine.escape`).
        """
        parts = self._rec.segments
        keys = ("start", "end", "power", "wavelength", "node", "escaping")
        if not parts:
            out = {k: np.zeros((0, 3) if k in ("start", "end") else (0,)) for k in keys}
            out["node"] = np.zeros(0, dtype=np.int64)
            out["escaping"] = np.zeros(0, dtype=bool)
            return out
        return {k: np.concatenate([p[k] for p in parts]) for k in keys}

    # ------------------------------------------------------------------ summary
    def summary(self, max_paths: int = 50) -> dict:
        """Plain-data summary (JSON-ready).

        Keys: ``title``, ``mode``, ``seed``, ``events``, ``source_power_w``,
        ``sources`` (name -> power_w, rays), ``detectors`` (name -> power_w, hits,
        paths [signature, power_w, reflections, rays], hits_dropped), ``ledger``
        (source_w, detected_w, absorbed_w, escaped_w, discarded_w, cut_w, residual_w
        and the breakdowns; ``per_source``), ``gaps`` (name -> faces, tir_possible,
        crossed_w, tunnelled_w, refracted_w, a_to_b_w, b_to_a_w (of the tunnelled power),
        ``crossed``/``tunnelled``/``refracted`` -> a_to_b_w, b_to_a_w [W], per_source ->
        crossed_w, tunnelled_w, refracted_w; see :meth:`crossed_power`) and
        ``hits_dropped`` (see :attr:`hits_dropped`). Sampled scatter: per detector
        ``scattered_w`` (power of its paths that met a scatter event), ``standard_error_w``
        and the raw ``sampled_moments`` (source -> [sum, sum of squares] over its rays) with
        the top-level ``sampled_rays`` (source -> rays counted), per path ``scattered``,
        ``standard_error_w`` and ``sum_sq_w2`` (so that summaries of disjoint ray sets
        merge exactly, :func:`tracer.sweep.split_trace.merge_summaries`), and
        ``scattered_faces`` (face -> power scattered there [W]).
        """
        led = self.ledger
        out = dict(
            title=getattr(self.scene, "title", ""),
            mode=self.options.mode,
            seed=int(self.options.seed),
            power_threshold=float(self.options.power_threshold),
            max_events=int(self.options.max_events),
            events=self.events,
            source_power_w=self.source_power_w,
            sources={n: dict(power_w=float(led.launched[i]), rays=int(self.launched[i]))
                     for i, n in enumerate(led.sources)},
            detectors={},
        )
        for di, name in enumerate(self.compiled.detector_names):
            ps = self.paths(name)
            out["detectors"][name] = dict(
                kind="plane",
                power_w=self.detector_power(name),
                scattered_w=float(sum(p["power_w"] for p in ps if p["scattered"])),
                standard_error_w=self.detector_standard_error(name),
                sampled_moments={n: [float(led.sampled[i, di, 0]), float(led.sampled[i, di, 1])]
                                 for i, n in enumerate(led.sources)},
                hits=int(sum(p["rays"] for p in ps)),
                paths=[{k: p[k] for k in ("signature", "power_w", "reflections", "rays",
                                          "scattered", "standard_error_w", "sum_sq_w2")}
                       for p in ps[:max_paths]],
                paths_total=len(ps),
                hits_dropped=self.hits_dropped_on(name),
                behind_w=self.behind_power(name),
            )
        for d in self.compiled.far_fields:
            out["detectors"][d.name] = dict(kind="far_field", power_w=self.detector_power(d.name),
                                            paths=self.escaped_paths(max_paths),
                                            hits_dropped=self.hits_dropped_on(d.name))
        ledger = led.breakdown()
        ledger["per_source"] = {n: led.totals(i) for i, n in enumerate(led.sources)}
        out["ledger"] = ledger
        out["gaps"] = {}
        for gi, gname in enumerate(self.gap_names):
            fa, fb = led.gap_faces[gi]
            out["gaps"][gname] = dict(
                faces=[led.faces[fa], led.faces[fb]],
                tir_possible=self.gap_tir_possible(gname),
                crossed_w=led.crossed(gi),
                tunnelled_w=led.tunnelled(gi),
                refracted_w=led.refracted(gi),
                a_to_b_w=led.tunnelled(gi, side=0),
                b_to_a_w=led.tunnelled(gi, side=1),
                **{m: dict(a_to_b_w=book(gi, side=0), b_to_a_w=book(gi, side=1))
                   for m, book in (("crossed", led.crossed), ("tunnelled", led.tunnelled),
                                   ("refracted", led.refracted))},
                per_source={n: dict(crossed_w=led.crossed(gi, source=i),
                                    tunnelled_w=led.tunnelled(gi, source=i),
                                    refracted_w=led.refracted(gi, source=i))
                            for i, n in enumerate(led.sources)},
            )
        out["hits_dropped"] = self.hits_dropped
        out["sampled_rays"] = {n: int(led.rays[i]) for i, n in enumerate(led.sources)}
        out["scattered_faces"] = self.scattered_power()
        return out

    def __repr__(self) -> str:
        t = self.ledger.totals()
        return (f"<Result {self.options.mode}: {t['source_w']:.4g} W launched, "
                f"{t['detected_w']:.4g} W detected, {self.events} events>")
