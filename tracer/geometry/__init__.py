"""Solids with named planar faces, the prism catalog, placement and ray intersection.

Modules: :mod:`.solid` (the :class:`Solid` contract, :class:`ConvexSolid`),
:mod:`.meshsolid` (:class:`MeshSolid`), :mod:`.transforms`, :mod:`.catalog` (registry) and
:mod:`.catalog_prisms` (builders), :mod:`.extrude`, :mod:`.polyhedron`, :mod:`.mesh`,
:mod:`.mating`, :mod:`.gaps`, :mod:`.intersect`. Lengths in metres, angles in radians.
"""

from tracer.geometry.catalog import KINDS, ParameterSpec, PrismKind, build
from tracer.geometry.catalog_prisms import CubeHalves, beamsplitter_cube
from tracer.geometry.errors import GeometryError
from tracer.geometry.extrude import check_polygon, extrude_polygon
from tracer.geometry.gaps import GapCandidate, find_gaps, overlap_volume, overlapping_solids
from tracer.geometry.intersect import (
    IntersectionBackend,
    available_backends,
    get_backend,
    intersect_many,
)
from tracer.geometry.mating import Mated, mate, mate_transform
from tracer.geometry.mesh import load_mesh, mesh_solid
from tracer.geometry.polyhedron import convex_polyhedron
from tracer.geometry.solid import ConvexSolid, MeshSolid, Solid
from tracer.geometry.transforms import axis_rotation, rotation_angles, rotation_matrix

__all__ = [
    "Solid",
    "ConvexSolid",
    "MeshSolid",
    "GeometryError",
    "KINDS",
    "ParameterSpec",
    "PrismKind",
    "build",
    "beamsplitter_cube",
    "CubeHalves",
    "extrude_polygon",
    "check_polygon",
    "convex_polyhedron",
    "load_mesh",
    "mesh_solid",
    "rotation_matrix",
    "rotation_angles",
    "axis_rotation",
    "mate",
    "mate_transform",
    "Mated",
    "find_gaps",
    "GapCandidate",
    "overlapping_solids",
    "overlap_volume",
    "IntersectionBackend",
    "available_backends",
    "get_backend",
    "intersect_many",
]
