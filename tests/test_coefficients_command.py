"""End-to-end tests of ``tracer coefficients`` (the bench table of a prism/gap pair)."""

import json

import numpy as np
import pytest
import tmm

from tracer.cli import main
from tracer.materials.basis import standard_air_index


def test_table_matches_tmm(tmp_path, capsys):
    # Reference: tmm coh_tmm (S. Byrnes, "Multilayer optical calculations", arXiv:1603.02720, 2016).
    out = tmp_path / "t.json"
    rc = main(["coefficients", "--prism", "1.5", "--gap", "1.0", "--angle", "50 deg",
               "--wavelength", "633 nm", "--thickness", "0 um", "1 um", "5", "--json", str(out)])
    assert rc == 0
    table = json.loads(out.read_text())
    # typed indices are relative to air; the JSON gives both views
    assert table["n_prism_relative_to_air"][0] == pytest.approx(1.5, rel=1e-15)
    assert table["n_prism"][0] == pytest.approx(1.5 * float(standard_air_index(633e-9)), rel=1e-15)
    for d, rs, rp, ts, tp in zip(table["thickness_m"], table["Rs"], table["Rp"], table["Ts"], table["Tp"]):
        for pol, r_val, t_val in (("s", rs, ts), ("p", rp, tp)):
            # the indices typed are relative to air: absolute = value x n_air (Ciddor)
            na = float(standard_air_index(633e-9))
            ref = tmm.coh_tmm(pol, [1.5 * na, na, 1.5 * na], [np.inf, d * 1e9, np.inf],
                              np.radians(50), 633.0)
            assert r_val == pytest.approx(ref["R"], abs=1e-12)
            assert t_val == pytest.approx(ref["T"], abs=1e-12)
    text = capsys.readouterr().out
    # Critical angle asin(1/1.5) = 41.810 deg (Snell's law).
    assert "critical angle 41.810 deg" in text


def test_microwave_gap_couples_more_as_it_closes(tmp_path):
    # n = 1.44 prisms at 45 deg, 10.7 GHz: total reflection for a wide gap, coupling rising as it
    # closes (common practice for such demonstrations, no source).
    out = tmp_path / "m.json"
    assert main(["coefficients", "--prism", "1.44", "--gap", "1", "--angle", "45", "--wavelength",
                 "10.7 GHz", "--thickness", "0 mm", "300 mm", "31", "--json", str(out)]) == 0
    table = json.loads(out.read_text())
    ts = np.array(table["Ts"])
    assert np.all(np.diff(ts) < 0)
    assert ts[0] == pytest.approx(1.0) and ts[-1] < 1e-4


@pytest.mark.parametrize("argv, message", [
    (["--prism", "unobtainium"], "unknown material"),
    (["--angle", "45 mm"], "angle"),
    (["--thickness", "1 um", "0 um", "3"], "--thickness"),
    (["--thickness", "0 um", "1 um", "many"], "whole number"),
])
def test_bad_options_exit_2_with_a_message(argv, message, capsys):
    assert main(["coefficients", *argv]) == 2
    assert message in capsys.readouterr().err
