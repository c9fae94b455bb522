"""Quantities as written in a spec (``136 mm``, ``5 3/8 in``, ``18 C``, ``55 %``) -> SI floats.

Pure: no YAML and no positions. Every problem raises ``UnitParseError`` with a plain message
and a hint; the caller attaches the spec position.

Conversions are exact definitions and are done in rational arithmetic, so each result is
rounded to a float once:
- 1 in = 25.4 mm, 1 ft = 12 in (international yard and pound agreement, 1959).
- K = °C + 273.15; K = (°F − 32)·5/9 + 273.15 (SI Brochure, 9th ed., BIPM 2019).
- 1 hPa = 1 mbar = 100 Pa; 1 kPa = 1000 Pa (SI prefixes).
- Conventional millimetre of water: 1 mmH2O = 1000 kg/m³ · g_n · 1 mm = 9.80665 Pa, with
  standard gravity g_n = 9.80665 m/s² (3rd CGPM, 1901); the inch of water is 25.4 of them.
- Conventional millimetre of mercury: 13 595.1 kg/m³ · g_n · 1 mm = 133.322387415 Pa
  (from memory; NIST SP 811 lists 1.333224 E+02 Pa); the inch of mercury is 25.4 of them.
- 1 ppm = 1e-6 (mole fraction); 1 % = 1e-2.
"""

from __future__ import annotations

import difflib
import math
import numbers
import re
from collections.abc import Callable, Mapping
from dataclasses import dataclass
from fractions import Fraction
from types import MappingProxyType


class UnitParseError(ValueError):
    """A quantity that cannot be read: ``message`` says what is wrong, ``hint`` how to fix it."""

    def __init__(self, message: str, hint: str = "") -> None:
        super().__init__(message)
        self.message = message
        self.hint = hint


_ZERO = Fraction(0)
_INCH = Fraction(254, 10000)
_G_N = Fraction("9.80665")
# rho * g_n * 1 mm with the conventional densities: water 1000, mercury 13 595.1 kg/m3.
_MM_H2O = 1000 * _G_N / 1000
_MM_HG = Fraction("13595.1") * _G_N / 1000
_ZERO_C = Fraction("273.15")

_Scale = tuple[Fraction, Fraction]


def _table(groups: Mapping[str, int | Fraction | _Scale]) -> Mapping[str, _Scale]:
    """Space-separated lower-case aliases -> (scale, offset): SI value = x * scale + offset."""
    table: dict[str, _Scale] = {}
    for aliases, value in groups.items():
        scale = value if isinstance(value, tuple) else (Fraction(value), _ZERO)
        table.update(dict.fromkeys(aliases.split(" "), scale))
    return MappingProxyType(table)


@dataclass(frozen=True)
class _Kind:
    """A kind of quantity (``noun``) of a ``dimension``: units, the ones shown in hints, a hint."""

    noun: str
    dimension: str
    units: Mapping[str, _Scale]
    shown: tuple[str, ...]
    hint: str


_LENGTH = _Kind(
    "length",
    "length",
    _table(
        {
            "mm": Fraction(1, 1000),
            "cm": Fraction(1, 100),
            "m": 1,
            'in " ″ inch inches': _INCH,
            "ft ' ′ foot feet": 12 * _INCH,
        }
    ),
    ("mm", "cm", "m", "in", "ft"),
    "write a length with a unit such as `136 mm`, `2.375 m` or `5 3/8 in`",
)
_FREQUENCY = _Kind(
    "frequency",
    "frequency",
    _table({"hz": 1, "khz": 1000}),
    ("Hz", "kHz"),
    "write a frequency with a unit such as `440 Hz` or `1.2 kHz`",
)
_TEMPERATURE = _Kind(
    "temperature",
    "temperature",
    _table(
        {
            "c °c degc celsius": (Fraction(1), _ZERO_C),
            "f °f degf fahrenheit": (Fraction(5, 9), _ZERO_C - Fraction(32 * 5, 9)),
            "k kelvin kelvins": (Fraction(1), _ZERO),
        }
    ),
    ("°C", "°F", "K"),
    "write a temperature with a unit such as `20 C`, `68 °F` or `293.15 K`",
)
_PRESSURE = _Kind(
    "pressure",
    "pressure",
    _table(
        {
            "pa": 1,
            "hpa mbar": 100,
            "kpa": 1000,
            "mmh2o": _MM_H2O,
            "inh2o": _MM_H2O * 254 / 10,
            "mmhg": _MM_HG,
            "inhg": _MM_HG * 254 / 10,
        }
    ),
    ("Pa", "hPa", "kPa", "mbar", "mmH2O", "inH2O", "mmHg", "inHg"),
    "write a pressure with a unit such as `101325 Pa`, `1013.25 hPa` or `80 mmH2O`",
)
_HUMIDITY = _Kind(
    "humidity",
    "fraction",
    _table({"%": Fraction(1, 100)}),
    ("%",),
    "write relative humidity as a percentage: `55 %`",
)
_CO2 = _Kind(
    "CO2 fraction",
    "fraction",
    _table({"%": Fraction(1, 100), "ppm": Fraction(1, 10**6)}),
    ("ppm", "%"),
    "write the CO2 content with a unit such as `400 ppm` or `0.04 %`",
)
_RATIO = _Kind(
    "ratio",
    "fraction",
    _table({"%": Fraction(1, 100), "": 1}),  # "": a bare number
    ("%",),
    "write a ratio as `0.25`, `1/4` or `25 %`",
)
_ANGLE = _Kind(
    "angle",
    "angle",
    _table({"deg ° degree degrees": 1}),
    ("°", "deg"),
    "write an angle in degrees such as `30 deg` or `30°`",
)
_CENTS = _Kind(
    "pitch offset",
    "pitch offset",
    _table({"cents cent c ¢": 1}),
    ("cents",),
    "write a pitch offset in cents such as `+3.5 cents` or `-2 c`",
)
_SPEED = _Kind(
    "speed",
    "speed",
    _table({"m/s mps": 1, "ft/s fps": 12 * _INCH}),
    ("m/s", "ft/s"),
    "write a speed of sound with its unit such as `344.1 m/s` or `1129 ft/s`",
)
# One kind per dimension, to tell "wrong kind" apart from "unknown".
_DIMENSIONS = (_LENGTH, _FREQUENCY, _TEMPERATURE, _PRESSURE, _CO2, _ANGLE, _CENTS, _SPEED)

