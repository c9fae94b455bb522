"""Quantities in a spec -> SI floats, against the definitions of the units.

Sources named beside each group:
- [YP1959] international yard and pound agreement (1959): 1 in = 25.4 mm exactly, 1 ft = 12 in.
- [SI9] SI Brochure, 9th ed. (BIPM 2019): SI prefixes; K = °C + 273.15.
- [F] °F definition: K = (°F − 32)·5/9 + 273.15 (from the °C definition and 1 °F = 5/9 K).
- [GN] conventional water column: ρ = 1000 kg/m³, standard gravity g_n = 9.80665 m/s²
  (3rd CGPM 1901), so 1 mmH2O = 9.80665 Pa, 1 inH2O = 249.08891 Pa; NIST SP 811 (2008)
  lists 2.490889 E+02 Pa for the conventional inch of water (from memory).
- [ATM] standard atmosphere 101325 Pa = 760 mmHg (10th CGPM 1954; the conventional mmHg
  differs from 1/760 atm by about 1e-7, from memory).
- [PPM] parts per million: 1 ppm = 1e-6; per cent: 1 % = 1e-2 (ISO 80000-1).
"""

from __future__ import annotations

from decimal import Decimal

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from compiler.spec.units import (
    LENGTH_UNITS,
    UnitParseError,
    format_length,
    parse_angle,
    parse_cents,
    parse_co2,
    parse_frequency,
    parse_humidity,
    parse_length,
    parse_nonnegative_length,
    parse_positive_length,
    parse_pressure,
    parse_ratio,
    parse_size2,
    parse_temperature,
)

EXACT = 1e-12


@pytest.mark.parametrize(
    ("text", "metres"),
    [
        ("136 mm", 0.136),  # [SI9] milli = 1e-3
        ("136mm", 0.136),
        ("  136   MM ", 0.136),
        ("13.6 cm", 0.136),  # [SI9] centi = 1e-2
        ("2.375 m", 2.375),
        ("5 3/8 in", 0.136525),  # [YP1959] 5.375 in x 25.4 mm = 136.525 mm
        ("5-3/8 in", 0.136525),
        ('5 3/8"', 0.136525),
        ("5⅜ inches", 0.136525),
        ("5 ⅜ inch", 0.136525),
        ("5 3⁄8 in", 0.136525),  # U+2044 fraction slash
        ("3/8 in", 0.009525),  # [YP1959] 0.375 x 25.4 mm = 9.525 mm
        ("½ in", 0.0127),
        ("1.5 ft", 0.4572),  # [YP1959] 18 in = 457.2 mm
        ("2 feet", 0.6096),
        ("1 foot", 0.3048),
        ("3'", 0.9144),  # [YP1959] 1 yd = 0.9144 m
        ("0.25", 0.00025),  # bare number: default unit mm
        ("1e3 mm", 1.0),
        ("\u22123 mm", -0.003),  # U+2212 minus sign
        ("-5 3/8 in", -0.136525),
        (136, 0.136),
        (0.2, 0.0002),
    ],
)
def test_length(text: object, metres: float) -> None:
    assert parse_length(text) == pytest.approx(metres, rel=EXACT)


