"""tracer.plot.colors: wavelength and material colours."""

import subprocess
import sys

import numpy as np
import pytest

from tracer.plot import colors as C


# CIE 1931 2-degree colour-matching functions, table values (CIE 15:2004, Table T.4;
# recalled from memory, 4 decimals). The multi-lobe fit of Wyman, Sloan and Shirley
# (JCGT 2(2), 2013) stays within a few hundredths of them.
CIE_1931 = {
    450e-9: (0.3362, 0.0380, 1.7721),
    500e-9: (0.0049, 0.3230, 0.2720),
    555e-9: (0.5121, 1.0000, 0.0057),
    600e-9: (1.0622, 0.6310, 0.0008),
    650e-9: (0.2835, 0.1070, 0.0000),
}


@pytest.mark.parametrize("wl", sorted(CIE_1931))
def test_cie_fit_matches_table(wl):
    assert C.cie_xyz(wl) == pytest.approx(CIE_1931[wl], abs=0.025)


@pytest.mark.parametrize("wl, channel", [(450e-9, 2), (470e-9, 2), (530e-9, 1), (550e-9, 1),
                                          (620e-9, 0), (650e-9, 0), (700e-9, 0)])
def test_visible_hues(wl, channel):
    # blue at 450-470 nm, green at 530-550 nm, red from 620 nm (common practice, no source)
    for rgb in (C.wavelength_to_rgb(wl), C.ray_rgb(wl)):
        assert int(np.argmax(rgb)) == channel
        assert rgb[channel] > 1.5 * np.delete(rgb, channel).max()


def test_yellow_and_cyan_between():
    r, g, b = C.wavelength_to_rgb(575e-9)
    assert r > 0.8 and g > 0.6 and b < 0.1  # yellow: red + green
    r, g, b = C.wavelength_to_rgb(490e-9)
    assert g > 0.5 and b > 0.5 and r < 0.1  # cyan: green + blue


def test_broadcasting_and_range():
    wl = np.linspace(200e-9, 0.1, 2000).reshape(40, 50)
    rgb = C.wavelength_to_rgb(wl)
    assert rgb.shape == (40, 50, 3)
    assert np.all((rgb >= 0) & (rgb <= 1))
    assert np.all(np.isfinite(C.ray_rgb(wl)))


def test_false_colours_outside_the_visible():
    ir = C.wavelength_to_rgb(1550e-9)
    red = C.wavelength_to_rgb(650e-9)
    radio = C.wavelength_to_rgb(0.028)
    # infrared: dark red-brown, darker than visible red, red channel largest
    assert np.argmax(ir) == 0 and ir.sum() < red.sum()
    # microwave: a grey-violet, low saturation, blue above green
    assert radio.max() - radio.min() < 0.25 and radio[2] > radio[1]
    # the bands differ from each other
    assert np.linalg.norm(ir - radio) > 0.3
    assert C.wavelength_band(0.028) == "THz/microwave"
    assert C.wavelength_label(299792458.0 / 10.7e9).startswith("10.7 GHz")


def test_ray_colours_stay_visible_on_white():
    wl = np.linspace(380e-9, 780e-9, 401)
    rgb = C.ray_rgb(wl)
    lum = rgb @ np.array([0.2126, 0.7152, 0.0722])
    assert lum.max() <= C.RAY_MAX_LUMINANCE + 1e-12
    # the hue is kept: the ratio of channels is unchanged
    raw = C.wavelength_to_rgb(wl)
    i = np.argmax(raw, axis=1)
    assert np.array_equal(i, np.argmax(rgb, axis=1))


def test_material_colours_are_stable_and_distinct():
    assert C.material_color("N-BK7") == C.material_color(" n-bk7 ")
    names = ["N-BK7", "N-SF11", "fused-silica", "crown-517642", "calcite"]
    cols = C.material_colors(names)
    assert len(set(cols.values())) == len(names)
    assert C.material_colors(list(reversed(names))) == cols


def test_import_does_not_load_matplotlib():
    code = ("import sys, tracer, tracer.plot, tracer.plot.colors, tracer.plot.maps, "
            "tracer.plot.diagram2d, tracer.plot.diagram3d, tracer.plot.export3d, tracer.plot.budget; "
            "print('matplotlib' in sys.modules)")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "False"
