"""Closed-form pipe acoustics: resonance of a plain pipe with end corrections.

Used for pipes without side holes (flue ranks, tube sets) and as the first guess of the
hole solver. SI units throughout. Lossless plane-wave model: the air column of effective
length L_eff resonates at

    open at both ends (open flue pipe, open tube):   f_n = n · c / (2 · L_eff),  n = 1, 2, 3 ...
    closed at one end (stopped pipe, stopped tube):  f_n = n · c / (4 · L_eff),  n = 1, 3, 5 ...

(Fletcher & Rossing 1998, The Physics of Musical Instruments, §8.2 and §17), where
L_eff = physical length + the end corrections of the open ends (and of the mouth).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from compiler.acoustics import radiation
from compiler.acoustics.air import Air


@dataclass(frozen=True)
class PipeAcoustics:
    """What the closed form needs to know about one plain pipe."""

    stopped: bool
    """Closed at the far end (only odd harmonics)."""
    open_ends: int
    """Open ends that radiate and need an end correction: 2 for an open tube, 1 for an open
    flue pipe (its top; the mouth has its own correction) or a stopped tube, 0 for a
    stopped flue pipe."""
    radius_m: float
    """Radius used by the end-correction model (an equivalent radius for square pipes)."""
    end_model: str
    k: float = 0.3
    end_ratio: float | None = None
    """Low-frequency Δ/a of the open end(s) with the stock's wall (``wall_end_ratio``), or
    None for a thin wall (Levine & Schwinger's 0.6133). Applies to the ``unflanged`` and
    ``frequency-dependent`` models; ``flanged`` already assumes an infinite wall, and
    ``rule-of-thumb`` is the maker's own k·d."""
    mouth_m: float = 0.0
    """Mouth end correction (flue pipes), see ``compiler.acoustics.mouth``."""
    scale: float = 1.0
    """Calibration factor applied to all end corrections together."""


def acoustic_length(frequency_hz: float, speed_m_s: float, harmonic: int, stopped: bool) -> float:
    """Effective length whose ``harmonic`` sounds at ``frequency_hz``: n·c/(2f) or n·c/(4f)."""
    return harmonic * speed_m_s / ((4.0 if stopped else 2.0) * frequency_hz)


def wall_end_ratio(inner_radius_m: float, outer_radius_m: float | None) -> float | None:
    """Δ/a of an open end whose wall is known (outer radius), or None when it is not.

    The low-frequency end correction of an unflanged pipe with a wall of finite thickness
    (``radiation.thick_wall_end_correction``, Dalmont, Nederveen & Joly 2001) over the radius.
    """
    if outer_radius_m is None:
        return None
    return float(radiation.thick_wall_end_correction(inner_radius_m, outer_radius_m)
                 / inner_radius_m)


def open_end_correction(pipe: PipeAcoustics, frequency_hz: float, speed_m_s: float) -> float:
    """End correction (m) of one open end of the pipe, unscaled.

    The end model's value for a thin wall; where the wall is known (``end_ratio``) the
    unflanged models take it instead of 0.6133·a, the frequency-dependent one in proportion
    (Δ(ka) · end_ratio / 0.6133: our choice, as Dalmont et al. 2001 give the wall's effect only
    at low frequency).
    """
    ka = 2.0 * math.pi * frequency_hz * pipe.radius_m / speed_m_s
    per_end = float(radiation.end_correction(pipe.end_model, pipe.radius_m, k=pipe.k, ka=ka))
    if pipe.end_ratio is not None and pipe.end_model in ("unflanged", "frequency-dependent"):
        per_end *= pipe.end_ratio / radiation.UNFLANGED_RATIO
    return per_end


def end_corrections(pipe: PipeAcoustics, frequency_hz: float, speed_m_s: float) -> float:
    """Total correction (m) added to the physical length: open ends plus mouth, scaled."""
    per_end = open_end_correction(pipe, frequency_hz, speed_m_s) if pipe.open_ends else 0.0
    return pipe.scale * (pipe.open_ends * per_end + pipe.mouth_m)


def solve_length(
    pipe: PipeAcoustics, frequency_hz: float, air: Air, harmonic: int
) -> tuple[float, float]:
    """Physical length (m) sounding ``frequency_hz`` on ``harmonic``, and the correction used."""
    effective = acoustic_length(frequency_hz, air.speed_m_s, harmonic, pipe.stopped)
    correction = end_corrections(pipe, frequency_hz, air.speed_m_s)
    return effective - correction, correction


def predict_frequency(pipe: PipeAcoustics, length_m: float, air: Air, harmonic: int) -> float:
    """Frequency (Hz) of ``harmonic`` for a physical length; fixed point when Δ depends on f."""
    speed_m_s = air.speed_m_s
    divisor = 4.0 if pipe.stopped else 2.0
    frequency = harmonic * speed_m_s / (divisor * length_m)
    for _ in range(60):
        effective = length_m + end_corrections(pipe, frequency, speed_m_s)
        updated = harmonic * speed_m_s / (divisor * effective)
        if abs(updated - frequency) < 1e-12 * frequency:
            return updated
        frequency = updated
    return frequency


def harmonic_numbers(stopped: bool, count: int) -> tuple[int, ...]:
    """The resonances a pipe has: 1, 2, 3 ... open; 1, 3, 5 ... stopped."""
    return tuple(2 * i + 1 for i in range(count)) if stopped else tuple(range(1, count + 1))