@pytest.mark.parametrize(
    ("func", "value", "expected"),
    [
        (parse_frequency, "440 Hz", 440.0),
        (parse_frequency, "440hz", 440.0),
        (parse_frequency, "1.2 kHz", 1200.0),  # [SI9] kilo = 1e3
        (parse_temperature, "20 C", 293.15),  # [SI9]
        (parse_temperature, "20 °C", 293.15),
        (parse_temperature, "20 degC", 293.15),
        (parse_temperature, "20 ℃", 293.15),
        (parse_temperature, "-5 C", 268.15),
        (parse_temperature, "68 F", 293.15),  # [F] (68 - 32)·5/9 = 20 °C
        (parse_temperature, "68 °F", 293.15),
        (parse_temperature, "-40 °F", 233.15),  # [F] -40 °F = -40 °C
        (parse_temperature, "212 F", 373.15),  # [F] 180 °F above 32 °F = 100 K
        (parse_temperature, "293.15 K", 293.15),
        (parse_pressure, "101325 Pa", 101325.0),
        (parse_pressure, "1013.25 hPa", 101325.0),  # [SI9] hecto = 1e2
        (parse_pressure, "1013.25 mbar", 101325.0),  # [SI9] 1 bar = 1e5 Pa
        (parse_pressure, "101.325 kPa", 101325.0),
        (parse_pressure, "80 mmH2O", 784.532),  # [GN] 80 x 9.80665 Pa
        (parse_pressure, "80 mm H₂O", 784.532),
        (parse_pressure, "3 inH2O", 747.26673),  # [GN] 3 x 249.08891 Pa
        (parse_humidity, "55 %", 0.55),  # [PPM]
        (parse_humidity, "55%", 0.55),
        (parse_humidity, "0 %", 0.0),
        (parse_humidity, "100 %", 1.0),
        (parse_co2, "400 ppm", 4e-4),  # [PPM]
        (parse_co2, "0.04 %", 4e-4),
        (parse_co2, "4 %", 0.04),
        (parse_angle, "30 deg", 30.0),
        (parse_angle, "30°", 30.0),
        (parse_angle, "30 degrees", 30.0),
        (parse_angle, "-15 º", -15.0),  # U+00BA, often typed for the degree sign
        (parse_angle, 30, 30.0),
        (parse_ratio, 0.25, 0.25),
        (parse_ratio, "1/4", 0.25),
        (parse_ratio, "2/9", 2 / 9),
        (parse_ratio, "25 %", 0.25),  # [PPM]
        (parse_ratio, "0.45", 0.45),
        (parse_ratio, 0, 0.0),
        (parse_cents, "+3.5 cents", 3.5),
        (parse_cents, "-2 c", -2.0),
        (parse_cents, "\u22121.25 ¢", -1.25),
        (parse_cents, "3.5", 3.5),
        (parse_cents, 3.5, 3.5),
    ],
)
def test_quantity(func: object, value: object, expected: float) -> None:
    assert callable(func)
    assert func(value) == pytest.approx(expected, rel=EXACT, abs=1e-15)


@pytest.mark.parametrize(
    ("text", "pascals", "rel"),
    [
        ("760 mmHg", 101325.0, 1e-6),  # [ATM]
        # NIST SP 811 (2008), conventional inch and millimetre of mercury (from memory)
        ("1 inHg", 3386.389, 1e-6),
        ("1 mmHg", 133.3224, 1e-6),
    ],
)
def test_mercury_column(text: str, pascals: float, rel: float) -> None:
    assert parse_pressure(text) == pytest.approx(pascals, rel=rel)


def test_length_units_table() -> None:
    # [YP1959] and [SI9]
    expected = {"mm": 1e-3, "cm": 1e-2, "m": 1.0, "in": 0.0254, "ft": 0.3048}
    expected |= {'"': 0.0254, "inch": 0.0254, "inches": 0.0254}
    expected |= {"'": 0.3048, "foot": 0.3048, "feet": 0.3048}
    for unit, metres in expected.items():
        assert LENGTH_UNITS[unit] == pytest.approx(metres, rel=EXACT)


@pytest.mark.parametrize(
    ("value", "default_unit", "metres"),
    [
        ("2", "in", 0.0508),  # [YP1959]
        (2, "m", 2.0),
        ("2 mm", None, 0.002),
    ],
)
def test_length_default_unit(value: object, default_unit: str | None, metres: float) -> None:
    assert parse_length(value, default_unit) == pytest.approx(metres, rel=EXACT)


def test_length_bounds() -> None:
    assert parse_nonnegative_length("0 mm") == 0.0
    assert parse_positive_length("0.2 mm") == pytest.approx(2e-4, rel=EXACT)
    assert parse_length("-12 mm") == pytest.approx(-0.012, rel=EXACT)


@pytest.mark.parametrize(
    ("value", "default_unit", "size"),
    [
        ("1200 x 600 mm", "mm", (1.2, 0.6)),
        ("1200x600 mm", "mm", (1.2, 0.6)),
        ("1200 mm x 600 mm", None, (1.2, 0.6)),
        ("1200 × 600", "mm", (1.2, 0.6)),
        ("48 x 24 in", "mm", (1.2192, 0.6096)),  # [YP1959] 48 in = 1219.2 mm
        ("4 ft X 2 ft", "mm", (1.2192, 0.6096)),
        ("5 3/8 x 2 in", "mm", (0.136525, 0.0508)),
    ],
)
def test_size2(value: str, default_unit: str | None, size: tuple[float, float]) -> None:
    assert parse_size2(value, default_unit) == pytest.approx(size, rel=EXACT)


