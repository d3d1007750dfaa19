"""docs/json-summary.md documents every key the run summary writes (and no key vanishes)."""

import dataclasses
import re
from pathlib import Path

from tracer.analysis import analyse, run_summary
from tracer.engine import trace
from tracer.scene.model import RequirementSpec

from engine_factory import plate_scene

DOC = Path(__file__).resolve().parents[1] / "docs" / "json-summary.md"


def _documented_keys():
    """Keys in the first column of the doc's tables: | `key` | ..."""
    return set(re.findall(r"^\| `([a-z_0-9]+)` \|", DOC.read_text(encoding="utf-8"), flags=re.M))


def test_every_summary_key_is_documented():
    sc = plate_scene(rays=3)
    reqs = {"r": RequirementSpec("r", "min_power", 0.5, detector="camera", relative=True)}
    s = run_summary(analyse(trace(dataclasses.replace(sc, requirements=reqs))))
    documented = _documented_keys()
    det = next(iter(s["detectors"].values()))
    groups = {
        "top level": s,
        "settings": s["settings"],
        "detector": det,
        "path": det["paths"][0],
        "ledger": {k: v for k, v in s["ledger"].items()},
        "budget row": s["budget"][0],
        "requirement": s["requirements"][0],
        "tool": s["tool"],
    }
    missing = {g: sorted(set(d) - documented) for g, d in groups.items() if set(d) - documented}
    assert not missing, f"undocumented keys: {missing}"


def test_required_keys_of_schema_1_are_present():
    # the keys promised to readers of schema version 1 (docs/json-summary.md)
    s = run_summary(analyse(trace(plate_scene(rays=2))))
    assert {"source_power_w", "detectors", "ledger", "requirements", "tool", "settings", "seed"} <= set(s)
    det = s["detectors"]["camera"]
    assert {"power_w", "paths"} <= set(det)
    assert {"signature", "power_w", "reflections"} <= set(det["paths"][0])
    assert {"detected_w", "absorbed_w", "escaped_w", "discarded_w", "cut_w"} <= set(s["ledger"])
