"""warm_up makes every kernel of the event loop ready (compiled or loaded from cache)."""

import pytest

from tracer.engine import children_kernel, detect_kernel, fresnel_kernel, hash_kernel, hit_kernel, jit
from tracer.engine import interface_kernel
from tracer.engine.warm import _tiny_scene, warm_up

pytestmark = pytest.mark.skipif(not jit.available, reason="numba not installed")


def test_warm_up_readies_the_kernels_and_its_scene_closes_the_ledger():
    warm_up()
    for fn in (hit_kernel.solid_hits, hit_kernel.detector_hits, interface_kernel._frame,
               interface_kernel._waves, fresnel_kernel._simple, children_kernel._assemble,
               hash_kernel._lookup, hash_kernel._insert, detect_kernel._hits):
        assert fn.signatures, fn
    from tracer.engine import trace

    t = trace(_tiny_scene(), progress=False).ledger.totals()
    booked = t["detected_w"] + t["absorbed_w"] + t["escaped_w"] + t["discarded_w"] + t["cut_w"]
    assert booked == pytest.approx(t["source_w"], rel=1e-12)  # ledger closure (common practice)
    assert t["detected_w"] > 0.5 * t["source_w"]
