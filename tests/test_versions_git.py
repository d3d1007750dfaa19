"""``tracer diff`` with files and REV:path in a git repository made in a temporary folder.

No physics is asserted beyond the verdicts the engine already computes; the ghost power
ratio check uses the demo plate (first ghost ~ R^2 of the direct beam, Fresnel normal
incidence, common practice, no source) only to see that a change of index moves it.
"""

import json
import subprocess
from pathlib import Path

import pytest

from tracer.cli import main
from tracer.versions import parse_spec, read_document
from tracer.versions.compare import diff

PLATE = Path(__file__).resolve().parent.parent / "scenes" / "plate_ghost.toml"

def _git(root, *args):
    subprocess.run(["git", *args], cwd=root, check=True, capture_output=True,
                   env={"GIT_AUTHOR_NAME": "t", "GIT_AUTHOR_EMAIL": "t@example.invalid",
                        "GIT_COMMITTER_NAME": "t", "GIT_COMMITTER_EMAIL": "t@example.invalid",
                        "HOME": str(root), "PATH": "/usr/bin:/bin:/usr/local/bin"})


@pytest.fixture()
def repo(tmp_path, monkeypatch):
    root = tmp_path / "repo"
    (root / "scenes").mkdir(parents=True)
    (root / "shared").mkdir()
    _git(root, "init", "-q")
    text = PLATE.read_text(encoding="utf-8").replace('material = "glass:517642"', 'material = "crown"')
    text = text.replace("format = 1", 'format = 1\ninclude = ["../shared/glass.toml"]')
    (root / "scenes" / "plate.toml").write_text(text, encoding="utf-8")
    (root / "shared" / "glass.toml").write_text('[materials.crown]\nmodel = "glass-code"\ncode = "517642"\n')
    _git(root, "add", "-A")
    _git(root, "commit", "-q", "-m", "first")
    monkeypatch.chdir(root)
    return root


def _edit(root, old, new, file="scenes/plate.toml"):
    p = root / file
    p.write_text(p.read_text(encoding="utf-8").replace(old, new), encoding="utf-8")


def test_spec_parsing():
    assert parse_spec(str(PLATE)).revision is None
    s = parse_spec("HEAD~2:a/b.toml")
    assert (s.revision, s.path) == ("HEAD~2", "a/b.toml")


def test_revision_reads_committed_text_not_the_working_tree(repo):
    _edit(repo, 'thickness = "5 mm"', 'thickness = "6 mm"')
    doc_head, name, _ = read_document("HEAD:scenes/plate.toml")
    doc_work, _, _ = read_document("scenes/plate.toml")
    assert name == "HEAD:scenes/plate.toml"
    assert doc_head["solids"]["plate"]["thickness"] == "5 mm"
    assert doc_work["solids"]["plate"]["thickness"] == "6 mm"
    assert doc_head["materials"]["crown"]["code"] == "517642"  # include read at the revision
    assert "include" not in doc_head
    # ./path is relative to the working folder
    (repo / "scenes").joinpath("x").mkdir()
    doc_rel, _, _ = read_document("HEAD:../plate.toml", cwd=repo / "scenes" / "x")
    assert doc_rel == doc_head


def test_include_followed_at_the_revision(repo):
    _edit(repo, '"517642"', '"620360"', file="shared/glass.toml")
    d = diff("HEAD:scenes/plate.toml", "scenes/plate.toml", trace=False)
    assert [(c.kind, c.key, c.old, c.new) for c in d.scene.changes] == [
        ("changed", "materials.crown.code", "517642", "620360")]


def test_unit_change_and_comment_are_no_difference(repo, capsys):
    _edit(repo, 'thickness = "5 mm"', 'thickness = "0.5 cm"   # same plate')
    _edit(repo, "# Uncoated", "# An edited comment. Uncoated")
    assert main(["diff", "HEAD:scenes/plate.toml", "scenes/plate.toml", "--rays", "10", "--quiet"]) == 0
    assert main(["diff", "HEAD:scenes/plate.toml", "scenes/plate.toml", "--scene-only"]) == 0
    assert "no difference" in capsys.readouterr().out


