"""Tests of tracer.polarization against outside facts.

Sources named beside each test. "From memory" marks values recalled rather than read.
"""

import numpy as np
import pytest

from tracer import polarization as pol
from tracer.errors import TracerError

RNG = np.random.default_rng(20240611)


def field_in_time(ex, ey, n=400):
    """E(t) = Re[(Ex x + Ey y) exp(-i w t)] over one period, as (n, 2) real."""
    wt = np.linspace(0.0, 2 * np.pi, n, endpoint=False)
    ph = np.exp(-1j * wt)
    return np.stack([(ex * ph).real, (ey * ph).real], axis=-1), wt


def rotation_sense(ex, ey):
    """Sign of z-component of E x dE/dt, seen from +z (the receiver, wave along +z).

    > 0: counter-clockwise as seen by an observer looking towards the source;
    < 0: clockwise.
    """
    E, wt = field_in_time(ex, ey)
    dE = np.gradient(E, wt, axis=0)
    return np.sign(np.mean(E[:, 0] * dE[:, 1] - E[:, 1] * dE[:, 0]))


def jones_vector_of(stokes):
    """A Jones vector (x, y) of a pure Stokes state (principal eigenvector of J)."""
    w, v = np.linalg.eigh(pol.stokes_to_coherency(stokes))
    return v[:, -1] * np.sqrt(w[-1])


# ---------------------------------------------------------------------------
# Stokes and handedness
# ---------------------------------------------------------------------------


def test_handedness_right_is_clockwise_for_receiver():
    # Definition (common practice, no source; optics naming as in Born & Wolf and
    # Jackson, Classical Electrodynamics 1999, Sec. 7.2): right-handed = clockwise as
    # seen by an observer looking towards the source. Time dependence exp(-i w t).
    assert rotation_sense(1.0, -1j) < 0  # Ey = -i Ex: clockwise
    assert rotation_sense(1.0, +1j) > 0  # Ey = +i Ex: counter-clockwise
    s_right = pol.coherency_to_stokes(np.outer([1.0, -1j], np.conj([1.0, -1j])) / 2)
    s_left = pol.coherency_to_stokes(np.outer([1.0, 1j], np.conj([1.0, 1j])) / 2)
    assert s_right[3] == pytest.approx(1.0) and s_left[3] == pytest.approx(-1.0)
    # and the named states agree with the rotation they stand for
    ex, ey = jones_vector_of(pol.circular("right"))
    assert rotation_sense(ex, ey) < 0
    ex, ey = jones_vector_of(pol.circular("left"))
    assert rotation_sense(ex, ey) > 0
    for chi in (0.2, -0.3):
        ex, ey = jones_vector_of(pol.elliptical(0.4, chi))
        assert rotation_sense(ex, ey) == -np.sign(chi)


def test_linear_states_point_where_named():
    # S1 > 0 along x, S2 > 0 at +45 deg towards y: the field maximum lies along the angle.
    for ang in (0.0, np.pi / 4, 1.0, -0.7):
        ex, ey = jones_vector_of(pol.linear(ang))
        E, _ = field_in_time(ex, ey)
        i = np.argmax(np.hypot(E[:, 0], E[:, 1]))
        direction = np.arctan2(E[i, 1], E[i, 0])
        assert np.isclose(np.cos(2 * (direction - ang)), 1.0, atol=1e-6)


def test_pure_states_have_unit_dop():
    # S0^2 = S1^2 + S2^2 + S3^2 for any pure state (Goldstein, Polarized Light, 2003).
    E = RNG.normal(size=(200, 2)) + 1j * RNG.normal(size=(200, 2))
    J = np.einsum("ni,nj->nij", E, E.conj())
    S = pol.coherency_to_stokes(J)
    assert np.allclose(S[:, 0] ** 2, np.sum(S[:, 1:] ** 2, axis=1))
    assert np.allclose(pol.degree_of_polarization(S), 1.0)
    assert np.allclose(pol.degree_of_polarization(J), 1.0)
    assert np.allclose(pol.stokes_to_coherency(S), J)


