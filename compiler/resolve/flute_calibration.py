"""Flutes calibrated on a measured prototype: the head's corrections fitted in cents.

What the flute model knows least is its head. The mouth opening (a duct flute's window, a
side-blown flute's embouchure hole) is treated as a short open hole, with inner and
radiation lengths fitted for tone holes, not for an opening with a jet across it; and how
much of an embouchure hole the player's lip covers is a habit, not a dimension. Measured
pitches of a prototype fit both:

- the head's extra length ΔL: an inertance at the mouth, as a length of bore (the engine's
  ``Head.extra_length_m``); positive makes every note flatter, the high ones most;
- for a side-blown flute, the lip cover c (the fraction of the embouchure hole covered).

by least squares in cents: Σ (1200·log2(f_measured/f_model))², plus a pull of each parameter
toward its starting value (``PULL``: 20 mm of ΔL, or 0.02 of lip cover, weighs as much as one
cent). Both parameters change the mouth's inertance, so measured pitches fix mainly their
joint effect (in the examples a millimetre of ΔL and about 0.03 of lip cover are nearly
interchangeable): the fit puts that effect into ΔL and moves the lip cover only where the
measurements ask for what ΔL cannot give (notes of both registers that disagree). Gauss–
Newton with central differences, within ``EXTRA_RANGE_M`` and ``LIP_RANGE`` (our bounds:
well beyond what a head plausibly needs).

The prototype is the flute as the uncalibrated model made it (length, holes and cork as
cut), sounding in the flute's air at the measured temperature; the corrections are then
applied to the head and the flute is designed again, as ranks and tube sets do with theirs.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np

from compiler.acoustics import playing
from compiler.acoustics.impedance import Instrument
from compiler.acoustics.tuning import cents
from compiler.errors import PhysicsError
from compiler.ir import Calibration, Fitted, Residual
from compiler.resolve.calibration import MAX_RESIDUAL_CENTS
from compiler.resolve.environment import GroupAir
from compiler.resolve.flute_report import Rows, pattern
from compiler.spec import model as spec_model
from compiler.spec.notes import note_name

EXTRA_RANGE_M = (-0.010, 0.030)
LIP_RANGE = (0.0, 0.6)
PULL = (0.02, 0.02)
"""Of ΔL (m) and of the lip cover: a change this large weighs as much as one cent of misfit
(our choice, see the module docstring)."""
_STEP = (1e-4, 0.005)
PARAMETER = "head's extra length"
"""The fitted ΔL in a maker's words (in mm, ``Calibration.unit``)."""
CHECK = ("check each take's temperature (1 °C is about 3 cents), that its note and "
         "fingering are the ones played, and that the prototype is the flute as boresmith had "
         "it cut (not shortened, no hole opened or undercut before it was recorded)")
"""What to check when the notes of a flute's prototype disagree."""


@dataclass(frozen=True)
class HeadCorrection:
    """What the fit changes in the head: extra length (m) and lip cover (None: unchanged)."""

    extra_length_m: float
    lip_cover: float | None


def _row_of(rows: Rows, m: spec_model.Measurement) -> int | None:
    """The fingering row a measured note names: the one with its fingering where the
    measurement gives it, else its first-register row, else its second."""
    name = note_name(m.note)
    found = [i for i, n in enumerate(rows.names)
             if n == name and (m.fingering is None or rows.closed[i] == m.fingering)]
    found.sort(key=lambda i: rows.registers[i])
    return found[0] if found else None


