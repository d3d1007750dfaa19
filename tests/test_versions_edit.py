"""Style-preserving scene edits (tracer.versions.edit) and ``tracer sweep --write-scenes``."""

from pathlib import Path

import tracer
from tracer.cli import main
from tracer.versions.edit import edit_text

PLATE = Path(__file__).resolve().parent.parent / "scenes" / "plate_ghost.toml"


def test_edit_keeps_comments_layout_and_order():
    text = PLATE.read_text(encoding="utf-8")
    out = edit_text(text, {"solids.plate.thickness": "6 mm", "sources.beam.position[0]": -25})
    old, new = text.splitlines(), out.splitlines()
    assert len(old) == len(new)
    changed = [(a, b) for a, b in zip(old, new) if a != b]
    assert changed == [('thickness = "5 mm"', 'thickness = "6 mm"'),
                       ("position = [-20, 0, 0]", "position = [-25, 0, 0]")]


def test_end_of_line_comment_kept():
    out = edit_text('[solids.p]\nsize = "20 mm"   # catalogue part\n', {"solids.p.size": "21 mm"})
    assert out == '[solids.p]\nsize = "21 mm"   # catalogue part\n'


def test_sweep_writes_point_scenes_with_comments(tmp_path):
    scene = tmp_path / "plate.toml"
    scene.write_text(PLATE.read_text(encoding="utf-8"), encoding="utf-8")
    folder = tmp_path / "points"
    assert main(["sweep", str(scene), "--values", "solids.plate.thickness", "4 mm, 6 mm",
                 "--rays", "3", "--write-scenes", str(folder), "-q"]) == 0
    files = sorted(folder.glob("*.toml"))
    assert [f.name for f in files] == ["plate-point-0001.toml", "plate-point-0002.toml"]
    text = files[1].read_text()
    assert text.startswith("# Uncoated plane-parallel plate")
    assert text == PLATE.read_text().replace('thickness = "5 mm"', 'thickness = "6 mm"')
    b = tracer.load(files[1]).solids["plate"].geometry.bounds
    assert abs((b[1][0] - b[0][0]) - 6e-3) < 1e-12  # the plate's thickness is along the beam (x)