def test_named_states_and_validation():
    assert np.allclose(pol.unpolarised(), [1, 0, 0, 0])
    assert np.allclose(pol.partial([4.0, 1.0, 1.0, 1.0]), [1, 0.25, 0.25, 0.25])
    assert pol.degree_of_polarization(pol.partial([1.0, 0.3, 0.0, 0.4])) == pytest.approx(0.5)
    with pytest.raises(TracerError, match="degree of polarisation"):
        pol.partial([1.0, 0.9, 0.5, 0.0])
    with pytest.raises(TracerError, match="S0 must be positive"):
        pol.partial([0.0, 0.0, 0.0, 0.0])
    with pytest.raises(TracerError):
        pol.circular("clockwise")
    with pytest.raises(TracerError):
        pol.elliptical(0.0, 1.0)
    with pytest.raises(TracerError):
        pol.stokes_to_coherency([1.0, 0.0, 0.0])


# ---------------------------------------------------------------------------
# Jones / Mueller against textbook matrices
# ---------------------------------------------------------------------------


def polariser(theta):
    c, s = np.cos(theta), np.sin(theta)
    return np.array([[c * c, c * s], [c * s, s * s]], dtype=complex)


def rotate(T, theta):
    c, s = np.cos(theta), np.sin(theta)
    R = np.array([[c, -s], [s, c]])
    return R @ T @ R.T


def qwp_fast_x():
    # exp(-i w t): a plane wave is exp(i(n k z - w t)), so the slow axis (y, larger n)
    # gains the larger phase: Jones diag(1, exp(+i pi/2)).
    return np.diag([1.0, 1j])


def test_malus_law():
    # Malus's law I = I0 cos^2(theta) (common practice, no source).
    J_in = pol.stokes_to_coherency(pol.linear(0.0))
    for th in np.linspace(0, np.pi, 13):
        T = polariser(th)
        out = T @ J_in @ T.conj().T
        assert np.trace(out).real == pytest.approx(np.cos(th) ** 2, abs=1e-14)


def test_mueller_of_ideal_linear_polariser():
    # Goldstein, Polarized Light, 2nd ed. 2003, linear polariser at angle theta
    # (matrix recalled from memory): 1/2 [[1, C, S, 0], [C, C^2, CS, 0], [S, CS, S^2, 0], 0]
    for th in (0.0, np.pi / 4, 0.3, 2.0):
        C, S = np.cos(2 * th), np.sin(2 * th)
        ref = 0.5 * np.array([[1, C, S, 0], [C, C * C, C * S, 0], [S, C * S, S * S, 0], [0, 0, 0, 0]])
        assert np.allclose(pol.mueller_from_jones(polariser(th)), ref, atol=1e-14)


def test_mueller_of_quarter_wave_plate():
    # Goldstein, Polarized Light 2003, linear retarder with fast axis horizontal
    # (from memory): [[1,0,0,0],[0,1,0,0],[0,0,cos d, sin d],[0,0,-sin d, cos d]], d = pi/2.
    ref = np.array([[1, 0, 0, 0], [0, 1, 0, 0], [0, 0, 0, 1], [0, 0, -1, 0]], dtype=float)
    assert np.allclose(pol.mueller_from_jones(qwp_fast_x()), ref, atol=1e-14)
    # Physical check of the same sign: +45 deg light through it has y lagging x by a
    # quarter period, i.e. x then y: counter-clockwise for the receiver = left-handed.
    out = qwp_fast_x() @ jones_vector_of(pol.linear(np.pi / 4))
    assert rotation_sense(*out) > 0
    assert (ref @ pol.linear(np.pi / 4))[3] == pytest.approx(-1.0)


def test_mueller_matches_transformed_stokes():
    # M S_in = S(T E) for any Jones matrix and pure input (definition of Mueller matrix).
    T = RNG.normal(size=(50, 2, 2)) + 1j * RNG.normal(size=(50, 2, 2))
    E = RNG.normal(size=(50, 2)) + 1j * RNG.normal(size=(50, 2))
    s_in = pol.coherency_to_stokes(np.einsum("ni,nj->nij", E, E.conj()))
    Eo = np.einsum("nij,nj->ni", T, E)
    s_out = pol.coherency_to_stokes(np.einsum("ni,nj->nij", Eo, Eo.conj()))
    assert np.allclose(np.einsum("nij,nj->ni", pol.mueller_from_jones(T), s_in), s_out)


