"""Struct-of-arrays ray batches.

A :class:`RayBatch` holds every per-ray quantity the event loop needs as one array per
quantity (no Python object per ray). The polarisation state is the complex 3x2 field
matrix ``field`` (world frame): column k is the ray's field for unit-power input state k
of its source, scaled so that the ray's power is ``trace(M J M^H)`` with the source
coherency ``J`` (trace 1). The power is also stored in ``power`` [W] and is the value the
ledger uses, so that the books close exactly.

Every ray points through ``root`` at its source ray in a :class:`SourceTable`, which
holds the coherency, the launch power and the source index shared by all descendants.

>>> import numpy as np
>>> b = RayBatch.empty(0)
>>> len(b)
0
"""

from __future__ import annotations

from dataclasses import dataclass, fields

import numpy as np

__all__ = ["RayBatch", "SourceTable", "ray_power"]


@dataclass
class SourceTable:
    """Per-source-ray data shared by all descendants.

    Attributes
    ----------
    coherency : (Ns, 2, 2) complex [1]
        Source coherency matrix in the source's input basis, trace 1.
    power : (Ns,) float [W]
        Launch power of each source ray.
    source : (Ns,) int
        Index of the source (order of ``scene.sources``).
    ray_id : (Ns,) int
        Global index of the ray within its source (for Monte Carlo random streams).
    """

    coherency: np.ndarray
    power: np.ndarray
    source: np.ndarray
    ray_id: np.ndarray

    def __len__(self) -> int:
        return len(self.power)


@dataclass
class RayBatch:
    """Active rays, one array per quantity.

    Attributes
    ----------
    origin, direction : (N, 3) float [m], [1]
    wavelength : (N,) float [m]
        Vacuum wavelength.
    wl_index : (N,) int
        Index into the compiled index table's wavelength axis.
    field : (N, 3, 2) complex [sqrt(W)]
        Field matrix (see module docstring).
    power : (N,) float [W]
    medium : (N,) int
        -1 for the ambient, else the solid index.
    node : (N,) int
        Path-tree node of the ray's last event.
    events : (N,) int
        Number of events so far.
    last_face : (N,) int
        Global id of the last face hit (-1 before the first event).
    root : (N,) int
        Index into the :class:`SourceTable`.
    opl : (N,) float [m]
        Optical path length travelled so far (real part of the index times length).
    stream : (N,) int
        Random-stream key of the ray within its source ray's tree: 0 until a scatter event
        in tree mode, then a hash of the sample that made it (so that siblings draw
        different numbers, whatever the batch).
    """

    origin: np.ndarray
    direction: np.ndarray
    wavelength: np.ndarray
    wl_index: np.ndarray
    field: np.ndarray
    power: np.ndarray
    medium: np.ndarray
    node: np.ndarray
    events: np.ndarray
    last_face: np.ndarray
    root: np.ndarray
    opl: np.ndarray
    stream: np.ndarray = None

    def __post_init__(self):
        if self.stream is None:
            self.stream = np.zeros(len(self.power), dtype=np.int64)

    def __len__(self) -> int:
        return len(self.power)

    @classmethod
    def empty(cls, n: int = 0) -> "RayBatch":
        """A batch of ``n`` zero-initialised rays."""
        return cls(
            origin=np.zeros((n, 3)),
            direction=np.zeros((n, 3)),
            wavelength=np.zeros(n),
            wl_index=np.zeros(n, dtype=np.int64),
            field=np.zeros((n, 3, 2), dtype=complex),
            power=np.zeros(n),
            medium=np.full(n, -1, dtype=np.int64),
            node=np.zeros(n, dtype=np.int64),
            events=np.zeros(n, dtype=np.int64),
            last_face=np.full(n, -1, dtype=np.int64),
            root=np.zeros(n, dtype=np.int64),
            opl=np.zeros(n),
            stream=np.zeros(n, dtype=np.int64),
        )

    def take(self, index) -> "RayBatch":
        """A new batch of the rays selected by ``index`` (bool mask or integer array)."""
        if not isinstance(index, slice):
            index = np.asarray(index)
            if index.dtype == bool:  # one nonzero instead of one mask pass per array
                index = np.flatnonzero(index)
        return RayBatch(**{name: getattr(self, name)[index] for name in _FIELDS})

    @staticmethod
    def concatenate(batches: list["RayBatch"]) -> "RayBatch":
        """One batch holding the rays of all ``batches`` in order."""
        batches = [b for b in batches if len(b)]
        if not batches:
            return RayBatch.empty(0)
        if len(batches) == 1:
            return batches[0]
        return RayBatch(**{name: np.concatenate([getattr(b, name) for b in batches])
                           for name in _FIELDS})

    def split(self, size: int) -> list["RayBatch"]:
        """Consecutive pieces of at most ``size`` rays."""
        n = len(self)
        if n <= size:
            return [self]
        return [self.take(slice(i, i + size)) for i in range(0, n, size)]


_FIELDS = tuple(f.name for f in fields(RayBatch))


def ray_power(field: np.ndarray, coherency: np.ndarray) -> np.ndarray:
    """Power ``Re trace(M J M^H)`` of field matrices [W].

    Parameters
    ----------
    field : (N, 3, 2) complex [sqrt(W)]
    coherency : (N, 2, 2) complex [1]

    >>> import numpy as np
    >>> m = np.zeros((1, 3, 2), complex); m[0, 0, 0] = m[0, 1, 1] = 1.0
    >>> float(ray_power(m, np.eye(2)[None] / 2)[0])
    1.0
    """
    mj = np.einsum("nak,nkl->nal", field, coherency)
    return np.einsum("nal,nal->n", mj, field.conj()).real
