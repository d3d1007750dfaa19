"""Sweeps (tracer.sweep.sweep): frustrated TIR against the closed form and tmm, errors, CLI."""

import csv
import json
import math

import numpy as np
import pytest
import tmm

from pair_scenes import ftir_pair_toml
from tracer.cli import main
from tracer.sweep import PointError, list_axis, range_axis, sweep

N_GLASS = 1.5
WL = 633e-9


def pair_toml(angle):
    return ftir_pair_toml(title="FTIR pair (test)", seed=1, gap="0.2 um", angle=f"{angle} deg",
                          vacuum_ambient=True, coating=True)


@pytest.fixture()
def pair(tmp_path):
    def make(angle=0):
        p = tmp_path / f"pair{angle}.toml"
        p.write_text(pair_toml(angle))
        return str(p)
    return make


def ftir_closed_form(d, *, n1=N_GLASS, n2=1.0, theta=math.pi / 4, wavelength=WL):
    """Transmittance (s, p) of a gap n2 of thickness d between two media n1 beyond TIR.

    Single-layer characteristic matrix with imaginary phase thickness (Macleod,
    Thin-Film Optical Filters, 4th ed. 2010, ch. 2; the same result as Zhu, Yu, Hawley
    and Roy, "Frustrated total internal reflection: a demonstration and review",
    Am. J. Phys. 54, 601, 1986) -- written from memory:
    1/T = 1 + sinh^2(k0 q d) (a + 1/a)^2 / 4 with q = sqrt(n1^2 sin^2 - n2^2),
    a = q/p (s) or a = n2^2 p / (n1^2 q) (p), p = n1 cos(theta).
    """
    p = n1 * math.cos(theta)
    q = math.sqrt((n1 * math.sin(theta)) ** 2 - n2**2)
    x = 2 * math.pi / wavelength * q * d
    out = []
    for a in (q / p, n2**2 * p / (n1**2 * q)):
        out.append(1.0 / (1.0 + math.sinh(x) ** 2 * (a + 1 / a) ** 2 / 4))
    return tuple(out)


def fresnel_normal(n1, n2):
    """Normal-incidence power transmittance 4 n1 n2 / (n1 + n2)^2 (Born and Wolf, Sec. 1.5)."""
    return 4 * n1 * n2 / (n1 + n2) ** 2


def test_gap_sweep_reproduces_closed_form_and_tmm(pair):
    res = sweep(pair(0), [range_axis("solids.upper.mate.gap", "0.05 um", "1 um", 6)])
    d = res.axis_numbers("solids.upper.mate.gap") * 1e-6
    tf = fresnel_normal(1.0, N_GLASS) ** 2  # entrance and exit faces, normal incidence
    for i, di in enumerate(d):
        ts, tp = ftir_closed_form(di)
        # reference library: tmm (Byrnes), coherent glass | vacuum d | glass at 45 deg
        th = tmm.coh_tmm("s", [N_GLASS, 1.0, N_GLASS], [np.inf, di, np.inf], math.pi / 4, WL)["T"]
        tp_ref = tmm.coh_tmm("p", [N_GLASS, 1.0, N_GLASS], [np.inf, di, np.inf], math.pi / 4, WL)["T"]
        assert ts == pytest.approx(th, rel=1e-9)
        assert tp == pytest.approx(tp_ref, rel=1e-9)
        row = res.rows[i]
        # the direct path for the s and p input states, from one trace
        assert row["Tdesign.s.through"] == pytest.approx(tf * th, rel=1e-6)
        assert row["Tdesign.p.through"] == pytest.approx(tf * tp_ref, rel=1e-6)
        # the source is linear at 0 deg = p (plane of incidence x-y contains x_axis)
        assert row["fraction.through"] == pytest.approx(row["T.p.through"], rel=1e-9)
        assert row["T.s.through"] >= row["Tdesign.s.through"]
    # transmission falls with the gap, p above s beyond the critical angle
    ts_col = res.column("Tdesign.s.through")
    assert np.all(np.diff(ts_col) < 0)
    assert np.all(res.column("Tdesign.p.through") > ts_col)