def test_unpolarised_through_polariser():
    # Half the power, fully polarised (common practice, no source).
    J = pol.stokes_to_coherency(pol.unpolarised())
    for th in (0.0, 0.7):
        out = polariser(th) @ J @ polariser(th).conj().T
        assert np.trace(out).real == pytest.approx(0.5)
        assert pol.degree_of_polarization(out) == pytest.approx(1.0)
        assert np.allclose(pol.coherency_to_stokes(out), 0.5 * pol.linear(th))


def test_diattenuation_and_retardance_of_elements():
    # Ideal polariser D = 1; QWP retardance pi/2, HWP pi; partial polariser with
    # amplitude transmittances 1, a: D = (1 - a^2)/(1 + a^2) (Chipman, Lam, Young 2018,
    # definition of diattenuation).
    assert pol.diattenuation(polariser(0.3)) == pytest.approx(1.0)
    assert pol.diattenuation(np.diag([1.0, 0.5])) == pytest.approx(0.75 / 1.25)
    assert pol.diattenuation(qwp_fast_x()) == pytest.approx(0.0, abs=1e-14)
    assert pol.retardance(qwp_fast_x()) == pytest.approx(np.pi / 2)
    assert pol.retardance(rotate(qwp_fast_x(), 0.4) * np.exp(0.3j)) == pytest.approx(np.pi / 2)
    assert pol.retardance(np.diag([1.0, -1.0])) == pytest.approx(np.pi)
    assert pol.retardance(polariser(0.2)) == pytest.approx(0.0, abs=1e-7)
    # diattenuating retarder: T = U(delta) P -> retardance delta, diattenuation of P
    U = rotate(np.diag([np.exp(-0.6j), np.exp(0.6j)]), 0.9)
    P = rotate(np.diag([0.9, 0.3]), -0.2)
    assert pol.retardance(U @ P) == pytest.approx(1.2)
    assert pol.diattenuation(U @ P) == pytest.approx((0.81 - 0.09) / 0.9)


def test_retardance_against_lu_chipman_mueller_formula():
    # Lu & Chipman, JOSA A 13(5) 1996: R = arccos(tr(M_R)/2 - 1) for a pure
    # retarder's Mueller matrix (from memory).
    for _ in range(20):
        a, b, c, d = RNG.normal(size=4)
        H = np.array([[a, b + 1j * c], [b - 1j * c, d]])
        w, v = np.linalg.eigh(H)
        U = v @ np.diag(np.exp(1j * w)) @ v.conj().T
        Mr = pol.mueller_from_jones(U)
        ref = np.arccos(np.clip(np.trace(Mr) / 2 - 1, -1, 1))
        assert pol.retardance(U) == pytest.approx(ref, abs=1e-7)


# ---------------------------------------------------------------------------
# 3D field matrices and interfaces
# ---------------------------------------------------------------------------


def random_units(n):
    v = RNG.normal(size=(n, 3))
    return v / np.linalg.norm(v, axis=1, keepdims=True)


def test_initial_field_and_power():
    k = random_units(10)
    x, y = pol.transverse_frame(k, np.array([0.3, 0.1, 1.0]))
    assert np.allclose(np.cross(x, y), k)
    M = pol.initial_field_matrix(x, y)
    for S in (pol.unpolarised(), pol.linear(0.3), pol.circular("left"), pol.partial([1, 0.2, 0.1, 0.3])):
        assert np.allclose(pol.ray_power(M, pol.stokes_to_coherency(S)), 1.0)
    assert np.allclose(pol.jones_in_frame(M, x, y), np.eye(2))
    C = pol.output_coherency(M, pol.stokes_to_coherency(pol.linear(0.0)))
    assert np.allclose(C, np.einsum("ni,nj->nij", x, x))


def test_sp_basis_right_handed_and_normal_incidence():
    k = random_units(100)
    n = random_units(100)
    s, p = pol.sp_basis(k, n)
    assert np.allclose(np.sum(s * k, 1), 0) and np.allclose(np.sum(s * n, 1), 0)
    assert np.allclose(np.cross(s, p), k)  # (s, p, k) right-handed
    # normal incidence: any perpendicular, chosen deterministically
    kk = np.array([[0.0, 0.0, 1.0], [0.0, 0.0, -1.0], [1, 1, 1] / np.sqrt(3)])
    s0, p0 = pol.sp_basis(kk, kk)
    s1, _ = pol.sp_basis(kk, -kk)
    assert np.allclose(s0, s1)
    assert np.allclose(np.sum(s0 * kk, 1), 0) and np.allclose(np.linalg.norm(s0, axis=1), 1)
    assert np.all(np.isfinite(p0))