LENGTH_UNITS: Mapping[str, float] = MappingProxyType(
    {unit: float(scale) for unit, (scale, _) in _LENGTH.units.items()}
)
"""Length unit (lower case, with aliases) -> metres."""

_VULGAR: Mapping[str, Fraction] = MappingProxyType(
    dict(zip("½¼¾⅛⅜⅝⅞", map(Fraction, "1/2 1/4 3/4 1/8 3/8 5/8 7/8".split()), strict=True))
)
_NUMBER = re.compile(
    r"""(?P<sign>[+-])?\s*
    (?: (?P<whole>\d+)(?:\s+|\s*-\s*)(?P<num>\d+)\s*/\s*(?P<den>\d+)  # 5 3/8, 5-3/8
      | (?P<fnum>\d+)\s*/\s*(?P<fden>\d+)                              # 3/8
      | (?P<vwhole>\d+)?\s*(?P<vulgar>[½¼¾⅛⅜⅝⅞])                        # 5½
      | (?P<dec>(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d{1,3})?)              # 2.375, 1e-3
    )\s*(?P<unit>.*)""",
    re.VERBOSE | re.DOTALL,
)
_NONFINITE = re.compile(r"[+-]?\s*(nan|inf|infinity)\b", re.IGNORECASE)
_CLEAN = str.maketrans(
    {"\u2212": "-", "\u2044": "/", "º": "°", "˚": "°", "₂": "2", "℃": "°c", "℉": "°f"}
)
_MAX_TEXT = 100


def _a(noun: str) -> str:
    return f"an {noun}" if noun[0] in "aeiou" else f"a {noun}"


def _show(value: object) -> str:
    """The value as the author wrote it, quoted if it is text, cut short if long."""
    if isinstance(value, bool):
        return "true" if value else "false"
    text = str(value) if isinstance(value, numbers.Real) else repr(value)
    if isinstance(value, str):
        text = f'"{value.strip()}"'
    return text if len(text) <= 40 else text[:36] + "..." + text[-1]


