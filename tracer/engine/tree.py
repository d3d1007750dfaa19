"""The non-sequential event loop (tree and Monte Carlo modes).

One loop over *events*, never over rays: every step takes a batch of active rays,
finds the nearest face or detector of each (:mod:`tracer.engine.intersect`), applies
bulk absorption over the segment, and then, by face type,

* detector: the ray is recorded and ends there (a detector is opaque from its
  sensitive side; a one-sided detector is transparent from behind, and the power that
  crosses it from behind is booked apart, :meth:`Ledger.book_behind`, without changing
  where the light goes);
* absorber: the ray ends, its power is booked as absorbed on the face;
* any other face: the ray splits into reflected and transmitted children
  (:func:`tracer.engine.interact.split`); the face books what the children do not
  carry. Tree mode keeps both children; Monte Carlo mode keeps one
  (:mod:`tracer.engine.montecarlo`);
* nothing: the ray escapes (booked per exit face; binned by direction into far-field
  detectors) or, inside a solid, is lost (numerical failure, booked under cut).

Children under ``power_threshold`` times their source ray's power are discarded, rays
that reach ``max_events`` events are cut; both are booked. The active set is kept as
a stack of batches of at most ``chunk`` rays (depth first), so memory stays bounded
whatever the depth of the tree, and each source ray's tree does not depend on the
batch it was traced in.
"""

from __future__ import annotations

import math
import sys
import time
from dataclasses import dataclass, field

import numpy as np

from .. import polarization as pol
from ..detectors import inside_outline
from ..tolerances import PLANE_EPS
from . import children_kernel, detect_kernel, hash_kernel, jit, scatter_event
from .batch import RayBatch, SourceTable
from .compile import ABSORBER, DETECTOR, CompiledScene, EngineError
from .interact import split
from .intersect import nearest_hit
from .ledger import Ledger
from .montecarlo import BULK, FACE, choose, uniforms
from .paths import ABSORB, DETECT, PathTree, _KeyTable

__all__ = ["Options", "Recorder", "run", "EventBudgetExceeded"]


class EventBudgetExceeded(EngineError):
    """A trace passed its ``event_budget`` or ``memory_budget`` (it is stopped; nothing is
    returned). ``events`` is the number of events traced when it stopped."""

    def __init__(self, events: int, budget: float, *, what: str = "events", used: float = 0.0):
        self.events, self.budget, self.what = int(events), float(budget), what
        if what == "events":
            text = f"its budget of {budget:.3g} ray-face events ({events:.3g} traced)"
        else:
            text = (f"its memory budget of {budget / 2**20:.4g} MiB (path tree and active rays "
                    f"about {used / 2**20:.4g} MiB after {events:.3g} events)")
        super().__init__(f"the trace passed {text} and was stopped")


#: Bytes of one path-tree node and of one active ray, for ``memory_budget`` (measured
#: orders of magnitude of the engine's arrays; engineering estimate).
NODE_BYTES, RAY_BYTES = 320.0, 320.0


@dataclass
class Options:
    """Settings of one trace (see :func:`tracer.engine.trace`)."""

    mode: str = "tree"
    power_threshold: float = 1e-6
    max_events: int = 64
    seed: int = 0
    batch_size: int = 8192
    chunk: int = 65536
    segments: int = 0
    max_hits: int = 2_000_000
    progress: bool | None = None
    rays: object = None
    ray_range: object = None
    event_budget: int | None = None
    memory_budget: float | None = None
    scatter_rays: int = 16
    scatter_depth: int = 1
    target_share: float = 0.5


