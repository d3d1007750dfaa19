"""Jones and Mueller analysis of a path: Mueller matrix, polar decomposition,
diattenuation and retardance.

References
----------
.. [1] R. A. Chipman, W. S. T. Lam, G. Young, "Polarized Light and Optical Systems",
   CRC Press (2018); R. M. A. Azzam, N. M. Bashara, "Ellipsometry and Polarized
   Light", North-Holland (1977), Sec. 2.11, for ``M = A (J (x) J*) A^-1``.
.. [2] S.-Y. Lu, R. A. Chipman, "Interpretation of Mueller matrices based on polar
   decomposition", J. Opt. Soc. Am. A 13(5), 1106-1113 (1996).

(Bibliographic details recalled from memory.)
"""

from __future__ import annotations

import numpy as np

from tracer.polarization.states import PolarizationError

__all__ = [
    "mueller_from_jones",
    "polar_decomposition",
    "diattenuation",
    "retardance",
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


def mueller_from_jones(jones):
    """Mueller matrix of a (non-depolarising) Jones matrix.

    ``M = A (T kron T*) A^-1`` (the standard form, e.g. in [1]_),
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


def polar_decomposition(jones):
    """Polar decomposition ``T = U P`` of Jones matrices.

    ``U`` unitary (retarder), ``P = (T^H T)^(1/2)`` Hermitian positive semidefinite
    (diattenuator), from the singular value decomposition ``T = W S V^H``:
    ``U = W V^H``, ``P = V S V^H``. (Jones-matrix form of the decomposition of [2]_.)

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

    From the polar decomposition ``T = U P`` (:func:`polar_decomposition`, [2]_): with
    ``U``'s eigenvalues ``e^(i a1)`` and ``e^(i a2)`` the retardance is
    ``|arg(e^(i a1) e^(-i a2))|`` in [0, pi]. This equals Lu & Chipman's
    ``arccos(tr(M_R)/2 - 1)`` for the retarder's Mueller matrix ``M_R`` ([2]_;
    equation recalled from memory, checked numerically in the tests). For a singular (polarising) matrix the unitary part is not unique; the SVD
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
