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
    "STOKES_DOP_TOL",
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

#: Largest excess of a Stokes vector's degree of polarisation over 1 still accepted as
#: round-off (a source Stokes vector like (1, 0.6, 0.8, 0) typed with few digits) [1].
STOKES_DOP_TOL = 1e-9

#: Branch choice of ``n cos θ`` (see :mod:`tracer.fresnel`): an imaginary part below this
#: magnitude counts as zero, and the root with non-negative real part (energy flowing away
#: from the face) is taken; above it the root with positive imaginary part (a decaying wave).
#: Same threshold (100 machine epsilons) as ``tmm``'s ``is_forward_angle`` (S. J. Byrnes,
#: "Multilayer optical calculations", arXiv:1603.02720, 2016, Appendix D).
BRANCH_IMAG_TOL = 100 * 2.220446049250313e-16

__all__ += ["BRANCH_IMAG_TOL"]

#: A detector placed on a face (``on_face``) sits this far outside the face plane, so that
#: a ray leaving the face (moved on by RAY_OFFSET) still crosses it, and a ray arriving
#: crosses it before the face [m].
DETECTOR_FACE_OFFSET = 10 * RAY_OFFSET

#: Largest |x_axis . direction| accepted for a source or detector frame, and largest
#: out-of-plane component (z) of a position [m] or direction [1] in a 2D scene.
FRAME_TOL = 1e-9

__all__ += ["DETECTOR_FACE_OFFSET", "FRAME_TOL"]

# --- geometry (tracer.geometry) ---------------------------------------------------------

#: Smallest ray parameter t accepted as a hit [m for unit directions]; hits at or behind
#: the origin (the face a ray has just left) are ignored. Far below RAY_OFFSET.
INTERSECT_MIN_T = 1e-12

#: Barycentric slack of the ray-triangle test [1], so that a ray through the shared edge
#: of two triangles of one face (e.g. the diagonal of a quad) hits at least one of them.
TRIANGLE_EDGE_TOL = 1e-12

#: Points closer than this are one vertex (polytope vertices, mesh vertex merging) [m].
VERTEX_MERGE_TOL = 1e-9

#: Largest angle between two triangle normals for them to belong to one planar facet [rad].
FACET_ANGLE_TOL = 1e-6

#: Largest deviation of a rotation matrix from orthonormality (max |R^T R - I|) [1].
ROTATION_TOL = 1e-9

#: Automatic gap finding: smallest footprint overlap still counted as facing faces [m^2].
GAP_MIN_OVERLAP_AREA = 1e-12

#: Two solids whose interiors share more than this volume overlap [m^3] (a 10 um cube).
OVERLAP_MIN_VOLUME = 1e-15

__all__ += [
    "INTERSECT_MIN_T",
    "TRIANGLE_EDGE_TOL",
    "VERTEX_MERGE_TOL",
    "FACET_ANGLE_TOL",
    "ROTATION_TOL",
    "GAP_MIN_OVERLAP_AREA",
    "OVERLAP_MIN_VOLUME",
]

#: Relative slack when checking a wavelength against a material's valid range [1], so that
#: a range end written in other units (e.g. "0.21 um" vs 210 nm) is not refused by round-off.
WAVELENGTH_RANGE_RTOL = 1e-9

__all__ += ["WAVELENGTH_RANGE_RTOL"]

#: Sources and detectors: a reference axis (``x_axis``) whose component across the
#: direction or normal is below this fraction of its length counts as parallel to it
#: (no frame can be built) [1].
AXIS_PARALLEL_SIN = 1e-9

__all__ += ["AXIS_PARALLEL_SIN"]

# --- analysis (tracer.analysis) ---------------------------------------------------------

#: Budget accounts smaller than this fraction of the source power are left out of the
#: budget tables (round-off of "parent minus children" bookings, ~1e-16 relative); they
#: stay in the totals and the closure residual [1].
BUDGET_ROUNDOFF = 1e-13

__all__ += ["BUDGET_ROUNDOFF"]

#: Paths whose powers agree to this many significant digits rank as equal and are ordered
#: by signature, so that round-off (numpy reference against compiled kernels, ~1e-15
#: relative) does not reorder ghost tables (e.g. the six equal sub-aperture paths of a
#: corner cube) [1].
PATH_POWER_TIE_DIGITS = 10

__all__ += ["PATH_POWER_TIE_DIGITS"]

#: ``power_threshold = "auto"``: the first threshold tried [1] (the former default).
AUTO_THRESHOLD_START = 1e-6

#: ``power_threshold = "auto"``: the lowest threshold tried [1].
AUTO_THRESHOLD_FLOOR = 1e-15

#: ``power_threshold = "auto"``: default cost limit, all traces together at most this many
#: times the events of the first trace [1].
AUTO_THRESHOLD_COST = 30.0

#: ``power_threshold = "auto"``: the untraced power aimed for is this fraction of the
#: smallest margin an inconclusive requirement needs [1].
AUTO_THRESHOLD_MARGIN = 0.1

__all__ += ["AUTO_THRESHOLD_START", "AUTO_THRESHOLD_FLOOR", "AUTO_THRESHOLD_COST",
            "AUTO_THRESHOLD_MARGIN"]

# --- sweeps and tolerancing (tracer.sweep) ------------------------------------------------

#: A tolerance-run result whose spread over the trials is below this fraction of its
#: mean magnitude is constant to round-off; no sensitivity ranking is made for it [1].
SENSITIVITY_MIN_SPREAD = 1e-9

__all__ += ["SENSITIVITY_MIN_SPREAD"]

#: Largest total integrated scatter (4 pi sigma n cos(theta) / lambda)^2 of a rough face that
#: the first-order (smooth-surface) scatter theory is used for. Beyond about 0.1 the
#: perturbation series no longer converges well (common practice, no source).
SMOOTH_SURFACE_TIS_MAX = 0.1

#: Largest hemispherical integral of a measured BSDF table above 1 accepted as round-off of
#: the measurement before it is refused as creating energy [1].
BSDF_ENERGY_TOL = 1e-3

#: Relative difference between BSDF(i -> s) and BSDF(s -> i) above which a measured table
#: is reported as non-reciprocal (a warning; common practice, no source).
BSDF_RECIPROCITY_RTOL = 0.1

#: Number of standard errors a verdict keeps between a sampled value and its limit before
#: it is conclusive (about 99.7 % two-sided for a normal estimate; common practice, no source).
VERDICT_SIGMAS = 3.0