def test_s_state_from_the_fields_equals_a_trace_with_an_s_source(pair):
    # the power threshold prunes children by the power of the traced state; a low one
    # makes the two routes agree to round-off
    axis = [list_axis("solids.upper.mate.gap", ["0.1 um", "0.4 um"])]
    fine = {"power_threshold": 1e-13}
    fields = sweep(pair(0), axis, settings=fine)
    s_source = sweep(pair(90), axis, states={}, settings=fine)
    for a, b in zip(fields.rows, s_source.rows):
        assert a["T.s.through"] == pytest.approx(b["fraction.through"], rel=1e-9)
        assert "T.s.through" not in b


def test_wavelength_sweep_against_tmm(pair):
    res = sweep(pair(90), [list_axis("spectrum.wavelengths[0]", ["500 nm", "700 nm"])],
                groups=("power", "ghosts"))
    tf = fresnel_normal(1.0, N_GLASS) ** 2
    for wl, row in zip((500e-9, 700e-9), res.rows):
        ref = tmm.coh_tmm("s", [N_GLASS, 1.0, N_GLASS], [np.inf, 0.2e-6, np.inf], math.pi / 4, wl)["T"]
        assert row["design_power.through"] / 1e-3 == pytest.approx(tf * ref, rel=1e-6)


def test_grid_has_every_combination(pair):
    res = sweep(pair(0), [list_axis("solids.upper.mate.gap", ["0.1 um", "0.2 um"]),
                          list_axis("sources.beam.power", ["1 mW", "2 mW"])],
                groups=("power",), states={})
    assert [tuple(p.values()) for p in res.points] == [
        ("0.1 um", "1 mW"), ("0.1 um", "2 mW"), ("0.2 um", "1 mW"), ("0.2 um", "2 mW")]
    p = res.column("power.through")
    assert p[1] == pytest.approx(2 * p[0]) and p[3] == pytest.approx(2 * p[2])


def test_bad_values_report_the_key_path_and_the_point(pair):
    with pytest.raises(PointError) as exc:
        sweep(pair(0), [list_axis("coatings.ar.layers[0].thickness", ["100 nm", "-5 nm", "2 deg"])])
    msg = str(exc.value)
    assert "2 of 3 points failed" in msg
    assert "point 1 (coatings.ar.layers[0].thickness = '-5 nm')" in msg
    assert "point 2" in msg and "coatings.ar.layers[0].thickness" in msg
    res = sweep(pair(0), [list_axis("solids.upper.mate.gap", ["0.1 um", "-1 um"])],
                on_error="skip", groups=("power",))
    assert res.rows[1] == {} and "solids.upper.mate.gap" in res.errors[1]
    assert res.errors[0] is None


def test_rotation_component_and_errors_before_tracing(pair):
    from tracer.sweep import KeyPathError

    with pytest.raises(KeyPathError, match='did you mean "upper"'):
        sweep(pair(0), [list_axis("solids.uper.mate.gap", ["1 um"])])
    res = sweep(pair(0), [list_axis("solids.lower.rotation[2]", ["0 deg", "0.5 deg"])],
                groups=("power",), states={})
    p = res.column("power.through")
    assert p[0] != p[1]  # the tilt moved the lower prism: the coupling changes


def test_cli_sweep_writes_table_json_and_figures(pair, tmp_path, capsys):
    out = tmp_path / "out"
    js = tmp_path / "s.json"
    rc = main(["sweep", pair(0), "--vary", "solids.upper.mate.gap", "0.1um", "0.5um", "3",
               "--out", str(out), "--json", str(js)])
    assert rc == 0
    text = capsys.readouterr().out
    assert "3 points" in text and "T.s.through" in text
    rows = list(csv.DictReader((out / "sweep.csv").open()))
    assert len(rows) == 3 and float(rows[2]["solids.upper.mate.gap [um]"]) == 0.5
    data = json.loads(js.read_text())
    assert data["axes"][0]["values"] == ["0.1 um", "0.3 um", "0.5 um"]
    assert (out / "transmission-through.png").stat().st_size > 1000
    rc = main(["sweep", pair(0), "--values", "solids.upper.mate.gap", "0.1 um,-1 um"])
    assert rc == 2
    assert "solids.upper.mate.gap" in capsys.readouterr().err
    assert main(["sweep", pair(0)]) == 2
