"""Engine intersection and interface fast paths against plain reference computations.

The ordered broad phase (nearest box first, groups of boxes in large scenes, skipping the
convex solid a ray has just left) must give exactly what testing every (ray, solid) pair
gives; the written-out s/p basis and the shared-angle coefficient solve must give the
same numbers as the general functions. No outside source is needed: these are
equalities between two routes of the same computation (common practice, no source).
"""

import numpy as np
import pytest

from tracer import polarization as pol
from tracer.engine import interact
from tracer.engine.batch import ray_power
from tracer.engine.compile import box_groups, compile_scene
from tracer.engine.intersect import _enter_convex, box_candidates, nearest_hit

from engine_factory import beam, box, plane, scene, solid


def _random_boxes(n, seed):
    rng = np.random.default_rng(seed)
    out = []
    for i in range(n):
        c = rng.uniform(-0.05, 0.05, 3)
        h = rng.uniform(0.002, 0.01, 3)
        out.append(solid(f"b{i}", box(c - h, c + h)))
    return out


def _scene_of(n, seed):
    # boxes may overlap in this test: only the geometry query is checked, never a trace
    return compile_scene(scene(solids=_random_boxes(n, seed), sources=[beam()],
                               detectors=[plane("cam", (0, 0, 0.2), (0, 0, -1), (0.5, 0.5))]))


def _brute_entry(cs, o, d):
    """Nearest entry over every (ray, solid) pair; ties to the higher solid index."""
    n, S = len(o), cs.n_solids
    r = np.repeat(np.arange(n), S)
    s = np.tile(np.arange(S), n)
    t, f = _enter_convex(cs, o[r], d[r], s)
    t = t.reshape(n, S)
    f = f.reshape(n, S)
    best = t.min(axis=1)
    win = np.where(np.isfinite(t) & (t == best[:, None]), np.arange(S)[None], -1).max(axis=1)
    face = np.where(win >= 0, f[np.arange(n), np.maximum(win, 0)], -1)
    return np.where(win >= 0, best, np.inf), face


def _rays(n, seed):
    rng = np.random.default_rng(seed)
    o = rng.uniform(-0.08, 0.08, (n, 3))
    d = rng.uniform(-0.05, 0.05, (n, 3)) - o  # towards the region of the boxes
    d /= np.linalg.norm(d, axis=1, keepdims=True)
    return o, d


@pytest.mark.parametrize("n_solids", [5, 40])
def test_ordered_broad_phase_equals_every_pair(n_solids):
    cs = _scene_of(n_solids, seed=n_solids)
    assert (cs.group_members is None) == (n_solids <= 16)
    o, d = _rays(3000, seed=1)
    # no detector in the way: compare the solid query alone
    cs.detector_names = []
    t, f = nearest_hit(cs, o, d, np.full(len(o), -1), np.full(len(o), -1))
    tb, fb = _brute_entry(cs, o, d)
    assert np.isfinite(t).sum() > 100  # the test exercises hits
    assert np.array_equal(t, tb)
    assert np.array_equal(f, fb)


@pytest.mark.parametrize("n_solids", [6, 30])
def test_rays_leaving_a_solid_skip_only_what_they_cannot_hit(n_solids):
    # rays reflected off the outside of the face they hit (last_face set, in the ambient)
    cs = _scene_of(n_solids, seed=100 + n_solids)
    cs.detector_names = []
    o, d = _rays(4000, seed=2)
    out = np.full(len(o), -1)
    t, f = nearest_hit(cs, o, d, out, out)
    hit = f >= 0
    o, d, t, f = o[hit], d[hit], t[hit], f[hit]
    p = o + t[:, None] * d
    nrm = cs.face_normal[f]
    d2 = d - 2 * np.sum(d * nrm, axis=1)[:, None] * nrm
    t2, f2 = nearest_hit(cs, p, d2, np.full(len(p), -1), f)
    tb, fb = _brute_entry(cs, p, d2)
    assert np.array_equal(t2, tb)
    assert np.array_equal(f2, fb)


