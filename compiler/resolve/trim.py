"""Trim advice: from a measured pipe as built to its target, in the spec's air.

A prototype of speaking length L_b sounded f_m in air at the measured temperature. The
model of that pipe (calibrated, as every pipe of the group) carries the measurement to the
spec's air: f_spec = f_m · F(L_b, c_spec) / F(L_b, c_measured), where F is the closed-form
frequency of ``compiler.acoustics.simple`` (for end corrections that do not depend on
frequency this is f_m · c_spec / c_measured). The new length L_n is then where the model
moves the pitch by the missing ratio, target / f_spec, around the built length:
F(L_n, c_spec) = F(L_b, c_spec) · target / f_spec, solved by the model's own inverse
(``simple.solve_length``). So the measured pipe's own error is kept, whatever the fit made
of the others, and the end corrections are the model's, not a linear cents-per-mm guess:
for an open pipe with a fixed end correction Δ the change ΔL satisfies
1200·log2((L_b + Δ)/(L_b + ΔL + Δ)) = the cents missing, the trade's closed form.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence

from compiler.acoustics import simple
from compiler.acoustics.air import Air
from compiler.acoustics.tuning import cents
from compiler.ir import Pipe, Trim
from compiler.resolve import plain
from compiler.resolve.calibration import Observation
from compiler.resolve.environment import GroupAir
from compiler.spec.model import Measurement
from compiler.spec.notes import note_name

SENSITIVITY_STEP_M = 1e-4


def _mm(metres: float, precision_m: float) -> str:
    """A length in mm at the spec's precision (0.5 mm -> one decimal)."""
    decimals = max(0, math.ceil(-math.log10(precision_m * 1000) - 1e-9))
    return f"{plain.round_to(metres, precision_m) * 1000:.{decimals}f} mm"


def _words(pipe: Pipe, change_m: float, precision_m: float) -> tuple[str, str]:
    """(action, advice) for a change of the speaking length: moves of a plug, cap or stopper
    to the nearest step of the precision, cuts rounded down to a whole step."""
    amount = _mm(abs(change_m), precision_m)
    if abs(change_m) < precision_m / 2:
        return "none", f"in tune within the {_mm(precision_m, precision_m)} precision: leave it"
    shorter = change_m < 0
    travel = pipe.stopper.travel_m if pipe.stopper is not None else 0.0
    if pipe.family == "stopped-tube":
        if shorter:
            return "plug in", f"push the plug {amount} further in"
        advice = f"draw the plug {amount} out"
        if change_m > travel + precision_m / 2:
            advice += (f" (more than the {_mm(travel, precision_m)} of tube below it: cut a "
                       "longer tube)")
        return "plug out", advice
    if pipe.family == "stopped-flue":
        part = "cap" if pipe.construction == "rolled-sheet" else "stopper"
        if shorter:
            return f"{part} in", f"push the {part} {amount} further in"
        advice = f"draw the {part} {amount} out"
        if change_m > travel + precision_m / 2:
            advice += (f" (more than the {_mm(travel, precision_m)} of body left for it: make "
                       "a longer body)")
        return f"{part} out", advice
    end = "off the top" if pipe.family == "open-flue" else "off one end"
    if shorter:
        # A cut cannot be undone: whole steps of the precision, rounded down (cut less,
        # measure again), never up past the target.
        steps = math.floor(abs(change_m) / precision_m + 1e-9)
        if steps == 0:
            return "none", (f"{abs(change_m) * 1000:.2f} mm long, less than one "
                            f"{_mm(precision_m, precision_m)} step: leave it, or shave a "
                            "little and measure again")
        return "cut", f"cut {_mm(steps * precision_m, precision_m)} {end}"
    return "lengthen", (f"{amount} too short: fit a tuning slide or sleeve, or cut a new one "
                        f"{amount} longer")


def advise(measured: Sequence[Measurement], observe: Callable[[Measurement], Observation],
           scale: float, air: GroupAir, pipes: Sequence[Pipe],
           precision_m: float) -> tuple[Trim, ...]:
    """Trim advice for each measurement of a group (see the module's docstring).

    ``observe`` is the group's model of a measured prototype (the calibration's), ``scale``
    the fitted calibration factor, ``pipes`` the group's resolved pipes (for the targets).
    """
    by_note = {p.note: p for p in pipes}
    c_spec = air.state
    found = []
    for m in measured:
        obs = observe(m)
        pipe = by_note.get(note_name(m.note))
        if obs.pipe is None or pipe is None:
            continue
        model = plain.scaled(obs.pipe, scale)

        def frequency(length_m: float, speed: Air, model: simple.PipeAcoustics = model,
                      harmonic: int = obs.harmonic) -> float:
            return simple.predict_frequency(model, length_m, speed, harmonic)

        built = obs.length_m
        c_measured = air.at_temperature(m.temperature_k)
        at_spec = frequency(built, c_spec)
        in_spec_air = m.frequency_hz * at_spec / frequency(built, c_measured)
        wanted = at_spec * pipe.target_hz / in_spec_air
        new_length, _ = simple.solve_length(model, wanted, c_spec, obs.harmonic)
        per_mm = cents(frequency(built + SENSITIVITY_STEP_M, c_spec),
                       frequency(built - SENSITIVITY_STEP_M, c_spec)) / (
            2 * SENSITIVITY_STEP_M * 1000)
        action, advice = _words(pipe, new_length - built, precision_m)
        found.append(Trim(
            pipe_id=pipe.id, note=pipe.note, measured_hz=m.frequency_hz,
            measured_temperature_c=m.temperature_k - 273.15, built_length_m=built,
            in_spec_air_hz=in_spec_air, target_hz=pipe.target_hz,
            off_cents=cents(in_spec_air, pipe.target_hz), change_m=new_length - built,
            new_length_m=new_length, cents_per_mm=per_mm, action=action, advice=advice,
            source=m.position))
    return tuple(found)
