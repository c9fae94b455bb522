"""The mouth term's uncertainty, pipe by pipe, and the length that covers it.

A flue pipe's mouth correction is a fit (``compiler.acoustics.mouth``) known to about ±8 %,
±16 % outside the range it was fitted over. Each pipe reports that band as a length and in
cents, and how many cents a millimetre more cut-up is worth (voicers raise the cut-up).

The maker can only make a pipe sound higher once it is cut (trim or cone its top, push a
stopper in), never lower. So the cut must leave room for the worst case: a mouth term smaller
than modelled, which leaves the pipe sharp at the modelled length, so it needs to be longer.
The resolver leaves at least that much on every pipe (as tuning allowance, or as a stopper's
travel) and warns, at the spec's allowance, when the spec asked for less.
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Callable
from dataclasses import dataclass, field

from compiler.acoustics import mouth, simple
from compiler.acoustics.air import Air
from compiler.acoustics.tuning import cents
from compiler.errors import Position
from compiler.ir import Note

CUTUP_STEP_M = 1e-4
"""Half the step of the cut-up sensitivity's central difference (0.1 mm)."""


@dataclass(frozen=True)
class Band:
    """How far the mouth term's uncertainty moves one pipe, and the length it may need."""

    fraction: float
    """± the mouth term's relative uncertainty: ``mouth.BAND``, or ``mouth.BAND_OUTSIDE``."""
    in_range: bool
    length_m: float
    """± the band as a length: ``fraction`` × the mouth term as used (calibration included)."""
    sharp_cents: float
    """Pitch of the pipe as resolved if the mouth term is ``fraction`` smaller (positive)."""
    flat_cents: float
    """Pitch of the pipe as resolved if the mouth term is ``fraction`` larger (negative)."""
    cutup_cents_per_mm: float
    """Pitch change for 1 mm more cut-up at the resolved length (positive: higher)."""
    extra_m: float
    """Length beyond the speaking length that reaches the target if the mouth term is
    ``fraction`` smaller than modelled."""


def _fraction(in_range: bool) -> float:
    return mouth.BAND if in_range else mouth.BAND_OUTSIDE


def _smaller(pipe: simple.PipeAcoustics, fraction: float) -> simple.PipeAcoustics:
    return dataclasses.replace(pipe, mouth_m=pipe.mouth_m * (1.0 - fraction))


def extra_length(pipe: simple.PipeAcoustics, in_range: bool, length_m: float,
                 target_hz: float, harmonic: int, air: Air) -> float:
    """Length (m) beyond ``length_m`` that reaches ``target_hz`` if the mouth term is smaller
    than modelled by its band (zero if none is needed)."""
    smaller = _smaller(pipe, _fraction(in_range))
    needed, _ = simple.solve_length(smaller, target_hz, air, harmonic)
    return max(needed - length_m, 0.0)


def band(pipe: simple.PipeAcoustics, in_range: bool, length_m: float, target_hz: float,
         harmonic: int, air: Air, cutup_m: float,
         at_cutup: Callable[[float], simple.PipeAcoustics]) -> Band:
    """The band of one pipe of speaking length ``length_m``; ``at_cutup`` rebuilds the pipe's
    acoustics for another cut-up (the mouth term and its fit change with it)."""
    fraction = _fraction(in_range)

    def sounding(p: simple.PipeAcoustics) -> float:
        return simple.predict_frequency(p, length_m, air, harmonic)

    predicted = sounding(pipe)
    smaller = _smaller(pipe, fraction)
    larger = dataclasses.replace(pipe, mouth_m=pipe.mouth_m * (1.0 + fraction))
    higher = sounding(at_cutup(cutup_m + CUTUP_STEP_M))
    lower = sounding(at_cutup(cutup_m - CUTUP_STEP_M))
    return Band(
        fraction=fraction, in_range=in_range, length_m=fraction * pipe.mouth_m * pipe.scale,
        sharp_cents=cents(sounding(smaller), predicted),
        flat_cents=cents(sounding(larger), predicted),
        cutup_cents_per_mm=cents(higher, lower) / (2000.0 * CUTUP_STEP_M),
        extra_m=extra_length(pipe, in_range, length_m, target_hz, harmonic, air))


