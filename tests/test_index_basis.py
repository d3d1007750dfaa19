"""Index bases: catalog indices relative to air, absolute indices in the engine.

Glass codes and glass catalogs quote the index relative to air (common practice for glass
catalogs, no source); a glass in air must therefore meet exactly that index ratio, and in
vacuum the ratio times the index of air (Ciddor, "Refractive index of air: new equations
for the visible and near infrared", Applied Optics 35, 1566, 1996, through the catalog's
``air``, itself tested against Ciddor's published values in ``test_materials``).
"""

import math

import numpy as np
import pytest

import tracer
from tracer import materials
from tracer.engine.compile import compile_scene
from tracer.errors import TracerError
from tracer.materials.basis import standard_air_index

PLATE = """format = 1
title = "plate"
length_unit = "mm"
{ambient}
[spectrum]
wavelengths = ["587.5618 nm"]
{materials}
[solids.plate]
material = "{glass}"
kind = "plate"
width = 20
height = 20
thickness = 5
[sources.beam]
kind = "collimated"
position = [-20, 0, 0]
direction = [1, 0, 0]
diameter = 1
rays = 1
power = "1 W"
[detectors.screen]
position = [30, 0, 0]
normal = [-1, 0, 0]
width = 20
height = 20
"""


def _plate(tmp_path, *, ambient="", glass="glass:517642", materials_text=""):
    p = tmp_path / "plate.toml"
    p.write_text(PLATE.format(ambient=ambient, glass=glass, materials=materials_text))
    return tracer.load(p)


def _ratio(scene):
    cs = compile_scene(scene)
    tab = cs.index_table(np.array([587.5618e-9]))
    return float(tab[1, 0].real / tab[0, 0].real)


def _direct_power(scene):
    res = tracer.trace(scene, progress=False)
    return max(p["power_w"] for p in res.paths("screen"))


def test_glass_code_in_air_meets_its_catalog_index(tmp_path):
    sc = _plate(tmp_path)  # default ambient: air
    assert _ratio(sc) == pytest.approx(1.517, rel=1e-12)
    # uncoated plate at normal incidence: direct path (1 - R)^2, R = ((n - 1)/(n + 1))^2
    # (Hecht, Optics, 5th ed., 2017, Eq. 4.67), with n = 1.517 exactly
    R = ((1.517 - 1) / (1.517 + 1)) ** 2
    assert _direct_power(sc) == pytest.approx((1 - R) ** 2, rel=1e-12)


def test_glass_code_in_vacuum_meets_its_absolute_index(tmp_path):
    sc = _plate(tmp_path, ambient='ambient = "vacuum"')
    n_air = float(materials.get("air").refractive_index(587.5618e-9).real)
    assert n_air == pytest.approx(1.000277, abs=2e-6)  # Ciddor standard air, from memory
    assert _ratio(sc) == pytest.approx(1.517 * n_air, rel=1e-12)


def test_inline_material_bases(tmp_path):
    rel = '[materials.g]\nmodel = "constant"\nn = 1.5\n'
    absolute = rel + 'index_basis = "vacuum"\n'
    assert _ratio(_plate(tmp_path, glass="g", materials_text=rel)) == pytest.approx(1.5, rel=1e-12)
    n_air = float(standard_air_index(587.5618e-9))
    assert _ratio(_plate(tmp_path, glass="g", materials_text=absolute)) == pytest.approx(
        1.5 / n_air, rel=1e-12)


def test_bad_basis_keys_name_the_key_path(tmp_path):
    bad = '[materials.g]\nmodel = "constant"\nn = 1.5\nindex_basis = "ether"\n'
    with pytest.raises(TracerError, match=r"materials\.g\.index_basis"):
        _plate(tmp_path, glass="g", materials_text=bad)
    code = '[materials.g]\nmodel = "glass-code"\ncode = "517642"\nindex_basis = "vacuum"\n'
    with pytest.raises(TracerError, match=r"materials\.g\.index_basis.*relative to air"):
        _plate(tmp_path, glass="g", materials_text=code)


def test_model_views_agree():
    wl = np.array([450e-9, 633e-9, 1064e-9])
    n_air = standard_air_index(wl)
    glass = materials.get("fused-silica")
    assert glass.index_basis == "air"
    np.testing.assert_allclose(glass.refractive_index(wl), glass.published_index(wl) * n_air,
                               rtol=1e-15)
    np.testing.assert_allclose(glass.relative_index(wl), glass.published_index(wl), rtol=0)
    air = materials.get("air")
    assert air.index_basis == "vacuum"
    np.testing.assert_allclose(air.relative_index(wl), 1.0, rtol=1e-15)
    vac = materials.get("vacuum")
    assert np.all(vac.refractive_index(wl) == 1.0)


def test_standard_air_beyond_ciddor_range():
    # radio: Smith and Weintraub 1953 dry term, N = 77.6 p/T (p in hPa), 15 degC (from memory)
    assert float(standard_air_index(0.028)) == pytest.approx(1 + 77.6e-6 * 1013.25 / 288.15,
                                                            rel=1e-15)
    # the infrared between 1.69 um and 1 mm takes Ciddor's value at 1.69 um
    assert float(standard_air_index(10e-6)) == float(standard_air_index(1.69e-6))
    assert math.isclose(float(standard_air_index(10e-6)) - 1, 2.73e-4, rel_tol=0.01)
