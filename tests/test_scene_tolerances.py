"""[tolerances.NAME] tables in a scene: strict checks with key paths, ignored by the trace,
kept in the round trip, and the same tables the tolerance runner reads."""

from __future__ import annotations

from pathlib import Path

import pytest

import tracer
from tracer.cli import main
from tracer.scene import dump, from_dict, loads
from tracer.sweep.tolerance import read_tolerances

from scene_helpers import base, problems

ROOT = Path(__file__).resolve().parents[1]
COUPLER = ROOT / "scenes" / "microwave_prism_coupler.toml"


def with_tolerances(tables: dict) -> dict:
    doc = base()
    doc["materials"] = {"glass": {"model": "constant", "n": 1.517},
                        "sell": {"model": "sellmeier", "B": [1.0], "C": [0.01],
                                 "valid_range": ["400 nm", "1000 nm"]}}
    doc["solids"]["lower"]["material"] = "glass"
    doc["tolerances"] = tables
    return doc


GOOD = {
    "gap": {"key": "solids.upper.mate.gap", "dist": "normal", "sigma": "0.05 um"},
    # rotation of "lower" and the mate wedge are left at their defaults in the file
    "tilt": {"key": ["solids.lower.rotation[2]", "solids.upper.mate.wedge"], "dist": "uniform",
             "half_width": "0.5 deg", "note": "both by one draw"},
    "aim": {"key": "sources.beam.direction[0]", "sigma": 0.002},
    "shift": {"key": "sources.beam.position[0]", "sigma": 0.01},  # bare: the length_unit
    "index": {"index": "glass", "sigma": 0.0005},
    "zero": {"key": "detectors.screen.width", "sigma": "0 mm"},
}


def test_valid_tolerances_load_and_match_the_runner():
    doc = with_tolerances(GOOD)
    assert problems(doc) == []
    scene = from_dict(doc, path="x.toml")
    assert scene.raw["tolerances"] == GOOD
    # every table the loader accepts, the tolerance runner reads the same way
    tols, rest = read_tolerances(scene.raw)
    assert [t.name for t in tols] == list(GOOD)
    assert "tolerances" not in rest
    assert tols[1].paths == ("solids.lower.rotation[2]", "solids.upper.mate.wedge")
    assert tols[4].paths == ("materials.glass.n",)


def test_tolerances_are_kept_in_the_round_trip():
    scene = from_dict(with_tolerances(GOOD), path="x.toml")
    text = dump(scene)
    again = loads(text, path="x.toml")
    assert again.raw["tolerances"] == GOOD
    assert text.index("[tolerances.gap]") > text.index("[requirements.leak]")  # written last


def test_tolerances_do_not_change_the_trace():
    doc = with_tolerances(GOOD)
    plain = with_tolerances({})
    del plain["tolerances"]
    a = tracer.trace(from_dict(doc, path="x.toml")).summary()
    b = tracer.trace(from_dict(plain, path="x.toml")).summary()
    assert a["detectors"] == b["detectors"]


def _one(table):
    return with_tolerances({"t": table})


@pytest.mark.parametrize("table, key, words", [
    ({"key": "solids.upper.mate.gpa", "sigma": "1 um"}, "tolerances.t.key",
     ['no key "gpa"', 'did you mean "gap"']),
    ({"key": "solids.uper.mate.gap", "sigma": "1 um"}, "tolerances.t.key", ['did you mean "upper"']),
    ({"key": "solids..gap", "sigma": "1 um"}, "tolerances.t.key", ["expected a key"]),
    ({"key": ["solids.upper.mate.gap", 3], "sigma": "1 um"}, "tolerances.t.key", ["key path"]),
    ({"key": [], "sigma": "1 um"}, "tolerances.t.key", ["non-empty array"]),
    ({"key": "sources.beam.direction", "sigma": 0.1}, "tolerances.t.key",
     ["an array of 2 items", "rotation[2]"]),
    ({"key": "sources.beam.direction[5]", "sigma": 0.1}, "tolerances.t.key", ["no item [5]"]),
    ({"key": "sources.beam.rays", "sigma": 1}, "tolerances.t.key", ["an integer"]),
    ({"key": "sources.beam.kind", "sigma": 1}, "tolerances.t.key", ["a name or text"]),
    ({"key": "solids.upper.mate", "sigma": 1}, "tolerances.t.key", ["a table"]),
    ({"key": "tolerances.t.sigma", "sigma": 1}, "tolerances.t.key", ["not of [tolerances]"]),
    ({"key": "solids.upper.mate.gap", "dist": "gauss", "sigma": 1}, "tolerances.t.dist",
     ['unknown value "gauss"', "normal, uniform"]),
    ({"key": "solids.upper.mate.gap"}, "tolerances.t", ['missing key "sigma"']),
    ({"key": "solids.upper.mate.gap", "dist": "uniform", "sigma": "1 um"}, "tolerances.t.sigma",
     ['takes "half_width", not "sigma"']),
    ({"key": "solids.upper.mate.gap", "sgma": "1 um", "sigma": "1 um"}, "tolerances.t.sgma",
     ['unknown key "sgma"', 'did you mean "sigma"']),
    ({"sigma": "1 um"}, "tolerances.t", ['either "key"', '"index"']),
    ({"key": "solids.upper.mate.gap", "index": "glass", "sigma": 1e-4}, "tolerances.t",
     ['either "key"']),
    ({"key": "solids.upper.mate.gap", "sigma": "-1 um"}, "tolerances.t.sigma", ["non-negative"]),
    ({"key": "solids.upper.mate.gap", "sigma": "1 parsec"}, "tolerances.t.sigma", ['unknown unit "parsec"']),
    ({"key": "solids.upper.mate.gap", "sigma": True}, "tolerances.t.sigma", ["true (a boolean)"]),
    ({"key": "solids.upper.mate.gap", "sigma": "0.1 deg"}, "tolerances.t.sigma",
     ["expected a length", "an angle"]),
    ({"key": "solids.lower.rotation[2]", "sigma": "1 um"}, "tolerances.t.sigma",
     ["expected an angle", "a length"]),
    ({"key": "sources.beam.power", "sigma": "1 mm"}, "tolerances.t.sigma", ["expected a power"]),
    ({"key": "sources.beam.direction[0]", "sigma": "1 deg"}, "tolerances.t.sigma",
     ["plain number", "bare number"]),
    ({"index": "glass", "sigma": "1 um"}, "tolerances.t.sigma", ["plain number"]),
    ({"index": "bk7", "sigma": 1e-4}, "tolerances.t.index", ["not a material of the scene",
                                                             "catalog materials"]),
    ({"index": "sell", "sigma": 1e-4}, "tolerances.t.index", ["sellmeier", "constant"]),
])
def test_malformed_tolerances_name_the_key_path(table, key, words):
    found = problems(_one(table))
    assert found, "expected a problem"
    at_key = [p for p in found if p.key == key]
    assert at_key, [str(p) for p in found]
    text = " ".join(p.message for p in at_key)
    for w in words:
        assert w in text, (w, text)


