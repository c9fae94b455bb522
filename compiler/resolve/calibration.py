"""Calibration: fit one correction factor to measured prototypes, least squares in cents.

The factor scales every end correction of the group (open ends and mouth together): the
part of the closed-form model that is least certain (the mouth correction is a fit to a
potential-flow model of a passive pipe, known to about ±8 %, see ``compiler.acoustics.mouth``;
no published measured coefficients were at hand). The fit minimises
Σ (1200·log2(f_measured / f_model(s)))² over s by golden-section search, which needs no
derivatives and is exact enough (1e-9) for a one-parameter least-squares problem.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Collection, Sequence
from dataclasses import dataclass

from compiler.acoustics import simple
from compiler.acoustics.tuning import cents
from compiler.errors import Note, PhysicsError, Position
from compiler.ir import Calibration, Residual
from compiler.spec.model import Measurement
from compiler.spec.notes import note_name

PARAMETER = "end-correction scale"
SCALE_RANGE = (0.05, 4.0)
MAX_RESIDUAL_CENTS = 50.0
"""A prototype that the fitted model still misses by more than a quarter-tone is not explained
by the end corrections: another note, another pipe or a wrong temperature was most likely
measured. Our limit, not a published one."""

SPREAD_CENTS = 5.0
"""Largest RMS misfit (cents) of two or more prototypes after the fit that passes without a
warning. A careful maker tunes a pipe to within about 2-3 cents (common practice), a steady
take is measured to well under a cent (``boresmith measure``), and a noted temperature
1 °C off moves the model about 3 cents (c ∝ √T: 600·log2(294.15/293.15) ≈ 2.9 cents at
20 °C). Together they explain a few cents of scatter; prototypes that still disagree by
more than 5 cents RMS after one correction was fitted to them point at a wrong
measurement, not at the model. Our limit, not a published one."""

CHECK_PIPES = ("check each take's temperature (1 °C is about 3 cents), that it names the "
               "pipe that was played, and whether that pipe was trimmed, coned or its "
               "stopper or plug moved before it was recorded (then give its `length:` as "
               "built)")
"""What to check when the prototypes of a rank or tube set disagree."""


@dataclass(frozen=True)
class Observation:
    note: str
    measured_hz: float
    predict: Callable[[float], float]
    """Model frequency for this prototype as a function of the scale factor."""
    pipe: simple.PipeAcoustics | None = None
    """The prototype's uncalibrated model, its harmonic and speaking length as built (for
    the trim advice, ``compiler.resolve.trim``)."""
    harmonic: int = 1
    length_m: float = 0.0


def uncalibrated() -> Calibration:
    return Calibration(False, PARAMETER, 1.0, (), 0.0)


def fit(observations: Sequence[Observation]) -> Calibration:
    """Least-squares scale factor and the residuals (measured minus model) after the fit."""
    if not observations:
        return uncalibrated()

    def cost(s: float) -> float:
        return sum(cents(o.measured_hz, o.predict(s)) ** 2 for o in observations)

    lo, hi = SCALE_RANGE
    # A coarse scan first, so the golden section starts in the right valley.
    grid = [lo + (hi - lo) * i / 40 for i in range(41)]
    best = min(range(len(grid)), key=lambda i: cost(grid[i]))
    a, b = grid[max(best - 1, 0)], grid[min(best + 1, len(grid) - 1)]
    ratio = (math.sqrt(5) - 1) / 2
    x1, x2 = b - ratio * (b - a), a + ratio * (b - a)
    f1, f2 = cost(x1), cost(x2)
    while b - a > 1e-10:
        if f1 < f2:
            b, x2, f2 = x2, x1, f1
            x1 = b - ratio * (b - a)
            f1 = cost(x1)
        else:
            a, x1, f1 = x1, x2, f2
            x2 = a + ratio * (b - a)
            f2 = cost(x2)
    s = (a + b) / 2
    residuals = tuple(Residual(o.note, cents(o.measured_hz, o.predict(s))) for o in observations)
    rms = math.sqrt(sum(r.error_cents**2 for r in residuals) / len(residuals))
    return Calibration(True, PARAMETER, s, residuals, rms)


def fit_measured(measured: Sequence[Measurement], notes: Collection[int], group: str,
                 hint: str, observe: Callable[[Measurement], Observation]) -> Calibration:
    """Fit to a group's measured prototypes (``observe`` builds each one's model).

    A measurement of a note the group does not have, or one that the fitted model still
    misses by more than ``MAX_RESIDUAL_CENTS``, is a spec error at that measurement.
    ``group`` names it in messages (``rank `principal-8```); ``hint`` says what to measure.
    """
    for m in measured:
        if m.note not in notes:
            raise PhysicsError.at(m.position, f"measured note {note_name(m.note)} is not in "
                                  f"{group}", hint)
    result = fit([observe(m) for m in measured])
    if not result.residuals:
        return result
    worst = max(range(len(result.residuals)),
                key=lambda i: abs(result.residuals[i].error_cents))
    residual = result.residuals[worst]
    if abs(residual.error_cents) > MAX_RESIDUAL_CENTS:
        raise PhysicsError.at(
            measured[worst].position,
            f"{group}: the measured {residual.note} ({measured[worst].frequency_hz:.2f} Hz) is "
            f"{residual.error_cents:+.0f} cents from the model even after calibration",
            "check the note, the frequency and the temperature of this measurement: "
            "calibration corrects the end corrections, worth some cents, not a wrong note")
    return result


def disagreement(fit: Calibration, group: str, where: Position, check: str) -> list[Note]:
    """A warning at the `measured:` entries when the prototypes disagree: the fit leaves an
    RMS misfit over ``SPREAD_CENTS``, which one correction of the model cannot explain.
    ``check`` says what to look at in the measurements."""
    if len(fit.residuals) < 2 or fit.rms_cents <= SPREAD_CENTS:
        return []
    each = ", ".join(f"{r.note} {r.error_cents:+.1f}" for r in fit.residuals)
    return [Note(where, f"{group}: the measurements disagree: after the calibration "
                        f"they are still {each} cents from the model (rms {fit.rms_cents:.1f} "
                        f"cents, more than the {SPREAD_CENTS:.0f} cents a careful tuning and "
                        f"measurement explain), so the fitted correction is doubtful; {check}")]