def fresnel_ours(n1, n2, c1):
    """Our convention's Fresnel amplitudes (written out again here for the test)."""
    c2 = np.sqrt(1 - (n1 / n2) ** 2 * (1 - c1**2) + 0j)
    rs = (n1 * c1 - n2 * c2) / (n1 * c1 + n2 * c2)
    ts = 2 * n1 * c1 / (n1 * c1 + n2 * c2)
    rp = (n2 * c1 - n1 * c2) / (n2 * c1 + n1 * c2)
    tp = 2 * n1 * c1 / (n2 * c1 + n1 * c2)
    return rs, rp, ts, tp, c2


def interface_waves(n1, n2, theta, normal=np.array([0.0, 0.0, 1.0])):
    """Incident, reflected and refracted directions at a face z = 0 (light along +z)."""
    k_i = np.array([[np.sin(theta), 0.0, np.cos(theta)]])
    face_n = np.broadcast_to(normal, k_i.shape)
    c1 = np.cos(theta)
    k_r = k_i - 2 * np.sum(k_i * face_n, 1, keepdims=True) * face_n
    st = n1 / n2 * np.sin(theta)
    k_t = np.array([[st, 0.0, np.sqrt(1 - st**2)]])
    return k_i, k_r, k_t, c1


@pytest.mark.parametrize("n1,n2,theta", [(1.0, 1.5, 0.6), (1.5, 1.0, 0.5), (1.0, 1.7, 1.3), (1.33, 1.0, 0.0)])
def test_fresnel_signs_satisfy_maxwell_boundary_conditions(n1, n2, theta):
    # Continuity of tangential E and of tangential H = n k x E (non-magnetic media) at
    # the face (Maxwell's equations; Born & Wolf, Principles of Optics, Sec. 1.5).
    # This fixes the sign convention of rp for p = k x s.
    k_i, k_r, k_t, c1 = interface_waves(n1, n2, theta)
    normal = np.array([[0.0, 0.0, 1.0]])
    s, _ = pol.sp_basis(k_i, normal)
    rs, rp, ts, tp, _ = fresnel_ours(n1, n2, c1)
    x, y = pol.transverse_frame(k_i, np.array([0.2, 1.0, 0.1]))
    M = pol.initial_field_matrix(x, y) @ np.array([[1.0, 0.3j], [0.5, -0.7]])  # arbitrary fields
    Mr = pol.apply_interface(M, k_i, k_r, s, np.atleast_1d(rs), np.atleast_1d(rp))
    Mt = pol.apply_interface(M, k_i, k_t, s, np.atleast_1d(ts), np.atleast_1d(tp))
    for col in range(2):
        E1 = M[0, :, col] + Mr[0, :, col]
        E2 = Mt[0, :, col]
        H1 = n1 * (np.cross(k_i[0], M[0, :, col]) + np.cross(k_r[0], Mr[0, :, col]))
        H2 = n2 * np.cross(k_t[0], Mt[0, :, col])
        assert np.allclose(E1[:2], E2[:2], atol=1e-12)
        assert np.allclose(H1[:2], H2[:2], atol=1e-12)
        # fields stay transverse
        assert abs(np.dot(k_r[0], Mr[0, :, col])) < 1e-12
        assert abs(np.dot(k_t[0], Mt[0, :, col])) < 1e-12


def test_normal_incidence_rp_equals_minus_rs_same_field():
    # At normal incidence our rp = -rs and the lab-frame reflected field is rs E_i
    # (common practice, no source; follows from p_r = -p_i).
    k_i, k_r, _, c1 = interface_waves(1.0, 1.5, 0.0)
    rs, rp, *_ = fresnel_ours(1.0, 1.5, c1)
    assert rp == pytest.approx(-rs)
    s, _ = pol.sp_basis(k_i, np.array([[0.0, 0.0, 1.0]]))
    M = pol.initial_field_matrix(*pol.transverse_frame(k_i, np.array([1.0, 0.4, 0.0])))
    Mr = pol.apply_interface(M, k_i, k_r, s, np.atleast_1d(rs), np.atleast_1d(rp))
    assert np.allclose(Mr, rs * M)


