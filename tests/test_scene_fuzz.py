"""Fuzzing the loader: random and mutated scenes give a SceneError, never another exception."""

from __future__ import annotations

import copy
import math
import tomllib
from pathlib import Path

import tomli_w
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from tracer.scene import SceneError, from_dict, loads
from tracer.scene.loader import INTERNAL_ERROR

SCENES = sorted((Path(__file__).parent.parent / "scenes").glob("*.toml"))
TEXTS = [p.read_text() for p in SCENES]
DOCS = [tomllib.loads(t) for t in TEXTS]
FAST = [i for i, p in enumerate(SCENES) if "corner_cube" not in p.name]  # keep examples quick

SETTINGS = settings(max_examples=80, deadline=None,
                    suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large])


def _check(fn, *args, **kw):
    """Call a loader; only a Scene or a SceneError without internal errors is allowed."""
    try:
        fn(*args, **kw)
    except SceneError as exc:
        internal = [str(p) for p in exc.problems if INTERNAL_ERROR in p.message]
        assert not internal, internal
        assert exc.problems and all(str(p) for p in exc.problems)


def _paths(doc, prefix=()):
    out = []
    if isinstance(doc, dict):
        for k, v in doc.items():
            out.append(prefix + (k,))
            out.extend(_paths(v, prefix + (k,)))
    elif isinstance(doc, list):
        for i, v in enumerate(doc):
            out.append(prefix + (i,))
            out.extend(_paths(v, prefix + (i,)))
    return out


toml_scalars = st.one_of(
    st.booleans(), st.integers(min_value=-10**6, max_value=10**6),
    st.floats(allow_nan=True, allow_infinity=True), st.text(max_size=12),
    st.sampled_from(["5 mm", "-1 mm", "45 deg", "550 nm", "10.7 GHz", "5 mW", "0", "lower.hypotenuse",
                     "air", "absorber", "circle", "fan", "point", "far_field", "right_angle_prism",
                     "polygon", "mesh", "", "1e400 mm", "nan mm"]),
)
toml_values = st.recursive(
    toml_scalars,
    lambda children: st.one_of(st.lists(children, max_size=4),
                               st.dictionaries(st.text(max_size=6), children, max_size=3)),
    max_leaves=8,
)


@st.composite
def mutated(draw):
    doc = copy.deepcopy(DOCS[draw(st.sampled_from(FAST))])
    for _ in range(draw(st.integers(min_value=1, max_value=4))):
        paths = _paths(doc)
        if not paths:
            break
        path = draw(st.sampled_from(paths))
        parent = doc
        for k in path[:-1]:
            parent = parent[k]
        key = path[-1]
        action = draw(st.sampled_from(["delete", "replace", "rename", "add"]))
        if action == "delete":
            del parent[key]
        elif action == "replace":
            parent[key] = draw(toml_values)
        elif action == "rename" and isinstance(parent, dict):
            parent[key + draw(st.sampled_from(["_", "x", "s"]))] = parent.pop(key)
        elif action == "add" and isinstance(parent, dict):
            parent[draw(st.text(min_size=1, max_size=8))] = draw(toml_values)
    return doc


@SETTINGS
@given(mutated())
def test_mutated_documents(doc):
    _check(from_dict, doc, path="fuzz.toml")


@SETTINGS
@given(mutated())
def test_mutated_documents_through_toml_text(doc):
    try:
        text = tomli_w.dumps(doc)
    except (TypeError, ValueError):
        return  # not representable in TOML (e.g. a list mixing tables and scalars)
    _check(loads, text, path="fuzz.toml")


@SETTINGS
@given(st.text(max_size=200))
def test_random_text(text):
    _check(loads, text, path="fuzz.toml")


@st.composite
def mutated_text(draw):
    lines = TEXTS[draw(st.sampled_from(FAST))].splitlines()
    for _ in range(draw(st.integers(min_value=1, max_value=3))):
        i = draw(st.integers(min_value=0, max_value=len(lines) - 1))
        action = draw(st.sampled_from(["delete", "duplicate", "garble", "truncate"]))
        if action == "delete":
            del lines[i]
        elif action == "duplicate":
            lines.insert(i, lines[i])
        elif action == "garble":
            j = draw(st.integers(min_value=0, max_value=max(len(lines[i]) - 1, 0)))
            lines[i] = lines[i][:j] + draw(st.text(max_size=5)) + lines[i][j + 1:]
        else:
            lines = lines[:i + 1]
        if not lines:
            break
    return "\n".join(lines)


@SETTINGS
@given(mutated_text())
def test_mutated_text(text):
    _check(loads, text, path="fuzz.toml")


def test_nan_and_huge_numbers():
    doc = copy.deepcopy(DOCS[0])
    doc["seed"] = math.nan
    doc.setdefault("trace", {})["power_threshold"] = math.inf
    _check(from_dict, doc, path="x.toml")


# ---------------------------------------------------------------------------------------
# Extreme-value mutants of the demo scenes: every one loads (or gives problems with key
# paths), a few hundred are traced (closure, finite outputs), a few dozen go through the
# command line in-process (exit 0/1/2, never a traceback, check refuses what run refuses).
# A seeded generator, not hypothesis: the same mutants on every machine (CI reproducible).

