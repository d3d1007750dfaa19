"""The compiled closed-form face coefficients equal :mod:`tracer.fresnel` and
:func:`tracer.coatings.face_response` (themselves tested against ``tmm``, Byrnes,
"Multilayer optical calculations", 2016, and the Fresnel formulae of Born and Wolf,
"Principles of Optics", 7th ed., 1999)."""

import numpy as np
import pytest

from tracer import fresnel
from tracer.coatings import face_response
from tracer.engine import fresnel_kernel as fk
from tracer.engine import jit

pytestmark = pytest.mark.skipif(not jit.available, reason="numba not installed")

_FIELDS = ("Rs", "Rp", "Ts", "Tp", "rs_n", "rp_n", "ts_n", "tp_n")


class _Arrays:
    def __init__(self, n):
        for name in _FIELDS:
            setattr(self, name, np.full(n, np.nan, float if name[0] in "RT" else complex))


def _inputs(n, rng, lossy):
    n1 = rng.uniform(1.0, 2.4, n)
    n2 = rng.uniform(1.0, 2.4, n) + 0j
    if lossy:
        n2 = n2 + 1j * rng.choice([0.0, 1e-7, 0.3, 4.0], n)
    c1 = rng.uniform(0.0, 1.0, n)
    c1[:5] = [0.0, 1.0, 1.0, 0.0, 0.5]
    n2[3] = n1[3]  # same medium at grazing incidence (the limit r = 0, t = 1)
    # around the critical angle of the lossless rows
    k = slice(5, 25)
    crit = np.sqrt(np.clip(1 - (n2[k].real / n1[k]) ** 2, 0, 1))
    c1[k] = np.clip(crit + rng.normal(0, 1e-9, 20), 0, 1)
    return n1, n2, c1


def _kernel(n1, n2, c1, kind, refl):
    out = _Arrays(len(n1))
    fk.simple_coefficients(out, np.arange(len(n1)), n1=n1, n2=n2, cos1=c1,
                           kind=np.full(len(n1), kind), reflectance=np.full(len(n1), refl))
    return out


def _reference(c):
    return dict(Rs=c.Rs, Rp=c.Rp, Ts=c.Ts, Tp=c.Tp,
                rs_n=c.rs * fresnel.amplitude_factor(T=c.Rs, t=c.rs),
                rp_n=c.rp * fresnel.amplitude_factor(T=c.Rp, t=c.rp),
                ts_n=c.ts * fresnel.amplitude_factor(T=c.Ts, t=c.ts),
                tp_n=c.tp * fresnel.amplitude_factor(T=c.Tp, t=c.tp))


def _assert_same(got, ref):
    for name in _FIELDS:
        np.testing.assert_allclose(getattr(got, name), ref[name], rtol=1e-12, atol=1e-14,
                                   err_msg=name)


@pytest.mark.parametrize("lossy", [False, True])
def test_bare_interface_equals_fresnel_coefficients(lossy):
    n1, n2, c1 = _inputs(3000, np.random.default_rng(11), lossy)
    got = _kernel(n1, n2, c1, fk.BARE, 0.0)
    _assert_same(got, _reference(fresnel.coefficients(n1=n1 + 0j, n2=n2, cos_angle=c1)))
    # beyond the critical angle: total reflection, nothing transmitted
    tir = (n2.imag == 0) & (n1**2 * (1 - c1**2) > n2.real**2)
    assert tir.sum() > 100
    assert np.all(got.Ts[tir] == 0) and np.allclose(got.Rs[tir], 1, atol=1e-15)


@pytest.mark.parametrize("from_inside", [False, True])
@pytest.mark.parametrize("R", [0.0, 0.001, 0.35, 1.0])
def test_ideal_coating_equals_face_response(R, from_inside):
    n1, n2, c1 = _inputs(2000, np.random.default_rng(5), lossy=False)
    got = _kernel(n1, n2, c1, fk.IDEAL, R)
    n_in, n_out = (n1, n2) if from_inside else (n2, n1)
    c = face_response(_Treatment("ideal", R),
                      n_inside=n_in + 0j if from_inside else n_in,
                      n_outside=n_out if from_inside else n_out + 0j,
                      wavelength=np.full(len(n1), 550e-9), cos_angle=c1, from_inside=from_inside)
    _assert_same(got, _reference(c))


@pytest.mark.parametrize("R", [0.2, 0.97])
def test_partial_mirror_equals_face_response(R):
    n1, n2, c1 = _inputs(500, np.random.default_rng(2), lossy=False)
    got = _kernel(n1, n2, c1, fk.PARTIAL_MIRROR, R)
    c = face_response(_Treatment("mirror", R), n_inside=n1 + 0j, n_outside=n2,
                      wavelength=np.full(len(n1), 550e-9), cos_angle=c1, from_inside=True)
    _assert_same(got, _reference(c))


def test_perfect_mirror():
    n1, n2, c1 = _inputs(50, np.random.default_rng(3), lossy=False)
    got = _kernel(n1, n2, c1, fk.PERFECT_MIRROR, 0.0)
    assert np.all(got.rs_n == -1) and np.all(got.rp_n == 1)
    assert np.all(got.Rs == 1) and np.all(got.Ts == 0) and np.all(got.tp_n == 0)


class _Treatment:
    """The attributes face_response reads from a scene's face treatment."""

    def __init__(self, kind, reflectance):
        self.kind = kind
        self.reflectance = reflectance
        self.coating = None
