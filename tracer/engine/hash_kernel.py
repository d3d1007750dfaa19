"""Compiled lookup in the path tree's hash table (:class:`tracer.engine.paths._KeyTable`).

Most events of a trace extend paths that already exist: one compiled probe per event
finds their nodes, and only the keys not found (new paths) go through the numpy
insertion, which assigns node ids exactly as it would for the whole batch.
"""

from __future__ import annotations

import numpy as np

from .jit import njit

__all__ = ["lookup"]

_C = np.uint64(0x9E3779B97F4A7C15)


@njit
def _lookup(table_keys, table_vals, bits, keys, out):
    mask = table_keys.shape[0] - 1
    shift = np.uint64(64 - bits)
    missing = 0
    for i in range(keys.shape[0]):
        key = keys[i]
        # the table's hash: Fibonacci multiplicative, top ``bits`` bits (wrapping product)
        slot = np.int64((np.uint64(key) * _C) >> shift)
        while True:
            k = table_keys[slot]
            if k == key:
                out[i] = table_vals[slot]
                break
            if k == -1:
                out[i] = -1
                missing += 1
                break
            slot = (slot + 1) & mask
    return missing


def lookup(table, keys):
    """Values of ``keys`` (N,) int64 in ``table`` (-1 where absent) and the number absent."""
    out = np.empty(len(keys), dtype=np.int64)
    missing = _lookup(table.keys, table.vals, np.int64(table.bits),
                      np.ascontiguousarray(keys, dtype=np.int64), out)
    return out, int(missing)
