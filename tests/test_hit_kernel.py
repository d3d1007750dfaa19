"""The compiled nearest-hit kernel against the numpy reference (tracer.engine.intersect).

Both routes compute the same query with the same order of floating-point operations, so
face ids must be identical and distances equal (to ~1e-15 relative where the reference
uses a BLAS product for the detectors). No outside source is needed: these are
equalities between two routes of the same computation (common practice, no source).
"""

import sys
from pathlib import Path

import numpy as np
import pytest

from tracer.engine import jit
from tracer.engine.compile import compile_scene
from tracer.engine.intersect import nearest_hit
from tracer.geometry import extrude_polygon
from tracer.scene import load

from engine_factory import beam, box, plane, scene, solid

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "benchmarks"))
from bench_engine import bench_scene  # noqa: E402

pytestmark = pytest.mark.skipif(not jit.available, reason="numba is not installed")

MM = 1e-3
DEMOS = sorted((ROOT / "scenes").glob("*.toml"))


def _both(cs, o, d, med, lf):
    with jit.use_compiled(False):
        ref = nearest_hit(cs, o, d, med, lf)
    with jit.use_compiled(True):
        got = nearest_hit(cs, o, d, med, lf)
    return ref, got


def _check(cs, o, d, med, lf):
    (tr, fr), (tk, fk) = _both(cs, o, d, med, lf)
    assert tk.dtype == np.float64 and fk.dtype == np.int64
    assert tk.shape == fk.shape == (len(o),)
    bad = np.nonzero(fr != fk)[0]
    assert not len(bad), (f"{len(bad)} of {len(o)} faces differ, e.g. ray {bad[0]}: "
                          f"{fr[bad[0]]} (numpy) vs {fk[bad[0]]} (kernel)")
    assert np.array_equal(np.isinf(tr), np.isinf(tk))
    solid_face = fr < cs.n_faces  # no BLAS on this side of the reference: the same bits
    assert np.array_equal(tk[solid_face], tr[solid_face])
    # detectors: t = (n . p - n . o) / (n . k), the dot products summed in another order
    # by the reference's matrix product: a few ulps of the scene's size over n . k
    fin = np.isfinite(tr) & ~solid_face
    size = max(np.abs(o).max(initial=0.0), np.abs(cs.det_position).max(initial=0.0))
    den = np.abs(np.sum(d[fin] * cs.face_normal[fr[fin]], axis=1))
    err = np.abs(tk[fin] - tr[fin]) * den
    assert np.all(err <= 8 * np.finfo(float).eps * (size + np.abs(tr[fin]))), err.max() / size
    return tr, fr


def _region(cs):
    lo = cs.box_lo.min(axis=0)
    hi = cs.box_hi.max(axis=0)
    if len(cs.detector_names):
        lo = np.minimum(lo, cs.det_position.min(axis=0))
        hi = np.maximum(hi, cs.det_position.max(axis=0))
    pad = 0.2 * (hi - lo).max()
    return lo - pad, hi + pad


def _directions(rng, n):
    d = rng.normal(size=(n, 3))
    # a quarter along the axes (parallel to the planes of axis-aligned faces), some
    # exactly along a face normal of the scene below (via the caller)
    k = n // 4
    axes = np.vstack([np.eye(3), -np.eye(3)])
    d[:k] = axes[rng.integers(0, 6, k)]
    return d / np.linalg.norm(d, axis=1, keepdims=True)


def _inside_points(cs, rng, per_solid):
    """Points strictly inside each convex solid, with the solid index."""
    pts, med = [], []
    for s in range(cs.n_solids):
        if not cs.convex[s]:
            continue
        p = rng.uniform(cs.box_lo[s], cs.box_hi[s], (20 * per_solid, 3))
        k = (cs.plane_face[s] >= 0)
        side = p @ cs.plane_n[s, k].T - cs.plane_d[s, k]
        p = p[(side < -1e-6).all(axis=1)][:per_solid]
        pts.append(p)
        med.append(np.full(len(p), s))
    if not pts:
        return np.zeros((0, 3)), np.zeros(0, dtype=np.int64)
    return np.concatenate(pts), np.concatenate(med)