@pytest.mark.parametrize("theta", [0.0, 0.3, 0.9])
def test_perfect_conductor_is_rs_minus_one_rp_plus_one(theta):
    # A perfect conductor has zero tangential E at its surface (Jackson 1999, Sec. 8.1).
    # In our basis (p = k x s) that is rs = -1, rp = +1, the n2 -> i*inf limit of the
    # formulas; at normal incidence E_r = -E_i.
    k_i, k_r, _, c1 = interface_waves(1.0, 1.0, theta)
    rs, rp, *_ = fresnel_ours(1.0, 1e9j, c1)
    assert rs == pytest.approx(-1.0, abs=1e-6) and rp == pytest.approx(1.0, abs=1e-6)
    s, _ = pol.sp_basis(k_i, np.array([[0.0, 0.0, -1.0]]))
    M = pol.initial_field_matrix(*pol.transverse_frame(k_i, np.array([0.3, 1.0, 0.0])))
    Mr = pol.apply_interface(M, k_i, k_r, s, np.array([-1.0]), np.array([1.0]))
    tangential = (M + Mr)[0, :2, :]
    assert np.allclose(tangential, 0, atol=1e-14)
    if theta == 0.0:
        assert np.allclose(Mr, -M)


def test_power_normalised_children_conserve_power():
    # R + T = 1 for a lossless interface (Born & Wolf Sec. 1.5.3), for every input state.
    n1, n2, theta = 1.0, 1.52, 0.8
    k_i, k_r, k_t, c1 = interface_waves(n1, n2, theta)
    rs, rp, ts, tp, c2 = fresnel_ours(n1, n2, c1)
    f = np.sqrt((n2 * c2).real / (n1 * c1))
    s, _ = pol.sp_basis(k_i, np.array([[0.0, 0.0, 1.0]]))
    M = pol.initial_field_matrix(*pol.transverse_frame(k_i, np.array([1.0, 1.0, 0.0])))
    Mr = pol.apply_interface(M, k_i, k_r, s, np.atleast_1d(rs), np.atleast_1d(rp))
    Mt = pol.apply_interface(M, k_i, k_t, s, np.atleast_1d(ts * f), np.atleast_1d(tp * f))
    for S in (pol.unpolarised(), pol.linear(0.2), pol.circular("right"), pol.elliptical(1.0, 0.3)):
        J = pol.stokes_to_coherency(S)
        assert pol.ray_power(Mr, J) + pol.ray_power(Mt, J) == pytest.approx(1.0)


def test_detector_stokes_in_detector_frame():
    # A right-handed circular ray hitting a detector that faces it: S3 > 0 whatever the
    # detector's axis orientation; S1/S2 refer to the frame (x_axis, k x x_axis),
    # right-handed about the ray (common practice, no source).
    k = np.array([[0.0, 0.0, -1.0]])  # travelling towards -z; detector normal +z
    xs, ys = pol.transverse_frame(k, np.array([1.0, 0.0, 0.0]))  # source frame
    M = pol.initial_field_matrix(xs, ys)
    det_x, det_y = np.array([1.0, 0.0, 0.0]), np.array([0.0, 1.0, 0.0])  # y = n x x
    S = pol.detector_stokes(M, pol.stokes_to_coherency(pol.circular("right")), det_x, det_y, directions=k)
    assert np.allclose(S, [[1, 0, 0, 1]])
    # linear along +45 deg from det x towards k x det x = -det y (a physical direction)
    d45 = np.array([1.0, -1.0, 0.0]) / np.sqrt(2)
    Ml = pol.initial_field_matrix(d45[None], np.cross(k, d45[None]))
    S = pol.detector_stokes(Ml, pol.stokes_to_coherency(pol.linear(0.0)), det_x, det_y, directions=k)
    assert np.allclose(S, [[1, 0, 1, 0]])
    # ... the same beam has the same Stokes vector on a detector facing the other way
    S_back = pol.detector_stokes(Ml, pol.stokes_to_coherency(pol.linear(0.0)), det_x, -det_y,
                                 directions=k)
    assert np.allclose(S_back, S)
    # oblique ray: S0 is the full power
    ko = np.array([[0.3, 0.0, -1.0]]) / np.hypot(0.3, 1.0)
    Mo = pol.initial_field_matrix(*pol.transverse_frame(ko, np.array([1.0, 0.0, 0.0])))
    S = pol.detector_stokes(Mo, pol.stokes_to_coherency(pol.linear(0.0)), det_x, det_y, directions=ko)
    assert np.allclose(S, [[1, 1, 0, 0]])


