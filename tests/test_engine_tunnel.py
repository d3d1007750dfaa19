"""Tunnelled power per gap (frustrated TIR) booked by the engine, against closed forms.

Reference for the gap transmission: the ``tmm`` package (S. J. Byrnes, "Multilayer optical
calculations", arXiv:1603.02720, 2016), ``coh_tmm`` for the stack glass | air, d | glass.
Entrance transmission: Fresnel at normal incidence, T = 1 - ((n - 1)/(n + 1))^2 (Hecht,
Optics, 5th ed., 2017, sec. 4.6).
"""

import dataclasses
import math

import numpy as np
import pytest
import tmm

from tracer.engine import trace
from tracer.scene.model import FaceTreatment

from engine_factory import prism_pair_scene

N = 1.5
WL = 550e-9
D = 0.3e-6
R0 = ((N - 1) / (N + 1)) ** 2
T_IN = 1 - R0


def _gap_T(pol):
    return tmm.coh_tmm(pol, [N, 1.0, N], [np.inf, D, np.inf], math.radians(45), WL)["T"]


def _with_absorbers(sc, faces):
    solids = dict(sc.solids)
    for name, face in faces:
        s = solids[name]
        solids[name] = dataclasses.replace(s, faces={**s.faces, face: FaceTreatment(kind="absorber")})
    return dataclasses.replace(sc, solids=solids)


# the source x_axis is z, the s direction at the hypotenuse: (1, 1, 0, 0) is s, (1, -1, 0, 0) p
POLS = {"s": ((1, 1, 0, 0), {"s": 1.0, "p": 0.0}),
        "p": ((1, -1, 0, 0), {"s": 0.0, "p": 1.0}),
        "unpolarised": ((1, 0, 0, 0), {"s": 0.5, "p": 0.5})}


@pytest.mark.parametrize("pol", list(POLS))
def test_first_pass_tunnelled_power_is_entrance_T_times_gap_T(pol):
    # Exit faces absorb: light meets the gap once. Power tunnelled A -> B by source "src"
    # = entrance T x gap T (tmm) x source power; nothing comes back B -> A.
    stokes, share = POLS[pol]
    sc = prism_pair_scene(gap_thickness=D, stokes=stokes, threshold=1e-12)
    sc = _with_absorbers(sc, [("upper", "leg_b"), ("lower", "leg_a"), ("lower", "leg_b")])
    res = trace(sc)
    expected = T_IN * sum(share[p] * _gap_T(p) for p in "sp") * 1.0  # source power 1 W
    assert res.tunnelled_power("g", source="src") == pytest.approx(expected, rel=1e-10)
    assert res.tunnelled_power("g", direction="a->b") == pytest.approx(expected, rel=1e-10)
    assert res.tunnelled_power("g", direction="b->a") == 0.0
    assert res.tunnelled_power() == res.tunnelled_power("g")
    g = res.summary()["gaps"]["g"]
    assert g["faces"] == ["upper.hypotenuse", "lower.hypotenuse"]
    assert g["tunnelled_w"] == pytest.approx(expected, rel=1e-10)
    assert g["per_source"]["src"]["tunnelled_w"] == g["tunnelled_w"]
    # here every tunnelled watt is absorbed on lower.leg_a: the detected/escaped-path
    # count of the analysis would see none of it
    absorbed = res.ledger.breakdown()["absorbed_faces"]["lower.leg_a"]
    assert absorbed == pytest.approx(expected, rel=1e-10)


def _series(pol_share):
    """Total tunnelled power A->B and B->A with bare faces (all later passes).

    Every face the beam leaves through is met at normal incidence and returns R0 of the
    power to the gap, where T_g tunnels and R_g = 1 - T_g is totally reflected; the s and
    p parts do not mix. With a_k, b_k the powers meeting the gap from A and from B on pass
    k: a_1 = T_in P, b_1 = 0, a_{k+1} = R0 (R_g a_k + T_g b_k), b_{k+1} = R0 (T_g a_k +
    R_g b_k). So sum(a + b) = T_in P / (1 - R0) and sum(a - b) = T_in P / (1 - R0 (R_g -
    T_g)); tunnelled A->B = T_g sum(a), B->A = T_g sum(b).
    """
    ab = ba = 0.0
    for p in "sp":
        P = pol_share[p]
        Tg = _gap_T(p)
        Rg = 1 - Tg
        S = T_IN * P / (1 - R0)
        Dd = T_IN * P / (1 - R0 * (Rg - Tg))
        ab += Tg * (S + Dd) / 2
        ba += Tg * (S - Dd) / 2
    return ab, ba


@pytest.mark.parametrize("pol", ["s", "unpolarised"])
def test_all_passes_tunnelled_power_geometric_series(pol):
    stokes, share = POLS[pol]
    sc = prism_pair_scene(gap_thickness=D, stokes=stokes, threshold=1e-15)
    res = trace(sc, max_events=200)
    ab, ba = _series(share)
    assert res.tunnelled_power("g", direction="a->b") == pytest.approx(ab, rel=1e-9)
    assert res.tunnelled_power("g", direction="b->a") == pytest.approx(ba, rel=1e-9)
    # more than the first pass, and more than the detected + escaped path lower bound
    first = T_IN * sum(share[p] * _gap_T(p) for p in "sp")
    assert res.tunnelled_power("g") > first * (1 + R0 / 2)
    tot = res.ledger.totals()
    assert abs(tot["residual_w"]) < 1e-12


def test_monte_carlo_tunnelled_power_is_unbiased():
    stokes, share = POLS["unpolarised"]
    sc = prism_pair_scene(gap_thickness=0.1e-6, stokes=stokes)
    sc = _with_absorbers(sc, [("upper", "leg_b"), ("lower", "leg_a"), ("lower", "leg_b")])
    exact = trace(sc).tunnelled_power("g")
    n = 20000
    mc = trace(sc, mode="monte-carlo", rays=n).tunnelled_power("g")
    # each ray carries 1/n W and tunnels at most once: a binomial count
    p = exact
    sigma = math.sqrt(p * (1 - p) / n)
    assert abs(mc - exact) < 4 * sigma


def test_unknown_gap_and_direction_are_errors():
    res = trace(prism_pair_scene(gap_thickness=D))
    with pytest.raises(KeyError, match="unknown gap"):
        res.tunnelled_power("nope")
    with pytest.raises(ValueError, match="direction"):
        res.tunnelled_power("g", direction="sideways")
    assert trace(prism_pair_scene(partner=False)).tunnelled_power() == 0.0
