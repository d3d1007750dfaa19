"""Polarisation calculus: field matrices, coherency, Stokes, Jones, Mueller.

Our convention
--------------
**Field matrix.** Every ray carries a complex ``(3, 2)`` field matrix ``M`` in the world
frame. Column ``k`` is the ray's electric field (a 3-vector) for a unit-power input
state ``k`` of its source. The two input states are linear polarisations along two
orthonormal vectors spanning the source's transverse plane: ``x_axis`` and
``y_axis = direction x x_axis`` (so ``(x_axis, y_axis, direction)`` is right-handed).
At launch ``M = [x_axis | y_axis]`` (:func:`initial_field_matrix`).

**Coherency.** A source polarisation -- fully polarised, partly polarised or
unpolarised -- is a ``(2, 2)`` Hermitian coherency matrix ``J`` in that input basis,
``J_ij = <E_i E_j*>``, with ``trace(J) = 1`` for unit power. After any sequence of
interfaces the ray's output coherency is the ``(3, 3)`` matrix ``M J M^H`` and its
relative power is ``trace(M J M^H)`` (:func:`ray_power`); a ray launched with power
``P0`` [W] carries ``P0 * trace(M J M^H)``. One trace therefore serves every input
polarisation, and each path's Jones matrix (:func:`jones_in_frame`), Mueller matrix,
diattenuation and retardance follow from ``M``. This is Jones calculus carried in 3D, in
the spirit of the 3D polarisation ray-tracing calculus of [1]_ and [2]_.

**Time dependence** is ``exp(-i omega t)`` (complex index ``n + i kappa``, kappa >= 0).

**Stokes parameters** in a transverse basis ``(x, y)`` with ``x x y = k`` (the direction
of propagation):

* ``S0 = |Ex|**2 + |Ey|**2``
* ``S1 = |Ex|**2 - |Ey|**2``             (S1 > 0: linear along x)
* ``S2 = 2 Re(Ex Ey*)``                  (S2 > 0: linear at +45 deg, from x towards y)
* ``S3 = 2 Im(Ex Ey*)``                  (S3 > 0: right-handed circular)

Handedness (common practice, no source; the "optics" naming of Born & Wolf, also used
by Jackson [4]_ Sec. 7.2): *right-handed* means that an observer looking towards the
source sees the field vector rotate **clockwise** in time. With ``exp(-i omega t)`` the
state ``Ey = -i Ex`` gives ``E(t) = Re[(x + (-i) y) e^(-i omega t)] = (cos wt, -sin wt)``,
which turns clockwise when seen from ``+k`` (the receiver), and ``Im(Ex Ey*) = |Ex|**2 >
0``: right-handed has S3 > 0. (``Ey = +i Ex`` is left-handed, S3 < 0.) Note that this
``S3`` has the opposite sign of the textbook ``i(Ex Ey* - Ey Ex*)`` written for
``exp(+i omega t)`` fields; the physical meaning (S3 > 0 right-handed) is the same.

**Interfaces** (:func:`sp_basis`, :func:`apply_interface`). ``s`` is perpendicular to
the plane of incidence and the same vector for the incident, reflected and transmitted
waves; for each wave ``p = k x s``, so ``(s, p, k)`` is right-handed. With this basis
the Fresnel coefficients are

* ``rs = (n1 c1 - n2 c2) / (n1 c1 + n2 c2)``, ``ts = 2 n1 c1 / (n1 c1 + n2 c2)``
* ``rp = (n2 c1 - n1 c2) / (n2 c1 + n1 c2)``, ``tp = 2 n1 c1 / (n2 c1 + n1 c2)``

(these follow from continuity of tangential E and H; ``tests/test_polarization.py``
checks the matching numerically). At normal incidence ``rp = -rs`` and both describe
the same lab-frame field ``E_r = rs E_i``: because ``p_r = -p_i`` there, the factor
``rp`` on ``p_r`` is a factor ``-rp = rs`` on ``p_i``. A perfect conductor (``n2 -> i
inf``) has ``rs = -1`` and ``rp = +1`` at every angle of incidence, which gives
``E_r = -E_i`` at normal incidence.

References
----------
.. [1] G. Yun, K. Crabtree, R. A. Chipman, "Three-dimensional polarization ray-tracing
   calculus I: definition and diattenuation", Applied Optics 50(18), 2855-2865 (2011).
.. [2] G. Yun, S. C. McClain, R. A. Chipman, "Three-dimensional polarization ray-tracing
   calculus II: retardance", Applied Optics 50(18), 2866-2874 (2011).
.. [3] R. A. Chipman, W. S. T. Lam, G. Young, "Polarized Light and Optical Systems",
   CRC Press (2018); also R. M. A. Azzam, N. M. Bashara, "Ellipsometry and Polarized
   Light", North-Holland (1977), for ``M = A (J (x) J*) A^-1``.
.. [4] J. D. Jackson, "Classical Electrodynamics", 3rd ed., Wiley (1999).
.. [5] S.-Y. Lu, R. A. Chipman, "Interpretation of Mueller matrices based on polar
   decomposition", J. Opt. Soc. Am. A 13(5), 1106-1113 (1996).

(Bibliographic details recalled from memory.)

Examples
--------
>>> import numpy as np
>>> J = stokes_to_coherency(linear(0.0))
>>> M = initial_field_matrix(np.array([[1.0, 0, 0]]), np.array([[0.0, 1, 0]]))
>>> float(ray_power(M, J)[0])
1.0
"""

