"""Monte Carlo mode: one child per event, chosen with probability proportional to power.

Analogue sampling: at a face the ray becomes its reflected child with probability
``R/P``, its transmitted child with probability ``T/P``, or is absorbed on the face with
the remaining probability; in an absorbing bulk it survives a segment with probability
``exp(-alpha L)``. The chosen child keeps the full power of its source ray (its field is
rescaled to that power), so every ray ends in exactly one account and the estimate of
each account is the mean of its rays' powers -- unbiased, with no threshold (the event
cap still applies). This is the standard analogue ("collision") estimator of radiative
transfer (e.g. Dupree and Fraley, "A Monte Carlo Primer", Springer 2002; recalled from
memory).

Random numbers come from a counter-based generator: the uniform for one decision is a
hash of (seed, source, ray index within the source, event number, purpose), so a ray's
history does not depend on how rays are batched or ordered. The hash is the SplitMix64
finaliser (G. Steele, D. Lea, C. Flood, "Fast splittable pseudorandom number
generators", OOPSLA 2014).

>>> u = uniforms(7, np.array([0, 0]), np.array([1, 2]), np.array([0, 0]), 0)
>>> bool(((u >= 0) & (u < 1)).all()), bool(u[0] != u[1])
(True, True)
>>> bool(np.array_equal(u, uniforms(7, np.array([0, 0]), np.array([1, 2]), np.array([0, 0]), 0)))
True
"""

from __future__ import annotations

import numpy as np

__all__ = ["uniforms", "choose", "FACE", "BULK"]

#: Purposes of a random decision (salt of the hash).
FACE, BULK = 1, 2

_M1 = np.uint64(0xBF58476D1CE4E5B9)
_M2 = np.uint64(0x94D049BB133111EB)
_G = np.uint64(0x9E3779B97F4A7C15)


def _mix(z):
    z = z ^ (z >> np.uint64(30))
    z = z * _M1
    z = z ^ (z >> np.uint64(27))
    z = z * _M2
    return z ^ (z >> np.uint64(31))


def uniforms(seed: int, source, ray_id, event, purpose: int) -> np.ndarray:
    """Uniform numbers in [0, 1), one per ray, from a hash of the arguments.

    Parameters
    ----------
    seed : int
    source, ray_id, event : (N,) int
    purpose : int
        :data:`FACE` or :data:`BULK`.
    """
    with np.errstate(over="ignore"):
        z = _mix(np.uint64(seed & 0xFFFFFFFFFFFFFFFF) + _G)
        z = _mix(z ^ (np.asarray(source, dtype=np.uint64) * _G))
        z = _mix(z ^ (np.asarray(ray_id, dtype=np.uint64) + _G))
        z = _mix(z ^ (np.asarray(event, dtype=np.uint64) * _M1 + np.uint64(purpose)))
    return (z >> np.uint64(11)).astype(np.float64) * (1.0 / 9007199254740992.0)


def choose(u, p_reflect, p_transmit, power):
    """Which child a ray becomes: 0 reflected, 1 transmitted, 2 absorbed.

    Parameters
    ----------
    u : (N,) float
        Uniforms in [0, 1).
    p_reflect, p_transmit, power : (N,) float [W]
        Children's powers and the parent's power.
    """
    with np.errstate(divide="ignore", invalid="ignore"):
        cr = np.where(power > 0, p_reflect / power, 0.0)
        ct = np.where(power > 0, (p_reflect + p_transmit) / power, 0.0)
    return np.where(u < cr, 0, np.where(u < ct, 1, 2))