@pytest.mark.parametrize(
    ("metres", "unit", "precision", "text"),
    [
        (0.136, "mm", 1, "136.0 mm"),
        (0.136525, "in", 3, "5.375 in"),  # [YP1959]
        (0.136525, "inches", 4, "5.3750 in"),
        (0.3048, "ft", 2, "1.00 ft"),  # [YP1959]
        (2.375, "m", 3, "2.375 m"),
        (-0.00001, "mm", 1, "0.0 mm"),  # no "-0.0"
        (-0.0125, "cm", 2, "-1.25 cm"),
    ],
)
def test_format_length(metres: float, unit: str, precision: int, text: str) -> None:
    assert format_length(metres, unit, precision) == text


@settings(max_examples=200, deadline=None)
@given(
    st.decimals(min_value=-(10**6), max_value=10**6, places=4, allow_nan=False),
    st.sampled_from(["mm", "in", "ft"]),
)
def test_length_is_correctly_rounded(number: Decimal, unit: str) -> None:
    # Python's decimal module as the reference: the exact product, rounded once to a float.
    factor = {"mm": Decimal("0.001"), "in": Decimal("0.0254"), "ft": Decimal("0.3048")}[unit]
    assert parse_length(f"{number} {unit}") == float(number * factor)


def test_error_is_value_error_with_message_and_hint() -> None:
    with pytest.raises(ValueError) as caught:
        parse_length("12 furlongs")
    error = caught.value
    assert isinstance(error, UnitParseError)
    assert error.message == '"12 furlongs": unknown length unit "furlongs"'
    assert str(error) == error.message
    assert "mm, cm, m, in, ft" in error.hint
    assert UnitParseError("bad").hint == ""


