"""Polygon extrusion, convex polyhedra and closed meshes.

Reference values: closed-form volumes (common practice, no source) and trimesh (a reference
library) for meshes, facets and hulls.
"""

import itertools

import numpy as np
import pytest
import shapely
import trimesh

from tracer.geometry import (
    ConvexSolid,
    GeometryError,
    MeshSolid,
    convex_polyhedron,
    extrude_polygon,
    load_mesh,
    mesh_solid,
)
from tracer.geometry.transforms import rotation_matrix

L_SHAPE = [[0, 0], [0.02, 0], [0.02, 0.01], [0.01, 0.01], [0.01, 0.02], [0, 0.02]]


def test_extrusion_convex_and_orientation():
    sq = [[0, 0], [0.01, 0], [0.01, 0.02], [0, 0.02]]
    a = extrude_polygon(sq, height=0.005)
    b = extrude_polygon(sq[::-1], height=0.005)  # clockwise: same solid, sides follow the edges
    assert isinstance(a, ConvexSolid) and isinstance(b, ConvexSolid)
    assert a.volume == pytest.approx(1e-6, rel=1e-12) and b.volume == pytest.approx(1e-6, rel=1e-12)
    # side_0 of the CW outline is the edge from (0, 0.02) to (0.01, 0.02): normal +y
    np.testing.assert_allclose(b.face_normals[b.face_index("side_0")], [0, 1, 0], atol=1e-15)
    np.testing.assert_allclose(a.face_normals[a.face_index("side_0")], [0, -1, 0], atol=1e-15)
    assert a.bounds[0, 2] == pytest.approx(-0.0025) and a.bounds[1, 2] == pytest.approx(0.0025)
    named = extrude_polygon(sq, height=0.005, side_names=["s", "e", "n", "w"], top="lid", bottom="floor")
    assert named.face_names == ("s", "e", "n", "w", "lid", "floor")


@pytest.mark.parametrize(
    "verts, message",
    [
        ([[0, 0], [1, 1], [1, 0], [0, 1]], "crosses itself"),
        ([[0, 0], [1, 0], [2, 0], [1, 1]], "collinear"),
        ([[0, 0], [1, 0]], "at least 3 vertices"),
        ([[0, 0], [1, 0], [1, 0], [0, 1]], "coincide"),
        ([[0, 0], [1, 0], [float("nan"), 1]], "finite"),
    ],
)
def test_extrusion_rejects_bad_polygons(verts, message):
    with pytest.raises(GeometryError, match=message):
        extrude_polygon(verts, height=1.0)


def test_extrusion_nonconvex_matches_trimesh():
    s = extrude_polygon(L_SHAPE, height=0.01)
    assert isinstance(s, MeshSolid) and not s.is_convex
    ref = trimesh.creation.extrude_polygon(shapely.Polygon(L_SHAPE), 0.01)
    assert s.volume == pytest.approx(ref.volume, rel=1e-12)
    assert s.face_area("top") == pytest.approx(3e-4, rel=1e-12)
    assert len(s.face_polygons[s.face_index("top")]) == 6
    m = s.to_trimesh()
    assert m.is_watertight and m.is_winding_consistent
    # translated and rotated, the solid stays rigid
    r = rotation_matrix(0.2, 0.4, -0.1)
    t = s.transformed(r, [0.1, 0.0, 0.0])
    assert t.volume == pytest.approx(s.volume, rel=1e-12)
    np.testing.assert_allclose(t.face_centroid("side_3"), r @ s.face_centroid("side_3") + [0.1, 0, 0], atol=1e-15)


def test_convex_polyhedron():
    cube_pts = np.array(list(itertools.product([0, 0.01], repeat=3)) + [[0.005, 0.005, 0.005]])
    cube = convex_polyhedron(cube_pts)
    assert len(cube.face_names) == 6 and cube.volume == pytest.approx(1e-6, rel=1e-12)
    assert cube.face_names[0] == "face_0"
    # octahedron with vertices at +-a on the axes: volume 4/3 a^3
    a = 0.01
    octa = convex_polyhedron(np.vstack([np.eye(3) * a, -np.eye(3) * a]))
    assert len(octa.face_names) == 8 and octa.volume == pytest.approx(4 / 3 * a**3, rel=1e-12)
    # random cloud: volume equals trimesh's (qhull) convex hull volume
    pts = np.random.default_rng(2).normal(size=(40, 3)) * 0.01
    hull = convex_polyhedron(pts)
    assert hull.volume == pytest.approx(trimesh.convex.convex_hull(pts).volume, rel=1e-9)
    # a face given with slightly rounded coordinates is still one face
    jitter = cube_pts[:-1] + np.random.default_rng(4).uniform(-1e-9, 1e-9, size=(8, 3))
    assert len(convex_polyhedron(jitter).face_names) == 6
    with pytest.raises(GeometryError, match="coplanar"):
        convex_polyhedron([[0, 0, 0], [1, 0, 0], [0, 1, 0], [1, 1, 0]])
    with pytest.raises(GeometryError, match="at least 4"):
        convex_polyhedron([[0, 0, 0], [1, 0, 0], [0, 1, 0]])
    i = cube.face_facing([0, 0, 1])
    np.testing.assert_allclose(cube.face_normals[i], [0, 0, 1], atol=1e-12)


