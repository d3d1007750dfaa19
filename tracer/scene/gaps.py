"""Gaps: thin layers between facing faces of two solids.

Three origins, each reported: ``declared`` (``[gaps.NAME]``), ``mated`` (a
``[solids.B.mate]`` table) and ``automatic`` (``[gap_finding] enabled = true``: every
pair of faces of different solids that face each other within the limits). The
thickness of a gap is always measured from the placed geometry at the centroid of the
overlap of the two faces (the engine uses the local thickness at each hit anyway); a
declared ``thickness`` must agree with it, so that the file cannot say one thing while
the geometry says another. A cemented joint is a gap whose medium is the cement.
"""

from __future__ import annotations

import math

import numpy as np

from .. import tolerances, units
from .context import Build, resolve_face
from .media import resolve_material
from .model import GapSpec
from .reader import Table
from .shapes import face_axes, face_centroid_normal

__all__ = ["read_gaps", "measure_gap", "GapGeometry"]

COHERENCE = ("auto", "coherent", "incoherent")


class GapGeometry:
    """Measured relation of two faces: thickness [m], wedge [rad], overlap area [m^2]."""

    def __init__(self, thickness: float, wedge: float, overlap: float, point: np.ndarray):
        self.thickness, self.wedge, self.overlap, self.point = thickness, wedge, overlap, point


def measure_gap(solid_a, face_a: int, solid_b, face_b: int) -> GapGeometry:
    """Thickness, wedge and footprint overlap of face ``face_a`` of A and ``face_b`` of B.

    The overlap is that of B's face projected onto A's plane with A's face; the
    thickness is the distance along A's outward normal from the overlap's centroid (A's
    face centroid when they do not overlap) to B's plane.
    """
    import shapely

    ca, na = face_centroid_normal(solid_a, face_a)
    _, nb = face_centroid_normal(solid_b, face_b)
    db = float(np.asarray(solid_b.face_offsets, float)[face_b])
    wedge = float(math.acos(max(-1.0, min(1.0, -float(na @ nb)))))
    u, v = face_axes(na)
    pa = np.asarray(solid_a.face_polygons[face_a], float) - ca
    pb = np.asarray(solid_b.face_polygons[face_b], float) - ca
    poly_a = shapely.Polygon(np.column_stack([pa @ u, pa @ v])).buffer(0)
    poly_b = shapely.Polygon(np.column_stack([pb @ u, pb @ v])).buffer(0)
    inter = poly_a.intersection(poly_b)
    overlap = float(inter.area)
    point = ca
    if overlap > 0:
        c = inter.centroid
        point = ca + c.x * u + c.y * v
    denom = float(nb @ na)
    thickness = (db - float(nb @ point)) / denom if abs(denom) > 1e-12 else math.inf
    return GapGeometry(float(thickness), wedge, overlap, point)


def _check_facing(t: Table | None, build: Build, key: str, g: GapGeometry, *, max_angle: float,
                  max_separation: float, label: str) -> bool:
    problems = []
    if g.wedge > max_angle + 1e-12:
        problems.append(f"the faces are not parallel: their normals are "
                        f"{units.format_angle(math.pi - g.wedge)} apart instead of 180° "
                        f"(wedge {units.format_angle(g.wedge)}, limit {units.format_angle(max_angle)})")
    elif g.overlap <= 0:
        problems.append("the faces do not overlap when projected onto each other: no light can cross")
    elif g.thickness < -10 * tolerances.PLANE_EPS:
        problems.append(f"the solids overlap: B's face lies {units.format_length(-g.thickness)} inside A")
    elif g.thickness > max_separation:
        problems.append(f"the faces are {units.format_length(g.thickness)} apart, more than "
                        f"{units.format_length(max_separation)} (not a thin gap)")
    for message in problems:
        build.problems.error(key, f"{label}: {message}")
    return not problems


