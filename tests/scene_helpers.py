"""Shared helpers for the scene tests: a small valid base scene and problem lookup."""

from __future__ import annotations

import copy
import tomllib

from tracer.scene import SceneError, from_dict

BASE = """
format = 1
title = "base"
dimension = 2
length_unit = "mm"

[spectrum]
wavelengths = ["550 nm"]

[coatings.ar_coat]
kind = "quarter-wave"
material = "mgf2"
design_wavelength = "550 nm"

[solids.lower]
material = "crown-517642"
kind = "right_angle_prism"
leg = "20 mm"

[solids.lower.faces.leg_a]
coating = "ar_coat"

[solids.upper]
material = "crown-517642"
kind = "right_angle_prism"
leg = "20 mm"

[solids.upper.mate]
to = "lower.hypotenuse"
face = "hypotenuse"
gap = "5 um"

[sources.beam]
kind = "collimated"
position = [10, -15]
direction = [0, 1]
width = "8 mm"
rays = 11
power = "5 mW"

[detectors.screen]
position = [-15, 10]
normal = [1, 0]
width = "16 mm"

[requirements.enough]
kind = "min_power"
detector = "screen"
limit = "80 %"

[requirements.leak]
kind = "max_leakage"
gap = "upper.mate"
limit = 1e-4
"""


def base() -> dict:
    """A fresh copy of the base scene document."""
    return copy.deepcopy(_BASE_DOC)


_BASE_DOC = tomllib.loads(BASE)


def problems(doc: dict, path: str = "scenes/x.toml"):
    """Problems of ``doc`` (an empty list when it loads)."""
    try:
        from_dict(doc, path=path)
    except SceneError as exc:
        return exc.problems
    return []


def find(problems_list, key: str, text: str):
    """The problems at ``key`` whose message contains ``text``."""
    return [p for p in problems_list if p.key == key and text in p.message]
