"""Field matrices of scattered rays: the parent's power for every input state, with a
stated degree of depolarisation.

The engine carries a ray's polarisation as a 3x2 field matrix ``M`` (column k: the field
for unit-power input state k of its source; power ``trace(M J M^H)``). A scattered ray of
power fraction ``w`` of its parent must carry ``w`` times the parent's power for *every*
input state ``J``: its field is ``c E R`` with ``R`` the 2x2 factor of ``M = Q R``
(QR decomposition, ``R^H R = M^H M``), ``E = [a, b]`` an orthonormal transverse basis of the
new direction and ``|c|^2 = w``. Unpolarised light cannot be one pure field; it is the
incoherent sum of two: the scatter sample is carried by a pair of rays with the bases
``[a, b]`` and ``[b, -a]`` (turned by 90 degrees about the ray), powers ``(1 - d/2) w`` and
``(d/2) w``. For ``d = 1`` the pair's summed coherency is ``trace(C)/2 * I`` for every input
(unpolarised: the 90-degree turn swaps the diagonal of ``C = R J R^H`` and negates its
off-diagonal), for ``d = 0`` the second ray has no power and the first keeps the parent's
state in the new frame.
"""

from __future__ import annotations

import numpy as np

__all__ = ["transverse_basis", "scattered_pair"]


def transverse_basis(direction, hint):
    """Unit vectors ``a``, ``b = d x a`` (N, 3) transverse to ``direction`` (N, 3);
    ``a`` is ``hint`` (N, 3) made transverse, or any transverse vector where that fails."""
    d = np.asarray(direction, dtype=float)
    a = hint - (hint * d).sum(axis=1)[:, None] * d
    norm = np.linalg.norm(a, axis=1)
    bad = norm < 1e-9
    if bad.any():
        alt = np.where(np.abs(d[bad, 0:1]) < 0.9, [[1.0, 0.0, 0.0]], [[0.0, 1.0, 0.0]])
        alt = alt - (alt * d[bad]).sum(axis=1)[:, None] * d[bad]
        a[bad] = alt
        norm[bad] = np.linalg.norm(alt, axis=1)
    a = a / norm[:, None]
    return a, np.cross(d, a)


def scattered_pair(parent_field, direction, hint):
    """The two unit-scale field matrices ``(E1 R, E2 R)`` (N, 3, 2) of a scattered pair (module
    docstring): multiply by ``sqrt(share / parent power)`` for each ray's power.

    >>> m = np.zeros((1, 3, 2), complex); m[0, 0, 0] = m[0, 1, 1] = 1.0
    >>> f1, f2 = scattered_pair(m, np.array([[0.0, 0, 1]]), np.array([[1.0, 0, 0]]))
    >>> bool(np.allclose(np.einsum("nak,nal->nkl", f1.conj(), f1), np.eye(2)))
    True
    """
    r = np.linalg.qr(parent_field, mode="r")  # (N, 2, 2), R^H R = M^H M
    a, b = transverse_basis(direction, hint)
    e1 = np.stack([a, b], axis=2).astype(complex)  # (N, 3, 2)
    e2 = np.stack([b, -a], axis=2).astype(complex)
    return e1 @ r, e2 @ r
