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

__all__ = [
    "PathTree",
    "TRANSMIT",
    "REFLECT",
    "TIR",
    "TUNNEL",
    "ABSORB",
    "DETECT",
    "KIND_NAMES",
    "KIND_CODES",
]

TRANSMIT, REFLECT, TIR, TUNNEL, ABSORB, DETECT = range(6)
#: Kind names, by code number.
KIND_NAMES = ("transmit", "reflect", "TIR", "tunnel", "absorb", "detect")
#: Short codes used in signatures, by code number.
KIND_CODES = ("T", "R", "TIR", "FT", "A", "D")
_NK = 8


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
        self._parent = [np.full(n, -1, dtype=np.int64)]
        self._face = [np.full(n, -1, dtype=np.int64)]
        self._kind = [np.full(n, -1, dtype=np.int64)]
        self._depth = [np.zeros(n, dtype=np.int64)]
        self._root = [np.arange(n, dtype=np.int64)]
        self._lookup: dict[int, int] = {}
        self._size = n
        self._cache = None
        self._nf = len(self.face_names) + 1

    def __len__(self) -> int:
        return self._size

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
        ukey, inverse = np.unique(key, return_inverse=True)
        ids = np.empty(len(ukey), dtype=np.int64)
        new_keys = []
        lookup = self._lookup
        for j, k in enumerate(ukey.tolist()):
            node = lookup.get(k)
            if node is None:
                node = self._size + len(new_keys)
                lookup[k] = node
                new_keys.append(k)
            ids[j] = node
        if new_keys:
            nk = np.array(new_keys, dtype=np.int64)
            p = nk // (_NK * self._nf)
            f = (nk // _NK) % self._nf - 1
            kd = nk % _NK
            _, _, _, depth, root = self._arrays()
            self._parent.append(p)
            self._face.append(f)
            self._kind.append(kd)
            self._depth.append(depth[p] + 1)
            self._root.append(root[p])
            self._size += len(nk)
            self._cache = None
        return ids[inverse.reshape(-1)]

    def _arrays(self):
        if self._cache is None or len(self._cache[0]) != self._size:
            self._cache = tuple(
                np.concatenate(x)
                for x in (self._parent, self._face, self._kind, self._depth, self._root)
            )
            self._parent, self._face, self._kind, self._depth, self._root = (
                [a] for a in self._cache
            )
        return self._cache

    @property
    def parent(self) -> np.ndarray:
        """(nodes,) int: parent node (-1 for roots)."""
        return self._arrays()[0]

    @property
    def face(self) -> np.ndarray:
        """(nodes,) int: global face id of the event (-1 for roots)."""
        return self._arrays()[1]

    @property
    def kind(self) -> np.ndarray:
        """(nodes,) int: event kind code (-1 for roots)."""
        return self._arrays()[2]

    @property
    def depth(self) -> np.ndarray:
        """(nodes,) int: number of events from the root."""
        return self._arrays()[3]

    @property
    def root(self) -> np.ndarray:
        """(nodes,) int: source index of the node's root."""
        return self._arrays()[4]

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