from __future__ import annotations

import numpy as np

from tracer.errors import TracerError
from tracer.tolerances import NORMAL_INCIDENCE_SIN, STOKES_DOP_TOL

__all__ = [
    "PolarizationError",
    "stokes_to_coherency",
    "coherency_to_stokes",
    "linear",
    "circular",
    "elliptical",
    "unpolarised",
    "partial",
    "validate_stokes",
    "degree_of_polarization",
    "initial_field_matrix",
    "transverse_frame",
    "sp_basis",
    "apply_interface",
    "ray_power",
    "output_coherency",
    "detector_stokes",
    "detector_jones",
    "detector_mueller",
    "jones_in_frame",
    "mueller_from_jones",
    "path_mueller",
    "diattenuation",
    "retardance",
    "polar_decomposition",
]

# A (4, 4) of M = A (J kron J*) A^-1, for our Stokes definition with
# e = E kron E* = (Ex Ex*, Ex Ey*, Ey Ex*, Ey Ey*):
#   S0 = e0 + e3, S1 = e0 - e3, S2 = e1 + e2, S3 = -i (e1 - e2) = 2 Im(Ex Ey*).
_A = np.array(
    [
        [1, 0, 0, 1],
        [1, 0, 0, -1],
        [0, 1, 1, 0],
        [0, -1j, 1j, 0],
    ],
    dtype=complex,
)
_A_INV = np.linalg.inv(_A)


class PolarizationError(TracerError, ValueError):
    """A polarisation state or argument is not physical (e.g. DOP > 1)."""


# ---------------------------------------------------------------------------
# Stokes <-> coherency
# ---------------------------------------------------------------------------


