"""Scenes of the verdict tests: a TIR prism pair whose 2 um air gap at 633 nm tunnels a
little light onto a leak detector behind the gap (invented design data).

At 45 deg in a 517/642 crown (n = 1.515 at 633 nm) the 2 um air gap transmits about
3.7e-7 (s) and 8.9e-7 (p) of the power (``tracer coefficients``, checked against the
``tmm`` package in tests/test_films.py); unpolarised light tunnels about 6.3e-7 of the
power reaching the gap, under the former default power threshold of 1e-6, so that a
trace with that threshold discards the tunnelled light and the leak detector reads 0 W.
"""

from __future__ import annotations

GAP_SCENE = """
format = 1
title = "TIR prism pair, 2 um air gap at 633 nm"
dimension = 2
length_unit = "mm"
ambient = "air"
seed = 3

[spectrum]
wavelengths = ["633 nm"]

[trace]
mode = "tree"
{threshold}
max_events = 48

[solids.lower]
material = "crown-517642"
kind = "right_angle_prism"
leg = "20 mm"
position = [0, 0]
rotation = 0

[solids.upper]
material = "crown-517642"
kind = "right_angle_prism"
leg = "20 mm"

[solids.upper.mate]
to = "lower.hypotenuse"
face = "hypotenuse"
gap = "2 um"
gap_name = "tir"

[sources.laser]
kind = "collimated"
position = [10, -15]
direction = [0, 1]
width = "4 mm"
rays = {rays}
sampling = "grid"
power = "10 mW"
polarization = {{ kind = "unpolarized" }}

[detectors.out]
position = [-15, 10]
normal = [1, 0]
width = "16 mm"

[detectors.leak]
position = [10, 35]
normal = [{leak_normal}]
width = "20 mm"
{requirements}
"""

LEAK_MAX = """
[requirements.leak_max]
kind = "max_power"
detector = "leak"
limit = "{limit}"
"""


def gap_scene(*, threshold=None, limit="1 nW", rays=5, leak_normal="0, -1", requirements=None):
    """The scene's TOML text; ``threshold`` None leaves ``power_threshold`` unset (auto)."""
    thr = "" if threshold is None else f"power_threshold = {threshold}"
    req = LEAK_MAX.format(limit=limit) if requirements is None else requirements
    return GAP_SCENE.format(threshold=thr, rays=rays, leak_normal=leak_normal, requirements=req)
