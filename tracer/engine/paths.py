"""The path tree: every distinct sequence of events, stored once.

A path is the sequence of events a ray went through since it left its source. Each
event is a pair (face, kind); paths that share a beginning share tree nodes, so that
millions of rays cost only as many nodes as there are distinct paths. Node 0 .. S-1
are the roots, one per source.

Event kinds and their codes in signatures:

=========  ====  =============================================================
kind       code  meaning
=========  ====  =============================================================
transmit   T     refracted through a face (or across a gap below its critical
                 angle)
reflect    R     partial (Fresnel or coating) reflection
TIR        TIR   total internal reflection (also frustrated TIR at a gap)
tunnel     FT    frustrated transmission: tunnelled across a gap beyond the gap
                 medium's critical angle
absorb     A     ended on an absorbing face
detect     D     ended on a detector
scatter-r  SR    scattered into the reflection hemisphere (the side the light came
                 from) by a scatter treatment
scatter-t  ST    scattered into the transmission hemisphere
=========  ====  =============================================================

A signature reads from the source to the end, separated by ``" > "``; the faces are
``solid.face`` and the detector is named at the end without a code:

``laser > upper.entrance:T > upper.hypotenuse:TIR > upper.exit:T > camera``

>>> tree = PathTree(["laser"], ["upper.entrance", "upper.hypotenuse", "camera"])
>>> a = tree.extend(np.array([0]), np.array([0]), np.array([TRANSMIT]))
>>> b = tree.extend(a, np.array([1]), np.array([TIR]))
>>> c = tree.extend(b, np.array([2]), np.array([DETECT]))
>>> tree.signature(int(c[0]))
'laser > upper.entrance:T > upper.hypotenuse:TIR > camera'
>>> tree.reflections(int(c[0]))
1
>>> int(tree.extend(np.array([0]), np.array([0]), np.array([TRANSMIT]))[0]) == int(a[0])
True
"""

from __future__ import annotations

import numpy as np

from . import hash_kernel, jit

__all__ = [
    "PathTree",
    "TRANSMIT",
    "REFLECT",
    "TIR",
    "TUNNEL",
    "ABSORB",
    "DETECT",
    "SCATTER_R",
    "SCATTER_T",
    "SCATTER_KINDS",
    "KIND_NAMES",
    "KIND_CODES",
]

TRANSMIT, REFLECT, TIR, TUNNEL, ABSORB, DETECT, SCATTER_R, SCATTER_T = range(8)
SCATTER_KINDS = (SCATTER_R, SCATTER_T)
#: Kind names, by code number.
KIND_NAMES = ("transmit", "reflect", "TIR", "tunnel", "absorb", "detect", "scatter-r",
              "scatter-t")
#: Short codes used in signatures, by code number.
KIND_CODES = ("T", "R", "TIR", "FT", "A", "D", "SR", "ST")
_NK = 8


class _KeyTable:
    """Open-addressing hash table int64 key -> int64 value, vectorised (linear probing).

    Keys are non-negative; -1 marks an empty slot. The table doubles when half full.
    """

    _C = np.uint64(0x9E3779B97F4A7C15)

    def __init__(self, bits: int = 12):
        self.bits = bits
        self.keys = np.full(1 << bits, -1, dtype=np.int64)
        self.vals = np.zeros(1 << bits, dtype=np.int64)
        self.count = 0

    def _slots(self, keys):
        with np.errstate(over="ignore"):
            h = keys.astype(np.uint64) * self._C
        return (h >> np.uint64(64 - self.bits)).astype(np.int64)

    def get_or_add(self, ukeys: np.ndarray, next_id: int):
        """Values of unique ``ukeys``; missing keys get ``next_id, next_id + 1, ...``.

        Returns (values, number of keys added).
        """
        if 2 * (self.count + len(ukeys)) > len(self.keys):
            self._grow(self.count + len(ukeys))
        mask = len(self.keys) - 1
        slot = self._slots(ukeys)
        out = np.full(len(ukeys), -1, dtype=np.int64)
        pending = np.arange(len(ukeys))
        added = 0
        while pending.size:
            sl = slot[pending]
            tk = self.keys[sl]
            kk = ukeys[pending]
            found = tk == kk
            if found.any():
                out[pending[found]] = self.vals[sl[found]]
            empty = tk == -1
            won = np.zeros(len(pending), dtype=bool)
            if empty.any():
                ei = np.nonzero(empty)[0]
                us, first = np.unique(sl[ei], return_index=True)
                w = ei[first]
                ids = next_id + added + np.arange(len(w))
                self.keys[us] = kk[w]
                self.vals[us] = ids
                out[pending[w]] = ids
                added += len(w)
                won[w] = True
            other = ~found & ~empty
            slot[pending[other]] = (sl[other] + 1) & mask
            pending = pending[~(found | won)]
        self.count += added
        return out, added

    def _grow(self, need):
        keys = self.keys[self.keys >= 0]
        vals = self.vals[self.keys >= 0]
        while (1 << self.bits) < 4 * need:
            self.bits += 1
        self.keys = np.full(1 << self.bits, -1, dtype=np.int64)
        self.vals = np.zeros(1 << self.bits, dtype=np.int64)
        mask = len(self.keys) - 1
        slot = self._slots(keys)
        pending = np.arange(len(keys))
        while pending.size:
            sl = slot[pending]
            empty = self.keys[sl] == -1
            ei = np.nonzero(empty)[0]
            us, first = np.unique(sl[ei], return_index=True)
            w = ei[first]
            self.keys[us] = keys[pending[w]]
            self.vals[us] = vals[pending[w]]
            won = np.zeros(len(pending), dtype=bool)
            won[w] = True
            rest = ~won
            slot[pending[rest & ~empty]] = (sl[rest & ~empty] + 1) & mask
            pending = pending[rest]


