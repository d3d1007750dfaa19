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

**Detector frame** (:func:`detector_jones`, :func:`detector_stokes`,
:func:`detector_mueller`). A detector reads a ray in ``x' = x_axis`` made transverse to
the ray and ``y' = k x x'``: right-handed about the propagation direction, whichever way
the detector faces (for a detector facing the light, ``k = -normal``, so ``y'`` is
``-normal x x_axis``, opposite to the detector's pixel axis ``v``). A beam therefore has
one Stokes vector on every detector and in ``trace_sequence``, and free space between a
source and a detector sharing its ``x_axis`` is the identity Mueller matrix
(``tests/test_conventions.py`` checks this against ``py_pol``).

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

from tracer.polarization.fields import (
    apply_interface,
    detector_jones,
    detector_mueller,
    detector_stokes,
    initial_field_matrix,
    jones_in_frame,
    output_coherency,
    path_mueller,
    ray_power,
    sp_basis,
    transverse_frame,
)
from tracer.polarization.jones import diattenuation, mueller_from_jones, polar_decomposition, retardance
from tracer.polarization.states import (
    PolarizationError,
    circular,
    coherency_to_stokes,
    degree_of_polarization,
    elliptical,
    linear,
    partial,
    stokes_to_coherency,
    unpolarised,
    validate_stokes,
)

from tracer.polarization import fields as _fields
from tracer.polarization import jones as _jones
from tracer.polarization import states as _states

__all__ = [*_states.__all__, *_fields.__all__, *_jones.__all__]