def stokes_to_coherency(stokes):
    """Coherency matrix of a Stokes vector, in the basis (x, y).

    Parameters
    ----------
    stokes : (..., 4) float [W or 1]
        Stokes vectors (S0, S1, S2, S3), our convention (module docstring).

    Returns
    -------
    (..., 2, 2) complex
        ``J = 1/2 [[S0 + S1, S2 + i S3], [S2 - i S3, S0 - S1]]``, ``J_ij = <E_i E_j*>``.

    Examples
    --------
    >>> stokes_to_coherency([1.0, 0.0, 0.0, 0.0]).real
    array([[0.5, 0. ],
           [0. , 0.5]])
    """
    s = np.asarray(stokes, dtype=float)
    if s.shape[-1:] != (4,):
        raise PolarizationError(f"Stokes vectors need a last axis of length 4, got shape {s.shape}")
    s0, s1, s2, s3 = s[..., 0], s[..., 1], s[..., 2], s[..., 3]
    J = np.empty(s.shape[:-1] + (2, 2), dtype=complex)
    J[..., 0, 0] = 0.5 * (s0 + s1)
    J[..., 0, 1] = 0.5 * (s2 + 1j * s3)
    J[..., 1, 0] = 0.5 * (s2 - 1j * s3)
    J[..., 1, 1] = 0.5 * (s0 - s1)
    return J


def coherency_to_stokes(coherency):
    """Stokes vector of a coherency matrix in the basis (x, y).

    Parameters
    ----------
    coherency : (..., 2, 2) complex [W or 1]
        ``J_ij = <E_i E_j*>``.

    Returns
    -------
    (..., 4) float
        (S0, S1, S2, S3) with ``S2 = 2 Re J_xy`` and ``S3 = 2 Im J_xy``.

    Examples
    --------
    >>> coherency_to_stokes(stokes_to_coherency([1.0, 0.0, 0.6, 0.8]))
    array([1. , 0. , 0.6, 0.8])
    """
    J = np.asarray(coherency, dtype=complex)
    if J.shape[-2:] != (2, 2):
        raise PolarizationError(f"coherency matrices need last axes (2, 2), got shape {J.shape}")
    jxx = J[..., 0, 0].real
    jyy = J[..., 1, 1].real
    jxy = J[..., 0, 1]
    return np.stack([jxx + jyy, jxx - jyy, 2.0 * jxy.real, 2.0 * jxy.imag], axis=-1)


# ---------------------------------------------------------------------------
# Named states (normalised S0 = 1)
# ---------------------------------------------------------------------------


def linear(angle):
    """Stokes vector of linear polarisation at ``angle`` from x towards y.

    Parameters
    ----------
    angle : float [rad]

    Examples
    --------
    >>> linear(0.0)
    array([1., 1., 0., 0.])
    """
    a = np.asarray(angle, dtype=float)
    one = np.ones_like(a)
    return np.stack([one, np.cos(2 * a), np.sin(2 * a), np.zeros_like(a)], axis=-1)


def circular(handedness):
    """Stokes vector of circular polarisation.

    Parameters
    ----------
    handedness : "right" or "left"
        Right-handed (S3 = +1) rotates clockwise as seen by an observer looking towards
        the source (module docstring).

    Examples
    --------
    >>> circular("right")
    array([1., 0., 0., 1.])
    """
    h = str(handedness).strip().lower()
    if h in ("right", "r", "rhc", "rcp"):
        return np.array([1.0, 0.0, 0.0, 1.0])
    if h in ("left", "l", "lhc", "lcp"):
        return np.array([1.0, 0.0, 0.0, -1.0])
    raise PolarizationError(f"circular handedness must be 'right' or 'left', got {handedness!r}")


def elliptical(azimuth, ellipticity):
    """Stokes vector of a fully polarised elliptical state.

    Parameters
    ----------
    azimuth : float [rad]
        Orientation psi of the major axis, from x towards y.
    ellipticity : float [rad]
        Ellipticity angle chi, ``tan(chi) = b / a``, in [-pi/4, pi/4]; chi > 0 is
        right-handed (S3 > 0).

    Returns
    -------
    (..., 4) float
        ``(1, cos 2chi cos 2psi, cos 2chi sin 2psi, sin 2chi)``.

    Examples
    --------
    >>> np.round(elliptical(0.0, np.pi / 4), 12)
    array([1., 0., 0., 1.])
    """
    psi = np.asarray(azimuth, dtype=float)
    chi = np.asarray(ellipticity, dtype=float)
    if np.any(np.abs(chi) > np.pi / 4 + STOKES_DOP_TOL):
        raise PolarizationError(
            f"ellipticity angle must lie in [-pi/4, pi/4] rad (|b/a| <= 1), got {ellipticity!r}"
        )
    psi, chi = np.broadcast_arrays(psi, chi)
    return np.stack(
        [
            np.ones_like(psi),
            np.cos(2 * chi) * np.cos(2 * psi),
            np.cos(2 * chi) * np.sin(2 * psi),
            np.sin(2 * chi),
        ],
        axis=-1,
    )


