"""Checks across sections, once everything is built.

- the design path (``trace.sequence``) names existing faces;
- every material is valid at every wavelength it will see;
- sources that start inside a solid are allowed and reported as a note (their
  ``inside_solid`` is set);
- solids that overlap in volume are an error unless a gap joins them (then a note).
"""

from __future__ import annotations

import dataclasses
import numpy as np

from .context import Build, split_face_ref
from .media import check_range
from .problems import did_you_mean

__all__ = ["check_scene"]


def check_scene(build: Build, doc, settings, sources, gaps, header, solid_tables, sources_tables):
    """Run the cross-section checks; returns the sources (with ``inside_solid`` set)."""
    _check_sequence(build, settings)
    _check_ranges(build, sources, gaps, header)
    sources = _check_sources_inside(build, sources)
    _check_overlaps(build, gaps)
    return sources


def _check_sequence(build: Build, settings) -> None:
    """``trace.sequence``: ``"solid.face"`` entries, each optionally suffixed ``:T`` or ``:R``
    (force the transmitted or reflected child), optionally ending with a detector name."""
    if not settings.sequence:
        return
    last = len(settings.sequence) - 1
    for i, ref in enumerate(settings.sequence):
        key = f"trace.sequence[{i}]"
        if i == last and "." not in ref and ref in build.detector_keys:
            continue
        face_ref, sep, suffix = ref.partition(":")
        if sep and suffix not in ("T", "R"):
            build.problems.error(key, f'expected the suffix ":T" (transmitted) or ":R" (reflected), '
                                      f'got "{ref}"')
            continue
        parts = split_face_ref(face_ref)
        if parts is None:
            hint = (" or a detector name (last entry only)" if i == last else "")
            build.problems.error(key, f'expected "solid.face"{hint}, got "{ref}"'
                                 + (did_you_mean(ref, build.detector_keys) if i == last and build.detector_keys else ""))
            continue
        solid, face = parts
        if solid not in build.solid_keys:
            build.problems.error(key, f'unknown solid "{solid}"' + did_you_mean(solid, build.solid_keys))
            continue
        spec = build.solids.get(solid)
        if spec is not None and face not in spec.geometry.face_names:
            build.problems.error(key, f'solid "{solid}" has no face "{face}"'
                                 + did_you_mean(face, spec.geometry.face_names))


def _check_ranges(build: Build, sources, gaps, header) -> None:
    wl = []
    if build.spectrum is not None:
        wl.extend(np.asarray(build.spectrum.wavelengths, float).tolist())
    for s in sources.values():
        wl.extend(np.asarray(s.spectrum.wavelengths, float).tolist())
    if not wl:
        return
    wl = np.unique(np.asarray(wl))
    check_range(build, "ambient", build.ambient, header.ambient, wl)
    for name, spec in build.solids.items():
        if spec.opaque and spec.material is build.ambient:
            continue  # a part without a material: nothing of it is traced
        check_range(build, f"{spec.table_key}.material", spec.material, spec.material_name, wl)
    seen = set()
    for name, gap in gaps.items():
        if gap.medium_name in seen:
            continue
        seen.add(gap.medium_name)
        key = f"gaps.{name}.medium" if gap.origin == "declared" else (
            f"solids.{gap.solid_b}.mate.medium" if gap.origin == "mated" else "gap_finding.medium")
        check_range(build, key, gap.medium, gap.medium_name, wl)


def _check_sources_inside(build: Build, sources):
    out = {}
    for name, s in sources.items():
        inside = None
        for solid in build.solids.values():
            try:
                hit = bool(np.asarray(solid.geometry.contains(np.asarray(s.position, float)[None, :])).any())
            except Exception:  # a geometry that cannot answer must not crash loading
                hit = False
            if hit:
                inside = solid.name
                break
        if inside is not None and build.solids[inside].opaque:
            build.problems.error(f"sources.{name}.position",
                                 f'the source starts inside the opaque part "{inside}", where no '
                                 "light can travel: move it out of the part")
            continue
        if inside is not None:
            build.problems.note(f"sources.{name}.position",
                                f'the source starts inside solid "{inside}" (allowed: its rays begin in '
                                f"{build.solids[inside].material_name})")
            s = dataclasses.replace(s, inside_solid=inside)
        out[name] = s
    return out


def _check_overlaps(build: Build, gaps) -> None:
    """Solids whose volumes overlap must be joined by a gap (cemented or contact)."""
    joined = {frozenset({g.solid_a, g.solid_b}) for g in gaps.values()}
    for a, b in _overlapping_pairs(build):
        if frozenset({a, b}) in joined:
            continue
        if build.solids[a].opaque or build.solids[b].opaque:
            kind_a = "part" if build.solids[a].opaque else "solid"
            build.problems.error(build.solid_key(b), f'overlaps {kind_a} "{a}": a part may touch a '
                                 "solid or another part but not cut into it; move or resize it")
            continue
        build.problems.error(f"solids.{b}", f'overlaps solid "{a}" and no gap joins them; move it, '
                             f"mate it, or declare the joint in [gaps.NAME]")


def _overlapping_pairs(build: Build):
    """Pairs of solid names whose interiors overlap (beyond contact)."""
    from ..geometry.gaps import overlapping_solids
    found = overlapping_solids({n: s.geometry for n, s in build.solids.items()})
    for a, b, _volume in found:
        yield a, b