def fit(flute: spec_model.Flute, prototype: Instrument, air: GroupAir,
        rows: Rows) -> tuple[HeadCorrection, Calibration]:
    """The head's corrections that best explain ``flute.measured`` on ``prototype``, and
    the calibration report (residuals measured minus model after the fit). A measured note
    the flute does not play, or one the fitted model still misses by more than
    ``calibration.MAX_RESIDUAL_CENTS``, is a spec error at that measurement."""
    label = f"flute `{flute.id}`"
    picked: list[int] = []
    for m in flute.measured:
        row = _row_of(rows, m)
        if row is None:
            played = "" if m.fingering is None else f" with {pattern(m.fingering)}"
            raise PhysicsError.at(m.position, f"measured note {note_name(m.note)}{played} is "
                                  f"not played by {label}",
                                  "measure a note of the fingering table (first or second "
                                  "register), and give its `fingering` where the table plays it "
                                  "more than one way")
        picked.append(row)
    side_blown = prototype.head.kind == "embouchure"
    start = np.array([prototype.head.extra_length_m] + (
        [prototype.head.lip_coverage] if side_blown else []))
    airs = [air.at_temperature(m.temperature_k) for m in flute.measured]

    def model(p: np.ndarray) -> np.ndarray:
        head = replace(prototype.head, extra_length_m=float(p[0]),
                       lip_coverage=float(p[1]) if side_blown else prototype.head.lip_coverage)
        inst = replace(prototype, head=head)
        out = []
        for row, state in zip(picked, airs, strict=True):
            closed = np.array([rows.closed[row]], dtype=bool)
            f = playing.resonances(inst, state, closed).frequencies_hz[0, rows.registers[row] - 1]
            out.append(float(f))
        return np.array(out)

    measured = np.array([m.frequency_hz for m in flute.measured])
    lo = np.array([EXTRA_RANGE_M[0]] + ([LIP_RANGE[0]] if side_blown else []))
    hi = np.array([EXTRA_RANGE_M[1]] + ([LIP_RANGE[1]] if side_blown else []))
    pull = np.array(PULL[:start.size])

    def residuals(p: np.ndarray) -> np.ndarray:
        f = model(p)
        if not np.all(np.isfinite(f)):
            return np.full(f.size + p.size, np.inf)
        return np.concatenate([np.asarray(cents(measured, f)), (p - start) / pull])

    p = start.copy()
    r = residuals(p)
    for _ in range(20):
        J = np.empty((r.size, p.size))
        for k in range(p.size):
            step = np.zeros(p.size)
            step[k] = _STEP[k]
            J[:, k] = (residuals(p + step) - residuals(p - step)) / (2 * _STEP[k])
        delta = np.linalg.lstsq(J, -r, rcond=None)[0]
        trial = np.clip(p + delta, lo, hi)
        rt = residuals(trial)
        while not float(rt @ rt) < float(r @ r) and np.max(np.abs(trial - p)) > 1e-9:
            trial = p + 0.5 * (trial - p)
            rt = residuals(trial)
        if not float(rt @ rt) < float(r @ r):
            break
        done = np.max(np.abs(trial - p) / np.array(_STEP[:p.size])) < 1e-3
        p, r = trial, rt
        if done:
            break
    n = len(picked)
    found = r[:n]
    worst = int(np.argmax(np.abs(found)))
    if abs(found[worst]) > MAX_RESIDUAL_CENTS:
        m = flute.measured[worst]
        raise PhysicsError.at(
            m.position, f"{label}: the measured {note_name(m.note)} ({m.frequency_hz:.2f} Hz, "
            f"{pattern(rows.closed[picked[worst]])}) is {found[worst]:+.0f} cents from the "
            "model even after calibration",
            "check the note, the fingering, the frequency and the temperature of this "
            "measurement: calibration corrects the head, worth some cents, not a wrong note")
    correction = HeadCorrection(float(p[0]), float(p[1]) if side_blown else None)
    more = (Fitted("lip cover", float(p[1])),) if side_blown else ()
    report = Calibration(
        True, PARAMETER, float(p[0]) * 1000.0,
        tuple(Residual(note_name(m.note), float(e)) for m, e in zip(flute.measured, found,
                                                                       strict=True)),
        math.sqrt(float(np.mean(found**2))), more, unit="mm")
    return correction, report