def test_path_mueller_of_two_fold_mirror_periscope():
    # Two perfect 45-deg fold mirrors in a periscope (parallel mirrors) restore the
    # polarisation: identity Jones in the transported frame (common practice, no source).
    k0 = np.array([[0.0, 0.0, 1.0]])
    x0, y0 = pol.transverse_frame(k0, np.array([1.0, 0.0, 0.0]))
    M = pol.initial_field_matrix(x0, y0)
    n1 = np.array([[0.0, 1.0, -1.0]]) / np.sqrt(2)
    k1 = k0 - 2 * np.sum(k0 * n1, 1, keepdims=True) * n1
    s, _ = pol.sp_basis(k0, n1)
    M = pol.apply_interface(M, k0, k1, s, np.array([-1.0]), np.array([1.0]))
    k2 = k1 - 2 * np.sum(k1 * n1, 1, keepdims=True) * n1
    s, _ = pol.sp_basis(k1, n1)
    M = pol.apply_interface(M, k1, k2, s, np.array([-1.0]), np.array([1.0]))
    assert np.allclose(k2, k0)
    jones = pol.jones_in_frame(M, x0, y0)[0]
    assert np.allclose(jones, np.eye(2))
    assert pol.diattenuation(jones) == pytest.approx(0.0, abs=1e-12)
    assert pol.retardance(jones) == pytest.approx(0.0, abs=1e-7)


def tir_coefficients(n1, n2, c1):
    """Our convention's rs, rp beyond the critical angle (branch Im(n2 c2) >= 0)."""
    q2 = np.sqrt(n2**2 - (n1**2) * (1 - c1**2) + 0j)
    q2 = np.where(q2.imag < 0, -q2, q2)
    c2 = q2 / n2
    rs = (n1 * c1 - n2 * c2) / (n1 * c1 + n2 * c2)
    rp = (n2 * c1 - n1 * c2) / (n2 * c1 + n1 * c2)
    return rs, rp


def test_fresnel_rhomb_is_a_quarter_wave_retarder():
    # Two total internal reflections at 54.6 deg in glass of n = 1.51 give 45 deg each,
    # a quarter wave in all (Hecht, Optics, 4th ed. 2002, Sec. 8.6, from memory). The
    # relative phase of one TIR, Born & Wolf 1999 Eq. 1.5(60):
    # tan(delta/2) = cos(t) sqrt(sin^2 t - n^2) / sin^2 t, n = n2/n1.
    n_glass, theta = 1.51, np.radians(54.6)
    nrel = 1.0 / n_glass
    delta_one = 2 * np.arctan(np.cos(theta) * np.sqrt(np.sin(theta) ** 2 - nrel**2) / np.sin(theta) ** 2)
    assert np.degrees(delta_one) == pytest.approx(45.0, abs=0.1)
    k0 = np.array([[0.0, 0.0, 1.0]])
    N = np.array([[np.sin(theta), 0.0, -np.cos(theta)]])  # outward normal of the first face
    x0, y0 = pol.transverse_frame(k0, np.array([1.0, 1.0, 0.0]) / np.sqrt(2))  # 45 deg to the plane
    M = pol.initial_field_matrix(x0, y0)
    k, face = k0, N
    for _ in range(2):  # second face is parallel, outward normal reversed
        c1 = -np.sum(k * face, axis=1)
        assert np.allclose(c1, np.cos(theta))
        rs, rp = tir_coefficients(n_glass, 1.0, c1)
        assert np.allclose(np.abs(rs), 1) and np.allclose(np.abs(rp), 1)
        s, _ = pol.sp_basis(k, face)
        k_out = k + 2 * c1[:, None] * face
        M = pol.apply_interface(M, k, k_out, s, rs, rp)
        k, face = k_out, -face
    assert np.allclose(k, k0)
    jones = pol.jones_in_frame(M, x0, y0)
    assert pol.retardance(jones)[0] == pytest.approx(2 * delta_one, abs=1e-12)
    assert pol.retardance(jones)[0] == pytest.approx(np.pi / 2, abs=0.004)
    assert pol.diattenuation(jones)[0] == pytest.approx(0.0, abs=1e-12)
    # linear light at 45 deg to the plane of incidence leaves circular (|S3| ~ 1)
    S = pol.detector_stokes(M, pol.stokes_to_coherency(pol.linear(0.0)), x0, y0, directions=k)
    assert abs(S[0, 3]) == pytest.approx(1.0, abs=1e-4)
    assert pol.ray_power(M, pol.stokes_to_coherency(pol.unpolarised()))[0] == pytest.approx(1.0)


