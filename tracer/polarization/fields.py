"""Field matrices in 3D: launch, transverse frames, the s/p basis, interfaces, power,
and the Jones matrices, Stokes vectors and Mueller matrices seen by a detector.

Every ray carries a complex ``(3, 2)`` field matrix ``M`` (world frame); column ``k``
is its field for unit-power input state ``k`` (see :mod:`tracer.polarization`). At an
interface ``s`` is perpendicular to the plane of incidence and shared by all waves;
``p = k x s`` for each wave.

References
----------
.. [1] G. Yun, K. Crabtree, R. A. Chipman, "Three-dimensional polarization ray-tracing
   calculus I: definition and diattenuation", Applied Optics 50(18), 2855-2865 (2011).
.. [2] G. Yun, S. C. McClain, R. A. Chipman, "Three-dimensional polarization ray-tracing
   calculus II: retardance", Applied Optics 50(18), 2866-2874 (2011).

(Bibliographic details recalled from memory.)
"""

from __future__ import annotations

import numpy as np

from tracer.polarization.jones import mueller_from_jones
from tracer.polarization.states import coherency_to_stokes
from tracer.tolerances import NORMAL_INCIDENCE_SIN

__all__ = [
    "initial_field_matrix",
    "transverse_frame",
    "sp_basis",
    "apply_interface",
    "output_coherency",
    "ray_power",
    "jones_in_frame",
    "path_mueller",
    "detector_jones",
    "detector_stokes",
    "detector_mueller",
]


def _unit(v):
    v = np.asarray(v, dtype=float)
    return v / np.linalg.norm(v, axis=-1, keepdims=True)


def initial_field_matrix(x_axis, y_axis):
    """Field matrix at launch: columns ``x_axis`` and ``y_axis`` (unit power each).

    Parameters
    ----------
    x_axis, y_axis : (N, 3) float [1]
        Orthonormal transverse input axes per ray, ``y_axis = direction x x_axis``.

    Returns
    -------
    (N, 3, 2) complex

    Examples
    --------
    >>> initial_field_matrix([[1.0, 0, 0]], [[0.0, 1, 0]]).shape
    (1, 3, 2)
    """
    x = np.asarray(x_axis, dtype=float)
    y = np.asarray(y_axis, dtype=float)
    return np.stack([x, y], axis=-1).astype(complex)


def transverse_frame(directions, reference):
    """Right-handed transverse frame per ray from a reference direction.

    ``x = reference`` made perpendicular to ``k`` and normalised, ``y = k x x``, so that
    ``(x, y, k)`` is right-handed. Where ``reference`` is parallel to ``k`` (sine below
    ``NORMAL_INCIDENCE_SIN``), the world axis least aligned with ``k`` is used instead.

    Parameters
    ----------
    directions : (N, 3) float [1]
        Unit propagation directions ``k``.
    reference : (3,) or (N, 3) float [1]

    Returns
    -------
    x, y : (N, 3) float

    Examples
    --------
    >>> x, y = transverse_frame(np.array([[0.0, 0, 1]]), np.array([1.0, 0, 0]))
    >>> y
    array([[0., 1., 0.]])
    """
    k = _unit(np.atleast_2d(directions))
    ref = np.broadcast_to(np.asarray(reference, dtype=float), k.shape)
    x = ref - np.sum(ref * k, axis=-1, keepdims=True) * k
    nx = np.linalg.norm(x, axis=-1)
    bad = nx <= NORMAL_INCIDENCE_SIN * np.maximum(np.linalg.norm(ref, axis=-1), 1e-300)
    if np.any(bad):
        alt = _fallback_perpendicular(k[bad])
        x = x.copy()
        x[bad] = alt
        nx = np.linalg.norm(x, axis=-1)
    x = x / nx[:, None]
    y = np.cross(k, x)
    return x, y


def _fallback_perpendicular(k):
    """A unit vector perpendicular to each ``k``: ``k x e`` with ``e`` the world axis
    least aligned with ``k`` (lowest index on ties), normalised. Deterministic."""
    k = np.atleast_2d(k)
    idx = np.argmin(np.abs(k), axis=-1)
    e = np.zeros_like(k)
    e[np.arange(len(k)), idx] = 1.0
    s = np.cross(k, e)
    return s / np.linalg.norm(s, axis=-1, keepdims=True)