def unpolarised():
    """Stokes vector of unpolarised light, ``(1, 0, 0, 0)``."""
    return np.array([1.0, 0.0, 0.0, 0.0])


def validate_stokes(stokes, *, where="Stokes vector"):
    """Check that Stokes vectors are physical; return them as float arrays.

    Parameters
    ----------
    stokes : (..., 4) float
    where : str
        Names the offending input in the error message.

    Raises
    ------
    PolarizationError
        When the shape is wrong, a value is not finite, S0 <= 0, or the degree of
        polarisation exceeds 1 (beyond ``STOKES_DOP_TOL``).
    """
    s = np.asarray(stokes, dtype=float)
    if s.shape[-1:] != (4,):
        raise PolarizationError(f"{where}: expected 4 values (S0, S1, S2, S3), got shape {s.shape}")
    if not np.all(np.isfinite(s)):
        raise PolarizationError(f"{where}: values must be finite, got {s.tolist()}")
    if np.any(s[..., 0] <= 0):
        raise PolarizationError(f"{where}: S0 must be positive, got {s.tolist()}")
    dop = np.sqrt(np.sum(s[..., 1:] ** 2, axis=-1)) / s[..., 0]
    if np.any(dop > 1 + STOKES_DOP_TOL):
        raise PolarizationError(
            f"{where}: degree of polarisation sqrt(S1^2+S2^2+S3^2)/S0 = {np.max(dop):.6g} "
            "exceeds 1; expected S1^2 + S2^2 + S3^2 <= S0^2"
        )
    return s


def partial(stokes):
    """A validated Stokes vector, normalised to S0 = 1.

    Parameters
    ----------
    stokes : (4,) float
        Any physical Stokes vector (S0 > 0, DOP <= 1).

    Examples
    --------
    >>> partial([2.0, 1.0, 0.0, 0.0])
    array([1. , 0.5, 0. , 0. ])
    >>> partial([1.0, 1.0, 1.0, 0.0])  # doctest: +ELLIPSIS
    Traceback (most recent call last):
    ...
    tracer.polarization.PolarizationError: Stokes vector: degree of polarisation ...
    """
    s = validate_stokes(stokes)
    return s / s[..., :1]


def degree_of_polarization(state):
    """Degree of polarisation of Stokes vectors or coherency matrices.

    Parameters
    ----------
    state : (..., 4) float or (..., 2, 2) complex
        Stokes vectors, or 2x2 coherency matrices.

    Returns
    -------
    (...) float [1]
        ``sqrt(S1^2 + S2^2 + S3^2) / S0``; NaN where S0 = 0.

    Examples
    --------
    >>> float(degree_of_polarization([1.0, 0.3, 0.4, 0.0]))
    0.5
    """
    a = np.asarray(state)
    if a.shape[-2:] == (2, 2):
        s = coherency_to_stokes(a)
    elif a.shape[-1:] == (4,):
        s = a.astype(float)
    else:
        raise PolarizationError(f"expected (..., 4) Stokes or (..., 2, 2) coherency, got {a.shape}")
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.sqrt(np.sum(s[..., 1:] ** 2, axis=-1)) / np.where(s[..., 0] > 0, s[..., 0], np.nan)


# ---------------------------------------------------------------------------
# Field matrices in 3D
# ---------------------------------------------------------------------------


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


