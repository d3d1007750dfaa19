"""tracer.plot.export3d: GLB files that load back with trimesh."""

import numpy as np
import trimesh

import tracer
from tracer import plot as P
from tracer.plot import colors as C

from engine_factory import plate_scene


def test_glb_round_trip(tmp_path):
    sc = plate_scene(rays=5)
    res = tracer.trace(sc, segments=500)
    path = P.export_glb(sc, res, tmp_path / "plate.glb")
    back = trimesh.load(path)
    assert isinstance(back, trimesh.Scene)
    assert "plate" in back.geometry
    mesh = back.geometry["plate"]
    assert isinstance(mesh, trimesh.Trimesh)
    # same solid: bounds in metres, closed
    assert np.allclose(mesh.bounds, sc.solids["plate"].geometry.bounds, atol=1e-12)
    assert mesh.is_watertight
    # detectors as quads, rays as a line set coloured by wavelength
    assert {"detector camera", "detector back"} <= set(back.geometry)
    rays = [g for n, g in back.geometry.items() if n.startswith("rays")]
    assert len(rays) == 1 and isinstance(rays[0], trimesh.path.Path3D)
    assert len(rays[0].vertices) >= 2


def test_glb_material_colour_and_tubes(tmp_path):
    sc = plate_scene(rays=3)
    res = tracer.trace(sc, segments=200)
    tm = P.scene_to_trimesh(sc, res)
    mat = tm.geometry["plate"].visual.material
    want = np.round(255 * np.array(C.darker(C.material_color(sc.solids["plate"].material_name), 1.0)))
    assert np.allclose(np.asarray(mat.baseColorFactor)[:3], want)
    path = P.export_glb(sc, res, tmp_path / "tubes.glb", tubes=20e-6)
    back = trimesh.load(path)
    assert isinstance(back.geometry["rays"], trimesh.Trimesh)


def test_glb_without_rays(tmp_path):
    sc = plate_scene(rays=1)
    back = trimesh.load(P.export_glb(sc, None, tmp_path / "geom.glb"))
    assert not any(n.startswith("rays") for n in back.geometry)