def sp_basis(k, normal):
    """s and p unit vectors of the incident wave at an interface.

    Parameters
    ----------
    k : (N, 3) float [1]
        Unit propagation direction of the incident wave.
    normal : (N, 3) or (3,) float [1]
        Face normal (either orientation; ``s`` flips with it, which is harmless since
        the same ``s`` serves all three waves).

    Returns
    -------
    s_hat : (N, 3) float
        ``normalise(k x normal)``, perpendicular to the plane of incidence. At normal
        incidence (``|k x normal| < NORMAL_INCIDENCE_SIN``) the plane is undefined and
        ``s = normalise(k x e)`` with ``e`` the world axis least aligned with ``k``
        (lowest index on ties) -- a fixed, deterministic choice.
    p_in : (N, 3) float
        ``k x s`` for the incident wave. The reflected and transmitted waves use the
        same ``s`` and their own ``p = k_out x s``.

    Examples
    --------
    >>> s, p = sp_basis(np.array([[0.0, 0.0, 1.0]]), np.array([[0.0, 0.0, 1.0]]))
    >>> s, p
    (array([[0., 1., 0.]]), array([[-1.,  0.,  0.]]))
    """
    k = np.atleast_2d(np.asarray(k, dtype=float))
    n = np.broadcast_to(np.asarray(normal, dtype=float), k.shape)
    s = np.cross(k, n)
    ns = np.linalg.norm(s, axis=-1)
    scale = np.linalg.norm(k, axis=-1) * np.linalg.norm(n, axis=-1)
    normal_inc = ns < NORMAL_INCIDENCE_SIN * scale
    if np.any(normal_inc):
        s = s.copy()
        s[normal_inc] = _fallback_perpendicular(k[normal_inc])
        ns = np.where(normal_inc, 1.0, ns)
    s = s / ns[:, None]
    p = np.cross(_unit(k), s)
    return s, p


def apply_interface(M, k_in, k_out, s_hat, amp_s, amp_p):
    """Field matrix of a child wave at an interface.

    The field of each input state is projected on the incident ``(s, p_in)``,
    multiplied by ``(amp_s, amp_p)`` and rebuilt on ``(s, p_out)`` with
    ``p_in = k_in x s`` and ``p_out = k_out x s`` (our convention, module docstring).
    The amplitudes are normally power-normalised by the caller (``|amp|**2`` is the
    power reflectance or transmittance), so that the child's relative power is
    ``trace(M_out J M_out^H)``; raw field ratios work as well (used for checking
    Maxwell's boundary conditions).

    Parameters
    ----------
    M : (N, 3, 2) complex
        Field matrix of the incident ray.
    k_in, k_out : (N, 3) float [1]
        Unit directions of the incident and the child wave.
    s_hat : (N, 3) float [1]
        From :func:`sp_basis` (shared by all waves of the event).
    amp_s, amp_p : (N,) complex [1]
        Amplitude coefficients of the child (e.g. ``rs, rp`` or scaled ``ts, tp``).

    Returns
    -------
    (N, 3, 2) complex

    Examples
    --------
    A perfect mirror at normal incidence (rs = -1, rp = +1) flips the field:

    >>> k = np.array([[0.0, 0.0, 1.0]])
    >>> s, _ = sp_basis(k, -k)
    >>> M = initial_field_matrix([[1.0, 0, 0]], [[0.0, 1, 0]])
    >>> Mr = apply_interface(M, k, -k, s, np.array([-1.0]), np.array([1.0]))
    >>> np.allclose(Mr, -M)
    True
    """
    M = np.asarray(M, dtype=complex)
    k_in = np.asarray(k_in, dtype=float)
    k_out = np.asarray(k_out, dtype=float)
    s = np.asarray(s_hat, dtype=float)
    p_in = _unit(np.cross(k_in, s))
    p_out = _unit(np.cross(k_out, s))
    a_s = np.einsum("...i,...ik->...k", s, M)  # (N, 2): s component of each column
    a_p = np.einsum("...i,...ik->...k", p_in, M)
    amp_s = np.asarray(amp_s, dtype=complex)[..., None]
    amp_p = np.asarray(amp_p, dtype=complex)[..., None]
    return s[..., :, None] * (amp_s * a_s)[..., None, :] + p_out[..., :, None] * (amp_p * a_p)[..., None, :]


def output_coherency(M, J):
    """The ray's ``(3, 3)`` coherency ``M J M^H`` [relative power].

    Parameters
    ----------
    M : (..., 3, 2) complex
    J : (2, 2) or (..., 2, 2) complex
    """
    M = np.asarray(M, dtype=complex)
    J = np.asarray(J, dtype=complex)
    return np.einsum("...ik,...kl,...jl->...ij", M, J, M.conj())


def ray_power(M, J):
    """Relative power ``trace(M J M^H)`` of each ray.

    Parameters
    ----------
    M : (..., 3, 2) complex
        Field matrices.
    J : (2, 2) or (..., 2, 2) complex
        Input coherency (trace 1 for unit launch power).

    Returns
    -------
    (...) float [1]
        Multiply by the ray's launch power [W] for watts.

    Examples
    --------
    >>> M = initial_field_matrix([[1.0, 0, 0]], [[0.0, 1, 0]]) * np.sqrt(0.25)
    >>> from tracer.polarization import stokes_to_coherency, unpolarised
    >>> float(ray_power(M, stokes_to_coherency(unpolarised()))[0])
    0.25
    """
    M = np.asarray(M, dtype=complex)
    J = np.asarray(J, dtype=complex)
    return np.einsum("...ik,...kl,...il->...", M, J, M.conj()).real


