"""Shared by ranks and tube sets: length, rounding and predictions of a pipe without holes."""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass

from compiler.acoustics import simple
from compiler.acoustics.tuning import cents
from compiler.errors import PhysicsError, Position
from compiler.resolve import calibration
from compiler.resolve.environment import GroupAir
from compiler.spec.model import Measurement
from compiler.spec.notes import note_name

HARMONICS_REPORTED = 6
SENSITIVITY_STEP_M = 1e-4
SENSITIVITY_STEP_K = 0.5


@dataclass(frozen=True)
class Solved:
    """A plain pipe's speaking length as cut, and how it is predicted to sound."""

    speaking_length_m: float
    acoustic_length_m: float
    end_correction_m: float
    predicted_hz: float
    error_cents: float
    harmonics_hz: tuple[float, ...]
    cents_per_mm: float
    cents_per_c: float


def allowance_text(fraction: float, length_m: float) -> str:
    """The spec's tuning allowance as written: ``3 %``, ``10 mm`` or ``3 % + 5 mm``."""
    share = f"{fraction * 100:g} %"
    length = f"{length_m * 1000:g} mm"
    if fraction and length_m:
        return f"{share} + {length}"
    return share if fraction else length


def round_to(value: float, step: float) -> float:
    """Round a dimension to the spec's precision (the maker cannot cut finer)."""
    return round(round(value / step) * step, 9)


def solve_plain(pipe: simple.PipeAcoustics, target_hz: float, harmonic: int, air: GroupAir,
                precision_m: float, label: str, where: Position, hint: str) -> Solved:
    """Length for the target, rounded to the precision, then predicted as it will be cut."""
    length, correction = simple.solve_length(pipe, target_hz, air.state, harmonic)
    if length <= precision_m:
        raise PhysicsError.at(
            where,
            f"{label}: the end corrections ({correction * 1000:.1f} mm) leave no pipe "
            f"(length {length * 1000:.1f} mm) for {target_hz:.2f} Hz",
            hint)
    rounded = round_to(length, precision_m)
    return predict_plain(pipe, rounded, target_hz, harmonic, air)


def predict_plain(pipe: simple.PipeAcoustics, length_m: float, target_hz: float,
                  harmonic: int, air: GroupAir) -> Solved:
    c = air.state
    predicted = simple.predict_frequency(pipe, length_m, c, harmonic)
    series = tuple(simple.predict_frequency(pipe, length_m, c, n)
                   for n in simple.harmonic_numbers(pipe.stopped, HARMONICS_REPORTED))
    longer = simple.predict_frequency(pipe, length_m + SENSITIVITY_STEP_M, c, harmonic)
    shorter = simple.predict_frequency(pipe, length_m - SENSITIVITY_STEP_M, c, harmonic)
    per_mm = cents(longer, shorter) / (2 * SENSITIVITY_STEP_M * 1000)
    t = air.state.temperature_k
    warm = air.at_temperature(t + SENSITIVITY_STEP_K)
    cool = air.at_temperature(t - SENSITIVITY_STEP_K)
    per_c = cents(simple.predict_frequency(pipe, length_m, warm, harmonic),
                  simple.predict_frequency(pipe, length_m, cool, harmonic)) / (
        2 * SENSITIVITY_STEP_K)
    correction = simple.end_corrections(pipe, predicted, c.speed_m_s)
    return Solved(
        speaking_length_m=length_m,
        acoustic_length_m=length_m + correction,
        end_correction_m=correction,
        predicted_hz=predicted,
        error_cents=cents(predicted, target_hz),
        harmonics_hz=series,
        cents_per_mm=per_mm,
        cents_per_c=per_c,
    )


def scaled(pipe: simple.PipeAcoustics, scale: float) -> simple.PipeAcoustics:
    return dataclasses.replace(pipe, scale=scale)


def equivalent_radius(width_m: float, depth_m: float) -> float:
    """Radius of the circle with the same area as a W × D section: sqrt(W·D/π).

    The traditional equivalence of square wooden pipes by area (organ-building tradition after
    Töpfer 1855, Die Theorie und Praxis des Orgelbaues, via Adelung 1991, Einführung in den
    Orgelbau; seen only in secondary sources).
    """
    return math.sqrt(width_m * depth_m / math.pi)


def observation(pipe: simple.PipeAcoustics, measured: Measurement, target_hz: float,
                harmonic: int, air: GroupAir, precision_m: float,
                allowance: tuple[float, float] = (0.0, 0.0)) -> calibration.Observation:
    """The model of one measured prototype, as a function of the calibration factor.

    The prototype is as long as the spec says it was built, else as the uncalibrated model
    had it cut: its speaking length rounded to the precision, and for an open pipe the
    tuning ``allowance`` (fraction, metres) still on it, since makers cut long, measure,
    then trim (a stopper or plug is set at the speaking length instead). It sounded in air
    at the measured temperature.
    """
    length = measured.length_m
    if length is None:
        length = round_to(simple.solve_length(pipe, target_hz, air.state, harmonic)[0],
                          precision_m)
        if not pipe.stopped:
            length += round_to(length * allowance[0] + allowance[1], precision_m)
    then = air.at_temperature(measured.temperature_k)
    built = length

    def predict(s: float) -> float:
        return simple.predict_frequency(scaled(pipe, s), built, then, harmonic)

    return calibration.Observation(note_name(measured.note), measured.frequency_hz, predict,
                                   pipe, harmonic, built)

