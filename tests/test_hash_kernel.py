"""The compiled hash-table probe finds exactly the keys the numpy table holds."""

import numpy as np
import pytest

from tracer.engine import hash_kernel, jit
from tracer.engine.paths import _KeyTable

pytestmark = pytest.mark.skipif(not jit.available, reason="numba not installed")


def test_lookup_matches_table_contents():
    rng = np.random.default_rng(4)
    table = _KeyTable(bits=6)  # small: forces growth and long probe chains
    stored = np.unique(rng.integers(0, 2**62, 5000))
    ids, added = table.get_or_add(stored, 100)
    assert added == len(stored)
    absent = np.setdiff1d(rng.integers(0, 2**62, 3000), stored)
    keys = rng.permutation(np.concatenate([stored, absent]))
    got, missing = hash_kernel.lookup(table, keys)
    assert missing == len(absent)
    expect = dict(zip(stored.tolist(), ids.tolist()))
    assert got.tolist() == [expect.get(k, -1) for k in keys.tolist()]


def test_insert_adds_absent_keys_once_in_order_of_first_appearance():
    rng = np.random.default_rng(8)
    table = _KeyTable(bits=4)
    first = rng.integers(0, 2**62, 50)
    table.get_or_add(np.unique(first), 0)
    fresh = np.unique(rng.integers(0, 2**62, 400))
    fresh = np.setdiff1d(fresh, first)
    keys = np.concatenate([first[:10], fresh, fresh[::-1], first[10:]])  # repeats
    found, missing = hash_kernel.lookup(table, keys)
    assert missing == 2 * len(fresh)
    new = hash_kernel.insert(table, keys, found, missing, 1000)
    assert new.tolist() == fresh.tolist()  # first appearance order
    assert found[10:10 + len(fresh)].tolist() == list(range(1000, 1000 + len(fresh)))
    again, missing = hash_kernel.lookup(table, keys)
    assert missing == 0 and again.tolist() == found.tolist()
    # the numpy table agrees: nothing left to add, the same ids
    ids, added = table.get_or_add(fresh, 5000)
    assert added == 0 and ids.tolist() == list(range(1000, 1000 + len(fresh)))
