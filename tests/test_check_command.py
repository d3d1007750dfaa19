"""``tracer check``: exit codes, the readable summary and the JSON structure."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from tracer.cli import main

SCENES = sorted((Path(__file__).parent.parent / "scenes").glob("*.toml"))


@pytest.mark.parametrize("path", SCENES, ids=[p.stem for p in SCENES])
def test_check_demo_scene_exits_0(path, capsys):
    assert main(["check", str(path)]) == 0
    out = capsys.readouterr().out
    for section in ("solids (", "gaps (", "sources (", "detectors (", "requirements ("):
        assert section in out
    assert "1 scene valid." in out


def test_check_gap_in_micrometres(capsys):
    assert main(["check", str(Path(SCENES[0]).parent / "tir_prism_pair.toml")]) == 0
    out = capsys.readouterr().out
    assert "tir: lower.hypotenuse | upper.hypotenuse: 5 µm of air, declared" in out
    assert "leg_a: stack (ar_550)" in out


def test_check_broken_scene_exits_2(tmp_path, capsys):
    bad = tmp_path / "bad.toml"
    bad.write_text((SCENES[0].parent / "tir_prism_pair.toml").read_text()
                   .replace('coating = "ar_550"', 'coating = "ar-550"', 1)
                   .replace('power = "100 mW"', 'power = "100 mm"'))
    assert main(["check", str(bad), str(SCENES[0])]) == 2
    captured = capsys.readouterr()
    err = captured.err
    assert "2 problems:" in err
    assert f'{bad}: solids.lower.faces.leg_a.coating: unknown coating "ar-550"; did you mean "ar_550"?' in err
    assert f"{bad}: sources.illumination.power: expected a power" in err
    assert "Traceback" not in err + captured.out


def test_check_syntax_error(tmp_path, capsys):
    bad = tmp_path / "syntax.toml"
    bad.write_text("format = 1\ntitle = \n")
    assert main(["check", str(bad)]) == 2
    err = capsys.readouterr().err
    assert f"{bad}:2:" in err and "TOML syntax error" in err


def test_check_missing_file(tmp_path, capsys):
    assert main(["check", str(tmp_path / "nope.toml")]) == 2
    assert "no such scene file" in capsys.readouterr().err


def test_check_json_structure(capsys):
    paths = [str(p) for p in SCENES]
    assert main(["check", "--json", *paths]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["valid"] is True and data["problems"] == []
    assert len(data["scenes"]) == len(paths)
    for scene in data["scenes"]:
        assert set(scene) >= {"file", "format", "title", "dimension", "ambient", "spectrum", "trace",
                              "solids", "gaps", "sources", "detectors", "requirements", "notes"}
        for solid in scene["solids"].values():
            assert {"kind", "material", "faces", "volume_m3", "bounds_m"} <= set(solid)
            for face in solid["faces"].values():
                assert face["treatment"] in ("uncoated", "stack", "ideal", "mirror", "absorber")
        for gap in scene["gaps"].values():
            assert gap["origin"] in ("declared", "mated", "automatic")
            assert gap["thickness_m"] >= 0 and len(gap["faces"]) == 2
    tir = next(s for s in data["scenes"] if s["file"].endswith("tir_prism_pair.toml"))
    assert tir["gaps"]["tir"]["thickness_m"] == pytest.approx(5e-6, abs=1e-12)
    assert tir["sources"]["illumination"]["power_W"] == pytest.approx(0.1)


def test_check_json_problems(tmp_path, capsys):
    bad = tmp_path / "bad.toml"
    bad.write_text('format = 1\ntitel = "x"\n[spectrum]\nwavelengths = ["550 nm"]\n')
    assert main(["check", "--json", str(bad)]) == 2
    data = json.loads(capsys.readouterr().out)
    assert data["valid"] is False
    (p,) = data["problems"]
    assert p["key"] == "titel" and p["file"] == str(bad) and 'did you mean "title"' in p["message"]


def test_reference_page_mentions_every_key_and_kind():
    """docs/scene-format.md documents every section, kind and model the loader accepts."""
    from tracer.geometry.catalog import KINDS
    from tracer.scene.loader import TOP_LEVEL_KEYS
    from tracer.scene.media import MATERIAL_MODELS
    from tracer.scene.requirements import REQUIREMENT_KINDS
    from tracer.scene.sources import POLARIZATION_KINDS, SOURCE_KINDS
    from tracer.scene.treatments import COATING_KINDS
    from tracer.scene.detectors import DETECTOR_KINDS
    text = (Path(__file__).parent.parent / "docs" / "scene-format.md").read_text()
    words = [*TOP_LEVEL_KEYS, *MATERIAL_MODELS, *COATING_KINDS, *SOURCE_KINDS, *POLARIZATION_KINDS,
             *DETECTOR_KINDS, *REQUIREMENT_KINDS, *KINDS, "polygon", "polyhedron", "mesh", "mate",
             "gap_name", "offset", "spin", "wedge", "on_face", "detects", "two_sided", "x_axis",
             "half_angle", "sampling", "bandwidth", "weights", "power_threshold", "max_events",
             "sequence", "max_separation", "max_angle", "coherence", "side_names", "face_names",
             "labels", "valid_range", "loss_tangent", "design_wavelength", "design_angle", "pairs",
             "waves", "degree", "ellipticity", "azimuth", "handedness", "stokes"]
    missing = [w for w in words if f"`{w}`" not in text and f'"{w}"' not in text and f"[{w}" not in text]
    assert not missing, missing


def test_check_lists_each_face_normal_and_centroid(capsys):
    # Right-angle prism with legs of 20 mm along x and y from the origin (the TIR pair's lower
    # prism): the hypotenuse's outward normal is (1, 1, 0)/sqrt(2) and its centroid the
    # midpoint (10, 10, 0) mm; leg_a lies on y = 0 (normal -y, centroid (10, 0, 0) mm)
    # (elementary geometry, common practice, no source).
    path = Path(SCENES[0]).parent / "tir_prism_pair.toml"
    assert main(["check", str(path)]) == 0
    out = capsys.readouterr().out
    assert "    hypotenuse: uncoated; normal [0.7071, 0.7071, 0], centroid [10, 10, 0] mm" in out
    assert "    leg_a: stack (ar_550); normal [0, -1, 0], centroid [10, 0, 0] mm" in out
    assert main(["check", "--json", str(path)]) == 0
    face = json.loads(capsys.readouterr().out)["scenes"][0]["solids"]["lower"]["faces"]["hypotenuse"]
    assert face["normal"] == pytest.approx([2 ** -0.5, 2 ** -0.5, 0.0])
    assert face["centroid_m"] == pytest.approx([0.01, 0.01, 0.0], abs=1e-12)


def _vacuum_scene(tmp_path, basis_line):
    text = (Path(SCENES[0]).parent / "plate_ghost.toml").read_text(encoding="utf-8")
    import tomllib

    doc = tomllib.loads(text)
    solid = next(iter(doc["solids"]))
    body = text.replace('ambient = "air"', 'ambient = "vacuum"') if 'ambient = "air"' in text else \
        'ambient = "vacuum"\n' + text
    body = body.replace(f"[solids.{solid}]", f"[materials.inline_glass]\nmodel = \"constant\"\nn = 1.5\n"
                        f"{basis_line}\n[solids.{solid}]", 1)
    lines = body.splitlines()
    start = lines.index(f"[solids.{solid}]")
    for i in range(start + 1, len(lines)):
        if lines[i].startswith("["):
            break
        if lines[i].startswith("material"):
            lines[i] = 'material = "inline_glass"'
    p = tmp_path / "vac.toml"
    p.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return p, solid


def test_check_warns_when_an_air_referenced_inline_material_meets_a_vacuum_ambient(tmp_path, capsys):
    # n = 1.5 relative to air is 1.5 x n_air (standard air, Ciddor 1996: n - 1 = 2.78e-4 at
    # 550 nm, from memory) in vacuum; check says so, names the key and the fix.
    p, solid = _vacuum_scene(tmp_path, "")
    assert main(["check", str(p)]) == 0
    out = capsys.readouterr().out
    assert "warnings (1):" in out
    line = next(x for x in out.splitlines() if "warning:" in x)
    assert "materials.inline_glass" in line and f"solids.{solid}" in line and 'index_basis = "vacuum"' in line
    absolute = float(line.split(" relative to air is ")[1].split()[0])
    assert absolute == pytest.approx(1.5 * 1.000278, abs=2e-6)
    assert main(["check", "--quiet", str(p)]) == 0
    assert "materials.inline_glass" in capsys.readouterr().err
    # stated explicitly: taken as meant, no warning (either basis)
    for basis in ('index_basis = "vacuum"', 'index_basis = "air"'):
        p, _ = _vacuum_scene(tmp_path, basis)
        assert main(["check", str(p)]) == 0
        assert "warning" not in capsys.readouterr().out
    # the same inline material in air: nothing to warn about
    text = p.read_text().replace('ambient = "vacuum"', 'ambient = "air"').replace('index_basis = "air"\n', "")
    p.write_text(text)
    assert main(["check", str(p)]) == 0
    assert "warning" not in capsys.readouterr().out