def test_mesh_convex_box_and_facets():
    box = trimesh.creation.box(extents=[0.01, 0.02, 0.03])
    s = mesh_solid(box.vertices, box.faces)
    assert isinstance(s, ConvexSolid) and len(s.face_names) == 6
    assert s.volume == pytest.approx(box.volume, rel=1e-12)
    forced = mesh_solid(box.vertices, box.faces, convex=False)
    assert isinstance(forced, MeshSolid) and forced.is_convex
    # facets grouped like trimesh's facets (two triangles per box face)
    assert len(box.facets) == 6 and len(forced.face_names) == 6


def test_mesh_nonconvex_facets_and_labels():
    ref = trimesh.creation.extrude_polygon(shapely.Polygon(L_SHAPE), 0.01)
    s = mesh_solid(ref.vertices, ref.faces)
    assert isinstance(s, MeshSolid)
    assert len(s.face_names) == 8  # 6 sides + 2 caps, each a planar facet
    assert s.volume == pytest.approx(ref.volume, rel=1e-12)
    # label map: rename facet 0; declare a face from triangles
    top = [i for i, n in enumerate(ref.face_normals) if n[2] > 0.5]
    labelled = mesh_solid(ref.vertices, ref.faces, labels={"lid": top, "first": 0})
    assert "lid" in labelled.face_names and "first" in labelled.face_names
    assert labelled.face_area("lid") == pytest.approx(3e-4, rel=1e-12)
    side = [i for i, n in enumerate(ref.face_normals) if abs(n[2]) < 0.5]
    with pytest.raises(GeometryError, match="not planar"):
        mesh_solid(ref.vertices, ref.faces, labels={"bent": [top[0], side[0]]})


def test_mesh_rejections_and_repair():
    box = trimesh.creation.box()
    with pytest.raises(GeometryError, match="not watertight"):
        mesh_solid(box.vertices, box.faces[1:])
    flipped = mesh_solid(box.vertices, box.faces[:, ::-1])  # inside out: turned outward
    assert flipped.volume == pytest.approx(1.0, rel=1e-12)
    tri = box.faces.copy()
    tri[0] = tri[0, ::-1]
    with pytest.raises(GeometryError, match="inconsistent winding"):
        mesh_solid(box.vertices, tri)
    # per-triangle vertex copies (as in STL) are merged
    soup = box.vertices[box.faces].reshape(-1, 3)
    s = mesh_solid(soup, np.arange(len(soup)).reshape(-1, 3))
    assert s.volume == pytest.approx(1.0, rel=1e-12)
    # an icosphere: every triangle is its own (planar) face
    ico = trimesh.creation.icosphere(subdivisions=1)
    s = mesh_solid(ico.vertices, ico.faces)
    assert len(s.face_names) == len(ico.faces) and s.volume == pytest.approx(ico.volume, rel=1e-12)


def test_load_mesh_from_file(tmp_path):
    ref = trimesh.creation.extrude_polygon(shapely.Polygon(np.array(L_SHAPE) * 1e3), 10.0)  # in mm
    path = tmp_path / "ell.stl"
    ref.export(path)
    s = load_mesh(path, unit=1e-3)
    assert isinstance(s, MeshSolid) and s.volume == pytest.approx(3e-6, rel=1e-9)
    # same intersections as our own extrusion (shifted: trimesh extrudes from z = 0)
    ours = extrude_polygon(L_SHAPE, height=0.01).transformed(np.eye(3), [0, 0, 0.005])
    rng = np.random.default_rng(5)
    o = rng.uniform([-0.01, -0.01, 0.001], [0.03, 0.03, 0.009], size=(400, 3))
    o[:, 0] = -0.01
    d = np.tile([1.0, 0, 0], (400, 1)) + rng.normal(scale=0.2, size=(400, 3)) * [0, 1, 0.1]
    d /= np.linalg.norm(d, axis=1)[:, None]
    t1, f1 = s.intersect(o, d, False)
    t2, f2 = ours.intersect(o, d, False)
    np.testing.assert_allclose(t1, t2, rtol=1e-9)
    hit = np.isfinite(t1)
    np.testing.assert_allclose(s.face_normals[f1[hit]], ours.face_normals[f2[hit]], atol=1e-12)
    with pytest.raises(GeometryError, match="not found"):
        load_mesh(tmp_path / "missing.stl")
    bad = tmp_path / "open.stl"
    trimesh.Trimesh(ref.vertices, ref.faces[1:]).export(bad)
    with pytest.raises(GeometryError, match="open.stl: not watertight"):
        load_mesh(bad)


@pytest.mark.parametrize(
    "make",
    [
        lambda: trimesh.creation.extrude_polygon(shapely.Polygon(L_SHAPE), 0.01),
        lambda: trimesh.creation.box(extents=[1, 2, 3]),
        lambda: trimesh.creation.cylinder(radius=1.0, height=2.0, sections=12),
        lambda: trimesh.creation.icosphere(subdivisions=1),
    ],
)
def test_facets_match_trimesh(make):
    # reference library: trimesh's facets (coplanar edge-connected groups of >= 2 triangles);
    # every other triangle is a lone facet
    from tracer.geometry.mesh import group_facets

    m = make()
    labels = group_facets(m.vertices, m.faces)
    in_facet = np.zeros(len(m.faces), dtype=bool)
    for group in m.facets:
        assert len(set(labels[group])) == 1
        in_facet[group] = True
    assert len(np.unique(labels)) == len(m.facets) + (~in_facet).sum()
