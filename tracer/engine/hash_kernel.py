"""Compiled lookup in the path tree's hash table (:class:`tracer.engine.paths._KeyTable`).

Most events of a trace extend paths that already exist: one compiled probe per event
finds their nodes (:func:`lookup`); :func:`insert` then adds the keys not found, giving
them consecutive ids in order of first appearance.
"""

from __future__ import annotations

import numpy as np

from .jit import njit

__all__ = ["lookup", "insert"]

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


@njit
def _insert(table_keys, table_vals, bits, keys, out, next_id, new_keys):
    mask = table_keys.shape[0] - 1
    shift = np.uint64(64 - bits)
    added = 0
    for i in range(keys.shape[0]):
        if out[i] >= 0:
            continue
        key = keys[i]
        slot = np.int64((np.uint64(key) * _C) >> shift)
        while True:
            k = table_keys[slot]
            if k == key:  # added earlier in this call
                out[i] = table_vals[slot]
                break
            if k == -1:
                table_keys[slot] = key
                table_vals[slot] = next_id + added
                out[i] = next_id + added
                new_keys[added] = key
                added += 1
                break
            slot = (slot + 1) & mask
    return added


def insert(table, keys, found, missing, next_id):
    """Add the keys of ``keys`` that ``found`` marks absent (-1), in place.

    Parameters
    ----------
    table : tracer.engine.paths._KeyTable
    keys : (N,) int64
    found : (N,) int64
        Result of :func:`lookup`; completed in place with the new ids.
    missing : int
        Number of absent entries (an upper bound of the keys added).
    next_id : int
        Id of the first new key.

    Returns
    -------
    (added,) int64 array of the new keys, in the order of their ids.
    """
    if 2 * (table.count + missing) > len(table.keys):
        table._grow(table.count + missing)
    new_keys = np.empty(missing, dtype=np.int64)
    added = _insert(table.keys, table.vals, np.int64(table.bits),
                    np.ascontiguousarray(keys, dtype=np.int64), found, np.int64(next_id), new_keys)
    table.count += added
    return new_keys[:added]