def _exercise(cs, seed, n=3000):
    """Rays in the ambient, inside solids, and from the faces they hit, both sides."""
    rng = np.random.default_rng(seed)
    lo, hi = _region(cs)
    # ambient: random origins, half aimed at a random solid's box centre
    o = rng.uniform(lo, hi, (n, 3))
    d = _directions(rng, n)
    aim = rng.integers(0, max(cs.n_solids, 1), n // 2)
    if cs.n_solids:
        c = 0.5 * (cs.box_lo[aim] + cs.box_hi[aim]) + rng.normal(0, 1e-3, (len(aim), 3))
        v = c - o[: len(aim)]
        d[: len(aim)] = v / np.linalg.norm(v, axis=1, keepdims=True)
    # some rays along a face normal (exactly parallel to the faces perpendicular to it)
    if cs.n_faces:
        m = n // 8
        d[-m:] = cs.face_normal[rng.integers(0, cs.n_faces, m)]
    out = np.full(n, -1)
    t, f = _check(cs, o, d, out, out)
    # inside convex solids
    pi, mi = _inside_points(cs, rng, 300)
    if len(pi):
        _check(cs, pi, _directions(rng, len(pi)), mi, np.full(len(pi), -1))
    # from the faces hit: reflected (ambient, last face set) and straight on into the solid
    hit = (f >= 0) & (f < cs.n_faces)
    p = o[hit] + t[hit, None] * d[hit]
    fh, dh = f[hit], d[hit]
    nrm = cs.face_normal[fh]
    refl = dh - 2 * np.sum(dh * nrm, axis=1)[:, None] * nrm
    _check(cs, p, refl, np.full(len(p), -1), fh)
    _check(cs, p, dh, cs.face_solid[fh], fh)
    # and from the exits of rays inside: reflected back inside, and out into the ambient
    if len(pi):
        dd = _directions(rng, len(pi))
        t2, f2 = _check(cs, pi, dd, mi, np.full(len(pi), -1))
        ok = (f2 >= 0) & (f2 < cs.n_faces)
        q = pi[ok] + t2[ok, None] * dd[ok]
        g, dq = f2[ok], dd[ok]
        nq = cs.face_normal[g]
        rq = dq - 2 * np.sum(dq * nq, axis=1)[:, None] * nq
        _check(cs, q, rq, cs.face_solid[g], g)
        _check(cs, q, dq, np.full(len(q), -1), g)
    return int((f >= 0).sum())


@pytest.mark.parametrize("path", DEMOS, ids=[p.stem for p in DEMOS])
def test_demo_scenes(path):
    cs = compile_scene(load(path))
    assert _exercise(cs, seed=len(path.stem)) > 100


@pytest.mark.parametrize("n_solids", [12, 40])
def test_benchmark_scene(n_solids):
    cs = compile_scene(bench_scene(n_solids=n_solids, rays=10))
    assert (cs.group_members is None) == (n_solids <= 16)
    assert _exercise(cs, seed=n_solids, n=4000) > 1000


def test_benchmark_beam_and_its_children():
    # the benchmark's own rays: a beam along the stack, then the events of a few steps
    cs = compile_scene(bench_scene(n_solids=12, rays=10))
    rng = np.random.default_rng(5)
    n = 4000
    o = np.column_stack([rng.uniform(-0.01, 0.01, (n, 2)), np.full(n, -0.02)])
    d = np.tile([0, 0, 1.0], (n, 1)) + rng.normal(0, 0.05, (n, 3))
    d /= np.linalg.norm(d, axis=1, keepdims=True)
    med = np.full(n, -1)
    lf = np.full(n, -1)
    for _ in range(6):  # straight on through every face (transmission without bending)
        t, f = _check(cs, o, d, med, lf)
        ok = (f >= 0) & (f < cs.n_faces)
        o, d, f = o[ok] + t[ok, None] * d[ok], d[ok], f[ok]
        s = cs.face_solid[f]
        med = np.where(med[ok] >= 0, -1, s)
        lf = f


def test_touching_boxes_and_equal_distances():
    # two cubes sharing the plane z = 0 and a detector on the top face: ties between
    # solids (higher index wins), between a detector and a face, and rays along faces
    cubes = [solid("a", box((-1, -1, -2), (1, 1, 0))), solid("b", box((-1, -1, 0), (1, 1, 2))),
             solid("c", box((-1, -1, 0), (1, 1, 2)))]  # b and c coincide: a tie at every hit
    cs = compile_scene(scene(solids=cubes, sources=[beam()],
                             detectors=[plane("top", (0, 0, 2), (0, 0, -1), (3, 3)),
                                        plane("mid", (0, 0, 0), (0, 0, 1), (3, 3), two_sided=True)]))
    rng = np.random.default_rng(11)
    n = 2000
    o = rng.uniform(-3, 3, (n, 3))
    o[: n // 4, 2] = 0.0  # on the shared plane
    o[n // 4: n // 2, 0] = 1.0  # on the side planes
    d = _directions(rng, n)
    out = np.full(n, -1)
    t, f = _check(cs, o, d, out, out)
    assert np.isin(f, cs.plane_face[2]).any()  # ties went to c, the higher index
    assert not np.isin(f, cs.plane_face[1]).any()
    _exercise(cs, seed=12)


def _mesh_scene():
    outline = np.array([[0, 0], [2, 0], [2, 1], [1, 1], [1, 2], [0, 2]]) * 10 * MM
    g = extrude_polygon(outline, height=20 * MM)
    assert not g.is_convex
    parts = [solid("cube", box((-20 * MM, 0, 0), (-10 * MM, 10 * MM, 10 * MM))),
             solid("part", g), solid("plate", box((30 * MM, 0, 0), (32 * MM, 20 * MM, 20 * MM)))]
    return compile_scene(scene(solids=parts, sources=[beam()],
                               detectors=[plane("camera", (50 * MM, 10 * MM, 0), (-1, 0, 0),
                                                size=(0.2, 0.2))]))


def test_mesh_solid_merged_with_the_kernel():
    cs = _mesh_scene()
    assert not cs.convex.all() and cs.convex.any()
    rng = np.random.default_rng(21)
    n = 1500
    lo, hi = _region(cs)
    o = rng.uniform(lo, hi, (n, 3))
    c = rng.uniform(cs.box_lo[1], cs.box_hi[1], (n, 3))
    d = c - o
    d /= np.linalg.norm(d, axis=1, keepdims=True)
    out = np.full(n, -1)
    t, f = _check(cs, o, d, out, out)
    mesh_faces = cs.face_solid[np.maximum(f, 0)] == 1
    assert (mesh_faces & (f >= 0)).sum() > 100
    # into the mesh solid (rays inside it: the numpy path) and reflected off it
    hit = (f >= 0) & (f < cs.n_faces)
    p, dh, fh = o[hit] + t[hit, None] * d[hit], d[hit], f[hit]
    _check(cs, p, dh, cs.face_solid[fh], fh)
    nrm = cs.face_normal[fh]
    _check(cs, p, dh - 2 * np.sum(dh * nrm, axis=1)[:, None] * nrm, np.full(len(p), -1), fh)


def test_empty_and_solid_free_inputs():
    # detectors only: one-sided and two-sided, overlapping (nearest wins, then lowest index)
    dets = [plane("cam", (0, 0, 1), (0, 0, -1), (3, 3)),
            plane("both", (0, 0, 1), (0, 0, 1), (2, 2), two_sided=True),
            plane("side", (1, 0, 0), (-1, 0, 0), (2, 2), two_sided=True)]
    cs = compile_scene(scene(sources=[beam()], detectors=dets))
    rng = np.random.default_rng(0)
    o = rng.normal(size=(2000, 3))
    o[:300, 2] = 1.0  # on the coinciding detectors
    d = _directions(rng, 2000)
    _, f = _check(cs, o, d, np.full(2000, -1), np.full(2000, -1))
    assert all((f == k).any() for k in (-1, 0, 1, 2))
    _check(cs, o, d, np.full(2000, -1), np.full(2000, 1))
    with jit.use_compiled(True):
        t, f = nearest_hit(cs, np.zeros((0, 3)), np.zeros((0, 3)), np.zeros(0, int), np.zeros(0, int))
    assert t.shape == f.shape == (0,)


@pytest.mark.parametrize("path", DEMOS[:3], ids=[p.stem for p in DEMOS[:3]])
def test_trace_with_the_hit_kernel_alone_is_unchanged(path, monkeypatch):
    # everything else on the numpy reference: the whole trace must be the same bits
    from tracer.engine import intersect, trace, tree

    sc = load(path)
    with jit.use_compiled(False):
        ref = trace(sc, rays=40, progress=False)
        monkeypatch.setattr(tree, "nearest_hit", intersect._nearest_hit_compiled)
        got = trace(sc, rays=40, progress=False)
    assert got.events == ref.events and len(got.tree) == len(ref.tree)
    assert got.ledger.totals() == ref.ledger.totals()
    for name in ref.compiled.detector_names:
        assert np.array_equal(ref.hits(name)["power"], got.hits(name)["power"])