def detector_jones(M, x_axis, y_axis, *, directions):
    """Jones matrices of rays in the right-handed transverse frame of a detector.

    Parameters
    ----------
    M : (N, 3, 2) complex
    x_axis, y_axis : (3,) or (N, 3) float [1]
        Detector axes.
    directions : (N, 3) float [1]
        Ray directions ``k``.

    Returns
    -------
    jones : (N, 2, 2) complex
        From the source input basis to ``(x', y')`` with ``x' = x_axis`` made
        transverse to ``k`` and ``y' = k x x'`` (right-handed with ``k``).
    flip : (N,) bool
        Where ``y'`` points away from ``y_axis`` (e.g. a detector facing the light,
        whose ``x_axis x y_axis`` is its normal, opposite to ``k``). Reported Stokes
        vectors negate S2 there, so that S2 > 0 is towards ``y_axis`` while S3 keeps its
        physical meaning (see :func:`detector_stokes`).
    """
    k = np.atleast_2d(np.asarray(directions, dtype=float))
    xp, yp = transverse_frame(k, x_axis)
    jones = jones_in_frame(np.asarray(M, dtype=complex), xp, yp)
    yref = np.broadcast_to(np.asarray(y_axis, dtype=float), yp.shape)
    return jones, np.sum(yp * yref, axis=-1) < 0


def detector_stokes(M, J, x_axis, y_axis, *, directions=None):
    """Stokes vectors [relative power] of rays in a detector frame.

    Parameters
    ----------
    M : (N, 3, 2) complex
        Field matrices of the rays.
    J : (2, 2) or (N, 2, 2) complex
        Input coherency of their source(s).
    x_axis, y_axis : (3,) or (N, 3) float [1]
        Detector axes (the pixel columns and rows).
    directions : (N, 3) float [1], optional
        Ray directions. When given (recommended), the field is projected on the frame
        ``x' = x_axis`` made transverse to the ray, ``y' = k x x'`` (so ``S0`` is the
        full ray power also for oblique rays), and the Stokes vector is then expressed
        so that S1 > 0 is along ``x_axis``, S2 > 0 is at +45 deg from ``x_axis`` towards
        ``y_axis``, and S3 > 0 is right-handed about the ray's own direction, whichever
        way the detector axes are oriented relative to the ray (mirroring the y axis
        flips S2 only). Without ``directions`` the field is projected on ``x_axis``
        and ``y_axis`` as given; the caller makes sure that ``x_axis x y_axis = k``.

    Returns
    -------
    (N, 4) float
        Multiply by the rays' launch power [W] for watts.
    """
    J = np.asarray(J, complex)
    if directions is None:
        jones = jones_in_frame(np.asarray(M, dtype=complex), x_axis, y_axis)
        return coherency_to_stokes(jones @ J @ np.conj(np.swapaxes(jones, -1, -2)))
    jones, flip = detector_jones(M, x_axis, y_axis, directions=directions)
    S = coherency_to_stokes(jones @ J @ np.conj(np.swapaxes(jones, -1, -2)))
    S[flip, 2] *= -1.0
    return S


def detector_mueller(M, x_axis, y_axis, *, directions):
    """Mueller matrices of ray paths as reported at a detector, ``(N, 4, 4)``.

    Maps the source Stokes vector (input basis) to the Stokes vector that
    :func:`detector_stokes` reports: ``mueller_from_jones`` of :func:`detector_jones`,
    with the S2 row negated where ``flip``. So ``detector_mueller(...) @ S_in ==
    detector_stokes(M, stokes_to_coherency(S_in), ...)``.
    """
    jones, flip = detector_jones(M, x_axis, y_axis, directions=directions)
    mm = mueller_from_jones(jones)
    mm[flip, 2, :] *= -1.0
    return mm


# ---------------------------------------------------------------------------
# Jones / Mueller analysis
# ---------------------------------------------------------------------------