@pytest.mark.parametrize(
    ("func", "value", "message", "hint"),
    [
        # missing unit
        (lambda v: parse_length(v, None), 12, "12: missing length unit", "136 mm"),
        (lambda v: parse_length(v, None), "12", '"12": missing length unit', "136 mm"),
        (parse_frequency, "440", '"440": missing frequency unit', "440 Hz"),
        (parse_frequency, 440, "440: missing frequency unit", "440 Hz"),
        (parse_temperature, "20", '"20": missing temperature unit', "20 C"),
        (parse_pressure, 101325, "missing pressure unit", "Pa"),
        (parse_humidity, "55", '"55": missing humidity unit', "55 %"),
        (parse_humidity, 0.55, "missing humidity unit", "55 %"),
        (parse_co2, "400", "missing CO2 fraction unit", "400 ppm"),
        # unknown unit, with the nearest valid one
        (parse_length, "12 furlongs", 'unknown length unit "furlongs"', "units: mm, cm"),
        (parse_length, "12 mmm", 'unknown length unit "mmm"', 'did you mean "mm"?'),
        (parse_length, "5 inchs", 'unknown length unit "inchs"', 'did you mean "inches"?'),
        (parse_frequency, "1.2 khzz", 'unknown frequency unit "khzz"', 'did you mean "khz"?'),
        (parse_angle, "1 rad", 'unknown angle unit "rad"', "30 deg"),
        (lambda v: parse_length(v, "yd"), "3", 'unknown length unit "yd"', "units: mm"),
        # a unit of another kind
        (parse_length, "440 Hz", '"Hz" is a frequency unit, not a length unit', "units: mm"),
        (parse_length, "20 C", "temperature or pitch offset unit, not a length", "136 mm"),
        (parse_frequency, "136 mm", '"mm" is a length unit, not a frequency unit', "Hz"),
        (parse_pressure, "20 °C", "a temperature unit, not a pressure unit", "Pa"),
        (parse_temperature, "20 %", "a fraction unit, not a temperature unit", "K"),
        (parse_cents, "3 mm", "a length unit, not a pitch offset unit", "cents"),
        (parse_humidity, "55 ppm", '"ppm" is not a humidity unit', "55 %"),
        (parse_ratio, "3 ppm", '"ppm" is not a ratio unit', "1/4"),
        # not finite
        (parse_length, "nan mm", '"nan mm": not a finite number', "136 mm"),
        (parse_length, "inf mm", "not a finite number", "136 mm"),
        (parse_length, "-Infinity m", "not a finite number", "136 mm"),
        (parse_length, float("nan"), "nan: not a finite number", "136 mm"),
        (parse_length, float("-inf"), "not a finite number", "136 mm"),
        (parse_angle, "nan°", "not a finite number", "30 deg"),
        (parse_cents, float("nan"), "not a finite number", "cents"),
        (parse_ratio, float("inf"), "not a finite number", "1/4"),
        (parse_length, "1e999 m", '"1e999 m": too large to be a length', "136 mm"),
        (parse_length, 10**400, "too large to be a length", "136 mm"),
        # bool is not a number
        (parse_length, True, "true: expected a length, got a yes/no value", "136 mm"),
        (parse_ratio, False, "false: expected a ratio, got a yes/no value", "1/4"),
        (parse_cents, True, "expected a pitch offset", "cents"),
        (parse_angle, False, "expected an angle", "30°"),
        # zero denominator
        (parse_length, "3/0 in", '"3/0 in": fraction with a zero denominator', "5 3/8 in"),
        (parse_length, "5 3/0 in", "zero denominator", "136 mm"),
        (parse_ratio, "1/0", "zero denominator", "1/4"),
        # out of range
        (parse_positive_length, "0 mm", '"0 mm": a length must be greater than zero', "mm"),
        (parse_positive_length, -1, "must be greater than zero", "mm"),
        (parse_nonnegative_length, "-0.5 mm", "a length must not be negative", "mm"),
        (parse_frequency, "0 Hz", "a frequency must be greater than zero", "Hz"),
        (parse_frequency, "-440 Hz", "must be greater than zero", "Hz"),
        (parse_pressure, "0 hPa", "a pressure must be greater than zero", "Pa"),
        (parse_temperature, "-274 C", "must be above absolute zero", "K"),
        (parse_temperature, "-460 F", "must be above absolute zero", "K"),  # 0 K = -459.67 °F
        (parse_temperature, "0 K", "must be above absolute zero", "K"),
        (parse_humidity, "101 %", "must be between 0 % and 100 %", "55 %"),
        (parse_humidity, "-1 %", "must be between 0 % and 100 %", "55 %"),
        (parse_co2, "100 %", "must be at least 0 and below 100 %", "ppm"),
        (parse_co2, "-1 ppm", "must be at least 0", "ppm"),
        (parse_ratio, "-0.25", "a ratio must not be negative", "1/4"),
        # not a quantity at all
        (parse_length, "", "empty value", "136 mm"),
        (parse_length, "   ", "empty value", "136 mm"),
        (parse_length, None, "missing value: expected a length", "136 mm"),
        (parse_length, [1, 2], "expected a length, got a list", "136 mm"),
        (parse_length, "mm 12", '"mm 12": does not start with a number', "136 mm"),
        (parse_length, "2,5 mm", "decimal comma", "2.5 mm"),
        (parse_length, "1" * 200 + " mm", "too long to be a length", "136 mm"),
        # sizes
        (parse_size2, "1200 mm", "expected two lengths", "1200 x 600 mm"),
        (parse_size2, "1 x 2 x 3 mm", "expected two lengths", "1200 x 600 mm"),
        (parse_size2, "x 600 mm", "expected two lengths", "1200 x 600 mm"),
        (parse_size2, 1200, "expected two lengths", "1200 x 600 mm"),
        (lambda v: parse_size2(v, None), "1200 x 600", '"1200": missing length unit', "mm"),
        (parse_size2, "0 x 600 mm", "must be greater than zero", "mm"),
        (parse_size2, "1200 x 600 Hz", '"1200 Hz": "Hz" is a frequency unit', "mm"),
        (parse_size2, "12 x 6 furlongs", '"12 furlongs": unknown length unit', "mm"),
    ],
)
def test_rejected(func: object, value: object, message: str, hint: str) -> None:
    assert callable(func)
    with pytest.raises(UnitParseError) as caught:
        func(value)
    assert message in caught.value.message
    assert hint in caught.value.hint


def test_format_length_rejects() -> None:
    with pytest.raises(UnitParseError, match="unknown length unit"):
        format_length(1.0, "furlong")
    with pytest.raises(ValueError, match="precision"):
        format_length(1.0, "mm", -1)