def jones_in_frame(M, out_x, out_y):
    """Jones matrix of a path, from the source input basis to an output basis.

    ``Jones[a, k] = out_a . M[:, k]`` with ``out_0 = out_x`` and ``out_1 = out_y``.

    Parameters
    ----------
    M : (..., 3, 2) complex
        Field matrices.
    out_x, out_y : (3,) or (..., 3) float [1]
        Orthonormal output axes transverse to the ray; use ``out_x x out_y = k`` for
        Stokes and Mueller matrices in our handedness convention (see
        :func:`transverse_frame`).

    Returns
    -------
    (..., 2, 2) complex
    """
    M = np.asarray(M, dtype=complex)
    B = np.stack(np.broadcast_arrays(np.asarray(out_x, float), np.asarray(out_y, float)), axis=-2)
    return np.einsum("...ai,...ik->...ak", B, M)


def detector_jones(M, x_axis, *, directions):
    """Jones matrices of rays in the right-handed transverse frame of a detector.

    The frame is ``x' = x_axis`` made transverse to the ray and ``y' = k x x'``: right-handed
    about the propagation direction ``k``, so a ray has one Stokes vector whatever the
    detector's normal (for a detector facing the light, ``k = -normal`` and
    ``y' = -normal x x_axis``), and free space is the identity.

    Parameters
    ----------
    M : (N, 3, 2) complex
    x_axis : (3,) or (N, 3) float [1]
        Detector x axis.
    directions : (N, 3) float [1]
        Ray directions ``k``.

    Returns
    -------
    jones : (N, 2, 2) complex
        From the source input basis to ``(x', y')``.

    Examples
    --------
    A ray launched along -z with its source frame (x, -y) meets a detector of normal
    +z and x axis x: free space is the identity.

    >>> k = np.array([[0.0, 0, -1]])
    >>> M = initial_field_matrix(*transverse_frame(k, np.array([1.0, 0, 0])))
    >>> detector_jones(M, np.array([1.0, 0, 0]), directions=k)[0].real.tolist()
    [[1.0, 0.0], [0.0, 1.0]]
    """
    k = np.atleast_2d(np.asarray(directions, dtype=float))
    xp, yp = transverse_frame(k, x_axis)
    return jones_in_frame(np.asarray(M, dtype=complex), xp, yp)


def detector_stokes(M, J, x_axis, y_axis=None, *, directions=None):
    """Stokes vectors [relative power] of rays in a detector frame.

    Parameters
    ----------
    M : (N, 3, 2) complex
        Field matrices of the rays.
    J : (2, 2) or (N, 2, 2) complex
        Input coherency of their source(s).
    x_axis : (3,) or (N, 3) float [1]
        Detector x axis.
    y_axis : (3,) or (N, 3) float [1], optional
        Used only without ``directions``.
    directions : (N, 3) float [1], optional
        Ray directions. When given (recommended), the field is projected on the frame
        ``x' = x_axis`` made transverse to the ray, ``y' = k x x'`` (:func:`detector_jones`,
        right-handed about the ray, so ``S0`` is the full ray power also for oblique
        rays): S1 > 0 is along ``x_axis``, S2 > 0 at +45 deg from ``x'`` towards
        ``k x x'`` and S3 > 0 right-handed about the ray. Without ``directions`` the field
        is projected on ``x_axis`` and ``y_axis`` as given; the caller makes sure that
        ``x_axis x y_axis = k``.

    Returns
    -------
    (N, 4) float
        Multiply by the rays' launch power [W] for watts.
    """
    J = np.asarray(J, complex)
    if directions is None:
        if y_axis is None:
            raise ValueError("detector_stokes needs y_axis or directions")
        jones = jones_in_frame(np.asarray(M, dtype=complex), x_axis, y_axis)
    else:
        jones = detector_jones(M, x_axis, directions=directions)
    return coherency_to_stokes(jones @ J @ np.conj(np.swapaxes(jones, -1, -2)))


def detector_mueller(M, x_axis, *, directions):
    """Mueller matrices of ray paths as reported at a detector, ``(N, 4, 4)``.

    Maps the source Stokes vector (input basis) to the Stokes vector that
    :func:`detector_stokes` reports: ``mueller_from_jones`` of :func:`detector_jones`. So
    ``detector_mueller(...) @ S_in == detector_stokes(M, stokes_to_coherency(S_in), ...)``,
    and an empty path (source frame transverse-equal to the detector frame) is the
    identity, determinant +1.
    """
    return mueller_from_jones(detector_jones(M, x_axis, directions=directions))


def path_mueller(M, out_x, out_y):
    """Mueller matrix of a path: :func:`mueller_from_jones` of :func:`jones_in_frame`.

    Parameters
    ----------
    M : (..., 3, 2) complex
        Field matrices at the end of the path.
    out_x, out_y : (3,) or (..., 3) float [1]
        Output frame (``out_x x out_y = k`` for our handedness).

    Returns
    -------
    (..., 4, 4) float
        Maps the source Stokes vector (input basis) to the output Stokes vector
        [relative power].
    """
    return mueller_from_jones(jones_in_frame(M, out_x, out_y))
