"""Unit tests for calcsheet.source.units.

Outside references: a separate pint UnitRegistry built here (so the project's own registry and
its settings are not what is being compared against), and these facts (table and section
numbers of the SI Brochure are quoted from memory):
- 1 h = 3600 s, 1 min = 60 s (SI Brochure, 9th ed., Table 8: non-SI units accepted for use).
- T/K = t/degC + 273.15 (SI Brochure, 9th ed., section 2.3.1, definition of the Celsius
  temperature); a temperature *difference* of 1 degC equals 1 K (same source).
- T/K = (t/degF + 459.67) * 5/9 (common practice, no source; value from memory).
- Prefixes k = 1e3, M = 1e6, m = 1e-3, u = 1e-6 (SI Brochure, 9th ed., Table 7).
- Angular speed from rotational speed: omega = 2*pi*n/60 rad/s for n in rev/min
  (common practice, no source).
"""

from __future__ import annotations

import math

import pint
import pytest

from calcsheet.errors import InputError
from calcsheet.source import units as u


@pytest.fixture(scope="module")
def ref():
    """An independent pint registry used as the outside reference."""
    return pint.UnitRegistry()


# --------------------------------------------------------------------- parse_quantity
@pytest.mark.parametrize(
    "text, si, pint_text",
    [
        ("4.7 kohm", 4700.0, "4.7 kiloohm"),
        ("2200 uF", 2.2e-3, "2200 microfarad"),
        ("1 µF", 1e-6, "1 microfarad"),
        ("1 μF", 1e-6, "1 microfarad"),  # Greek mu (U+03BC) as well as micro sign (U+00B5)
        ("10 mH", 1e-2, "10 millihenry"),
        ("1 Mohm", 1e6, "1 megaohm"),
        ("2 Ω", 2.0, "2 ohm"),
        ("3 m^3/min", 0.05, "3 meter**3/minute"),
        ("15 W/(m^2*K)", 15.0, "15 watt/(meter**2*kelvin)"),
        ("101.3 kPa", 101300.0, "101.3 kilopascal"),
        ("2 N*m*s/rad", 2.0, "2 newton*meter*second/radian"),
        ("1 N·m", 1.0, "1 newton*meter"),
        ("2 kN*m", 2000.0, "2 kilonewton*meter"),
        ("1 h", 3600.0, "1 hour"),
        ("2 min", 120.0, "2 minute"),
        ("1 L/min", 1e-3 / 60, "1 liter/minute"),
        ("1 kWh", 3.6e6, "1 kilowatt_hour"),
        ("-3.5e2 V", -350.0, "-350 volt"),
        ("1.5 1/s", 1.5, "1.5 / second"),
        ("2 /s", 2.0, "2 / second"),
        ("2 s^-1", 2.0, "2 / second"),
        ("  47   kohm  ", 47000.0, "47 kiloohm"),
        ("+5 V", 5.0, "5 volt"),
        (".5 s", 0.5, "0.5 second"),
        ("5. s", 5.0, "5 second"),
        ("1E3 Pa", 1000.0, "1000 pascal"),
    ],
)
def test_parse_quantity_to_si(ref, text, si, pint_text):
    quantity = u.parse_quantity(text)
    assert u.to_si(quantity) == pytest.approx(si, rel=1e-12)
    reference = ref.Quantity(pint_text).to_base_units().magnitude
    assert u.to_si(quantity) == pytest.approx(reference, rel=1e-12)


def test_hour_is_3600_seconds():
    assert u.to_si(u.parse_quantity("1 h")) == 3600.0
    assert u.from_si(3600.0, u.parse_unit("h")) == pytest.approx(1.0)


def test_rpm_is_angular_speed_in_rad_per_s():
    # omega = 2*pi*n/60 (common practice, no source)
    assert u.to_si(u.parse_quantity("1500 rpm")) == pytest.approx(2 * math.pi * 1500 / 60)
    assert u.same_dimension(u.parse_unit("rpm"), u.parse_unit("rad/s"))
    assert u.same_dimension(u.parse_unit("rpm"), u.parse_unit("1/s"))


def test_rad_per_s_is_one_over_time():
    assert u.to_si(u.parse_quantity("3 rad/s")) == pytest.approx(3.0)
    assert u.dimension_text(u.parse_unit("rad/s")) == "1/[time]"


@pytest.mark.parametrize("value", [0.85, 12, 0, -4])
def test_bare_numbers_are_dimensionless(value):
    quantity = u.parse_quantity(value)
    assert u.to_si(quantity) == float(value)
    assert u.dimension_text(quantity.units) == "dimensionless"


def test_number_text_without_unit_is_dimensionless():
    quantity = u.parse_quantity("0.85")
    assert u.to_si(quantity) == pytest.approx(0.85)
    assert u.same_dimension(quantity.units, u.parse_unit(""))