def test_result_diff_and_exit_code_when_a_verdict_got_worse(repo, tmp_path, capsys):
    _edit(repo, '"517642"', '"720290"', file="shared/glass.toml")  # higher index: stronger ghost
    out_json, out_html = tmp_path / "d.json", tmp_path / "d.html"
    rc = main(["diff", "HEAD:scenes/plate.toml", "scenes/plate.toml", "--rays", "10",
               "--json", str(out_json), "--html", str(out_html)])
    text = capsys.readouterr().out
    assert rc == 1
    assert "direct: pass -> fail  WORSE" in text
    data = json.loads(out_json.read_text())
    assert data["worse"] is True
    assert {"name": "direct", "old": "pass", "new": "fail"}.items() <= data["results"]["verdicts"][0].items()
    accounts = {a["key"]: a for a in data["results"]["accounts"]}
    assert accounts["ledger.detected_w"]["delta"] < 0
    ghost = [p for p in data["results"]["paths"] if p["signature"].count(":R") == 2][0]
    assert ghost["status"] == "common" and ghost["ratio"] > 1.5
    page = out_html.read_text()
    assert page.startswith("<!DOCTYPE html>") and "data:image/png;base64," in page
    assert "A requirement verdict got worse" in page


def test_verdict_ordering_and_better_is_exit_0(repo):
    from tracer.versions import diff_summaries, verdict_rank

    assert verdict_rank("pass") < verdict_rank("inconclusive") < verdict_rank("fail")

    def summ(**verdicts):
        reqs = []
        for name, v in verdicts.items():
            r = dict(name=name, passed=v == "pass", value=1.0, unit="1")
            if v != "fail-bool":
                r["verdict"] = v
            reqs.append(r)
        return dict(requirements=reqs, ledger={}, detectors={}, gaps={}, source_power_w=1.0)

    assert diff_summaries(summ(a="pass"), summ(a="inconclusive")).worse
    assert diff_summaries(summ(a="inconclusive"), summ(a="fail")).worse
    assert not diff_summaries(summ(a="fail"), summ(a="inconclusive")).worse
    assert diff_summaries(summ(a="pass"), summ(a="fail-bool")).worse  # only `passed` present
    assert diff_summaries(summ(), summ(b="fail")).worse  # a new requirement that fails
    assert not diff_summaries(summ(a="fail"), summ()).worse  # a removed one is not worse
    # a better verdict: exit 0
    _edit(repo, "limit = 0.005", "limit = 0.01")
    assert main(["diff", "HEAD:scenes/plate.toml", "scenes/plate.toml", "--rays", "5", "-q"]) == 0


def test_new_and_gone_paths_matched_by_signature():
    from tracer.versions import diff_summaries

    def det(*paths):
        return dict(requirements=[], ledger={"detected_w": sum(p[1] for p in paths)}, gaps={},
                    source_power_w=1.0, detectors={"d": dict(power_w=1.0, paths=[
                        dict(signature=s, power_w=w, label=s) for s, w in paths])})

    d = diff_summaries(det(("a", 0.5), ("b", 0.1)), det(("a", 0.5), ("c", 0.2)))
    st = {p.signature: (p.status, p.ratio) for p in d.paths}
    assert st == {"a": ("common", 1.0), "c": ("new", None), "b": ("gone", None)}
    assert [p.signature for p in d.path_changes()] == ["c", "b"]


def test_bad_revision_and_missing_path_are_input_errors(repo, capsys):
    assert main(["diff", "nosuchrev:scenes/plate.toml", "scenes/plate.toml", "--scene-only"]) == 2
    assert "no such git revision" in capsys.readouterr().err
    assert main(["diff", "HEAD:scenes/none.toml", "scenes/plate.toml", "--scene-only"]) == 2
    assert "HEAD:scenes/none.toml" in capsys.readouterr().err


def test_design_path_ratio_matches_normal_incidence_fresnel(repo):
    """The diff's power ratio of the direct path equals (1 - R_new)^2 / (1 - R_old)^2 with
    R = ((n - 1)/(n + 1))^2 at normal incidence (Fresnel; Hecht, Optics, 5th ed. 2017,
    Eq. 4.47, from memory), n relative to the ambient air."""
    _edit(repo, '"517642"', '"720290"', file="shared/glass.toml")
    d = diff("HEAD:scenes/plate.toml", "scenes/plate.toml", rays=5)

    def transmission(scene):
        wl = 550e-9
        n = (scene.solids["plate"].material.refractive_index(wl)
             / scene.ambient.refractive_index(wl)).real
        r = ((n - 1) / (n + 1)) ** 2
        return (1 - r) ** 2

    expected = transmission(d.new_scene) / transmission(d.old_scene)
    design = next(p for p in d.results.paths if p.signature.endswith("plate.back:T > screen")
                  and ":R" not in p.signature)
    assert design.ratio == pytest.approx(expected, rel=1e-12)