def _split(value: object, kind: _Kind) -> tuple[Fraction, str]:
    """Read a number and the unit written after it ("" when there is none)."""
    shown = _show(value)
    if isinstance(value, bool):
        raise UnitParseError(f"{shown}: expected {_a(kind.noun)}, got a yes/no value", kind.hint)
    if isinstance(value, numbers.Integral):
        return Fraction(int(value)), ""
    if isinstance(value, numbers.Real):
        real = float(value)
        if not math.isfinite(real):
            raise UnitParseError(f"{shown}: not a finite number", kind.hint)
        # The shortest decimal that round-trips is what the author wrote in the YAML.
        return Fraction(repr(real)), ""
    if value is None:
        raise UnitParseError(f"missing value: expected {_a(kind.noun)}", kind.hint)
    if not isinstance(value, str):
        raise UnitParseError(
            f"{shown}: expected {_a(kind.noun)}, got a {type(value).__name__}", kind.hint
        )
    text = value.strip().translate(_CLEAN)
    if not text:
        raise UnitParseError(f'"": empty value, expected {_a(kind.noun)}', kind.hint)
    if len(text) > _MAX_TEXT:
        raise UnitParseError(f"{shown}: too long to be {_a(kind.noun)}", kind.hint)
    if _NONFINITE.match(text):
        raise UnitParseError(f"{shown}: not a finite number", kind.hint)
    match = _NUMBER.fullmatch(text)
    if match is None:
        raise UnitParseError(f"{shown}: does not start with a number", kind.hint)
    groups = match.groupdict()
    if groups["dec"] is not None:
        number = Fraction(groups["dec"])
    elif groups["vulgar"] is not None:
        number = int(groups["vwhole"] or 0) + _VULGAR[groups["vulgar"]]
    else:
        whole = int(groups["whole"] or 0)
        num, den = int(groups["num"] or groups["fnum"]), int(groups["den"] or groups["fden"])
        if den == 0:
            raise UnitParseError(f"{shown}: fraction with a zero denominator", kind.hint)
        number = whole + Fraction(num, den)
    unit = groups["unit"].strip()
    if unit.startswith(",") and unit[1:2].isdigit():
        raise UnitParseError(
            f"{shown}: uses a decimal comma", "write decimals with a point, e.g. `2.5 mm`"
        )
    return (-number if groups["sign"] == "-" else number), unit


def _lookup(unit: str, kind: _Kind, shown: str) -> tuple[Fraction, Fraction]:
    """The (scale, offset) of a unit written after a number, or a helpful error."""
    key = re.sub(r"\s+", "", unit).lower()
    if key in kind.units:
        return kind.units[key]
    valid = ", ".join(kind.shown)
    others = [d.dimension for d in _DIMENSIONS if d.dimension != kind.dimension and key in d.units]
    if others:
        raise UnitParseError(
            f'{shown}: "{unit}" is {_a(" or ".join(others))} unit, not {_a(kind.noun)} unit',
            f"{kind.hint} (units: {valid})",
        )
    if any(key in d.units for d in _DIMENSIONS):
        raise UnitParseError(
            f'{shown}: "{unit}" is not {_a(kind.noun)} unit', f"{kind.hint} (units: {valid})"
        )
    near = difflib.get_close_matches(key, list(kind.units), n=1, cutoff=0.6)
    guess = f'did you mean "{near[0]}"? ' if near else ""
    raise UnitParseError(
        f'{shown}: unknown {kind.noun} unit "{unit}"', f"{guess}{kind.hint} (units: {valid})"
    )


def _quantity(value: object, kind: _Kind, default_unit: str | None) -> Fraction:
    """The exact SI value of a quantity; a bare number takes ``default_unit`` (None: an error)."""
    shown = _show(value)
    number, unit = _split(value, kind)
    if not unit:
        if default_unit is None:
            raise UnitParseError(f"{shown}: missing {kind.noun} unit", kind.hint)
        unit = default_unit
    scale, offset = _lookup(unit, kind, shown)
    return number * scale + offset


def _to_float(exact: Fraction, shown: str, kind: _Kind) -> float:
    try:
        return float(exact)
    except OverflowError:
        raise UnitParseError(f"{shown}: too large to be {_a(kind.noun)}", kind.hint) from None


def _checked(
    value: object,
    kind: _Kind,
    default_unit: str | None,
    allowed: Callable[[Fraction], bool] = lambda _: True,
    rule: str = "",
) -> float:
    """Parse ``value`` as ``kind``; refuse it unless ``allowed`` holds, saying ``rule``."""
    shown = _show(value)
    exact = _quantity(value, kind, default_unit)
    if not allowed(exact):
        raise UnitParseError(f"{shown}: {_a(kind.noun)} {rule}", kind.hint)
    return _to_float(exact, shown, kind)


def _positive(x: Fraction) -> bool:
    return x > 0


def _nonnegative(x: Fraction) -> bool:
    return x >= 0


_POSITIVE = "must be greater than zero"
_NONNEGATIVE = "must not be negative"


def parse_length(value: object, default_unit: str | None = "mm") -> float:
    """A length in metres (any sign). A bare number is in ``default_unit`` (None: an error).

    Units: mm, cm, m, in (``"``, inch, inches), ft (``'``, foot, feet); 1 in = 25.4 mm exactly,
    1 ft = 12 in (international yard and pound agreement, 1959). Numbers may be decimals,
    fractions (``3/8``), mixed numbers (``5 3/8``, ``5-3/8``, ``5⅜``).
    """
    return _checked(value, _LENGTH, default_unit)