def test_percent_is_a_hundredth():
    assert u.to_si(u.parse_quantity("10 %")) == pytest.approx(0.1)


@pytest.mark.parametrize(
    "value, fragment",
    [
        (True, "true/false"),
        (False, "true/false"),
        (None, "but found a value of another kind"),
        ([1], "but found a list"),
        ({"value": 1}, "but found a table"),
        ("V", "is not a number followed by a unit"),
        ("", "is not a number followed by a unit"),
        ("nan V", "is not a number followed by a unit"),
        ("inf V", "is not a number followed by a unit"),
        ("1e999 V", "is not a finite number"),
        ("5 V 3", "carries a number"),
        ("4.7 kohmz", "unknown unit 'kohmz'"),
        ("4.7 kOhm", "unknown unit 'kOhm'"),
        ("__import__('os').system('touch X')", "is not a number followed by a unit"),
        ("4 __import__('os')", "holds characters a unit cannot have"),
    ],
)
def test_parse_quantity_refuses(value, fragment):
    with pytest.raises(InputError) as info:
        u.parse_quantity(value)
    assert fragment in str(info.value)


@pytest.mark.parametrize("value", [math.inf, -math.inf, math.nan])
def test_parse_quantity_refuses_non_finite_bare_numbers(value):
    with pytest.raises(InputError, match="finite"):
        u.parse_quantity(value)


# ------------------------------------------------------------------------- parse_unit
@pytest.mark.parametrize("text", ["", "   ", "1"])
def test_empty_unit_is_dimensionless(text):
    assert u.parse_unit(text) == u.registry().dimensionless


@pytest.mark.parametrize(
    "text, pint_text",
    [
        ("kohm", "kiloohm"),
        ("uF", "microfarad"),
        ("mH", "millihenry"),
        ("Mohm", "megaohm"),
        ("m^3/min", "meter**3/minute"),
        ("m**2", "meter**2"),
        ("W/(m^2*K)", "watt/meter**2/kelvin"),
        ("kPa", "kilopascal"),
        ("N*m*s/rad", "newton*meter*second/radian"),
        ("rad/s", "radian/second"),
        ("rpm", "revolution/minute"),
        ("/s", "1/second"),
        ("ohm*F", "second"),
        ("Ω", "ohm"),
    ],
)
def test_parse_unit_matches_pint(ref, text, pint_text):
    unit = u.parse_unit(text)
    ours = u.registry().Quantity(1, unit).to_base_units()
    theirs = ref.Quantity(1, pint_text).to_base_units()
    assert ours.magnitude == pytest.approx(theirs.magnitude, rel=1e-12)
    assert dict(ours.dimensionality) == dict(theirs.dimensionality)


@pytest.mark.parametrize(
    "text, fragment",
    [
        ("V'", "holds characters a unit cannot have"),
        ('"V"', "holds characters a unit cannot have"),
        ("V,", "holds characters a unit cannot have"),
        ("V;", "holds characters a unit cannot have"),
        ("$V", "holds characters a unit cannot have"),
        ("[V]", "holds characters a unit cannot have"),
        ("__class__", "holds characters a unit cannot have"),
        ("__import__('os').system('touch X')", "holds characters a unit cannot have"),
        ("furlongz", "unknown unit 'furlongz'"),
        ("2 m", "carries a number"),
        ("3", "carries a number"),
    ],
)
def test_parse_unit_refuses(text, fragment):
    with pytest.raises(InputError) as info:
        u.parse_unit(text)
    assert fragment in str(info.value)


