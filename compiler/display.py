"""Lengths as a maker reads them: millimetres, or inches in the fractions of a rule.

The one place that writes a length for a person (build sheet, cut list, messages). It is a
leaf module of the package (it imports nothing of the pipeline), so the resolver's and the
geometry stage's messages and the emitters can all use it without breaking the import
rules (``emit`` imports none of ``spec``/``acoustics``; ``spec/units.py`` stays the home of
*parsing* quantities, this module of *showing* them).

A spec written in inches or feet (``units: in``) gets its lengths in inches, rounded to the
spec's ``fabrication.precision``: a binary fraction of an inch (``1/32 in``, the default for
such specs) gives fractions reduced to lowest terms (``5 3/8``), any other precision decimal
inches to as many places as it needs. 1 in = 25.4 mm exactly (international yard and pound
agreement, 1959). Sensitivities are shown per 1/16 in (``cents per 1/16 in``): a step a
maker can trim and read on a rule.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from fractions import Fraction

INCH_M = Fraction(254, 10000)
"""One inch in metres, exactly."""

INCH_UNITS = ("in", "ft")

INCH_PRECISION_M = float(INCH_M / 32)
"""The precision of a spec written in inches that gives none: 1/32 in (0.79375 mm)."""

SENSITIVITY_STEP_IN = Fraction(1, 16)
"""Inch specs show length sensitivities as cents per this step (1/16 in = 1.5875 mm)."""

MAX_DENOMINATOR = 128


def _round_half_up(x: Fraction) -> int:
    """Nearest integer, halves away from zero (a rule reading, not banker's rounding)."""
    return int(math.copysign(math.floor(abs(x) + Fraction(1, 2)), x))


@dataclass(frozen=True)
class Inches:
    """Inch lengths rounded to a step of ``step`` inches (a fraction or a decimal step)."""

    step: Fraction

    @property
    def denominator(self) -> int | None:
        """The rule's fraction (32 for 1/32 in), or None for a decimal step."""
        if self.step.numerator == 1 and self.step.denominator <= MAX_DENOMINATOR and \
                self.step.denominator & (self.step.denominator - 1) == 0:
            return self.step.denominator
        return None

    @property
    def step_text(self) -> str:
        d = self.denominator
        return f"1/{d} in" if d and d > 1 else f"{float(self.step):g} in"

    def exact(self, metres: float) -> Fraction:
        """``metres`` in inches, rounded to the step (exact rational)."""
        inches = Fraction(metres) / INCH_M
        return _round_half_up(inches / self.step) * self.step

    def text(self, metres: float) -> str:
        """``5 3/8``, ``3/8``, ``12``, ``-1 1/4`` (fractions) or ``5.375`` (a decimal step),
        without the unit; a length below half a step in thousandths (``0.006``)."""
        value = self.exact(metres)
        if value == 0 and metres != 0:  # a kerf, a wall: below half a step, not "0"
            return f"{float(Fraction(metres) / INCH_M):.3f}"
        if self.denominator is None:
            places = max(0, math.ceil(-math.log10(float(self.step)) - 1e-9))
            return f"{float(value):.{places}f}"
        sign = "-" if value < 0 else ""
        whole, part = divmod(abs(value), 1)
        if part == 0:
            return f"{sign}{whole}"
        if whole == 0:
            return f"{sign}{part.numerator}/{part.denominator}"
        return f"{sign}{whole} {part.numerator}/{part.denominator}"

    def text_of_mm(self, millimetres: float) -> str:
        return self.text(millimetres / 1000.0)

    def per_step(self, cents_per_mm: float) -> float:
        """A sensitivity in cents per mm as cents per ``SENSITIVITY_STEP_IN``."""
        return cents_per_mm * float(SENSITIVITY_STEP_IN * INCH_M * 1000)


def inches_for(units: str, precision_m: float) -> Inches | None:
    """The inch display of a spec written in ``units`` with that precision; None for specs
    in metric units (their lengths are shown in millimetres only)."""
    if units not in INCH_UNITS:
        return None
    step = Fraction(precision_m) / INCH_M
    for denominator in (2 ** k for k in range(8)):  # 1, 1/2 ... 1/128 in
        if abs(step * denominator - 1) < Fraction(1, 10**6):
            return Inches(Fraction(1, denominator))
    # a decimal step: 0.001 in, or a metric precision in an inch spec (0.1 mm -> 0.001 in)
    places = max(0, math.ceil(-math.log10(float(step)) - 1e-9))
    return Inches(Fraction(1, 10**places))


def fitted(value: float, unit: str) -> str:
    """A calibration's fitted value as a maker reads it: a length with its unit to a
    hundredth of a millimetre (``1.53 mm``: a model correction, finer than any rule), a
    plain factor to four places (``1.0234``)."""
    return f"{value:.2f} {unit}" if unit else f"{value:.4f}"


def model_band(band: tuple[float, float] | None) -> str:
    """A fingering's band under the open holes' radiation model (``ir.Fingering.
    model_band_cents``) as a maker reads it: whole cents, ``-9/+4`` (a side that rounds to
    nothing is ``0``), empty for none. An uncertainty, so no finer than a cent."""
    if band is None:
        return ""
    low, high = (round(v) for v in band)
    return f"{low:+d}/{high:+d}".replace("+0", "0").replace("-0", "0")


_LENGTHS = re.compile(r"(?<![\w./])(-?\d+(?:\.\d+)?)(?: × (-?\d+(?:\.\d+)?))? mm\b")
"""A length (or a ``W × H`` pair) in millimetres written in a message: ``12.5 mm``."""


def in_inches(message: str, inches: Inches | None) -> str:
    """A message with each length in millimetres shown in inches too, for a spec written in
    inches: ``the cut-up (29.0 mm)`` -> ``the cut-up (1 1/8 in = 29.0 mm)``. Messages are
    written in millimetres where the problem is found; this is the one place they are put in
    the spec's own unit."""
    if inches is None:
        return message

    def swap(match: re.Match[str]) -> str:
        first, second = match.group(1), match.group(2)
        if second is None:
            return f"{inches.text(float(first) / 1000)} in = {first} mm"
        return (f"{inches.text(float(first) / 1000)} × {inches.text(float(second) / 1000)} "
                f"in = {first} × {second} mm")

    return _LENGTHS.sub(swap, message)
