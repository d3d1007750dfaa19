"""Fuzzing the loader: random and mutated scenes give a SceneError, never another exception."""

from __future__ import annotations

import copy
import math
import tomllib
from pathlib import Path

import tomli_w
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
