"""Scene difference by meaning (tracer.versions.scene_diff); no physics, no outside source."""

from pathlib import Path

import pytest

from tracer.scene.toml_io import parse_text
from tracer.versions import diff_documents
from tracer.versions.scene_diff import same_value

PLATE = Path(__file__).resolve().parent.parent / "scenes" / "plate_ghost.toml"


def _doc(text):
    return parse_text(text, file="x.toml")


def test_reordered_tables_and_comments_are_no_difference():
    a = _doc('# one\ntitle = "t"\n[solids.a]\nsize = "2 mm"\n[solids.b]\nsize = "3 mm"\n')
    b = _doc('title = "t"  # same\n[solids.b]   # moved first\nsize = "3 mm"\n\n[solids.a]\n# note\nsize = "2 mm"\n'
             '[dummy]\n')
    d = diff_documents(a, b)
    assert [(c.kind, c.key) for c in d.changes] == [("added", "dummy")]
    b = _doc('solids = { b = { size = "3 mm" }, a = { size = "2 mm" } }\ntitle = "t"\n')
    assert diff_documents(a, b).identical


@pytest.mark.parametrize("old, new", [('"25 mm"', '"2.5 cm"'), ('"45 deg"', '"0.7853981633974483 rad"'),
                                      ("1", "1.0"), ('["0 mm", 5]', '["0 m", 5.0]'),
                                      ('"1 mW"', '"1000 uW"')])
def test_values_equal_in_si_are_no_difference(old, new):
    assert diff_documents(_doc(f"[a]\nx = {old}"), _doc(f"[a]\nx = {new}")).identical


def test_changed_values_shown_with_units_and_si():
    d = diff_documents(_doc('[solids.p]\nthickness = "5 mm"\nkind = "plate"\nold = 1'),
                       _doc('[solids.p]\nthickness = "0.6 cm"\nkind = "plate"\nnew = true'),
                       old_name="a.toml", new_name="b.toml")
    kinds = {c.key: c.kind for c in d.changes}
    assert kinds == {"solids.p.thickness": "changed", "solids.p.old": "removed", "solids.p.new": "added"}
    text = d.format_text()
    assert '~ solids.p.thickness: "5 mm" (= 0.005 m) -> "0.6 cm" (= 0.006 m)' in text
    assert "a.toml -> b.toml" in text
    js = d.to_dict()
    assert js["identical"] is False and {"kind": "added", "key": "solids.p.new", "new": True} in js["changes"]


def test_other_kind_or_text_is_a_change():
    assert not same_value("5 mm", "5 deg")
    assert not same_value("BK7", "bk7")
    assert not same_value(True, 1)
    assert not same_value([1, 2], [1, 2, 3])


def test_arrays_of_tables_by_index():
    a = _doc('[[c.layers]]\nm = "x"\nd = "1 um"\n[[c.layers]]\nm = "y"\nd = "2 um"\n')
    b = _doc('[[c.layers]]\nm = "x"\nd = "1000 nm"\n[[c.layers]]\nm = "z"\nd = "2 um"\n')
    assert [(c.kind, c.key) for c in diff_documents(a, b).changes] == [("changed", "c.layers[1].m")]


def test_demo_scene_against_itself_rewritten():
    import tomli_w

    doc = parse_text(PLATE.read_bytes(), file=str(PLATE))
    reordered = dict(reversed(list(doc.items())))
    assert diff_documents(doc, parse_text(tomli_w.dumps(reordered))).identical