class Recorder:
    """Detector hits, per-path aggregates, far-field rays and segments of a trace."""

    def __init__(self, cs: CompiledScene, tree: PathTree, opts: Options):
        self.cs = cs
        self.tree = tree
        self.opts = opts
        self.hits: list[dict] = []
        self.n_hits = 0
        self.hits_dropped = 0
        self.dropped_per_detector = np.zeros(len(cs.detector_names), dtype=np.int64)
        self.far_dropped = 0
        # aggregates per detection node, in slots (a detect node ends on one detector)
        self._slots = _KeyTable()
        self._n_slots = 0
        self._slot_node = np.zeros(0, dtype=np.int64)
        self._agg = np.zeros((0, 23))  # power, count, p0, stokes(4), mueller(16)
        # per slot: sum over source rays of the squared sampled power each put on the
        # path, for the path's standard error (:meth:`add_path_squares`)
        self._sq = np.zeros(0)
        self._node_esc = np.zeros(0)
        self.far: list[dict] = []
        self.n_far = 0
        self.far_maps = [np.zeros(tuple(d.pixels)[::-1]) for d in cs.far_fields]  # (n_polar, n_az)
        self.segments: list[dict] = []
        self.n_segments = 0
        self.events = 0

    def _grow_esc(self, n):
        m = len(self._node_esc)
        if n > m:
            grown = np.zeros(max(n, 2 * m, 1024))
            grown[:m] = self._node_esc
            self._node_esc = grown

    def _slot(self, node):
        if jit.compiled():
            ids, missing = hash_kernel.lookup(self._slots, node)
            if missing:
                new = hash_kernel.insert(self._slots, node, ids, missing, self._n_slots)
                self._add_slots(len(new), new, np.arange(len(new)) + self._n_slots)
            return ids
        unode, inv = np.unique(node, return_inverse=True)
        ids, added = self._slots.get_or_add(unode, self._n_slots)
        if added:
            new = ids >= self._n_slots
            self._add_slots(added, unode[new], ids[new])
        return ids[inv.reshape(-1)]

    def _add_slots(self, added, nodes, ids):
        """Aggregate rows for ``added`` new detection nodes ``nodes`` under slot ``ids``."""
        if added:
            need = self._n_slots + added
            if need > len(self._agg):
                cap = max(need, 2 * len(self._agg), 256)
                agg = np.zeros((cap, 23))
                agg[: len(self._agg)] = self._agg
                self._agg = agg
                sn = np.zeros(cap, dtype=np.int64)
                sn[: len(self._slot_node)] = self._slot_node
                self._slot_node = sn
                sq = np.zeros(cap)
                sq[: len(self._sq)] = self._sq
                self._sq = sq
            self._slot_node[ids] = nodes
            self._n_slots = need

    def detect(self, det, node, position, direction, field, power, wavelength, coherency,
               p0, source, ray_id, mc):
        cs = self.cs
        x = cs.det_x[det]
        y = cs.det_y[det]
        # Jones matrices in the ray's right-handed transverse frame (x' along the detector's
        # x axis, y' = k x x'): one Stokes vector per beam, free space the identity.
        if jit.compiled():
            jones, stokes, mueller = detect_kernel.hit_polarization(
                field, direction, det, cs.det_x, coherency, np.arange(len(node)))
        else:
            jones, stokes, mueller = detect_kernel.hit_polarization_reference(
                field, direction, x, coherency)
        slot = self._slot(node)
        cols = np.concatenate([power[:, None], np.ones((len(node), 1)), p0[:, None], stokes,
                               mueller], axis=1)
        order = np.argsort(slot, kind="stable")
        ss = slot[order]
        starts = np.nonzero(np.r_[True, ss[1:] != ss[:-1]])[0]
        self._agg[ss[starts]] += np.add.reduceat(cols[order], starts, axis=0)
        keep = min(len(node), max(self.opts.max_hits - self.n_hits, 0))
        if keep < len(node):
            self.hits_dropped += len(node) - keep
            self.dropped_per_detector += np.bincount(
                det[keep:], minlength=len(self.dropped_per_detector))
        if keep:
            sl = slice(0, keep)
            rel = position[sl] - cs.det_position[det[sl]]
            self.hits.append(dict(
                detector=det[sl], node=node[sl], position=position[sl],
                local=np.stack([np.einsum("ij,ij->i", rel, x[sl]),
                                np.einsum("ij,ij->i", rel, y[sl])], axis=1),
                direction=direction[sl], power=power[sl], wavelength=wavelength[sl],
                stokes=stokes[sl], jones=jones[sl], source=source[sl], ray_id=ray_id[sl],
            ))
            self.n_hits += keep

    def add_path_squares(self, node, root, power) -> None:
        """Fold one launch batch's sampled detections into the per-path squared sums.

        Parameters
        ----------
        node : (H,) int
            Detection node (path) of each sampled hit.
        root : (H,) int
            Source ray (row of the launch table) of each hit.
        power : (H,) float [W]
            Power of each hit.

        The hits of one source ray on one path are summed first: the source ray is the
        independent sample, the hits of its tree are not.
        """
        if len(node) == 0:
            return
        node = np.asarray(node, dtype=np.int64)
        root = np.asarray(root, dtype=np.int64)
        pairs, inv = np.unique(np.stack([node, root], axis=1), axis=0, return_inverse=True)
        per_pair = np.bincount(inv.reshape(-1), weights=power, minlength=len(pairs))
        slot = self._slot(pairs[:, 0])
        np.add.at(self._sq, slot, per_pair * per_pair)

    def escape(self, node, direction, power, wavelength, stokes_args=None):
        self._grow_esc(len(self.tree))
        np.add.at(self._node_esc, node, power)
        for i, d in enumerate(self.cs.far_fields):
            self.far_maps[i] += far_field_bins(d, direction, power)
        if self.cs.far_fields:
            keep = min(len(power), max(self.opts.max_hits - self.n_far, 0))
            self.far_dropped += len(power) - keep
            if keep:
                self.far.append(dict(direction=direction[:keep], power=power[:keep],
                                     wavelength=wavelength[:keep], node=node[:keep]))
                self.n_far += keep

    def segment(self, start, end, power, wavelength, node, escaping=False):
        room = self.opts.segments - self.n_segments
        if room <= 0:
            return
        k = min(room, len(power))
        self.segments.append(dict(start=start[:k], end=end[:k], power=power[:k],
                                  wavelength=wavelength[:k], node=node[:k],
                                  escaping=np.full(k, bool(escaping))))
        self.n_segments += k

    def escape_segment(self, start, direction, power, wavelength, node):
        """Segment of rays leaving the assembly, clipped (:mod:`tracer.engine.escape`)."""
        if self.opts.segments - self.n_segments <= 0:
            return
        from .escape import escape_ends, scene_box

        if getattr(self, "_box", None) is None:
            self._box = scene_box(self.cs)
        end = escape_ends(start, direction, *self._box)
        self.segment(start, end, power, wavelength, node, escaping=True)

    def node_table(self):
        """Aggregates: per detection node (``nodes`` and columns) and escaped per node."""
        n = self._n_slots
        a = self._agg[:n]
        self._grow_esc(len(self.tree))
        return dict(nodes=self._slot_node[:n].copy(), power=a[:, 0].copy(),
                    count=a[:, 1].astype(np.int64), p0=a[:, 2].copy(), stokes=a[:, 3:7].copy(),
                    mueller=a[:, 7:23].copy(), escaped=self._node_esc[: len(self.tree)].copy(),
                    sum_sq=self._sq[:n].copy())


