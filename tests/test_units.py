"""Tests of tracer.units: quantity strings into SI floats and back.

Conversion factors are the SI prefix definitions and the exact speed of light
(c = 299 792 458 m/s, SI definition of the metre); common practice, no other source.
"""

import math

import numpy as np
import pytest

from tracer import units
from tracer.errors import TracerError, UnitError

C = 299_792_458.0


@pytest.mark.parametrize(
    "text, expected",
    [
        ("25 mm", 25e-3),
        ("25mm", 25e-3),
        ("5 um", 5e-6),
        ("5 \u00b5m", 5e-6),  # MICRO SIGN
        ("5 \u03bcm", 5e-6),  # GREEK SMALL LETTER MU
        ("0.55 um", 0.55e-6),
        ("550 nm", 550e-9),
        ("2.8 cm", 2.8e-2),
        ("1 m", 1.0),
        ("3 pm", 3e-12),
        ("-4.5 mm", -4.5e-3),
        ("1e-3 m", 1e-3),
        ("1.5E2 um", 150e-6),
        ("  7 mm  ", 7e-3),
        ("1 in", 0.0254),
        ("10 \u00c5", 1e-9),
        ("2 micron", 2e-6),
    ],
)
def test_length_strings(text, expected):
    assert units.length(text) == pytest.approx(expected, rel=1e-15)


def test_bare_number_uses_default():
    assert units.length(3) == pytest.approx(3e-3)
    assert units.length(3.0, default="m") == 3.0
    assert units.length(np.float64(2), default="um") == pytest.approx(2e-6)
    assert units.length("3") == pytest.approx(3e-3)  # a number written as a string
    assert units.angle(90) == pytest.approx(math.pi / 2)
    assert units.wavelength(633) == pytest.approx(633e-9)
    assert units.power(2) == 2.0


@pytest.mark.parametrize(
    "text, degrees",
    [
        ("45 deg", 45.0),
        ("45\u00b0", 45.0),
        ("45 \u00b0", 45.0),
        ("30 arcmin", 0.5),
        ("10 arcsec", 10 / 3600),
        ("-12.5 deg", -12.5),
        ("90 Deg", 90.0),
    ],
)
def test_angle_strings(text, degrees):
    assert units.angle(text) == pytest.approx(math.radians(degrees), rel=1e-14)


def test_angle_radians():
    assert units.angle("0.1 rad") == pytest.approx(0.1)
    assert units.angle("2 mrad") == pytest.approx(2e-3)
    assert units.angle(0.25, default="rad") == 0.25


@pytest.mark.parametrize(
    "text, f",
    [("10.7 GHz", 10.7e9), ("0.3 THz", 0.3e12), ("300 MHz", 300e6), ("94 GHZ", 94e9)],
)
def test_frequency_to_wavelength(text, f):
    # lambda = c / f in vacuum, c exact.
    assert units.wavelength(text) == pytest.approx(C / f, rel=1e-15)
    assert units.frequency(text) == pytest.approx(f, rel=1e-15)


def test_wavelength_examples():
    assert units.wavelength("10.7 GHz") == pytest.approx(0.028017987, rel=1e-8)
    assert units.wavelength("1 THz") == pytest.approx(299.792458e-6, rel=1e-15)
    assert units.wavelength("0.55 um") == pytest.approx(550e-9)
    assert units.wavelength(28, default="mm") == pytest.approx(0.028)
    assert units.wavelength(10.7, default="GHz") == pytest.approx(C / 10.7e9)


def test_wavelength_must_be_positive():
    with pytest.raises(UnitError, match="positive"):
        units.wavelength("-5 nm")
    with pytest.raises(UnitError, match="positive"):
        units.wavelength("0 GHz")


@pytest.mark.parametrize(
    "text, watts", [("5 mW", 5e-3), ("1 W", 1.0), ("2 uW", 2e-6), ("2 \u00b5W", 2e-6),
                    ("3 nW", 3e-9), ("1.5 kW", 1500.0)],
)
def test_power_strings(text, watts):
    assert units.power(text) == pytest.approx(watts, rel=1e-15)


def test_power_negative_refused():
    with pytest.raises(UnitError, match="non-negative"):
        units.power("-1 mW")


def test_other_kinds():
    assert units.fraction("50 %") == 0.5
    assert units.fraction("20 ppm") == pytest.approx(2e-5)
    assert units.fraction(0.3) == 0.3
    assert units.temperature("15 degC") == pytest.approx(288.15)
    assert units.temperature("15 \u00b0C") == pytest.approx(288.15)
    assert units.temperature("300 K") == 300.0
    assert units.temperature(20) == pytest.approx(293.15)
    assert units.pressure("101.325 kPa") == pytest.approx(101325.0)
    assert units.pressure("1 atm") == 101325.0
    assert units.pressure("1013.25 hPa") == pytest.approx(101325.0)
    with pytest.raises(UnitError, match="absolute zero"):
        units.temperature("-300 degC")


def test_generic_parse_matches_helpers():
    assert units.parse("25 mm", "length", "mm") == units.length("25 mm")
    assert units.parse("45 deg", "angle", "deg") == units.angle("45 deg")
    assert units.parse("10.7 GHz", "wavelength", "nm") == units.wavelength("10.7 GHz")
    with pytest.raises(ValueError):
        units.parse("1 mm", "mass", "kg")


