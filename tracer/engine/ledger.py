"""The power ledger: where every watt of every source went.

The ledger is a dense table ``books[source, account]`` [W]. Accounts are

* one per plane detector (power recorded there),
* absorbed on each face (absorbers, and the absorptance of lossy coatings or gaps,
  computed as parent power minus children so that round-off is booked, not lost),
* absorbed in the bulk of each solid and of the ambient (Beer--Lambert),
* escaped through each exit face (the last face a ray met; ``(no hit)`` for source
  rays that met nothing),
* discarded (children under the power threshold), cut (rays at the event cap) and
  lost (rays a numerical failure left inside a solid with no exit; booked under cut).

Booking is one ``np.bincount`` per call, so the cost does not depend on how many
accounts there are.

>>> led = Ledger(["src"], detectors=["cam"], faces=["a.x"], bulks=["ambient", "a"])
>>> led.book(np.array([0, 0]), led.detector(0), np.array([0.25, 0.5]))
>>> led.book(np.array([0]), led.DISCARDED, np.array([0.25]))
>>> led.totals()["detected_w"], led.totals()["discarded_w"]
(0.75, 0.25)
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
    """

    DISCARDED = 0
    CUT = 1
    LOST = 2

    def __init__(self, sources, *, detectors, faces, bulks):
        self.sources = list(sources)
        self.detectors = list(detectors)
        self.faces = list(faces)
        self.bulks = list(bulks)
        self._d0 = 3
        self._fa0 = self._d0 + len(self.detectors)
        self._b0 = self._fa0 + len(self.faces)
        self._e0 = self._b0 + len(self.bulks)
        self.n_accounts = self._e0 + len(self.faces) + 1
        self.books = np.zeros((len(self.sources), self.n_accounts))
        self.launched = np.zeros(len(self.sources))

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

    def launch(self, source, power) -> None:
        """Record launched source power [W]."""
        self.launched += np.bincount(
            np.asarray(source, dtype=np.int64), weights=power, minlength=len(self.sources)
        )

    def merge(self, other: "Ledger") -> None:
        """Add the books of ``other`` (same layout)."""
        self.books += other.books
        self.launched += other.launched

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