def far_field_bins(d, directions, power):
    """Power [W] binned ``(n_polar, n_azimuth)`` by direction for far-field detector ``d``:
    :func:`tracer.detectors.far_field_bins` (the one layout, azimuth in [-pi, pi])."""
    from ..detectors import far_field_bins as bins

    return bins(d, directions, power)


def _progress(opts, total):
    if opts.progress is False:
        return None
    if opts.progress is None and not (hasattr(sys.stderr, "isatty") and sys.stderr.isatty()):
        return None
    start = time.perf_counter()
    state = {"last": start}

    def update(done):
        now = time.perf_counter()
        if now - start < 1.0 or (now - state["last"] < 0.5 and done < total):
            return
        state["last"] = now
        frac = done / max(total, 1)
        bar = "#" * int(30 * frac)
        sys.stderr.write(f"\rtracing [{bar:<30}] {done}/{total} rays {now - start:6.1f} s")
        if done >= total:
            sys.stderr.write("\n")
        sys.stderr.flush()

    return update


def _launch(cs: CompiledScene, rays, table_offset: int, ledger: Ledger, wl_lookup):
    """SourceRays -> (SourceTable, RayBatch)."""
    n = len(rays)
    J = np.broadcast_to(np.asarray(rays.coherency, dtype=complex), (n, 2, 2))
    power = np.asarray(rays.power, dtype=float)
    rel = pol.ray_power(rays.field, J)
    with np.errstate(divide="ignore", invalid="ignore"):
        scale = np.sqrt(np.where(rel > 0, power / rel, 0.0))
    src = np.asarray(rays.source_index, dtype=np.int64)
    table = SourceTable(coherency=np.ascontiguousarray(J), power=power, source=src,
                        ray_id=np.asarray(rays.ray_index, dtype=np.int64))
    medium = -1
    if rays.inside_solid is not None:
        try:
            medium = cs.solid_names.index(rays.inside_solid)
        except ValueError:
            raise EngineError(f"source {rays.source_name!r}: unknown solid "
                              f"{rays.inside_solid!r}") from None
    b = RayBatch.empty(n)
    b.origin = np.asarray(rays.origins, dtype=float)
    b.direction = np.asarray(rays.directions, dtype=float)
    b.wavelength = np.asarray(rays.wavelengths, dtype=float)
    b.wl_index = wl_lookup(b.wavelength)
    b.field = np.asarray(rays.field, dtype=complex) * scale[:, None, None]
    b.power = power.copy()
    b.medium[:] = medium
    b.node = src.copy()
    b.root = np.arange(n, dtype=np.int64)
    ledger.launch(src, power)
    return table, b


