"""Writing scenes back: a loaded scene dumped to TOML loads again to the same scene."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from tracer.scene import SceneError, dump, load, loads, summarize, write

SCENES = sorted((Path(__file__).parent.parent / "scenes").glob("*.toml"))


def _same_geometry(a, b):
    assert a.solids.keys() == b.solids.keys()
    for name in a.solids:
        ga, gb = a.solids[name].geometry, b.solids[name].geometry
        assert ga.face_names == gb.face_names
        np.testing.assert_allclose(ga.face_normals, gb.face_normals, atol=1e-15)
        np.testing.assert_allclose(ga.face_offsets, gb.face_offsets, atol=1e-15)
        for pa, pb in zip(ga.face_polygons, gb.face_polygons):
            np.testing.assert_allclose(pa, pb, atol=1e-15)


def _without_file(summary):
    out = dict(summary)
    out.pop("file")
    return out


@pytest.mark.parametrize("path", SCENES, ids=[p.stem for p in SCENES])
def test_dump_loads_same_scene(path):
    first = load(path)
    text = dump(first)
    assert text.startswith("# tracer scene (format 1)")
    again = loads(text, path=str(path))
    assert summarize(again) == summarize(first)
    _same_geometry(first, again)
    # and a second round changes nothing
    assert dump(again) == text


@pytest.mark.parametrize("path", SCENES[:3], ids=[p.stem for p in SCENES[:3]])
def test_write_to_another_directory(path, tmp_path):
    first = load(path)
    target = tmp_path / "copy.toml"
    write(first, target)
    again = load(target)
    assert _without_file(summarize(again)) == _without_file(summarize(first))


def test_write_rebases_mesh_paths(tmp_path):
    import trimesh
    src = tmp_path / "src"
    (src / "parts").mkdir(parents=True)
    trimesh.creation.box(extents=[10, 10, 10]).export(src / "parts" / "box.stl")
    (src / "scene.toml").write_text("""
format = 1
[spectrum]
wavelengths = ["550 nm"]
[solids.block]
material = "fused-silica"
kind = "mesh"
path = "parts/box.stl"
[sources.s]
kind = "collimated"
position = [-30, 0, 0]
direction = [1, 0, 0]
diameter = 2
power = "1 mW"
[detectors.d]
position = [30, 0, 0]
normal = [-1, 0, 0]
width = 10
height = 10
""")
    first = load(src / "scene.toml")
    (tmp_path / "elsewhere").mkdir()
    write(first, tmp_path / "elsewhere" / "moved.toml")
    # the rebased path leaves the new file's folder: read only when allowed
    with pytest.raises(SceneError):
        load(tmp_path / "elsewhere" / "moved.toml")
    again = load(tmp_path / "elsewhere" / "moved.toml", allow_outside_files=True)
    assert again.raw["solids"]["block"]["path"] == "../src/parts/box.stl"
    _same_geometry(first, again)


def test_dump_needs_a_document():
    import dataclasses
    from tracer.errors import TracerError
    scene = dataclasses.replace(load(SCENES[0]), raw=None)
    with pytest.raises(TracerError):
        dump(scene)