def test_box_groups_partition_the_solids():
    rng = np.random.default_rng(3)
    lo = rng.uniform(-1, 1, (57, 3))
    hi = lo + 0.1
    glo, ghi, mem = box_groups(lo, hi)
    ids = mem[mem >= 0]
    assert sorted(ids.tolist()) == list(range(57))
    for g, row in enumerate(mem):
        row = row[row >= 0]
        assert np.all(glo[g] <= lo[row]) and np.all(ghi[g] >= hi[row])
    assert box_groups(lo[:10], hi[:10]) == (None, None, None)


def test_box_candidates_keep_the_old_contract():
    lo = np.array([[-1.0, -1, 1], [-1, -1, -3], [5, 5, 5]])
    hi = lo + np.array([2.0, 2, 1])
    r, b = box_candidates(lo, hi, np.zeros((2, 3)), np.array([[0.0, 0, 1], [0.0, 0, -1]]))
    assert r.tolist() == [0, 1] and b.tolist() == [0, 1]


def test_written_out_sp_basis_is_bit_identical():
    rng = np.random.default_rng(5)
    k = rng.normal(size=(5000, 3))
    k /= np.linalg.norm(k, axis=1, keepdims=True)
    nrm = rng.normal(size=(5000, 3))
    nrm /= np.linalg.norm(nrm, axis=1, keepdims=True)
    nrm[:50] = k[:50]  # normal incidence: the general fallback
    nrm[50:100] = -k[50:100]
    s, p = interact.sp_basis(k, nrm)
    s0, p0 = pol.sp_basis(k, nrm)
    assert np.array_equal(s, s0) and np.array_equal(p, p0)


def _split_case(n=400, seed=7):
    from tracer.scene.model import FaceTreatment

    ar = FaceTreatment(kind="ideal", reflectance=0.01)
    g = box((-0.01, -0.01, 0.0), (0.01, 0.01, 0.002))
    sc = scene(solids=[solid("plate", g, faces={"mz": ar}), solid("bare", box((0.02, 0, 0),
                                                                             (0.03, 0.01, 0.01)))],
               sources=[beam()])
    cs = compile_scene(sc)
    rng = np.random.default_rng(seed)
    # a few distinct directions shared by many rays, on the coated and the bare faces
    dirs = np.array([[0.1, 0.0, 1.0], [0.0, 0.2, 1.0], [0.05, 0.05, 1.0]])
    dirs /= np.linalg.norm(dirs, axis=1, keepdims=True)
    k = dirs[rng.integers(0, 3, n)]
    face = np.where(rng.random(n) < 0.7, cs.face_id("plate.mz"), cs.face_id("bare.mz"))
    field = rng.normal(size=(n, 3, 2)) + 1j * rng.normal(size=(n, 3, 2))
    field -= k[:, :, None] * np.einsum("nj,njc->nc", k, field)[:, None, :]  # transverse
    ntab = cs.index_table(np.array([550e-9]))
    J = np.broadcast_to(np.eye(2) / 2, (n, 2, 2))
    return cs, dict(direction=k, position=np.zeros((n, 3)), field=field,
                    power=ray_power(field, J),
                    medium=np.full(n, -1), face=face, wavelength=np.full(n, 550e-9),
                    wl_index=np.zeros(n, dtype=np.int64), ntab=ntab,
                    coherency=J,
                    coherence_length=np.full(n, np.inf))


def test_shared_angle_coefficients_are_identical(monkeypatch):
    cs, kw = _split_case()
    fast = interact.split(cs, **kw)
    monkeypatch.setattr(interact, "_SHARED_MIN", 10**9)  # every ray solved on its own
    slow = interact.split(cs, **kw)
    for name in ("r_power", "t_power", "absorbed", "r_dir", "t_dir"):
        assert np.array_equal(getattr(fast, name), getattr(slow, name)), name
    assert np.array_equal(fast.field("r"), slow.field("r"))
    assert np.array_equal(fast.field("t"), slow.field("t"))
    # the coated face really reflects its 1 %, the bare one its Fresnel value
    coated = kw["face"] == cs.face_id("plate.mz")
    frac = fast.r_power / kw["power"]
    assert np.allclose(frac[coated], 0.01, rtol=1e-12)
    assert np.all((frac[~coated] > 0.03) & (frac[~coated] < 0.05))  # bare n = 1.5, ~4 %
