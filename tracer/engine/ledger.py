"""The power ledger: where every watt of every source went.

The ledger is a dense table ``books[source, account]`` [W]. Accounts are

* one per plane detector (power recorded there),
* absorbed on each face (absorbers, and the absorptance of lossy coatings or gaps,
  computed as parent power minus children and booked clamped at zero,
  :meth:`Ledger.book_absorbed`: a lossless face books no negative power, its round-off
  goes to the closure residual),
* absorbed in the bulk of each solid and of the ambient (Beer--Lambert),
* escaped through each exit face (the last face a ray met; ``(no hit)`` for source
  rays that met nothing),
* discarded (children under the power threshold), cut (rays at the event cap) and
  lost (rays a numerical failure left inside a solid with no exit; booked under cut).

Booking is one ``np.bincount`` per call, so the cost does not depend on how many
accounts there are.

Beside the accounts (where power ends), the ledger keeps two non-closing tables of the
power that crossed each gap, from one of its faces to the other:
``tunnel[source, gap, side]`` [W] for crossings in a tunnel event (frustrated TIR, beyond
the gap medium's critical angle) and ``refract[source, gap, side]`` [W] for ordinary
refraction across the gap (below it); side 0 from the gap's solid A to B, side 1 from B
to A. Their sum is everything that crossed. Both are booked at the moment of crossing,
before any threshold or event-cap test on the transmitted child, so they are the exact
power that went through the gap whatever happens to it afterwards; a ray that crosses
the gap twice is counted twice (once per crossing and direction).

>>> led = Ledger(["src"], detectors=["cam"], faces=["a.x"], bulks=["ambient", "a"])
>>> led.book(np.array([0, 0]), led.detector(0), np.array([0.25, 0.5]))
>>> led.book(np.array([0]), led.DISCARDED, np.array([0.25]))
>>> led.totals()["detected_w"], led.totals()["discarded_w"]
(0.75, 0.25)

A third non-closing table, ``behind[source, detector]`` [W], holds the power that
crossed each one-sided plane detector from behind (through its back, where it is
transparent): that light goes on and ends elsewhere, so it is not part of the accounts.
And ``untraced[source, face]`` [W] says where the discarded and cut power was left: at
which face the discarded or cut child was born (the discarded and cut accounts by face).

>>> led = Ledger(["src"], detectors=[], faces=["a.h", "b.h"], bulks=["ambient", "a", "b"],
...              gaps=[("g", 0, 1)])
>>> led.book_tunnels(np.array([0, 0]), np.array([0, 1]), np.array([3, 3]), np.array([0.5, 0.25]))
>>> led.tunnelled("g", side=0), led.tunnelled("g", side=1), led.tunnelled()
(0.5, 0.25, 0.75)
>>> led.book_crossings(np.array([0, 0]), np.array([0, 0]), np.array([1, 0]),
...                    np.array([0, 0]), np.array([0.125, 0.5]))
>>> led.refracted("g"), led.crossed("g"), led.crossed("g", side=0)
(0.125, 0.875, 0.625)
"""

from __future__ import annotations

import numpy as np

__all__ = ["Ledger"]


