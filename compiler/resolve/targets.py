"""Target frequencies of notes from the spec's tuning (temperament, A4, per-note cents)."""

from __future__ import annotations

from compiler.acoustics import tuning as tuningmod
from compiler.spec import model as spec_model
from compiler.spec.notes import PITCH_CLASSES


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
