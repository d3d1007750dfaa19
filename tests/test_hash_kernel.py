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