class PathTree:
    """Nodes (parent, face, kind), shared by all rays of a trace.

    Parameters
    ----------
    roots : list of str
        Source names; node ``i`` is the root of source ``i``.
    face_names : list of str
        Names of the global face ids (solid faces ``solid.face`` and detectors).
    """

    def __init__(self, roots: list[str], face_names: list[str]):
        self.root_names = list(roots)
        self.face_names = list(face_names)
        n = len(self.root_names)
        cap = max(1024, 2 * n)
        self._a = {
            "parent": np.full(cap, -1, dtype=np.int64),
            "face": np.full(cap, -1, dtype=np.int64),
            "kind": np.full(cap, -1, dtype=np.int64),
            "depth": np.zeros(cap, dtype=np.int64),
            "root": np.zeros(cap, dtype=np.int64),
            "scatters": np.zeros(cap, dtype=np.int64),
        }
        self._a["root"][:n] = np.arange(n)
        self._size = n
        self._table = _KeyTable()
        self._nf = len(self.face_names) + 1

    def __len__(self) -> int:
        return self._size

    def _reserve(self, n):
        cap = len(self._a["parent"])
        if n <= cap:
            return
        new = max(n, 2 * cap)
        for k, v in self._a.items():
            grown = np.full(new, -1 if k in ("parent", "face", "kind") else 0, dtype=np.int64)
            grown[:cap] = v
            self._a[k] = grown

    def extend(self, parent: np.ndarray, face: np.ndarray, kind: np.ndarray) -> np.ndarray:
        """Node ids of the events (parent, face, kind), creating new nodes as needed.

        Parameters
        ----------
        parent, face, kind : (N,) int

        Returns
        -------
        (N,) int
        """
        parent = np.asarray(parent, dtype=np.int64)
        if parent.size == 0:
            return np.zeros(0, dtype=np.int64)
        key = (parent * self._nf + (np.asarray(face, dtype=np.int64) + 1)) * _NK + np.asarray(
            kind, dtype=np.int64
        )
        if jit.compiled():
            found, missing = hash_kernel.lookup(self._table, key)
            if missing:
                nk = hash_kernel.insert(self._table, key, found, missing, self._size)
                self._add_nodes(nk, self._size + np.arange(len(nk)))
            return found
        ukey, inverse = np.unique(key, return_inverse=True)
        ids, added = self._table.get_or_add(ukey, self._size)
        if added:
            new = ids >= self._size
            self._add_nodes(ukey[new], ids[new])
        return ids[inverse.reshape(-1)]

    def _add_nodes(self, nk, nid):
        """Store the nodes of new keys ``nk`` under ids ``nid`` (consecutive from the size)."""
        added = len(nk)
        if added:
            self._reserve(self._size + added)
            a = self._a
            p = nk // (_NK * self._nf)
            a["parent"][nid] = p
            a["face"][nid] = (nk // _NK) % self._nf - 1
            a["kind"][nid] = nk % _NK
            a["depth"][nid] = a["depth"][p] + 1
            a["root"][nid] = a["root"][p]
            k = a["kind"][nid]
            a["scatters"][nid] = a["scatters"][p] + ((k == SCATTER_R) | (k == SCATTER_T))
            self._size += added

    @property
    def parent(self) -> np.ndarray:
        """(nodes,) int: parent node (-1 for roots)."""
        return self._a["parent"][: self._size]

    @property
    def face(self) -> np.ndarray:
        """(nodes,) int: global face id of the event (-1 for roots)."""
        return self._a["face"][: self._size]

    @property
    def kind(self) -> np.ndarray:
        """(nodes,) int: event kind code (-1 for roots)."""
        return self._a["kind"][: self._size]

    @property
    def depth(self) -> np.ndarray:
        """(nodes,) int: number of events from the root."""
        return self._a["depth"][: self._size]

    @property
    def scatters(self) -> np.ndarray:
        """(nodes,) int: number of scatter events from the root."""
        return self._a["scatters"][: self._size]

    @property
    def root(self) -> np.ndarray:
        """(nodes,) int: source index of the node's root."""
        return self._a["root"][: self._size]

    def events(self, node: int) -> list[tuple[int, int]]:
        """The (face, kind) events from the source to ``node``."""
        parent, face, kind = self.parent, self.face, self.kind
        out = []
        node = int(node)
        while parent[node] >= 0:
            out.append((int(face[node]), int(kind[node])))
            node = int(parent[node])
        return out[::-1]

    def source_of(self, node: int) -> str:
        """Name of the source at the root of ``node``."""
        return self.root_names[int(self.root[int(node)])]

    def signature(self, node: int) -> str:
        """Readable path, e.g. ``laser > upper.entrance:T > camera``."""
        parts = [self.source_of(node)]
        for f, k in self.events(node):
            name = self.face_names[f] if f >= 0 else "?"
            parts.append(name if k == DETECT else f"{name}:{KIND_CODES[k]}")
        return " > ".join(parts)

    def reflections(self, node: int) -> int:
        """Number of reflections (partial and total) on the path to ``node``."""
        return sum(1 for _, k in self.events(node) if k in (REFLECT, TIR))

    def faces(self, node: int) -> list[str]:
        """Face names of the events on the path to ``node``."""
        return [self.face_names[f] for f, _ in self.events(node)]
