"""Numerical tolerances, in one documented place.

All lengths in metres, angles in radians.
"""

import math

__all__ = [
    "RAY_OFFSET",
    "PLANE_EPS",
    "GAP_MAX_SEPARATION",
    "GAP_MAX_ANGLE",
    "NORMAL_INCIDENCE_SIN",
    "PLANARITY_TOL",
]

#: Distance a child ray is moved along its direction after a hit, so that it does not
#: hit the face it left again [m]. 1 nm is far below any optical feature we model and
#: far above float64 round-off at metre scale (~1e-16 m).
RAY_OFFSET = 1e-9

#: Tolerance when deciding whether a point lies on a plane [m].
PLANE_EPS = 1e-9

#: Automatic gap finding: largest face separation still treated as a gap [m].
GAP_MAX_SEPARATION = 1e-3

#: Automatic gap finding: largest angle between one normal and the reversed other [rad].
GAP_MAX_ANGLE = math.radians(1.0)

#: Below this sin(angle of incidence) the plane of incidence is undefined and a fixed
#: perpendicular is chosen for the s direction.
NORMAL_INCIDENCE_SIN = 1e-12

#: Largest distance of a vertex from its face's fitted plane for the face to count as planar [m].
PLANARITY_TOL = 1e-7
