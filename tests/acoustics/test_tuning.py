"""Tuning: note names, scales, temperaments, frequencies.

Sources named beside each check. The 12-TET, comma and temperament-table check values were
computed from the stated definitions (12-TET, ratios, chains of fifths); the Werckmeister III
definition and its A-referenced offsets were checked at tonalsoft.com ("Werckmeister") and a
piano technicians' list archive (moypiano.com, 1999).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from compiler.acoustics.tuning import (
    PYTHAGOREAN_COMMA_CENTS,
    SYNTONIC_COMMA_CENTS,
    TEMPERAMENTS,
    cents,
    nearest_note,
    note_frequencies,
    note_frequency,
    temperament_cents,
)
from compiler.spec.notes import (
    PITCH_CLASSES,
    SCALE_PATTERNS,
    NoteError,
    note_name,
    parse_note,
    parse_note_range,
    scale_notes,
)

# --- 12-TET and the reference pitch ---------------------------------------------------------


def test_iso_16_reference_pitch() -> None:
    # ISO 16:1975: the standard tuning frequency is A4 = 440 Hz (standard number and year from
    # memory; widely cited).
    assert note_frequency(parse_note("A4")) == 440.0


@pytest.mark.parametrize(
    ("note", "hz", "tol"),
    [
        # Check values computed from 12-TET f = 440 * 2**((m - 69) / 12) (A4 = 440 Hz, ISO 16)
        # in scientific pitch notation (C4 = middle C = MIDI 60).
        ("C4", 261.6256, 1e-4),
        ("A0", 27.5, 1e-9),
        ("C0", 16.3516, 1e-4),
        ("C8", 4186.009, 1e-3),
        ("C2", 65.4064, 1e-4),  # the organ builder's 8-foot C
    ],
)
def test_equal_temperament_check_values(note: str, hz: float, tol: float) -> None:
    assert note_frequency(parse_note(note)) == pytest.approx(hz, abs=tol)


def test_reference_pitch_scales_every_note() -> None:
    # Baroque pitch A4 = 415 Hz: every 12-TET frequency scales by 415/440 (definition of 12-TET).
    midis = np.arange(21, 109)
    ratio = note_frequencies(midis, a4_hz=415.0) / note_frequencies(midis)
    np.testing.assert_allclose(ratio, 415.0 / 440.0, rtol=1e-14)


def test_octave_doubles_and_semitone_ratio() -> None:
    # 12-TET: an octave is 2/1 and a semitone 2**(1/12) (definition), checked against numpy.
    f = note_frequencies(np.arange(0, 128))
    np.testing.assert_allclose(f[12:] / f[:-12], 2.0, rtol=1e-13)
    np.testing.assert_allclose(f[1:] / f[:-1], np.exp2(1 / 12), rtol=1e-13)


# --- cents and commas -----------------------------------------------------------------------


def test_commas() -> None:
    # Pythagorean comma 3^12/2^19 = 23.4600 c; syntonic comma 81/80 = 21.5063 c (computed from
    # the ratios; standard values of music theory).
    assert PYTHAGOREAN_COMMA_CENTS == pytest.approx(23.4600, abs=5e-5)
    assert SYNTONIC_COMMA_CENTS == pytest.approx(21.5063, abs=5e-5)


def test_cents_floats_and_arrays() -> None:
    # 1200 log2(f / ref): an octave is 1200 c, a fifth 3/2 is 701.955 c (standard values).
    assert cents(880.0, 440.0) == pytest.approx(1200.0, abs=1e-12)
    assert isinstance(cents(660.0, 440.0), float)
    assert cents(660.0, 440.0) == pytest.approx(701.955, abs=5e-4)
    out = cents(np.array([440.0, 220.0, 660.0]), 440.0)
    assert isinstance(out, np.ndarray)
    np.testing.assert_allclose(out, 1200.0 * np.log2([1.0, 0.5, 1.5]), atol=1e-12)
    with pytest.raises(ValueError):
        cents(0.0, 440.0)


def test_nearest_note() -> None:
    # 445 Hz is 1200 log2(445/440) = 19.56 c above A4 (definition of the cent, A. J. Ellis 1885:
    # attribution from memory).
    midi, dev = nearest_note(445.0)
    assert midi == 69
    assert dev == pytest.approx(19.56, abs=0.005)
    # 415.3047 Hz is 12-TET G#4 with A4 = 440 (440·2^(−1/12), the 12-TET formula above).
    midi, dev = nearest_note(415.3047)
    assert (midi, round(dev, 3)) == (68, 0.0)
    # A quarter-tone (+50 c) belongs to the upper note: the deviation lies in [-50, 50).
    midi, dev = nearest_note(440.0 * 2 ** (50 / 1200))
    assert midi in (69, 70)
    assert -50.0 <= dev < 50.0
    assert midi + dev / 100 == pytest.approx(69.5, abs=1e-9)


@given(st.floats(min_value=8.0, max_value=13000.0), st.floats(min_value=380.0, max_value=470.0))
def test_nearest_note_round_trip(f_hz: float, a4: float) -> None:
    midi, dev = nearest_note(f_hz, a4)
    assert -50.0 <= dev < 50.0
    rebuilt = a4 * 2 ** ((midi - 69) / 12) * 2 ** (dev / 1200)
    assert rebuilt == pytest.approx(f_hz, rel=1e-12)


# --- temperaments ---------------------------------------------------------------------------

# Deviation from 12-TET in cents on C, check values computed from the definitions:
# Pythagorean and quarter-comma meantone chains Eb..G# (pure fifths; fifths narrowed by 1/4
# syntonic comma), Werckmeister III (definition verified at tonalsoft.com), Vallotti (F-C-G-D-A-E-B
# narrowed by 1/6 Pythagorean comma: the standard definition, from memory), 5-limit just ratios
# (one common choice: 16/15, 9/8, 6/5, 5/4, 4/3, 45/32, 3/2, 8/5, 5/3, 9/5, 15/8).
REFERENCE_TABLE = {
    "pythagorean": (0.00, 13.69, 3.91, -5.87, 7.82, -1.96, 11.73, 1.96, 15.64, 5.87, -3.91, 9.78),
    "quarter-comma-meantone": (
        0.00, -23.95, -6.84, 10.26, -13.69, 3.42, -20.53, -3.42, -27.37, -10.26, 6.84, -17.11,
    ),
    "werckmeister-3": (
        0.00, -9.78, -7.82, -5.87, -9.78, -1.96, -11.73, -3.91, -7.82, -11.73, -3.91, -7.82,
    ),
    "vallotti": (0.00, -5.87, -3.91, -1.96, -7.82, 1.96, -7.82, -1.96, -3.91, -5.87, 0.00, -9.78),
    "just": (0.00, 11.73, 3.91, 15.64, -13.69, -1.96, -9.78, 1.96, 13.69, -15.64, 17.60, -11.73),
}  # fmt: skip


@pytest.mark.parametrize("name", sorted(REFERENCE_TABLE))
def test_temperament_table(name: str) -> None:
    got = temperament_cents(name)
    assert len(got) == 12
    np.testing.assert_allclose(got, REFERENCE_TABLE[name], atol=0.01)


def test_equal_is_all_zero() -> None:
    # 12-TET deviates from itself by 0 c on every pitch class (definition).
    assert temperament_cents("equal") == (0.0,) * 12
    assert set(REFERENCE_TABLE) | {"equal"} == set(TEMPERAMENTS)


def test_werckmeister_a_referenced_offsets() -> None:
    # A-referenced Werckmeister III offsets quoted in a piano technicians' list archive
    # (moypiano.com, 1999), given to 0.1 c: C..B.
    quoted = (11.7, 2.0, 3.9, 5.9, 2.0, 9.8, 0.0, 7.8, 3.9, 0.0, 7.8, 3.9)
    midis = np.arange(60, 72)
    got = cents(note_frequencies(midis, temperament="werckmeister-3"), note_frequencies(midis))
    np.testing.assert_allclose(got, quoted, atol=0.051)


def _fifth(temperament: str, low: str) -> float:
    """Size in cents of the fifth above ``low`` (7 semitones up)."""
    m = parse_note(low)
    return cents(
        note_frequency(m + 7, temperament=temperament), note_frequency(m, temperament=temperament)
    )


@pytest.mark.parametrize(
    ("temperament", "narrowed", "fraction"),
    [
        # Werckmeister III: C-G, G-D, D-A, B-F# narrowed by 1/4 Pythagorean comma, others pure
        # (tonalsoft.com, "Werckmeister").
        ("werckmeister-3", {"C4", "G4", "D4", "B4"}, 1 / 4),
        # Vallotti: F-C-G-D-A-E-B narrowed by 1/6 Pythagorean comma, others pure (the standard
        # definition, from memory).
        ("vallotti", {"F4", "C4", "G4", "D4", "A4", "E4"}, 1 / 6),
    ],
)
def test_circulating_fifths(temperament: str, narrowed: set[str], fraction: float) -> None:
    pure = 1200 * math.log2(3 / 2)
    lows = ["C4", "G4", "D4", "A4", "E4", "B4", "F#4", "C#4", "G#4", "Eb4", "Bb4", "F4"]
    for low in lows:
        expected = pure - fraction * 23.4600 if low in narrowed else pure
        assert _fifth(temperament, low) == pytest.approx(expected, abs=1e-3), low


def test_pythagorean_and_meantone_intervals() -> None:
    # Pythagorean: pure 3/2 fifths; the wolf G#-Eb is short by the Pythagorean comma.
    pure = 1200 * math.log2(3 / 2)
    assert _fifth("pythagorean", "C4") == pytest.approx(pure, abs=1e-9)
    assert _fifth("pythagorean", "G#4") == pytest.approx(pure - 23.4600, abs=1e-3)
    # Quarter-comma meantone: pure major thirds 5/4 (the point of the temperament).
    c4, e4 = (
        note_frequency(60, temperament="quarter-comma-meantone"),
        note_frequency(64, temperament="quarter-comma-meantone"),
    )
    assert e4 / c4 == pytest.approx(5 / 4, rel=1e-12)


def test_just_on_c_and_on_d() -> None:
    # Just intonation on C with A4 = 440 Hz: A is 5/3 above C, so C4 = 440 * 3/5 = 264 Hz
    # (the classical "just C" with A = 440).
    assert note_frequency(60, temperament="just") == pytest.approx(264.0, rel=1e-12)
    # On D: A is the pure fifth 3/2 of D, so D4 = 440 / 1.5 and F#4 = D4 * 5/4.
    d4 = note_frequency(62, temperament="just", tonic_pc=2)
    assert d4 == pytest.approx(440.0 / 1.5, rel=1e-12)
    assert note_frequency(66, temperament="just", tonic_pc=2) == pytest.approx(
        d4 * 5 / 4, rel=1e-12
    )


@pytest.mark.parametrize("tonic", range(12))
@pytest.mark.parametrize("name", sorted(REFERENCE_TABLE))
def test_other_tonic_is_rotation(name: str, tonic: int) -> None:
    # A temperament built on another tonic is the C table moved so that C sits on the tonic.
    got = temperament_cents(name, tonic)
    assert got[tonic] == 0.0
    rotated = [REFERENCE_TABLE[name][(pc - tonic) % 12] for pc in range(12)]
    np.testing.assert_allclose(got, rotated, atol=0.01)


@pytest.mark.parametrize("name", [*TEMPERAMENTS])
@pytest.mark.parametrize("tonic", [0, 2, 7, 9])
def test_a_keeps_reference_pitch(name: str, tonic: int) -> None:
    # Every temperament is re-referenced so that A sits on the ISO 16 reference pitch and its
    # octaves (as the A-referenced offsets of the moypiano.com archive are).
    for a in (57, 69, 81):
        expected = 440.0 * 2 ** ((a - 69) // 12)
        assert note_frequency(a, 440.0, name, tonic) == pytest.approx(expected, rel=1e-14)


def test_custom_temperament_and_offsets() -> None:
    custom = [0.0, -10.0, -4.0, 6.0, -14.0, 2.0, -12.0, -2.0, 8.0, -6.0, 4.0, -10.0]
    assert temperament_cents("custom", custom=custom) == tuple(custom)
    # C4 is custom[C] - custom[A] = +6 c from 12-TET C4 (A stays at 440 Hz).
    c4 = note_frequency(60, temperament="custom", custom=custom)
    assert cents(c4, 440.0 * 2 ** (-9 / 12)) == pytest.approx(6.0, abs=1e-9)
    # Global and per-note offsets add in cents.
    f = note_frequencies([60, 69], offset_cents=2.0, offsets={69: -5.0})
    np.testing.assert_allclose(cents(f, note_frequencies([60, 69])), [2.0, -3.0], atol=1e-9)
    assert note_frequency(69, offset_cents=1200.0) == pytest.approx(880.0, rel=1e-14)


def test_temperament_errors() -> None:
    with pytest.raises(ValueError, match="werckmeister-3"):
        temperament_cents("werckmeister")
    with pytest.raises(ValueError):
        temperament_cents("custom", custom=[0.0] * 11)
    with pytest.raises(ValueError):
        temperament_cents("custom")
    with pytest.raises(ValueError):
        temperament_cents("just", tonic_pc=12)
    with pytest.raises(ValueError):
        note_frequency(60, a4_hz=0.0)
    with pytest.raises(ValueError):
        note_frequencies(np.array([60.5]))


# --- note names -----------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("name", "midi"),
    [
        # Scientific pitch notation (ASA): C4 = middle C = MIDI 60, A4 = 69, C-1 = 0, G9 = 127.
        ("C4", 60),
        ("A4", 69),
        ("C-1", 0),
        ("G9", 127),
        ("F#3", 54),
        ("F♯3", 54),
        ("Bb5", 82),
        ("B♭5", 82),
        ("bb5", 82),
        ("a4", 69),
        ("Cx4", 62),
        ("C##4", 62),
        ("Dbb4", 60),
        ("D♭♭4", 60),
        # The octave number belongs to the letter: Cb4 is B3, B#3 is C4.
        ("Cb4", 59),
        ("B#3", 60),
        (" E2 ", 40),
    ],
)
def test_parse_note(name: str, midi: int) -> None:
    assert parse_note(name) == midi


@pytest.mark.parametrize("bad", ["H4", "C", "", "C#4x", "4C", "C 4", "C#b4", "Ab-2", "G#9", "C10"])
def test_parse_note_errors(bad: str) -> None:
    with pytest.raises(NoteError) as info:
        parse_note(bad)
    assert info.value.message
    assert info.value.hint


def test_parse_note_hint_shows_examples() -> None:
    with pytest.raises(NoteError) as info:
        parse_note("Q4")
    assert "Q" in info.value.message
    assert all(example in info.value.hint for example in ("C4", "F#3", "Bb5"))


def test_note_name_round_trip() -> None:
    assert [note_name(m) for m in (60, 54, 82, 0, 127)] == ["C4", "F#3", "Bb5", "C-1", "G9"]
    for midi in range(128):
        name = note_name(midi)
        assert name.rstrip("-0123456789") == PITCH_CLASSES[midi % 12]
        assert parse_note(name) == midi
    with pytest.raises(ValueError):
        note_name(128)


def test_note_range() -> None:
    assert parse_note_range("C3..C5") == list(range(48, 73))
    assert parse_note_range("A4 .. A4") == [69]
    for bad in ("C5..C3", "C3-C5", "C3..", "C3..C4..C5", "C3..H4"):
        with pytest.raises(NoteError):
            parse_note_range(bad)


def test_scales() -> None:
    # C major from C4: C D E F G A B C (the major scale's steps W W H W W W H).
    assert scale_notes(60, "major", 8) == [60, 62, 64, 65, 67, 69, 71, 72]
    # A natural minor from A3: A B C D E F G A.
    assert scale_notes(57, "natural-minor", 8) == [57, 59, 60, 62, 64, 65, 67, 69]
    assert scale_notes(60, "chromatic", 13) == list(range(60, 73))
    assert scale_notes(60, [2, 3], 5) == [60, 62, 65, 67, 70]
    assert scale_notes(60, "major", 0) == []
    assert sum(SCALE_PATTERNS["major"]) == sum(SCALE_PATTERNS["natural-minor"]) == 12
    for bad_pattern in ("dorian-ish", [2, 0], [2, -1], []):
        with pytest.raises(NoteError):
            scale_notes(60, bad_pattern, 4)
    with pytest.raises(NoteError):
        scale_notes(120, "major", 8)
