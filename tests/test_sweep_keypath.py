"""Key paths into the raw scene document and unit-aware perturbations (tracer.sweep.keypath)."""

import pytest

from tracer.errors import TracerError
from tracer.sweep.keypath import (KeyPathError, add_quantity, format_path, get_value, parse,
                                  quantity_kind, set_value, split_quantity, with_values)

DOC = {
    "solids": {"p": {"rotation": [0, 0, "10 deg"], "mate": {"to": "q.a"}},
               "q": {"position": [1, 2, 3]}},
    "coatings": {"ar": {"layers": [{"material": "mgf2", "thickness": "100 nm"}]}},
    "gaps": {"a.b/c.d": {"thickness": "5 um"}},
}


@pytest.mark.parametrize("path, parts", [
    ("solids.p.rotation[2]", ("solids", "p", "rotation", 2)),
    ("coatings.ar.layers[0].thickness", ("coatings", "ar", "layers", 0, "thickness")),
    ('gaps."a.b/c.d".thickness', ("gaps", "a.b/c.d", "thickness")),
    ("a[1][0]", ("a", 1, 0)),
])
def test_parse_and_format_round_trip(path, parts):
    assert parse(path) == parts
    assert parse(format_path(parts)) == parts


@pytest.mark.parametrize("bad", ["", "a..b", "a.", "a[x]", ".a", "a b"])
def test_malformed_paths_are_user_errors(bad):
    with pytest.raises(KeyPathError) as exc:
        parse(bad)
    assert isinstance(exc.value, TracerError)


def test_get_and_set_values():
    doc = with_values(DOC, {"solids.p.rotation[2]": "12 deg",
                            "coatings.ar.layers[0].thickness": "110 nm",
                            'gaps."a.b/c.d".thickness': "6 um"})
    assert get_value(doc, "solids.p.rotation[2]") == "12 deg"
    assert get_value(doc, "coatings.ar.layers[0].thickness") == "110 nm"
    assert get_value(doc, 'gaps."a.b/c.d".thickness') == "6 um"
    assert DOC["solids"]["p"]["rotation"][2] == "10 deg"  # the original is untouched


def test_set_creates_a_missing_last_key_and_a_default_array():
    doc = with_values(DOC, {"solids.p.mate.gap": "1 um", "solids.q.rotation[2]": "1 deg"})
    assert doc["solids"]["p"]["mate"]["gap"] == "1 um"
    assert doc["solids"]["q"]["rotation"] == [0, 0, "1 deg"]
    with pytest.raises(KeyPathError):
        set_value(with_values(DOC, {}), "solids.p.mate.gap", 1, create=False)


@pytest.mark.parametrize("path, words", [
    ("solids.r.position", ['no key "r"', "there: p, q"]),
    ("solids.pp.rotation", ['did you mean "p"']),
    ("solids.q.position[3]", ["has 3 items", "[3]"]),
    ("solids.q.position.x", ["is a value, not a table"]),
    ("solids.p[0]", ["is not an array"]),
])
def test_errors_name_the_path_and_what_exists(path, words):
    with pytest.raises(KeyPathError) as exc:
        get_value(DOC, path)
    msg = str(exc.value)
    assert path in msg
    for w in words:
        assert w in msg


def test_setting_a_table_is_refused():
    with pytest.raises(KeyPathError, match="names a table"):
        set_value(with_values(DOC, {}), "solids.p.mate", 3)


def test_split_and_kind():
    assert split_quantity("0.2 um") == (0.2, "um")
    assert split_quantity("-1.5e-3mm") == (-1.5e-3, "mm")
    assert split_quantity(4) == (4.0, "")
    assert quantity_kind("nm") == "length"
    assert quantity_kind("mrad") == "angle"
    with pytest.raises(TracerError):
        split_quantity("abc")
    with pytest.raises(TracerError):
        split_quantity(True)


@pytest.mark.parametrize("nominal, delta, unit, expected", [
    ("10 mm", "5 um", "mm", "10.005 mm"),
    ("45 deg", "-0.5 deg", "mm", "44.5 deg"),
    ("45 deg", "1 mrad", "mm", f"{45 + 0.001 * 180 / 3.141592653589793:.15g} deg"),
    (2.5, "100 um", "mm", 2.6),           # bare length in the scene unit
    (2.5, "100 um", "um", 102.5),
    (0, "0.25 deg", "mm", 0.25),          # bare angle: degrees
    ("1.5 um", 0.1, "mm", "1.6 um"),      # bare delta: the nominal's unit
    (1.5, 0.002, "mm", 1.502),            # an index
])
def test_add_quantity(nominal, delta, unit, expected):
    assert add_quantity(nominal, delta, length_unit=unit) == expected


def test_add_quantity_refuses_mixed_kinds():
    with pytest.raises(TracerError, match="cannot add"):
        add_quantity("10 mm", "1 deg")
    with pytest.raises(TracerError, match="carries its unit"):
        add_quantity(5, "1 mW")
