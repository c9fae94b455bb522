"""What a flute as cut plays, fingering by fingering, and what the maker should know about it.

Every row of the fingering table is predicted on the instrument as it will be cut. Second
registers are judged, not only measured: a weak resonance (the jet cannot hold it) or a split
one (two resonances close together) is flagged and reported in words, never as a number of
cents to tune to. Each fingering carries the cutoff of its open tone-hole lattice; the head's
own resonance is reported once. Notes that miss the design's goal (``solve.GOAL_CENTS``) get a
warning that says what would bring them closer, in a maker's words.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from compiler.acoustics import playing, solve
from compiler.acoustics.air import Air
from compiler.acoustics.impedance import Instrument
from compiler.errors import PhysicsError, Position
from compiler.ir import Curve, Fingering, Note
from compiler.spec import model as spec_model

CURVE_POINTS = 400


@dataclass(frozen=True)
class Rows:
    """The fingering table as resolved: one row per fingering and register."""

    closed: tuple[tuple[bool, ...], ...]
    targets_hz: tuple[float, ...]
    registers: tuple[int, ...]
    names: tuple[str, ...]
    positions: tuple[Position, ...]
    """The spec position of each row's fingering."""


@dataclass(frozen=True)
class Report:
    fingerings: tuple[Fingering, ...]
    """Every row the model finds a resonance for, in table order."""
    predicted_hz: tuple[tuple[float, float], ...]
    """Registers 1 and 2 of every row (NaN where none is found)."""
    warnings: tuple[Note, ...]
    curves: tuple[Curve, ...]
    head_resonance_hz: float | None


def pattern(closed: Sequence[bool]) -> str:
    return "".join("x" if c else "o" for c in closed)


def report(flute: spec_model.Flute, instrument: Instrument, air: Air, rows: Rows,
           advice: Sequence[str]) -> Report:
    """Predict and judge every row of ``rows`` on ``instrument`` (module docstring).

    A first-register note the model finds no resonance for is a spec error at its fingering;
    ``advice`` (from the solver, per row: what would bring it closer, or empty) goes into the
    warnings of notes that miss their goal."""
    table = np.array(rows.closed, dtype=bool)
    regs = np.array(rows.registers)
    predicted, residual, _ = playing.predictions(instrument, air, table,
                                                 np.array(rows.targets_hz), regs)
    label = f"flute `{flute.id}`"
    lost = [int(i) for i in np.flatnonzero((regs == 1) & ~np.isfinite(residual))]
    if lost:
        i = lost[0]
        raise PhysicsError.at(
            rows.positions[i], f"{label}: the model finds no first-register resonance for "
            f"{rows.names[i]} ({pattern(rows.closed[i])}) near {rows.targets_hz[i]:.1f} Hz",
            "check this fingering, the tube's length and the head's dimensions")
    quality = playing.second_register_quality(instrument, air, table, predicted)
    cutoffs = playing.lattice_cutoffs(instrument, air, table)
    chosen = predicted[np.arange(len(regs)), regs - 1]
    clear = np.array([r == 1 or q == "clear" for r, q in zip(regs, quality, strict=True)])
    bands = playing.hole_model_band(instrument, air, table, np.where(clear, chosen, np.nan))
    fingerings: list[Fingering] = []
    warnings: list[Note] = []
    for i, closed in enumerate(rows.closed):
        register, name = int(regs[i]), rows.names[i]
        where = rows.positions[i]
        if not np.isfinite(residual[i]):
            warnings.append(Note(where, f"{label}: the model finds no register-{register} "
                                 f"resonance near {name} for the fingering {pattern(closed)}; "
                                 "it is left out of the report"))
            continue
        resonance = quality[i] if register == 2 else "clear"
        fingerings.append(Fingering(
            note=name, closed=closed, register=register, target_hz=rows.targets_hz[i],
            predicted_hz=float(predicted[i][register - 1]), error_cents=float(residual[i]),
            resonance=resonance, cutoff_hz=cutoffs[i], model_band_cents=bands[i],
            source=where))
        note = _judge(label, fingerings[-1], predicted[i], advice[i] if advice else "")
        if note:
            warnings.append(Note(where, note))
    return Report(tuple(fingerings), tuple((float(a), float(b)) for a, b in predicted),
                  tuple(warnings), _curves(instrument, air, rows, predicted, regs),
                  playing.head_resonance(instrument, air))


def _judge(label: str, f: Fingering, predicted: Sequence[float], advice: str) -> str:
    """A warning for a row that misses its goal or whose resonance is not to be trusted."""
    what = (f"{f.note} ({pattern(f.closed)})" if f.register == 1 else
            f"the second register of {pattern(f.closed)} ({f.note})")
    leave_out = "; use another fingering for it (`second_register: none` leaves this one out)"
    if f.resonance == "weak":
        why = (f"it lies above the open holes' cutoff ({f.cutoff_hz:.0f} Hz), where they no "
               "longer end the air column (larger open holes, set closer together, or a "
               "narrower bore raise the cutoff)"
               if f.cutoff_hz is not None and f.predicted_hz > f.cutoff_hz else
               f"its resonance is under {playing.WEAK_RATIO:.0%} of the first register's")
        return f"{label}: {what} is weak: {why}, so the player may not hold it" + leave_out
    if f.resonance == "split":
        return (f"{label}: {what} is split: the model finds two resonances within "
                f"{playing.SPLIT_CENTS:.0f} cents of {predicted[1]:.1f} Hz, and the note may "
                "jump between them" + leave_out)
    goal = solve.GOAL_CENTS[f.register]
    if abs(f.error_cents) <= goal:
        return ""
    reason = (f"what would bring it closer: {advice}" if advice else
              "no limit holds it: the other notes of the table pull the other way "
              "(`second_register_weight` sets the balance between the registers)")
    tail = leave_out if f.register == 2 else ""
    return (f"{label}: {what} is predicted {f.error_cents:+.1f} cents from its target, beyond "
            f"the {goal:g} cents the design aims at; {reason}" + tail)


def _curves(instrument: Instrument, air: Air, rows: Rows, predicted: np.ndarray,
            regs: np.ndarray) -> tuple[Curve, ...]:
    """Admittance curves of the lowest, a middle and the highest first-register fingering."""
    first = [i for i in range(len(rows.closed)) if regs[i] == 1]
    picks = sorted({first[0], first[len(first) // 2], first[-1]})
    found = predicted[np.isfinite(predicted)]
    top = float(found.max() if found.size else max(rows.targets_hz)) * 1.3
    freqs, magnitude = playing.spectrum(instrument, air,
                                        np.array([rows.closed[i] for i in picks], dtype=bool),
                                        f_min_hz=50.0, f_max_hz=top, n=CURVE_POINTS)
    return tuple(Curve(f"{rows.names[i]} {pattern(rows.closed[i])}",
                       tuple(float(f) for f in freqs), tuple(float(v) for v in magnitude[k]))
                 for k, i in enumerate(picks))