def parse_positive_length(value: object, default_unit: str | None = "mm") -> float:
    """A length in metres, greater than zero (see ``parse_length``)."""
    return _checked(value, _LENGTH, default_unit, _positive, _POSITIVE)


def parse_nonnegative_length(value: object, default_unit: str | None = "mm") -> float:
    """A length in metres, zero or more (see ``parse_length``)."""
    return _checked(value, _LENGTH, default_unit, _nonnegative, _NONNEGATIVE)


def parse_frequency(value: object) -> float:
    """A frequency in Hz, greater than zero; the unit (Hz, kHz) is required."""
    return _checked(value, _FREQUENCY, None, _positive, _POSITIVE)


def parse_temperature(value: object) -> float:
    """A temperature in kelvin, above absolute zero; the unit is required.

    K = °C + 273.15; K = (°F − 32)·5/9 + 273.15 (SI Brochure, 9th ed., BIPM 2019).
    """
    return _checked(
        value, _TEMPERATURE, None, _positive, "must be above absolute zero (0 K = -273.15 °C)"
    )


def parse_pressure(value: object) -> float:
    """An absolute pressure in Pa, greater than zero; the unit is required.

    Pa, hPa = mbar = 100 Pa, kPa; conventional mmH2O = 9.80665 Pa, inH2O = 25.4 mmH2O;
    conventional mmHg = 133.322387415 Pa, inHg = 25.4 mmHg.
    """
    return _checked(value, _PRESSURE, None, _positive, _POSITIVE)


def parse_humidity(value: object) -> float:
    """Relative humidity as a fraction 0..1, written as a percentage (``55 %``).

    A bare number is refused: 55 and 0.55 are too easy to confuse.
    """
    return _checked(value, _HUMIDITY, None, lambda x: 0 <= x <= 1, "must be between 0 % and 100 %")


def parse_co2(value: object) -> float:
    """CO2 mole fraction, 0 <= x < 1, written in ppm (1e-6) or % (1e-2)."""
    return _checked(value, _CO2, None, lambda x: 0 <= x < 1, "must be at least 0 and below 100 %")


def parse_speed(value: object) -> float:
    """A speed in m/s, greater than zero; the unit (m/s, ft/s) is required.

    1 ft/s = 0.3048 m/s exactly (international yard and pound agreement, 1959).
    """
    return _checked(value, _SPEED, None, _positive, _POSITIVE)


def parse_angle(value: object) -> float:
    """An angle in degrees (any sign); a bare number is in degrees."""
    return _checked(value, _ANGLE, "deg")


def parse_ratio(value: object) -> float:
    """A plain fraction, zero or more: ``0.45``, ``1/4`` or ``25 %``."""
    return _checked(value, _RATIO, "", _nonnegative, _NONNEGATIVE)


def parse_cents(value: object) -> float:
    """A pitch offset in cents (any sign): ``+3.5 cents``, ``-2 c`` or a bare number."""
    return _checked(value, _CENTS, "cents")


def parse_size2(value: object, default_unit: str | None = "mm") -> tuple[float, float]:
    """Two lengths written ``A x B unit`` (or ``A unit x B unit``), in metres, both > 0.

    A side written without a unit takes the other side's unit, else ``default_unit``.
    """
    shown = _show(value)
    sides = re.split(r"\s*[xX×]\s*", value.strip()) if isinstance(value, str) else []
    if len(sides) != 2 or not all(sides):
        raise UnitParseError(
            f"{shown}: expected two lengths such as `1200 x 600 mm`",
            "write a size as `1200 x 600 mm`, `48 x 24 in` or `1200 mm x 600 mm`",
        )
    written = [_split(side, _LENGTH)[1] for side in sides]
    shared = written[1] or written[0]
    # A side without a unit is read with the other side's unit, so errors quote that unit.
    first, second = (
        side if unit or not shared else f"{side} {shared}"
        for side, unit in zip(sides, written, strict=True)
    )
    return (
        _checked(first, _LENGTH, default_unit, _positive, _POSITIVE),
        _checked(second, _LENGTH, default_unit, _positive, _POSITIVE),
    )


def format_length(metres: float, unit: str, precision: int = 1) -> str:
    """``metres`` written in ``unit`` with ``precision`` decimals: (0.136, "mm") -> "136.0 mm".

    Inches are written as decimal inches. Aliases print as the short name (inch -> in).
    """
    if precision < 0:
        raise ValueError(f"precision must be zero or more, got {precision}")
    scale, _ = _lookup(unit, _LENGTH, f'"{unit}"')
    name = next(s for s in _LENGTH.shown if _LENGTH.units[s.lower()][0] == scale)
    text = f"{metres / float(scale):.{precision}f}"
    if text.lstrip("-").strip("0.") == "":
        text = text.lstrip("-")
    return f"{text} {name}"