import contextlib
import io
import json
import random
import re

import numpy as np

FUZZ_SEED = 20261203
#: Mutants that are only loaded / loaded and traced / run through ``tracer check`` and ``run``.
N_LOAD, N_TRACE, N_CLI = 2000, 200, 30
#: Cheap scenes are drawn more often (the fuzz test must fit the normal test run).
_WEIGHT = {"corner_cube_retroreflector": 1, "cube_beamsplitter_camera": 1, "porro_erecting_pair": 1,
           "microwave_prism_coupler": 1, "tir_prism_pair": 2, "fresnel_rhomb_retarder": 3,
           "penta_prism_laser": 3, "plate_ghost": 4}
_WEIGHTS = [_WEIGHT.get(p.stem, 1) for p in SCENES]

EXTREME_NUMBERS = [0, -1, 0.0, -0.0, 1e308, -1e308, 1e300, 1e-300, -1e-300, 5e-324, 2.2e-308,
                   math.nan, math.inf, -math.inf, 2**63 - 1, -2**63, 1e15, 1, 1.0000000001]
EXTREME_NUMBER_TEXT = ["0", "-1", "-2", "1e308", "1e-300", "5e-324", "1e300", "nan", "inf", "-0"]
EXTREME_OTHERS = ["nan", "inf", "-2 um", "1e308 mm", "1e-300 mm", "5e-324 W", "1e308 mW", "0 W",
                  "nan mm", "1e-300 nm", "1e308 deg", "", "x", True, False, [], {},
                  [1e308, 1e308, 1e308], [5e-324, 0, 0], [0.0] * 1000, ["x", 1, 2], [[1, 2], 3],
                  {"a": 1}, 10**18, "auto"]
_QUANT = re.compile(r"^\s*[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?\s*(?P<unit>\S.*)$")


def _leaves(doc, prefix=()):
    """Key paths of every value (tables and arrays included)."""
    out = []
    items = doc.items() if isinstance(doc, dict) else enumerate(doc) if isinstance(doc, list) else ()
    for k, v in items:
        out.append(prefix + (k,))
        if isinstance(v, (dict, list)) and len(v) < 50:
            out.extend(_leaves(v, prefix + (k,)))
    return out


def _extreme_for(value, rng: random.Random):
    """An extreme replacement for ``value``, usually of the same type."""
    roll = rng.random()
    if isinstance(value, (int, float)) and not isinstance(value, bool) and roll < 0.75:
        return rng.choice(EXTREME_NUMBERS)
    if isinstance(value, str) and roll < 0.75:
        m = _QUANT.match(value)
        if m:  # keep the unit, make the number extreme
            return f"{rng.choice(EXTREME_NUMBER_TEXT)} {m['unit']}"
    if isinstance(value, list) and value and roll < 0.6:
        out = list(value)
        i = rng.randrange(len(out))
        out[i] = _extreme_for(out[i], rng)
        return out
    # a copy: a later mutation inside it must not change the shared list of extremes (or
    # put a value inside itself, a cycle)
    return copy.deepcopy(rng.choice(EXTREME_OTHERS))


def _is_quantity(value) -> bool:
    """A number, or a "<number> <unit>" string: the values extremes are made of."""
    if isinstance(value, bool):
        return False
    return isinstance(value, (int, float)) or (isinstance(value, str) and bool(_QUANT.match(value)))


def extreme_mutant(rng: random.Random, *, numbers_only: bool = False):
    """(scene index, mutated document): 1 to 3 extreme replacements or deletions; with
    ``numbers_only`` one number or quantity made extreme (such mutants often still load,
    so they reach the engine)."""
    i = rng.choices(range(len(SCENES)), weights=_WEIGHTS)[0]
    doc = copy.deepcopy(DOCS[i])
    if numbers_only and doc.get("solids") and rng.random() < 0.2:
        # an inline material of extreme index for one solid (the index class of mutants)
        solid = rng.choice(sorted(doc["solids"]))
        n = rng.choice([1e308, 1e300, 1e-300, 5e-324, 1e3, 1e-4, 1.5])
        k = rng.choice([0.0, 0.0, 1e308, 5e-324, 1e5])
        doc.setdefault("materials", {})["fuzz_index"] = {"model": "constant", "n": n, "k": k}
        doc["solids"][solid]["material"] = "fuzz_index"
        return i, doc
    if numbers_only:
        paths = [p for p in _leaves(doc) if p[0] not in ("format", "seed")]
        parents = []
        for path in paths:
            parent = doc
            for k in path[:-1]:
                parent = parent[k]
            if _is_quantity(parent[path[-1]]):
                parents.append((parent, path[-1]))
        parent, key = rng.choice(parents)
        value = parent[key]
        if isinstance(value, str):
            unit = _QUANT.match(value)["unit"]
            parent[key] = f"{rng.choice(EXTREME_NUMBER_TEXT)} {unit}"
        else:
            parent[key] = rng.choice(EXTREME_NUMBERS)
        return i, doc
    for _ in range(rng.choice([1, 1, 2, 3])):
        paths = [p for p in _leaves(doc) if p[0] != "format"]
        if not paths:
            break
        path = rng.choice(paths)
        parent = doc
        for k in path[:-1]:
            parent = parent[k]
        key = path[-1]
        if rng.random() < 0.15:
            del parent[key]  # a deleted key or table
        else:
            parent[key] = _extreme_for(parent[key], rng)
    return i, doc