def round_up(value_m: float, step_m: float) -> float:
    """``value_m`` rounded up to the spec's precision: a safety margin is never rounded away."""
    return round(math.ceil(value_m / step_m - 1e-9) * step_m, 9)


def _names(notes: list[str]) -> str:
    if len(notes) <= 4:
        return ", ".join(notes)
    return f"{notes[0]} to {notes[-1]} ({len(notes)} pipes)"


@dataclass
class Shortfalls:
    """What a rank's pipes found about their mouth bands, gathered for one warning each."""

    rank: str
    round_: bool
    step_m: float
    """The spec's precision: a suggested allowance or travel is rounded up to it."""
    outside: dict[Position, list[tuple[str, float, float, float]]] = field(default_factory=dict)
    """Mouth position -> (note, width ratio, cut-up ratio, depth over width: wooden pipes) of
    pipes outside the fitted range."""
    short: list[tuple[str, float, float]] = field(default_factory=list)
    """(note, extra length needed, speaking length) of pipes whose spec allowance is short."""
    travel: list[tuple[str, float]] = field(default_factory=list)
    """(note, travel needed) of stopped pipes whose spec travel is short."""

    def notes(self, allowance: str, allowance_at: Position, travel_given: float | None,
              travel_at: Position) -> list[Note]:
        """The warnings: mouths outside the fit, and allowances or travels that fall short."""
        out = []
        for where, pipes in self.outside.items():
            _, w, h, deep = pipes[0]
            if self.round_:
                shape = (f"mouth width {w:.2f} and cut-up {h:.2f} of the diameter; fitted for "
                         "0.5-1.0 and 0.1-0.4")
            else:
                shape = (f"mouth width {w:.2f} of the pipe's width, cut-up {h:.2f} of the mouth "
                         f"width, {deep:.2f} widths deep; fitted for a full-width mouth cut up "
                         "0.1-0.6, 0.5-2 widths deep")
            out.append(Note(where, f"rank `{self.rank}`: the mouth of "
                            f"{_names([p[0] for p in pipes])} lies outside the range its "
                            f"correction was fitted for ({shape}): its uncertainty is taken as "
                            f"±{100 * mouth.BAND_OUTSIDE:g} % instead of "
                            f"±{100 * mouth.BAND:g} %"))
        if self.short:
            most = max(extra for _, extra, _ in self.short)
            share = max(extra / length for _, extra, length in self.short)
            out.append(Note(allowance_at, f"rank `{self.rank}`: the tuning allowance "
                            f"({allowance}) does not cover the mouth correction's uncertainty "
                            f"on {_names([n for n, _, _ in self.short])}: a mouth term smaller "
                            f"than modelled needs up to {self._up(most)} mm more length, so "
                            "these pipes are cut with that much; to cover every pipe, give at "
                            f"least {math.ceil(1000 * share) / 10:g} % or "
                            f"{self._at_least(most)} mm"))
        if self.travel:
            most = max(t for _, t in self.travel)
            given = "none" if travel_given is None else f"{1000 * travel_given:g} mm"
            out.append(Note(travel_at, f"rank `{self.rank}`: the stopper travel ({given}) does "
                            "not cover the mouth correction's uncertainty on "
                            f"{_names([n for n, _ in self.travel])}: their stoppers get up to "
                            f"{self._up(most)} mm; give at least {self._at_least(most)} mm"))
        return out

    def _up(self, length_m: float) -> str:
        """A length needed, in mm, rounded up to the spec's precision (never below the need,
        also where a spec in inches shows it as a fraction of that step)."""
        return f"{round(1000 * round_up(length_m, self.step_m), 3):g}"

    def _at_least(self, length_m: float) -> str:
        """A length to suggest, in mm: whole millimetres, rounded up to the spec's precision,
        so that the value a spec in inches shows (a fraction of that step) still covers it."""
        whole_mm = math.ceil(1000 * length_m - 1e-9) / 1000
        return f"{round(1000 * round_up(whole_mm, self.step_m), 3):g}"
