"""Shared tables included from other TOML files (tracer.versions.includes); no physics."""

from pathlib import Path

import pytest

import tracer
from tracer.scene import SceneError
from tracer.versions.scene_diff import flatten

PLATE = Path(__file__).resolve().parent.parent / "scenes" / "plate_ghost.toml"


def _repo(tmp_path):
    root = tmp_path / "repo"
    (root / ".git").mkdir(parents=True)
    (root / "scenes").mkdir()
    (root / "shared").mkdir()
    return root


def _scene_with_include(root, include, *, material="glass:517642"):
    text = PLATE.read_text(encoding="utf-8").replace(f'material = "glass:517642"', 'material = "crown"')
    text = text.replace("format = 1", f"format = 1\ninclude = {include}")
    (root / "scenes" / "plate.toml").write_text(text, encoding="utf-8")
    return root / "scenes" / "plate.toml"


def test_relative_include_loads_like_the_inline_table(tmp_path):
    root = _repo(tmp_path)
    (root / "shared" / "glass.toml").write_text('# shared glass\n[materials.crown]\nmodel = "glass-code"\ncode = "517642"\n')
    f = _scene_with_include(root, '["../shared/glass.toml"]')
    scene = tracer.load(f)
    assert "crown" in scene.raw["materials"] and "include" not in scene.raw
    inline = PLATE.read_text().replace('material = "glass:517642"', 'material = "crown"')
    inline += '\n[materials.crown]\nmodel = "glass-code"\ncode = "517642"\n'
    same = tracer.scene.loads(inline, path=str(f))
    assert flatten(same.raw) == flatten(scene.raw)
    n = scene.solids["plate"].material.refractive_index(550e-9)
    assert n == same.solids["plate"].material.refractive_index(550e-9)


def test_nested_include_relative_to_the_including_file(tmp_path):
    root = _repo(tmp_path)
    (root / "shared" / "more").mkdir()
    (root / "shared" / "all.toml").write_text('include = "more/glass.toml"\n')
    (root / "shared" / "more" / "glass.toml").write_text('[materials.crown]\nmodel = "glass-code"\ncode = "517642"\n')
    scene = tracer.load(_scene_with_include(root, '"../shared/all.toml"'))
    assert "crown" in scene.raw["materials"]


def test_include_outside_the_tree_is_refused(tmp_path):
    root = _repo(tmp_path)
    (tmp_path / "outside.toml").write_text('[materials.crown]\nmodel = "glass-code"\ncode = "517642"\n')
    f = _scene_with_include(root, '["../../outside.toml"]')
    with pytest.raises(SceneError) as exc:
        tracer.load(f)
    msg = str(exc.value)
    assert str(f) in msg and "include[0]" in msg and "outside the repository tree" in msg


def test_cycle_reported_with_file_and_key(tmp_path):
    root = _repo(tmp_path)
    (root / "shared" / "a.toml").write_text('include = ["b.toml"]\n[materials.crown]\nmodel = "glass-code"\ncode = "517642"\n')
    (root / "shared" / "b.toml").write_text('include = ["a.toml"]\n')
    f = _scene_with_include(root, '["../shared/a.toml"]')
    with pytest.raises(SceneError) as exc:
        tracer.load(f)
    (p,) = exc.value.problems
    assert p.key == "include[0]" and p.file.endswith("b.toml")
    assert "include cycle: shared/a.toml -> shared/b.toml -> shared/a.toml" in p.message


def test_duplicate_name_reported_with_both_files(tmp_path):
    root = _repo(tmp_path)
    (root / "shared" / "a.toml").write_text('[materials.crown]\nmodel = "glass-code"\ncode = "517642"\n')
    (root / "shared" / "b.toml").write_text('[materials.crown]\nmodel = "glass-code"\ncode = "620360"\n')
    f = _scene_with_include(root, '["../shared/a.toml", "../shared/b.toml"]')
    with pytest.raises(SceneError) as exc:
        tracer.load(f)
    (p,) = exc.value.problems
    assert p.file.endswith("b.toml") and p.key == "materials.crown"
    assert "a.toml" in p.message and "also defined" in p.message
    # the scene itself defining the same name
    text = f.read_text() + '\n[materials.crown]\nmodel = "glass-code"\ncode = "517642"\n'
    f.write_text(text.replace(', "../shared/b.toml"', ""))
    with pytest.raises(SceneError) as exc:
        tracer.load(f)
    assert str(f) in str(exc.value) and "materials.crown" in str(exc.value)


def test_included_file_may_hold_only_shared_tables(tmp_path):
    root = _repo(tmp_path)
    (root / "shared" / "bad.toml").write_text('[sources.x]\nkind = "collimated"\n')
    with pytest.raises(SceneError) as exc:
        tracer.load(_scene_with_include(root, '"../shared/bad.toml"'))
    assert "bad.toml: sources: an included file holds only" in str(exc.value)


def test_missing_and_malformed_include(tmp_path):
    root = _repo(tmp_path)
    with pytest.raises(SceneError) as exc:
        tracer.load(_scene_with_include(root, '["../shared/none.toml"]'))
    assert "include[0]" in str(exc.value) and "cannot read" in str(exc.value)
    with pytest.raises(SceneError) as exc:
        tracer.load(_scene_with_include(root, "3"))
    assert "include: expected a file name or a list" in str(exc.value)
    (root / "shared" / "syntax.toml").write_text("[materials\n")
    with pytest.raises(SceneError) as exc:
        tracer.load(_scene_with_include(root, '"../shared/syntax.toml"'))
    assert "syntax.toml:1" in str(exc.value) and "TOML syntax error" in str(exc.value)


def test_check_command_reports_include_problem_exit_2(tmp_path, capsys):
    from tracer.cli import main

    root = _repo(tmp_path)
    f = _scene_with_include(root, '["../../x.toml"]')
    assert main(["check", str(f)]) == 2
    assert "outside the repository tree" in capsys.readouterr().err


def test_problem_inside_an_included_entry_names_the_included_file(tmp_path):
    root = _repo(tmp_path)
    (root / "shared" / "glass.toml").write_text('[materials.crown]\nmodel = "glass-code"\ncode = "51764"\n')
    f = _scene_with_include(root, '["../shared/glass.toml"]')
    with pytest.raises(SceneError) as exc:
        tracer.load(f)
    (p,) = [p for p in exc.value.problems if p.key.startswith("materials.crown")]
    assert p.file.endswith("glass.toml") and p.key == "materials.crown.code"
    (root / "shared" / "glass.toml").write_text('[materials.crown]\nmodel = "glass-code"\ncode = "517642"\n')
    assert type(tracer.load(f).raw) is dict  # Scene.raw stays a plain document