class _Tracer:
    def __init__(self, cs: CompiledScene, opts: Options, ledger, tree, rec, wavelengths,
                 coherence):
        self.cs = cs
        self.opts = opts
        self.ledger = ledger
        self.tree = tree
        self.rec = rec
        self.ntab = cs.index_table(wavelengths)
        self.kappa_any = bool((self.ntab.imag > 0).any())
        self.coh_len = coherence  # (W,) coherence length per wavelength column
        self.mc = opts.mode == "monte-carlo"
        self.one_sided = np.nonzero(~np.asarray(cs.det_two_sided, dtype=bool))[0]
        #: (source rays of the launch batch, detectors) sampled detected power [W], or None
        #: when nothing is sampled (no scatter, tree mode); see :meth:`Ledger.book_sampled`
        self.sampled = None
        #: sampled hits of the launch batch (node, root, power) for path standard errors
        self.sampled_hits: list = []
        self.tracks_sampling = bool((cs.scatter_models or self.mc) and len(cs.detector_names))

    def _behind(self, b: RayBatch, t, src) -> None:
        """Book the power of rays that cross a one-sided detector from behind.

        A ray crosses detector ``d`` from behind on its current segment (``0 < s < t``,
        ``t`` the distance to its next event, inf when it meets nothing) when it moves
        along the detector's normal (``direction . normal > 0``: the front faces the
        light coming against the normal) and the crossing point is inside the detector's
        rectangle. The power booked is the ray's power at the crossing (after bulk
        absorption over the distance travelled, Beer--Lambert).
        """
        cs, led = self.cs, self.ledger
        for d in self.one_sided:
            nrm = cs.det_normal[d]
            den = b.direction @ nrm
            back = den > 0
            if not back.any():
                continue
            rows = np.nonzero(back)[0]
            # a ray grazing the plane (den ~ 1e-300) overflows to inf: it never reaches it
            with np.errstate(over="ignore"):
                s = (cs.det_position[d] @ nrm - b.origin[rows] @ nrm) / den[rows]
            ok = (s > PLANE_EPS) & (s < t[rows])
            if not ok.any():
                continue
            rows, s = rows[ok], s[ok]
            rel = b.origin[rows] + s[:, None] * b.direction[rows] - cs.det_position[d]
            inb = inside_outline(rel @ cs.det_x[d], rel @ cs.det_y[d], cs.det_half[d],
                                 cs.det_round[d])
            if not inb.any():
                continue
            rows, s = rows[inb], s[inb]
            power = b.power[rows]
            if self.kappa_any:
                kap = self.ntab[b.medium[rows] + 1, b.wl_index[rows]].imag
                power = power * np.exp(-4.0 * np.pi * kap * s / b.wavelength[rows])
            led.book_behind(src[rows], np.full(len(rows), d), power)

    def step(self, b: RayBatch, table: SourceTable) -> RayBatch:
        """One event for every ray of ``b``; returns the batch of surviving children.

        The rays of ``b`` are addressed through index arrays (``h``: rays that hit
        something, ``idx``: rays that met an interface) rather than compacted copies,
        so each quantity is gathered once; ``b`` itself is updated in place (power,
        field and optical path of the rays that hit) and dropped by the caller.
        """
        cs, led, tree, rec = self.cs, self.ledger, self.tree, self.rec
        src = table.source[b.root]
        t, face = nearest_hit(cs, b.origin, b.direction, b.medium, b.last_face)
        if len(self.one_sided):
            self._behind(b, t, src)
        miss = face < 0
        if miss.any():
            out = miss & (b.medium < 0)
            if out.any():
                led.book(src[out], led.escaped(b.last_face[out]), b.power[out])
                rec.escape(b.node[out], b.direction[out], b.power[out], b.wavelength[out])
                if self.opts.segments:
                    rec.escape_segment(b.origin[out], b.direction[out], b.power[out],
                                       b.wavelength[out], b.node[out])
            lost = miss & (b.medium >= 0)
            if lost.any():
                led.book(src[lost], led.LOST, b.power[lost])
            h = np.nonzero(~miss)[0]
            t, face, src = t[h], face[h], src[h]
        else:
            h = np.arange(len(b))
        if len(h) == 0:
            return RayBatch.empty(0)
        rec.events += len(h)
        med = b.medium[h]
        wl_index = b.wl_index[h]
        n_med = self.ntab[med + 1, wl_index]
        # bulk absorption over the segment (Beer-Lambert, alpha = 4 pi kappa / lambda)
        if self.kappa_any:
            kap = n_med.imag
            lossy = kap > 0
            if lossy.any():
                hl = h[lossy]
                att = np.exp(-2.0 * np.pi * kap[lossy] * t[lossy] / b.wavelength[hl])
                if self.mc:
                    u = uniforms(self.opts.seed, src[lossy], table.ray_id[b.root[hl]],
                                 b.events[hl], BULK)
                    dead = np.zeros(len(h), dtype=bool)
                    dead[np.nonzero(lossy)[0][u >= att**2]] = True
                    if dead.any():
                        hd = h[dead]
                        led.book(src[dead], led.bulk_absorbed(b.medium[hd]), b.power[hd])
                        alive = ~dead
                        h, t, face, src, n_med = h[alive], t[alive], face[alive], src[alive], n_med[alive]
                        med, wl_index = med[alive], wl_index[alive]
                else:
                    newp = b.power[hl] * att**2
                    led.book(src[lossy], led.bulk_absorbed(b.medium[hl]), b.power[hl] - newp)
                    b.power[hl] = newp
                    b.field[hl] *= att[:, None, None]
        if len(h) == 0:
            return RayBatch.empty(0)
        direction = b.direction[h]
        origin = b.origin[h]
        pos = origin + t[:, None] * direction
        b.opl[h] = b.opl[h] + n_med.real * t
        if self.opts.segments:
            rec.segment(origin, pos, b.power[h], b.wavelength[h], b.node[h])
        code = cs.face_code[face]
        # detectors -------------------------------------------------------------
        det = code == DETECTOR
        if det.any():
            hd = h[det]
            di = face[det] - cs.n_faces
            node = tree.extend(b.node[hd], face[det], np.full(len(hd), DETECT))
            led.book(src[det], led.detector(di), b.power[hd])
            root = b.root[hd]
            if self.sampled is not None:  # per source ray, for standard errors
                smp = tree.scatters[node] > 0 if not self.mc else np.ones(len(hd), dtype=bool)
                if smp.any():
                    np.add.at(self.sampled, (b.root[hd][smp], di[smp]), b.power[hd][smp])
                    self.sampled_hits.append((node[smp], b.root[hd][smp], b.power[hd][smp]))
            rec.detect(di, node, pos[det], direction[det], b.field[hd], b.power[hd],
                       b.wavelength[hd], table.coherency[root], table.power[root], src[det],
                       table.ray_id[root], self.mc)
        ab = code == ABSORBER
        if ab.any():
            ha = h[ab]
            tree.extend(b.node[ha], face[ab], np.full(len(ha), ABSORB))
            led.book(src[ab], led.face_absorbed(face[ab]), b.power[ha])
        it = ~(det | ab)
        if not it.any():
            return RayBatch.empty(0)
        ii = np.nonzero(it)[0]
        idx = h[ii]  # rows of b meeting an interface
        fi = face[ii]
        wl_i = wl_index[ii]
        med_i = med[ii]
        pos_i = pos[ii]
        root_i = b.root[idx]
        parent_p = b.power[idx]
        sp = split(cs, direction=direction[ii], position=pos_i, field=b.field[idx],
                   power=parent_p, medium=med_i, face=fi, wavelength=b.wavelength[idx],
                   wl_index=wl_i, ntab=self.ntab, coherency=table.coherency, root=root_i,
                   coherence_length=self.coh_len[wl_i])
        src_i = src[ii]
        ev = b.events[idx] + 1
        sc = None
        if cs.scatter_models:
            sc = scatter_event.shares(self, sp, ii, direction=direction[ii], face=fi, medium=med_i,
                                      wl_index=wl_i, wavelength=b.wavelength[idx],
                                      parent_p=parent_p)
        scat_children = []
        parent_nodes = b.node[idx]
        if self.mc:
            u = uniforms(self.opts.seed, src_i, table.ray_id[root_i] ^ b.stream[idx], ev - 1, FACE)
            which = choose(u, sp.r_power, sp.t_power * sp.t_exists, parent_p)
            gone = which == 2
            if sc is not None:
                scattered, scat_children = scatter_event.mc_scatter(
                    self, b, table, sc, idx=idx, face=fi, pos=pos_i, ev=ev, src=src_i,
                    parent_nodes=parent_nodes, which=which, parent_p=parent_p,
                    absorbed=sp.absorbed)
                gone &= ~scattered
            if gone.any():
                led.book(src_i[gone], led.face_absorbed(fi[gone]), parent_p[gone])
            rsel = which == 0
            tsel = which == 1
            with np.errstate(divide="ignore", invalid="ignore"):
                gain = {"r": np.sqrt(np.where(sp.r_power > 0, parent_p / sp.r_power, 0.0)),
                        "t": np.sqrt(np.where(sp.t_power > 0, parent_p / sp.t_power, 0.0))}
            r_power = parent_p
            t_power = parent_p
        else:
            led.book_absorbed(src_i, led.face_absorbed(fi), sp.absorbed)
            rsel = None  # every reflected child
            tsel = sp.t_exists
            r_power = sp.r_power
            t_power = sp.t_power
            if sc is not None:  # a scatter face may leave no specular power at all
                on = np.zeros(len(ii), dtype=bool)
                on[sc.rows] = True
                rsel = ~(on & (r_power <= 0))
                tsel = tsel & ~(on & (t_power <= 0))
                scat_children = scatter_event.children(
                    self, b, table, sc, idx=idx, face=fi, pos=pos_i, ev=ev, src=src_i,
                    parent_nodes=parent_nodes)
        thr = self.opts.power_threshold * table.power[root_i]
        children = []
        fast = jit.compiled()
        keep = {}
        for child, sel, dirs, pw, kind, org, medium, lf in (
            ("r", rsel, sp.r_dir, r_power, sp.r_kind, pos_i, med_i, fi),
            ("t", tsel, sp.t_dir, t_power, sp.t_kind, sp.t_origin, sp.t_medium, sp.t_face),
        ):
            k = np.arange(len(ii)) if sel is None else np.nonzero(sel)[0]
            if not len(k):
                continue
            nodes = tree.extend(parent_nodes[k], fi[k], kind[k])
            pk = pw[k]
            if child == "t":  # power crossing a gap (tunnel or refraction), before threshold and cap
                led.book_crossings(src_i[k], fi[k], lf[k], kind[k], pk)
            if self.mc:
                weak = np.zeros(len(k), dtype=bool)
            else:
                weak = pk < thr[k]
                if weak.any():
                    led.book(src_i[k[weak]], led.DISCARDED, pk[weak])
                    led.book_untraced(src_i[k[weak]], _born_at(lf[k[weak]], fi[k[weak]]), pk[weak])
            cut = ~weak & (ev[k] >= self.opts.max_events)
            if cut.any():
                led.book(src_i[k[cut]], led.CUT, pk[cut])
                led.book_untraced(src_i[k[cut]], _born_at(lf[k[cut]], fi[k[cut]]), pk[cut])
            live = ~(weak | cut)
            if not live.any():
                continue
            kl = k[live]
            if fast:  # assembled below, both kinds in one pass
                keep[child] = (kl, nodes[live], pk[live])
                continue
            j = idx[kl]
            fld = sp.field(child, kl)
            if self.mc:
                fld *= gain[child][kl, None, None]
            children.append(RayBatch(
                origin=org[kl], direction=dirs[kl], wavelength=b.wavelength[j],
                wl_index=b.wl_index[j], field=fld, power=pk[live], medium=medium[kl],
                node=nodes[live], events=ev[kl], last_face=lf[kl], root=b.root[j], opl=b.opl[j],
                stream=b.stream[j],
            ))
        if fast:
            if keep:
                children = [children_kernel.assemble(b, idx, fi, pos_i, sp, ev, keep.get("r"),
                                                      keep.get("t"),
                                                      (gain["r"], gain["t"]) if self.mc else None)]
        return RayBatch.concatenate(children + scat_children)