def test_mismatched_unit_message():
    with pytest.raises(UnitError) as info:
        units.angle("45 mm")
    msg = str(info.value)
    assert '"45 mm"' in msg
    assert "expected an angle" in msg
    assert "a length" in msg
    assert "deg" in msg and "rad" in msg and "arcsec" in msg
    # reads well after a key path prefix, as the scene loader writes it
    assert ("solids.upper.size: " + msg).startswith("solids.upper.size: expected an angle")


def test_unknown_unit_message_lists_units():
    with pytest.raises(UnitError) as info:
        units.length("5 furlong")
    msg = str(info.value)
    assert "furlong" in msg and "mm" in msg and "nm" in msg and "expected a length" in msg


def test_case_matters_for_prefixes():
    # "MW" is not a milliwatt and "Mm" is not a millimetre: refuse rather than guess.
    with pytest.raises(UnitError):
        units.power("5 MW")
    with pytest.raises(UnitError):
        units.length("5 Mm")


@pytest.mark.parametrize(
    "bad", ["", "   ", "mm", "five mm", "inf mm", "nan deg", "1,5 mm", "1 2 mm",
            float("nan"), float("inf"), True, False, None, [1.0], {"value": 1}],
)
def test_bad_inputs_raise_unit_error(bad):
    with pytest.raises(UnitError):
        units.length(bad)


def test_unit_error_is_tracer_error():
    with pytest.raises(TracerError):
        units.angle("1 W")


def test_no_default_requires_unit():
    with pytest.raises(UnitError, match="with a unit"):
        units.length(5, default=None)
    with pytest.raises(UnitError, match="with a unit"):
        units.length("5", default=None)
    assert units.length("5 mm", default=None) == pytest.approx(5e-3)


def test_bad_default_is_programming_error():
    with pytest.raises(ValueError):
        units.length(5, default="deg")


def test_positive_option():
    with pytest.raises(UnitError, match="positive"):
        units.length("0 mm", positive=True)
    assert units.length("1 mm", positive=True) == pytest.approx(1e-3)


def test_parse_array():
    out = units.parse_array([0, "5 mm", 2.5], "length", "mm")
    np.testing.assert_allclose(out, [0.0, 5e-3, 2.5e-3])
    assert out.dtype == np.float64
    with pytest.raises(UnitError, match=r"\[1\]: expected a length"):
        units.parse_array([0, "5 deg"], "length", "mm")
    with pytest.raises(UnitError, match="3 lengths"):
        units.parse_array([0, 1], "length", "mm", size=3)
    with pytest.raises(UnitError):
        units.parse_array("5 mm", "length", "mm")


def test_bandwidth():
    assert units.bandwidth("1 nm", center=1e-6) == pytest.approx(1e-9)
    # d_lambda = lambda^2 d_f / c
    assert units.bandwidth("1 GHz", center=1e-6) == pytest.approx(1e-12 * 1e9 / C)
    with pytest.raises(UnitError):
        units.bandwidth("1 deg", center=1e-6)


def test_format_examples():
    assert units.format_length(0.025) == "25 mm"
    assert units.format_length(5e-6) == "5 µm"
    assert units.format_length(550e-9) == "550 nm"
    assert units.format_length(1.0) == "1 m"
    assert units.format_length(-0.002) == "-2 mm"
    assert units.format_wavelength(633e-9) == "633 nm"
    assert units.format_wavelength(C / 10.7e9).endswith(" mm")
    assert units.format_angle(math.radians(45)) == "45°"
    assert units.format_frequency(10.7e9) == "10.7 GHz"
    assert units.format_power(5e-3) == "5 mW"
    assert units.format_quantity(0.25, "fraction") == "25 %"


@pytest.mark.parametrize("x", [0.025, 5e-6, 1.2345e-7, 3.3, 7e-12, 0.999e-3])
def test_format_length_round_trip(x):
    assert units.length(units.format_length(x)) == pytest.approx(x, rel=1e-5)


@pytest.mark.parametrize("x", [1e-3, 0.5, 2.0, 1e-6])
def test_format_power_round_trip(x):
    assert units.power(units.format_power(x)) == pytest.approx(x, rel=1e-5)


def test_format_angle_round_trip():
    for x in (0.1, -1.0, 3.0):
        assert units.angle(units.format_angle(x)) == pytest.approx(x, rel=1e-5)
        assert units.angle(units.format_angle(x, unit="arcsec")) == pytest.approx(x, rel=1e-5)


def test_parse_default_is_optional():
    assert units.parse("25 mm", "length") == pytest.approx(0.025)
    assert units.parse(25, "length") == pytest.approx(0.025)
    assert units.parse(45, "angle") == pytest.approx(math.pi / 4)
    assert units.parse(550, "wavelength") == pytest.approx(550e-9)
    with pytest.raises(UnitError):
        units.parse(25, "length", None)


from hypothesis import given, settings  # noqa: E402
from hypothesis import strategies as st  # noqa: E402


@settings(max_examples=200, deadline=None)
@given(st.floats(min_value=1e-13, max_value=1e3, allow_nan=False, allow_infinity=False),
       st.sampled_from([1.0, -1.0]))
def test_format_length_round_trip_property(x, sign):
    # formatting keeps 6 significant digits, so the round trip is exact to 5e-6
    value = sign * x
    assert units.length(units.format_length(value)) == pytest.approx(value, rel=5.1e-6)


@settings(max_examples=200, deadline=None)
@given(st.floats(min_value=1e6, max_value=1e16, allow_nan=False))
def test_frequency_and_wavelength_are_reciprocal(f):
    text = f"{f!r} Hz"
    assert units.wavelength(text) * units.frequency(text) == pytest.approx(C, rel=1e-15)
