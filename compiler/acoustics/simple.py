"""Closed-form pipe acoustics: resonance of a plain pipe with end corrections.

Used for pipes without side holes (flue ranks, tube sets) and as the first guess of the
hole solver. SI units throughout. Plane-wave model: the air column of effective
length L_eff resonates at

    open at both ends (open flue pipe, open tube):   f_n = n · c / (2 · L_eff),  n = 1, 2, 3 ...
    closed at one end (stopped pipe, stopped tube):  f_n = n · c / (4 · L_eff),  n = 1, 3, 5 ...

(Fletcher & Rossing 1998, The Physics of Musical Instruments, §8.2 and §17), where
L_eff = physical length + the end corrections of the open ends (and of the mouth). With the
wall's visco-thermal losses on, the waves along the pipe travel at the phase velocity v_p(f)
(Keefe 1984 series, ``compiler.acoustics.bore``; the model the transfer-matrix engine uses),
while the end corrections stay masses of outside air: f = n / (2·(L/v + w·Δ/c)), see
``wave_speed``, solved by iteration.
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass

from compiler.acoustics import bore, radiation
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
    losses: str = "none"
    """Visco-thermal wall losses along the pipe (``bore.LOSS_MODELS``): ``keefe`` slows the
    waves to the phase velocity of ``bore.phase_speed``; ``none`` is lossless."""
    loss_radius_m: float | None = None
    """Radius at which the losses are evaluated (None: ``radius_m``). A rectangular pipe takes
    2S/P, the radius of the circle with its perimeter-to-area ratio: the boundary-layer losses
    of a wide duct are proportional to P/S (Kirchhoff's wide-tube theory, as in Pierce 1981,
    Acoustics, ch. 10, from memory)."""


KEEFE_MIN_RV = 10.0
"""Keefe's (1984) series holds for rv ≳ 10 (a 2 mm bore above about 240 Hz); below it
``wave_speed`` falls back to the plain phase velocity ω / Im Γ."""


def wave_speed(pipe: PipeAcoustics, frequency_hz: float, air: Air) -> tuple[float, float]:
    """The waves' effective speed along the pipe (m/s) and the weight of its end corrections.

    Lossless: (c, 1). With wall losses (Keefe 1984 series, ``bore.characteristic``: Zc and
    Γ = α + jβ) a flue pipe sounds where the impedance at its mouth is a minimum (as the
    transfer-matrix engine defines it, ``compiler.acoustics.playing``). Near such a minimum the
    reactance of Zc·tanh or Zc·coth of ΓL, plus the end corrections' reactance ωρΔ/S, vanishes
    when β'·L + k·Δ·Z0/Re(Zc) = nπ (open) or nπ/2 (stopped), with Z0 = ρc/S and
    β' = β + α·Im(Zc)/Re(Zc) = Im(Γ·Zc)/Re(Zc): our first-order expansion of the
    transmission-line input impedance, checked against the engine in
    ``tests/acoustics/test_simple_losses.py``. So the waves' speed is ω/β' (within 1e-4 of the
    phase velocity ω/β) and each end correction counts Z0/Re(Zc) times (a mass of outside air,
    not slowed by the boundary layers).
    """
    if pipe.losses == "none":
        return air.speed_m_s, 1.0
    if pipe.losses not in bore.LOSS_MODELS:
        raise ValueError(f"unknown loss model {pipe.losses!r}")
    radius = pipe.loss_radius_m or pipe.radius_m
    rv = float(bore.shear(air, radius, 2.0 * math.pi * frequency_hz))
    zc, gamma = bore.keefe_series(1.0 / rv)  # Zc/Z0 and Γ/k, plain complex numbers
    c = air.speed_m_s
    if rv < KEEFE_MIN_RV:
        # Outside the series' range the second-order term means nothing: plain phase velocity.
        return c / gamma.imag, 1.0 / zc.real
    return c * zc.real / (gamma * zc).imag, 1.0 / zc.real


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


FREQUENCY_DEPENDENT = ("frequency-dependent", "flanged-frequency-dependent")


@functools.lru_cache(maxsize=4096)
def _fixed_end(model: str, radius_m: float, k: float) -> float:
    """An end correction that does not depend on frequency, computed once per pipe (the
    closed form asks for it at every step of its iterations)."""
    return float(radiation.end_correction(model, radius_m, k=k))


def open_end_correction(pipe: PipeAcoustics, frequency_hz: float, speed_m_s: float) -> float:
    """End correction (m) of one open end of the pipe, unscaled.

    The end model's value for a thin wall; where the wall is known (``end_ratio``) the
    unflanged models take it instead of 0.6133·a, the frequency-dependent one in proportion
    (Δ(ka) · end_ratio / 0.6133: our choice, as Dalmont et al. 2001 give the wall's effect only
    at low frequency).
    """
    if pipe.end_model in FREQUENCY_DEPENDENT:
        ka = 2.0 * math.pi * frequency_hz * pipe.radius_m / speed_m_s
        per_end = float(radiation.end_correction(pipe.end_model, pipe.radius_m, pipe.k, ka))
    else:
        per_end = _fixed_end(pipe.end_model, pipe.radius_m, pipe.k)
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
    """Physical length (m) sounding ``frequency_hz`` on ``harmonic``, and the correction used.

    Lossless: L = n·c/(2f) − Δ (4f stopped). With wall losses (``wave_speed``):
    L = v·(n/(2f) − w·Δ/c), with the waves' speed v and the weight w at the target, so no
    iteration is needed.
    """
    divisor = 4.0 if pipe.stopped else 2.0
    speed, weight = wave_speed(pipe, frequency_hz, air)
    correction = end_corrections(pipe, frequency_hz, air.speed_m_s)
    delay = harmonic / (divisor * frequency_hz) - weight * correction / air.speed_m_s
    return speed * delay, correction


def predict_frequency(pipe: PipeAcoustics, length_m: float, air: Air, harmonic: int) -> float:
    """Frequency (Hz) of ``harmonic`` for a physical length.

    f = n / (2·(L/v(f) + w(f)·Δ(f)/c)) (4·(...) stopped; lossless: n·c/(2(L + Δ))), solved as
    a fixed point: the waves' speed with wall losses and the frequency-dependent end
    corrections depend on f weakly, so a few iterations converge to 1e-12.
    """
    c = air.speed_m_s
    divisor = 4.0 if pipe.stopped else 2.0
    frequency = harmonic * c / (divisor * length_m)
    for _ in range(60):
        speed, weight = wave_speed(pipe, frequency, air)
        delay = length_m / speed + weight * end_corrections(pipe, frequency, c) / c
        updated = harmonic / (divisor * delay)
        if abs(updated - frequency) < 1e-12 * frequency:
            return updated
        frequency = updated
    return frequency


def harmonic_numbers(stopped: bool, count: int) -> tuple[int, ...]:
    """The resonances a pipe has: 1, 2, 3 ... open; 1, 3, 5 ... stopped."""
    return tuple(2 * i + 1 for i in range(count)) if stopped else tuple(range(1, count + 1))