def test_tolerances_must_be_named_tables():
    doc = base()
    doc["tolerances"] = {"gap": 3}
    (p,) = problems(doc)
    assert p.key == "tolerances.gap" and "expected a table" in p.message
    doc["tolerances"] = 3
    (p,) = problems(doc)
    assert p.key == "tolerances" and "[tolerances.example]" in p.message


def test_default_keys_must_be_optional_keys_of_existing_tables():
    # a defaulted key is accepted only where the format has it (the runner starts it from 0)
    assert problems(_one({"key": "solids.upper.mate.spin", "sigma": "1 deg"})) == []
    (p,) = problems(_one({"key": "solids.upper.mate.spinn", "sigma": "1 deg"}))
    assert p.key == "tolerances.t.key" and 'no key "spinn"' in p.message
    (p,) = problems(_one({"key": "solids.ghost.rotation[2]", "sigma": "1 deg"}))
    assert 'no key "ghost"' in p.message
    # zero defaults: a position, a mate offset
    assert problems(_one({"key": "solids.lower.position[0]", "sigma": "1 um"})) == []
    assert problems(_one({"key": "solids.upper.mate.offset[0]", "sigma": "1 um"})) == []
    # left out with a default that is not zero (or computed): the runner would start from 0
    for key, sigma in (("detectors.screen.height", "1 mm"), ("sources.beam.x_axis[0]", 0.01)):
        (p,) = problems(_one({"key": key, "sigma": sigma}))
        assert p.key == "tolerances.t.key" and "default is not zero" in p.message
    doc = with_tolerances({"t": {"key": "trace.power_threshold", "sigma": 1e-7}})
    doc["trace"] = {"mode": "tree"}
    (p,) = problems(doc)
    assert "write the nominal value into the file" in p.message
    doc["trace"]["power_threshold"] = 1e-6  # written out: accepted
    assert problems(doc) == []


def test_all_problems_reported_together():
    doc = with_tolerances({"a": {"key": "solids.upper.mate.gpa", "sigma": 1},
                           "b": {"key": "solids.upper.mate.gap", "dist": "cauchy", "sigma": 1}})
    doc["titel"] = "x"
    keys = {p.key for p in problems(doc)}
    assert {"tolerances.a.key", "tolerances.b.dist", "titel"} <= keys


def test_cli_run_check_and_tolerance_on_a_toleranced_demo_scene(capsys, tmp_path):
    assert "[tolerances." in COUPLER.read_text()
    assert main(["check", str(COUPLER)]) == 0
    assert main(["run", str(COUPLER), "--rays", "5", "--no-figures"]) == 0
    assert main(["tolerance", str(COUPLER), "--trials", "5"]) == 0
    out = capsys.readouterr().out
    assert "yield" in out and "horn_tilt" in out and "Traceback" not in out
    # a broken tolerance: exit code 2 with the key path, no traceback
    bad = tmp_path / "bad.toml"
    bad.write_text(COUPLER.read_text().replace('key = "solids.output.mate.gap"',
                                               'key = "solids.output.mate.gapp"'))
    assert main(["run", str(bad), "--rays", "5", "--no-figures"]) == 2
    captured = capsys.readouterr()
    assert "tolerances.gap.key" in captured.out + captured.err
    assert "Traceback" not in captured.out + captured.err


def test_check_summary_lists_the_tolerances():
    from tracer.scene import format_summary, summarize

    data = summarize(from_dict(with_tolerances(GOOD), path="x.toml"))
    assert data["tolerances"]["tilt"] == {"keys": ["solids.lower.rotation[2]", "solids.upper.mate.wedge"],
                                         "index": None, "dist": "uniform", "scale": "0.5 deg"}
    assert data["tolerances"]["index"]["index"] == "glass"
    text = format_summary(data)
    assert "tolerances (6" in text and "gap: solids.upper.mate.gap, normal, sigma 0.05 um" in text
    plain = base()
    assert "tolerances" not in summarize(from_dict(plain, path="x.toml"))