def test_unit_refusal_creates_no_file(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    with pytest.raises(InputError):
        u.parse_unit("__import__('os').system('touch X')")
    assert not (tmp_path / "X").exists()


# --------------------------------------------------------------- temperatures / offsets
@pytest.mark.parametrize("text", ["degC", "°C", "celsius", "degree_Celsius", "degF"])
def test_absolute_temperature_scales_are_offset(text):
    assert u.is_offset(u.parse_unit(text))


@pytest.mark.parametrize("text", ["K", "delta_degC", "degC/min", "degF/h", "1/degC", "degC*min", "W/(m^2*K)", "V", ""])
def test_other_units_are_not_offset(text):
    assert not u.is_offset(u.parse_unit(text))


def test_celsius_to_kelvin_uses_the_offset():
    # T/K = t/degC + 273.15 (SI Brochure, 9th ed., 2.3.1)
    assert u.to_si(u.parse_quantity("80 degC")) == pytest.approx(353.15)
    assert u.to_si(u.parse_quantity("25 °C")) == pytest.approx(298.15)
    assert u.to_si(u.parse_quantity("-273.15 degC")) == pytest.approx(0.0, abs=1e-9)


def test_fahrenheit_to_kelvin_uses_the_offset(ref):
    # T/K = (t/degF + 459.67)*5/9 (common practice, no source; from memory)
    assert u.to_si(u.parse_quantity("68 degF")) == pytest.approx((68 + 459.67) * 5 / 9)
    assert u.to_si(u.parse_quantity("68 degF")) == pytest.approx(ref.Quantity(68, "degF").to("K").magnitude)


def test_from_si_back_to_celsius_and_fahrenheit():
    assert u.from_si(353.15, u.parse_unit("degC")) == pytest.approx(80.0)
    assert u.from_si(0.0, u.parse_unit("degC")) == pytest.approx(-273.15)
    assert u.from_si(293.15, u.parse_unit("degF")) == pytest.approx(68.0)


def test_compound_celsius_rate_is_a_difference_rate(ref):
    # A difference of 1 degC is 1 K (SI Brochure, 9th ed., 2.3.1); 1 min = 60 s.
    unit = u.parse_unit("degC/min")
    assert not u.is_offset(unit)
    assert u.to_si(u.parse_quantity("5 degC/min")) == pytest.approx(5 / 60)
    assert u.to_si(u.parse_quantity("5 degC/min")) == pytest.approx(
        ref.Quantity(5, "delta_degC/minute").to("K/s").magnitude
    )
    assert u.from_si(1.0, unit) == pytest.approx(60.0)
    assert u.same_dimension(unit, u.parse_unit("K/s"))


def test_compound_fahrenheit_rate_and_inverse_celsius(ref):
    assert u.to_si(u.parse_quantity("9 degF/h")) == pytest.approx(5 / 3600)
    assert u.to_si(u.parse_quantity("1.2e-5 1/degC")) == pytest.approx(1.2e-5)  # per degC = per K


def test_celsius_spelled_out_in_compound_is_a_difference():
    assert u.to_si(u.parse_quantity("2 degree_Celsius/h")) == pytest.approx(2 / 3600)


# ------------------------------------------------------------------ si_unit / from_si
@pytest.mark.parametrize(
    "text",
    [
        "4.7 kohm",
        "2200 uF",
        "10 mH",
        "3 m^3/min",
        "15 W/(m^2*K)",
        "101.3 kPa",
        "1500 rpm",
        "80 degC",
        "5 degC/min",
        "2 h",
        "-12 V",
    ],
)
def test_from_si_inverts_to_si(text):
    quantity = u.parse_quantity(text)
    assert u.from_si(u.to_si(quantity), quantity.units) == pytest.approx(quantity.magnitude, rel=1e-12)


def test_si_unit_is_coherent_base_unit(ref):
    si = u.si_unit(u.parse_unit("kohm"))
    assert u.registry().Quantity(1, si).to_base_units().magnitude == pytest.approx(1.0)
    assert u.same_dimension(si, u.parse_unit("ohm"))
    assert u.si_unit(u.parse_unit("min")) == u.registry().second
    assert u.si_unit(u.parse_unit("degC")) == u.registry().kelvin


# ------------------------------------------------------------------------ dimensions
@pytest.mark.parametrize(
    "a, b, same",
    [
        ("degC", "K", True),
        ("degC/min", "K/s", True),
        ("kohm", "V/A", True),
        ("kohm*uF", "s", True),  # R*C is a time (common practice, no source)
        ("mH/ohm", "s", True),  # L/R is a time (common practice, no source)
        ("rad", "", True),
        ("rpm", "Hz", True),
        ("W/(m^2*K)", "kg/(s^3*K)", True),
        ("N*m*s/rad", "kg*m^2/s", True),
        ("V", "s", False),
        ("degC", "degC/min", False),
        ("m^3/min", "m^3", False),
        ("kPa", "N/m", False),
    ],
)
def test_same_dimension(ref, a, b, same):
    assert u.same_dimension(u.parse_unit(a), u.parse_unit(b)) is same
    left, right = ref.Quantity(1, a or "dimensionless"), ref.Quantity(1, b or "dimensionless")
    reference = left.dimensionality == right.dimensionality
    assert reference is same


@pytest.mark.parametrize(
    "text, expected",
    [
        ("", "dimensionless"),
        ("rad", "dimensionless"),
        ("s", "[time]"),
        ("1/s", "1/[time]"),
        ("V", "[length]^2*[mass]/[current]/[time]^3"),
        ("kohm", "[length]^2*[mass]/[current]^2/[time]^3"),
        ("m^3/min", "[length]^3/[time]"),
        ("degC", "[temperature]"),
        ("degC/min", "[temperature]/[time]"),
        ("W/(m^2*K)", "[mass]/[temperature]/[time]^3"),
        ("kPa", "[mass]/[length]/[time]^2"),
    ],
)
def test_dimension_text(text, expected):
    assert u.dimension_text(u.parse_unit(text)) == expected


def test_registry_is_shared():
    assert u.registry() is u.registry()
