"""The compiled detector-hit polarisation equals tracer.polarization's functions
(themselves checked against Jones/Mueller/Stokes identities in test_polarization)."""

import numpy as np
import pytest

from tracer.engine import detect_kernel, jit

pytestmark = pytest.mark.skipif(not jit.available, reason="numba not installed")


def test_hit_polarization_equals_reference():
    rng = np.random.default_rng(12)
    n = 3000
    normals = np.array([[0.0, 0, -1], [0.0, 0, 1], [1.0, 0, 0]])
    det_x = np.array([[1.0, 0, 0], [0.0, 1, 0], [0.0, 0, 1]])
    det = rng.integers(0, 3, n)
    k = -normals[det] + rng.normal(0, 0.3, (n, 3))
    k[:20] = det_x[det[:20]]  # x_axis along the ray: the fallback frame
    k /= np.linalg.norm(k, axis=1, keepdims=True)
    field = rng.normal(size=(n, 3, 2)) + 1j * rng.normal(size=(n, 3, 2))
    a = rng.normal(size=(n, 2, 2)) + 1j * rng.normal(size=(n, 2, 2))
    coh = a @ np.conj(np.swapaxes(a, -1, -2))
    got = detect_kernel.hit_polarization(field, k, det, det_x, coh, np.arange(n))
    ref = detect_kernel.hit_polarization_reference(field, k, det_x[det], coh)
    assert len(got) == len(ref) == 3
    for g, r, name in zip(got, ref, ("jones", "stokes", "mueller")):
        np.testing.assert_allclose(g, r, rtol=1e-12, atol=1e-12, err_msg=name)