def mueller_from_jones(jones):
    """Mueller matrix of a (non-depolarising) Jones matrix.

    ``M = A (T kron T*) A^-1`` (Eq. 6.99-type form in [3]_; Azzam & Bashara Sec. 2.11),
    with ``A`` written for our Stokes convention (S3 = 2 Im(Ex Ey*)).

    Parameters
    ----------
    jones : (..., 2, 2) complex

    Returns
    -------
    (..., 4, 4) float

    Examples
    --------
    >>> mueller_from_jones(np.array([[1.0, 0.0], [0.0, 0.0]]))
    array([[0.5, 0.5, 0. , 0. ],
           [0.5, 0.5, 0. , 0. ],
           [0. , 0. , 0. , 0. ],
           [0. , 0. , 0. , 0. ]])
    """
    T = np.asarray(jones, dtype=complex)
    if T.shape[-2:] != (2, 2):
        raise PolarizationError(f"Jones matrices need last axes (2, 2), got {T.shape}")
    # Kronecker product T (x) T*, batched: K[(i,j),(k,l)] = T[i,k] T*[j,l]
    K = np.einsum("...ik,...jl->...ijkl", T, T.conj()).reshape(T.shape[:-2] + (4, 4))
    return (_A @ K @ _A_INV).real


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


def polar_decomposition(jones):
    """Polar decomposition ``T = U P`` of Jones matrices.

    ``U`` unitary (retarder), ``P = (T^H T)^(1/2)`` Hermitian positive semidefinite
    (diattenuator), from the singular value decomposition ``T = W S V^H``:
    ``U = W V^H``, ``P = V S V^H``. (Jones-matrix form of the decomposition of [5]_.)

    Parameters
    ----------
    jones : (..., 2, 2) complex

    Returns
    -------
    U, P : (..., 2, 2) complex
    """
    T = np.asarray(jones, dtype=complex)
    W, S, Vh = np.linalg.svd(T)
    U = W @ Vh
    P = np.conj(np.swapaxes(Vh, -1, -2)) @ (S[..., :, None] * Vh)
    return U, P


def diattenuation(jones):
    """Diattenuation ``(s1^2 - s2^2) / (s1^2 + s2^2)`` from the singular values.

    Parameters
    ----------
    jones : (..., 2, 2) complex

    Returns
    -------
    (...) float [1]
        0 for a retarder or a neutral attenuator, 1 for an ideal polariser; NaN for a
        zero matrix.

    Examples
    --------
    >>> float(diattenuation(np.array([[1.0, 0.0], [0.0, 0.0]])))
    1.0
    """
    s = np.linalg.svd(np.asarray(jones, dtype=complex), compute_uv=False)
    p1, p2 = s[..., 0] ** 2, s[..., 1] ** 2
    with np.errstate(invalid="ignore", divide="ignore"):
        return (p1 - p2) / (p1 + p2)


def retardance(jones):
    """Retardance of the unitary part of a Jones matrix.

    From the polar decomposition ``T = U P`` (:func:`polar_decomposition`, [5]_): with
    ``U``'s eigenvalues ``e^(i a1)`` and ``e^(i a2)`` the retardance is
    ``|arg(e^(i a1) e^(-i a2))|`` in [0, pi]. This equals Lu & Chipman's
    ``arccos(tr(M_R)/2 - 1)`` for the retarder's Mueller matrix ``M_R`` (Eq. 19 in
    [5]_). For a singular (polarising) matrix the unitary part is not unique; the SVD
    choice is used.

    Parameters
    ----------
    jones : (..., 2, 2) complex

    Returns
    -------
    (...) float [rad]

    Examples
    --------
    >>> qwp = np.diag([1.0, 1j])
    >>> float(retardance(qwp)) == np.pi / 2
    True
    """
    U, _ = polar_decomposition(jones)
    ev = np.linalg.eigvals(U)
    return np.abs(np.angle(ev[..., 0] * np.conj(ev[..., 1])))