def test_random_lossless_interfaces_conserve_power():
    # R + T = 1 for random geometry, indices and input states (energy conservation,
    # Born & Wolf Sec. 1.5.3); exercises sp_basis and apply_interface in 3D.
    n = 200
    k = random_units(n)
    face = random_units(n)
    face = np.where(np.sum(k * face, 1, keepdims=True) > 0, -face, face)  # normal against k
    c1 = -np.sum(k * face, 1)
    n1 = RNG.uniform(1.0, 1.9, n)
    n2 = RNG.uniform(1.0, 1.9, n)
    rs, rp, ts, tp, c2 = fresnel_ours(n1, n2, c1)
    below = np.abs(c2.imag) < 1e-15
    s, _ = pol.sp_basis(k, face)
    k_r = k + 2 * c1[:, None] * face
    mu = n1 / n2
    k_t = mu[:, None] * k + (mu * c1 - c2.real)[:, None] * face
    k_t /= np.linalg.norm(k_t, axis=1, keepdims=True)
    f = np.sqrt(np.where(below, (n2 * c2).real / (n1 * c1), 0.0))
    x, y = pol.transverse_frame(k, random_units(n))
    M = pol.initial_field_matrix(x, y)
    Mr = pol.apply_interface(M, k, k_r, s, rs, rp)
    Mt = pol.apply_interface(M, k, k_t, s, ts * f, tp * f)
    for S in (pol.unpolarised(), pol.linear(0.7), pol.elliptical(0.1, -0.4)):
        J = pol.stokes_to_coherency(S)
        assert np.allclose(pol.ray_power(Mr, J) + pol.ray_power(Mt, J), 1.0)
    # children stay transverse
    assert np.allclose(np.einsum("ni,nik->nk", k_r, Mr), 0, atol=1e-12)
    assert np.allclose(np.einsum("ni,nik->nk", k_t[below], Mt[below]), 0, atol=1e-12)


def test_path_mueller_reproduces_detector_stokes():
    # Mueller matrix of a 3D path applied to the source Stokes vector equals the Stokes
    # vector from the field matrix directly (M S_in = S_out, definition).
    k = random_units(30)
    x, y = pol.transverse_frame(k, random_units(30))
    M = pol.initial_field_matrix(x, y) @ (RNG.normal(size=(30, 2, 2)) + 1j * RNG.normal(size=(30, 2, 2)))
    S_in = pol.partial([1.0, 0.3, -0.2, 0.5])
    S_out = pol.detector_stokes(M, pol.stokes_to_coherency(S_in), x, y)
    assert np.allclose(np.einsum("nij,j->ni", pol.path_mueller(M, x, y), S_in), S_out)


def test_detector_mueller_matches_detector_stokes():
    # consistency of the reported Mueller matrices with the reported Stokes vectors, for
    # rays arriving from both sides of a detector (M S_in = S_out, definition)
    k = random_units(40)
    x, y = pol.transverse_frame(k, random_units(40))
    M = pol.initial_field_matrix(x, y) @ (RNG.normal(size=(40, 2, 2)) + 1j * RNG.normal(size=(40, 2, 2)))
    dx, dy = np.array([1.0, 0.0, 0.0]), np.array([0.0, 1.0, 0.0])
    S_in = pol.partial([1.0, -0.4, 0.2, 0.6])
    S_out = pol.detector_stokes(M, pol.stokes_to_coherency(S_in), dx, dy, directions=k)
    mm = pol.detector_mueller(M, dx, directions=k)
    assert np.allclose(np.einsum("nij,j->ni", mm, S_in), S_out)
    assert (k[:, 2] > 0).any() and (k[:, 2] < 0).any()  # both sides of the detector