def _mutants(count, salt):
    rng = random.Random(f"{FUZZ_SEED}-{salt}")
    return [extreme_mutant(rng) for _ in range(count)]


def _load(doc):
    """A Scene, or None after checking the problems: no internal error, each with a key."""
    try:
        return from_dict(doc, path="fuzz.toml")
    except SceneError as exc:
        internal = [str(p) for p in exc.problems if INTERNAL_ERROR in p.message]
        assert not internal, internal
        for p in exc.problems:
            assert p.key or "missing key" in p.message or "format" in p.message, str(p)
        return None


def _all_finite(value, where="summary"):
    if isinstance(value, dict):
        for k, v in value.items():
            _all_finite(v, f"{where}.{k}")
    elif isinstance(value, (list, tuple)):
        for i, v in enumerate(value):
            _all_finite(v, f"{where}[{i}]")
    elif isinstance(value, (float, np.floating)):
        assert math.isfinite(value), f"{where} = {value}"
    elif isinstance(value, np.ndarray) and value.dtype.kind in "fc":
        assert np.all(np.isfinite(value)), where


def test_extreme_mutants_load_or_give_keyed_problems():
    loaded = 0
    for _, doc in _mutants(N_LOAD, "load"):
        loaded += _load(doc) is not None
    assert 0 < loaded < N_LOAD  # both kinds occur: the mutants are neither all fatal nor all harmless


def test_extreme_mutants_trace_with_closure_and_finite_outputs():
    from tracer.analysis import analyse, run_summary
    from tracer.engine import trace
    from tracer.engine.tree import EventBudgetExceeded

    traced = stopped = 0
    rng = random.Random(f"{FUZZ_SEED}-trace")
    for _ in range(20 * N_TRACE):  # the first N_TRACE mutants that load are traced
        if traced + stopped >= N_TRACE:
            break
        scene = _load(extreme_mutant(rng, numbers_only=rng.random() < 0.8)[1])
        if scene is None:
            continue
        try:
            res = trace(scene, rays=3, progress=False, event_budget=20_000, memory_budget=3e8)
        except EventBudgetExceeded:
            stopped += 1  # stopped cleanly at its cap
            continue
        traced += 1
        s = res.summary()
        led = s["ledger"]
        total = (led["detected_w"] + led["absorbed_w"] + led["escaped_w"] + led["discarded_w"]
                 + led["cut_w"] + led.get("sampling_w", 0.0))
        assert total == pytest.approx(s["source_power_w"], rel=1e-9, abs=1e-300)
        _all_finite(s)
        json.dumps(run_summary(analyse(res)), allow_nan=False)  # no NaN or Infinity in the JSON
    assert traced > N_TRACE // 2, (traced, stopped)


def test_extreme_mutants_through_the_command_line(tmp_path):
    from tracer.cli import main

    def call(argv):
        out, err = io.StringIO(), io.StringIO()
        with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
            try:
                code = main(argv)
            except SystemExit as exc:
                code = exc.code
        text = out.getvalue() + err.getvalue()
        assert "Traceback" not in text, text
        assert code in (0, 1, 2), (argv, code, text)
        return code, text

    ran = refused = 0
    rng = random.Random(f"{FUZZ_SEED}-cli")
    for k in range(40 * N_CLI):
        if ran + refused >= N_CLI:
            break
        i, doc = extreme_mutant(rng, numbers_only=rng.random() < 0.8)
        try:
            text = tomli_w.dumps(doc)
        except (TypeError, ValueError):
            continue
        valid = _load(tomllib.loads(text)) is not None
        if not valid and refused >= N_CLI // 3:
            continue  # mostly scenes that run: the refused ones are cheap and many above
        # the scene's own folder, so that relative mesh paths still resolve
        path = SCENES[i].parent / f".fuzz-{k}-{SCENES[i].name}"
        path.write_text(text)
        try:
            checked, _ = call(["check", "-q", str(path)])
            argv = ["run", "-q", str(path), "--rays", "3", "--json", str(tmp_path / f"{k}.json")]
            if k % 5 == 0:
                argv += ["--out", str(tmp_path / f"out-{k}")]  # with figures
            code, text = call(argv)
        finally:
            path.unlink()
        assert (checked == 2) == (code == 2), text  # check refuses exactly what run refuses
        refused += code == 2
        if code != 2:
            ran += 1
            with open(tmp_path / f"{k}.json", encoding="utf-8") as fh:
                json.load(fh, parse_constant=lambda c: pytest.fail(f"{c} in the JSON summary"))
    assert ran >= N_CLI // 2, (ran, refused)