def read_gaps(tables: dict[str, Table], build: Build, *, mated, finding) -> dict[str, GapSpec]:
    """Declared, mated and (optionally) automatic gaps by name."""
    gaps: dict[str, GapSpec] = {}
    pairs: dict[frozenset, str] = {}
    build.gap_keys = set(tables) | {req.gap_name for req in mated} | build.mate_gap_keys

    def add(spec: GapSpec, key: str) -> None:
        pair = frozenset({(spec.solid_a, spec.face_a), (spec.solid_b, spec.face_b)})
        if spec.name in gaps:
            build.problems.error(key, f'gap name "{spec.name}" is used twice')
            return
        if pair in pairs:
            build.problems.error(key, f'the faces {spec.solid_a}.{spec.face_a} and '
                                      f'{spec.solid_b}.{spec.face_b} already form gap "{pairs[pair]}"')
            return
        for solid, face in ((spec.solid_a, spec.face_a), (spec.solid_b, spec.face_b)):
            tr = build.solids[solid].faces.get(face)
            if tr is not None and tr.kind not in ("uncoated", "stack"):
                build.problems.error(f"solids.{solid}.faces.{face}.coating",
                                     f'face {solid}.{face} faces gap "{spec.name}": only uncoated faces '
                                     f'or thin-film stacks can face a gap, got a {tr.kind} '
                                     f'("{tr.coating_name}")')
                return
        pairs[pair] = spec.name
        gaps[spec.name] = spec

    max_sep = max(finding.max_separation, tolerances.GAP_MAX_SEPARATION)
    for req in mated:
        a, b = build.solids[req.target_solid], build.solids[req.solid]
        ia, ib = list(a.geometry.face_names).index(req.target_face), list(b.geometry.face_names).index(req.face)
        g = measure_gap(a.geometry, ia, b.geometry, ib)
        key = req.table.key
        if not _check_facing(None, build, key, g, max_angle=abs(req.wedge) + 1e-9,
                             max_separation=math.inf, label="mate"):
            continue
        add(GapSpec(name=req.gap_name, solid_a=req.target_solid, face_a=req.target_face,
                    solid_b=req.solid, face_b=req.face, medium=req.medium, medium_name=req.medium_name,
                    thickness=max(g.thickness, 0.0), wedge=g.wedge, origin="mated",
                    coherence=req.coherence), key)

    for name, t in tables.items():
        faces = t.strings("faces", required=True)
        medium_name = t.string("medium", default=build.ambient_name)
        medium = resolve_material(build, t.path("medium"), medium_name) if medium_name else None
        thickness = t.quantity("thickness", "length", nonnegative=True)
        wedge = t.quantity("wedge", "angle", nonnegative=True, maximum=math.radians(45))
        coherence = t.string("coherence", default="auto", choices=COHERENCE)
        t.string("note")
        t.finish()
        if faces is None:
            continue
        if len(faces) != 2:
            t.error("faces", f'expected two faces ["solid.face", "solid.face"], got {len(faces)}')
            continue
        fa = resolve_face(t, "faces", faces[0], build)
        fb = resolve_face(t, "faces", faces[1], build)
        if fa is None or fb is None or medium is None or coherence is None:
            continue
        if fa[0] == fb[0]:
            t.error("faces", "a gap joins faces of two different solids")
            continue
        a, b = build.solids[fa[0]], build.solids[fb[0]]
        if a.opaque or b.opaque:
            t.error("faces", f'"{(a if a.opaque else b).name}" is an opaque part: light never '
                             "crosses a gap into a part")
            continue
        g = measure_gap(a.geometry, fa[2], b.geometry, fb[2])
        limit = max(tolerances.GAP_MAX_ANGLE, (wedge or 0.0) + 1e-6)
        if not _check_facing(t, build, t.path("faces"), g, max_angle=limit, max_separation=max_sep,
                             label=f"{faces[0]} and {faces[1]}"):
            continue
        measured = max(g.thickness, 0.0)
        if thickness is not None and abs(thickness - measured) > max(10 * tolerances.PLANE_EPS,
                                                                      1e-3 * measured):
            t.error("thickness", f"declared {units.format_length(thickness)} but the placed faces are "
                                 f"{units.format_length(measured)} apart; move the solids (or mate "
                                 "them with gap = ...), or leave thickness out to take it from the "
                                 "geometry")
            continue
        if wedge is not None and abs(wedge - g.wedge) > 1e-6:
            t.error("wedge", f"declared {units.format_angle(wedge)} but the placed faces are "
                             f"{units.format_angle(g.wedge)} apart in angle; leave wedge out to take "
                             "it from the geometry")
            continue
        add(GapSpec(name=name, solid_a=fa[0], face_a=fa[1], solid_b=fb[0], face_b=fb[1], medium=medium,
                    medium_name=medium_name, thickness=measured, wedge=g.wedge, origin="declared",
                    coherence=coherence), t.key)

    if finding.enabled:
        _discover(build, gaps, pairs, finding, add)
    return gaps


def _discover(build: Build, gaps, pairs, finding, add) -> None:
    """Every facing pair of faces of different solids within the finding limits."""
    from ..geometry.gaps import find_gaps
    medium_name = finding.medium or build.ambient_name
    medium = resolve_material(build, "gap_finding.medium", medium_name)
    if medium is None:
        return
    found = find_gaps({n: s.geometry for n, s in build.solids.items() if not s.opaque},
                      max_separation=finding.max_separation, max_angle=finding.max_angle)
    for c in found:
        if frozenset({(c.solid_a, c.face_a), (c.solid_b, c.face_b)}) in pairs:
            continue
        name = f"{c.solid_a}.{c.face_a}/{c.solid_b}.{c.face_b}"
        add(GapSpec(name=name, solid_a=c.solid_a, face_a=c.face_a, solid_b=c.solid_b, face_b=c.face_b,
                    medium=medium, medium_name=medium_name, thickness=float(c.separation),
                    wedge=float(c.angle), origin="automatic", coherence=finding.coherence),
            "gap_finding")
        if name in gaps:
            build.problems.note("gap_finding", f'found gap "{name}": '
                                f"{units.format_length(c.separation)} of {medium_name}"
                                + (f", wedge {units.format_angle(c.angle)}" if c.angle > 1e-9 else ""))