class Ledger:
    """Power books per source.

    Parameters
    ----------
    sources : list of str
        Source names, in source-index order.
    detectors : list of str
        Plane detector names (far-field detectors are part of "escaped").
    faces : list of str
        Names of every solid face (global face ids ``0 .. F-1``).
    bulks : list of str
        ``["ambient", solid names...]`` (bulk index = medium + 1).
    gaps : list of (str, int, int), optional
        ``(name, face_a, face_b)`` per gap, with the global ids of its two faces.
    """

    DISCARDED = 0
    CUT = 1
    LOST = 2
    #: Scattered power booked at scatter events minus the power its sampled children
    #: carry (signed: importance-sampled weights sum to the booked power only on average).
    SAMPLING = 3

    #: Event-kind codes of a transmission and a tunnel event (see :mod:`tracer.engine.paths`).
    TRANSMIT_KIND = 0
    TUNNEL_KIND = 3

    def __init__(self, sources, *, detectors, faces, bulks, gaps=()):
        self.sources = list(sources)
        self.detectors = list(detectors)
        self.faces = list(faces)
        self.bulks = list(bulks)
        self._d0 = 4
        self._fa0 = self._d0 + len(self.detectors)
        self._b0 = self._fa0 + len(self.faces)
        self._e0 = self._b0 + len(self.bulks)
        self.n_accounts = self._e0 + len(self.faces) + 1
        self.books = np.zeros((len(self.sources), self.n_accounts))
        self.launched = np.zeros(len(self.sources))
        gaps = list(gaps)
        self.gaps = [str(g[0]) for g in gaps]
        self.gap_faces = [(int(g[1]), int(g[2])) for g in gaps]
        # face id -> gap index and side (0: face of solid A, 1: face of solid B)
        self._face_gap = np.full(len(self.faces) + 1, -1, dtype=np.int64)
        self._face_side = np.zeros(len(self.faces) + 1, dtype=np.int64)
        for gi, (fa, fb) in enumerate(self.gap_faces):
            self._face_gap[[fa, fb]] = gi
            self._face_side[[fa, fb]] = (0, 1)
        self.tunnel = np.zeros((len(self.sources), len(self.gaps), 2))
        self.refract = np.zeros((len(self.sources), len(self.gaps), 2))
        self.behind = np.zeros((len(self.sources), len(self.detectors)))
        self.untraced = np.zeros((len(self.sources), len(self.faces)))
        # scattered power per face (non-closing), and the per-source-ray sums of sampled
        # detector power (sum, sum of squares) with the number of source rays, for the
        # standard errors of results that rest on sampling (:meth:`standard_error`)
        self.scattered = np.zeros((len(self.sources), len(self.faces)))
        self.sampled = np.zeros((len(self.sources), len(self.detectors), 2))
        self.rays = np.zeros(len(self.sources))

    # account numbers -------------------------------------------------------------
    def detector(self, index):
        """Account of plane detector ``index`` (array or int)."""
        return self._d0 + np.asarray(index)

    def face_absorbed(self, face):
        """Account of absorption on global face ``face``."""
        return self._fa0 + np.asarray(face)

    def bulk_absorbed(self, medium):
        """Account of bulk absorption in ``medium`` (-1 ambient, else solid index)."""
        return self._b0 + 1 + np.asarray(medium)

    def escaped(self, last_face):
        """Account of escape after ``last_face`` (-1: the ray met nothing)."""
        lf = np.asarray(last_face)
        return np.where(lf < 0, self._e0 + len(self.faces), self._e0 + lf)

    # booking ---------------------------------------------------------------------
    def book(self, source, account, power) -> None:
        """Add ``power`` [W] to ``account`` of ``source`` (arrays broadcast)."""
        power = np.asarray(power, dtype=float)
        if power.size == 0:
            return
        source, account = np.broadcast_arrays(source, account)
        flat = source.astype(np.int64) * self.n_accounts + account.astype(np.int64)
        self.books += np.bincount(
            flat.ravel(), weights=np.broadcast_to(power, flat.shape).ravel(),
            minlength=self.books.size,
        ).reshape(self.books.shape)

    def book_tunnels(self, source, face, kind, power) -> None:
        """Add the power [W] of children of kind tunnel to the gap table.

        Parameters
        ----------
        source, face, kind : (N,) int
            Source index, global id of the face the parent met (the face the wave
            tunnels from) and event kind of each child; only tunnel children on gap
            faces are booked.
        power : (N,) float [W]
            Power each child carries across.
        """
        kind = np.asarray(kind)
        self._book_gap(self.tunnel, source, face, kind == self.TUNNEL_KIND, power)

    def book_crossings(self, source, face, to_face, kind, power) -> None:
        """Book every transmitted child that crosses a gap, by mechanism.

        A child crosses when the parent met a gap face and the child leaves from
        another face (the partner across the gap). Tunnel children go to the tunnel
        table, ordinary transmissions (below the gap medium's critical angle) to the
        refraction table.

        Parameters
        ----------
        source, face, to_face, kind : (N,) int
            Source index, global id of the face the parent met, the face the
            transmitted child leaves from and the child's event kind.
        power : (N,) float [W]
            Power each child carries across.
        """
        if not self.gaps:
            return
        face = np.asarray(face, dtype=np.int64)
        crossing = face != np.asarray(to_face, dtype=np.int64)
        if not crossing.any():
            return
        kind = np.asarray(kind)
        self._book_gap(self.tunnel, source, face, crossing & (kind == self.TUNNEL_KIND), power)
        self._book_gap(self.refract, source, face, crossing & (kind == self.TRANSMIT_KIND),
                       power)

    def _book_gap(self, table, source, face, sel, power) -> None:
        """Add ``power[sel]`` to ``table[source, gap of face, side of face]``."""
        if not self.gaps:
            return
        face = np.asarray(face, dtype=np.int64)
        sel = np.asarray(sel, dtype=bool) & (face >= 0) & (face < len(self.faces))
        if not sel.any():
            return
        f = face[sel]
        g = self._face_gap[f]
        ok = g >= 0
        if not ok.all():
            f, g = f[ok], g[ok]
            sel[np.nonzero(sel)[0][~ok]] = False
        src = np.asarray(source, dtype=np.int64)[sel]
        flat = (src * len(self.gaps) + g) * 2 + self._face_side[f]
        table += np.bincount(flat, weights=np.asarray(power, dtype=float)[sel],
                             minlength=table.size).reshape(table.shape)

    def book_behind(self, source, detector, power) -> None:
        """Add ``power`` [W] that crossed plane detector ``detector`` from behind."""
        power = np.asarray(power, dtype=float)
        if power.size == 0:
            return
        flat = np.asarray(source, dtype=np.int64) * len(self.detectors) + np.asarray(detector)
        self.behind += np.bincount(flat, weights=power,
                                   minlength=self.behind.size).reshape(self.behind.shape)

    def book_untraced(self, source, face, power) -> None:
        """Add discarded or cut ``power`` [W] of children born at global face ``face``."""
        self._book_by_face(self.untraced, source, face, power)

    def behind_power(self, detector=None, *, source=None) -> float:
        """Power [W] that crossed ``detector`` (index; all when None) from behind."""
        b = self.behind
        if source is not None:
            b = b[source : source + 1]
        if detector is not None:
            b = b[:, int(detector) : int(detector) + 1]
        return float(b.sum())

    def _gap_sum(self, table, gap, source, side) -> float:
        t = table
        if source is not None:
            t = t[source : source + 1]
        if gap is not None:
            gi = self.gaps.index(gap) if isinstance(gap, str) else int(gap)
            t = t[:, gi : gi + 1]
        if side is not None:
            t = t[:, :, int(side)]
        return float(t.sum())

    def tunnelled(self, gap=None, *, source=None, side=None) -> float:
        """Power [W] that tunnelled through ``gap`` (name or index; all gaps when None).

        ``source`` (index) and ``side`` (0: A to B, 1: B to A) restrict the sum.
        """
        return self._gap_sum(self.tunnel, gap, source, side)

    def refracted(self, gap=None, *, source=None, side=None) -> float:
        """Power [W] that crossed ``gap`` by ordinary refraction (below the gap medium's
        critical angle); arguments as for :meth:`tunnelled`."""
        return self._gap_sum(self.refract, gap, source, side)

    def crossed(self, gap=None, *, source=None, side=None) -> float:
        """Power [W] that crossed ``gap`` by any mechanism (tunnelled + refracted)."""
        return (self._gap_sum(self.tunnel, gap, source, side)
                + self._gap_sum(self.refract, gap, source, side))

    def book_scattered(self, source, face, power) -> None:
        """Add ``power`` [W] scattered at global face ``face`` (booked at the event)."""
        self._book_by_face(self.scattered, source, face, power)

    def _book_by_face(self, table, source, face, power) -> None:
        """Add ``power`` [W] to ``table[source, face]`` (a per-face, non-closing table)."""
        power = np.asarray(power, dtype=float)
        if power.size == 0:
            return
        flat = np.asarray(source, dtype=np.int64) * len(self.faces) + np.asarray(face)
        table += np.bincount(flat, weights=power, minlength=table.size).reshape(table.shape)

    def book_sampled(self, source, per_ray) -> None:
        """Fold one launch batch's sampled detector power per source ray into the sums.

        Parameters
        ----------
        source : (R,) int
            Source index of each source ray of the batch.
        per_ray : (R, D) float [W]
            Sampled power each source ray's tree put on each detector.
        """
        source = np.asarray(source, dtype=np.int64)
        if source.size == 0:
            return
        for k, v in enumerate((per_ray, per_ray * per_ray)):
            for d in range(len(self.detectors)):
                self.sampled[:, d, k] += np.bincount(source, weights=v[:, d],
                                                     minlength=len(self.sources))
        self.rays += np.bincount(source, minlength=len(self.sources))

    def standard_error(self, detector: int) -> float:
        """Standard error [W] of the sampled part of plane detector ``detector``'s power,
        treating the source rays as independent samples: per source
        ``sqrt((N sum x^2 - (sum x)^2) / (N - 1))`` over its N rays, combined over sources
        in quadrature. Exact for randomly sampled sources, conservative for grid sources
        (their ray-to-ray spread counts as noise); 0 when nothing detected was sampled."""
        s1 = self.sampled[:, int(detector), 0]
        s2 = self.sampled[:, int(detector), 1]
        var = 0.0
        for n, a, b in zip(self.rays, s1, s2):
            if n > 1:
                var += max(n * b - a * a, 0.0) / (n - 1)
        return float(np.sqrt(var))

    def book_absorbed(self, source, account, power) -> None:
        """:meth:`book` absorbed power [W] clamped at zero per booking.

        Parent minus children on a lossless face is round-off of either sign; the
        negative part is not booked, so it stays in the closure residual (``residual_w``,
        of the order of 1e-16 of the source power) instead of a negative account.

        >>> led = Ledger(["s"], detectors=[], faces=["a.x"], bulks=["ambient", "a"])
        >>> led.launch(np.array([0]), np.array([1.0]))
        >>> led.book_absorbed(np.array([0, 0]), led.face_absorbed(0), np.array([-1e-17, 0.25]))
        >>> led.breakdown()["absorbed_faces"], led.totals()["residual_w"]
        ({'a.x': 0.25}, 0.75)
        """
        self.book(source, account, np.maximum(np.asarray(power, dtype=float), 0.0))

    def launch(self, source, power) -> None:
        """Record launched source power [W]."""
        self.launched += np.bincount(
            np.asarray(source, dtype=np.int64), weights=power, minlength=len(self.sources)
        )

    def merge(self, other: "Ledger") -> None:
        """Add the books of ``other`` (same layout)."""
        self.books += other.books
        self.launched += other.launched
        self.tunnel += other.tunnel
        self.refract += other.refract
        self.behind += other.behind
        self.untraced += other.untraced
        self.scattered += other.scattered
        self.sampled += other.sampled
        self.rays += other.rays

    # reading ---------------------------------------------------------------------
    def _split(self, row):
        det = row[self._d0 : self._fa0]
        fab = row[self._fa0 : self._b0]
        bab = row[self._b0 : self._e0]
        esc = row[self._e0 :]
        return det, fab, bab, esc

    def totals(self, source: int | None = None) -> dict:
        """Totals [W] for one source index, or all sources when ``None``."""
        row = self.books.sum(axis=0) if source is None else self.books[source]
        launched = self.launched.sum() if source is None else self.launched[source]
        det, fab, bab, esc = self._split(row)
        out = {
            "source_w": float(launched),
            "detected_w": float(det.sum()),
            "absorbed_w": float(fab.sum() + bab.sum()),
            "escaped_w": float(esc.sum()),
            "discarded_w": float(row[self.DISCARDED]),
            "cut_w": float(row[self.CUT] + row[self.LOST]),
            "sampling_w": float(row[self.SAMPLING]),
        }
        booked = sum(v for k, v in out.items() if k != "source_w")
        out["residual_w"] = float(launched - booked)
        return out

    def breakdown(self, source: int | None = None) -> dict:
        """Totals plus non-zero accounts by name [W]."""
        row = self.books.sum(axis=0) if source is None else self.books[source]
        det, fab, bab, esc = self._split(row)
        out = self.totals(source)
        out["detectors"] = {n: float(v) for n, v in zip(self.detectors, det)}
        out["absorbed_faces"] = {n: float(v) for n, v in zip(self.faces, fab) if v != 0}
        out["absorbed_bulk"] = {n: float(v) for n, v in zip(self.bulks, bab) if v != 0}
        names = self.faces + ["(no hit)"]
        out["escaped_faces"] = {n: float(v) for n, v in zip(names, esc) if v != 0}
        out["lost_w"] = float(row[self.LOST])
        return out