def _born_at(last_face, face):
    """The face a child leaves from (the partner face across a gap), else the face met."""
    return np.where(last_face >= 0, last_face, face)


def run(cs: CompiledScene, sources, opts: Options, *, wavelengths, coherence):
    """Trace ray batches.

    Parameters
    ----------
    cs : CompiledScene
    sources : iterable of (name, list-of-SourceRays-iterators)
        See :func:`tracer.engine.api.trace`.
    opts : Options
    wavelengths : (W,) float [m]
        Every wavelength the rays carry (index table columns).
    coherence : (W,) float [m]
        Coherence length at each of those wavelengths.

    Returns
    -------
    ledger, tree, recorder, launched (per source ray counts)
    """
    names = [name for name, _ in sources]
    ledger = Ledger(names, detectors=cs.detector_names, faces=cs.face_names[: cs.n_faces],
                    bulks=["ambient"] + cs.solid_names,
                    gaps=[(g.name, cs.face_index[f"{g.solid_a}.{g.face_a}"],
                           cs.face_index[f"{g.solid_b}.{g.face_b}"]) for g in cs.gaps])
    tree = PathTree(names, cs.face_names)
    rec = Recorder(cs, tree, opts)
    wl = np.asarray(wavelengths, dtype=float)
    order = np.argsort(wl)

    def wl_lookup(w):
        pos = np.searchsorted(wl[order], w)
        pos = np.clip(pos, 0, len(wl) - 1)
        idx = order[pos]
        if not np.all(wl[idx] == w):
            raise EngineError("internal: ray wavelength missing from the index table")
        return idx

    tracer = _Tracer(cs, opts, ledger, tree, rec, wl, np.asarray(coherence, dtype=float))
    launched = np.zeros(len(names), dtype=np.int64)
    total = sum(int(n) for _, (n, _) in sources) if sources else 0
    progress = _progress(opts, total)
    done = 0
    for s, (name, (count, batches)) in enumerate(sources):
        for rays in batches:
            table, b = _launch(cs, rays, 0, ledger, wl_lookup)
            launched[s] += len(b)
            if tracer.tracks_sampling:
                tracer.sampled = np.zeros((len(table), len(cs.detector_names)))
            stack = [b]
            while stack:
                cur = stack.pop()
                if len(cur) > opts.chunk:
                    stack.extend(reversed(cur.split(opts.chunk)))
                    continue
                # small batches (thin ghost branches) are merged with the next ones on
                # the stack: rays are independent, and each step has a fixed cost
                if len(cur) < opts.chunk // 2 and stack and len(stack[-1]) + len(cur) <= opts.chunk:
                    merged = [cur]
                    size = len(cur)
                    while stack and size + len(stack[-1]) <= opts.chunk:
                        size += len(stack[-1])
                        merged.append(stack.pop())
                    cur = RayBatch.concatenate(merged)
                nxt = tracer.step(cur, table)
                if opts.event_budget is not None and rec.events > opts.event_budget:
                    raise EventBudgetExceeded(rec.events, opts.event_budget)
                if opts.memory_budget is not None:
                    used = (len(tree) * NODE_BYTES
                            + (len(nxt) + sum(len(x) for x in stack)) * RAY_BYTES)
                    if used > opts.memory_budget:
                        raise EventBudgetExceeded(rec.events, opts.memory_budget,
                                                  what="memory", used=used)
                if len(nxt):
                    stack.append(nxt)
            if tracer.sampled is not None:
                ledger.book_sampled(table.source, tracer.sampled)
                if tracer.sampled_hits:
                    rec.add_path_squares(*(np.concatenate(c) for c in zip(*tracer.sampled_hits)))
                    tracer.sampled_hits = []
            done += len(b)
            if progress:
                progress(done)
    return ledger, tree, rec, launched
