"""Target frequencies of notes from the spec's tuning (temperament, A4, per-note cents)."""

from __future__ import annotations

from compiler.acoustics import tuning as tuningmod
from compiler.spec import model as spec_model
from compiler.spec.notes import PITCH_CLASSES

LOWEST_NOTE, HIGHEST_NOTE = 0, 127


def target_hz(tuning: spec_model.Tuning, note: int, override_hz: float | None = None) -> float:
    """The frequency a note should sound at; an explicit frequency in the spec wins."""
    if override_hz is not None:
        return override_hz
    offsets = dict(tuning.offsets)
    return tuningmod.note_frequency(
        note, a4_hz=tuning.a4_hz, temperament=tuning.temperament, tonic_pc=tuning.tonic_pc,
        custom=tuning.custom_cents, offset_cents=offsets.get(note, 0.0))


def tonic_name(tuning: spec_model.Tuning) -> str:
    return PITCH_CLASSES[tuning.tonic_pc]


def nearest_note(tuning: spec_model.Tuning, frequency_hz: float) -> tuple[int, float]:
    """The note of the spec's tuning (temperament, A4, per-note cents) nearest a frequency:
    (MIDI note, its frequency in Hz), among the equal-tempered neighbours and their
    neighbours (a temperament moves a note by well under a semitone)."""
    around = tuningmod.nearest_note(frequency_hz, tuning.a4_hz)[0]
    candidates = [m for m in range(around - 1, around + 2) if LOWEST_NOTE <= m <= HIGHEST_NOTE]
    if not candidates:
        candidates = [min(max(around, LOWEST_NOTE), HIGHEST_NOTE)]
    scored = [(abs(tuningmod.cents(frequency_hz, target_hz(tuning, m))), m) for m in candidates]
    best = min(scored)[1]
    return best, target_hz(tuning, best)
