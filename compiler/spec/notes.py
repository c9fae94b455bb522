"""Note names in scientific pitch notation, note ranges and scales (no numpy: ``check`` path).

Notes are MIDI numbers: C4 = 60 is middle C, A4 = 69, C-1 = 0, G9 = 127.
"""

from __future__ import annotations

import re
from collections.abc import Mapping, Sequence
from numbers import Integral
from types import MappingProxyType

PITCH_CLASSES: tuple[str, ...] = (
    "C", "C#", "D", "Eb", "E", "F", "F#", "G", "G#", "A", "Bb", "B",
)  # fmt: skip
"""Display names of the pitch classes 0 = C .. 11 = B."""

SCALE_PATTERNS: Mapping[str, tuple[int, ...]] = MappingProxyType(
    {
        "chromatic": (1,) * 12,
        "major": (2, 2, 1, 2, 2, 2, 1),
        "natural-minor": (2, 1, 2, 2, 1, 2, 2),
    }
)
"""Named scales as semitone steps, cycled from the tonic. Read-only."""

_LETTER_PC = {"C": 0, "D": 2, "E": 4, "F": 5, "G": 7, "A": 9, "B": 11}
_ACCIDENTAL = {"": 0, "#": 1, "##": 2, "x": 2, "b": -1, "bb": -2}
_NOTE_RE = re.compile(r"([A-Za-z])([#♯b♭x𝄪𝄫]*)(-?\d+)?(.*)", re.DOTALL)
_NOTE_HINT = "write a letter A-G, an optional # or b, and an octave number: C4, F#3, Bb5"


class NoteError(ValueError):
    """A note name, note range or scale that cannot be read; carries a message and a hint."""

    def __init__(self, message: str, hint: str = _NOTE_HINT) -> None:
        super().__init__(message)
        self.message = message
        self.hint = hint


def parse_note(name: str) -> int:
    """MIDI number of a note in scientific pitch notation: C4 = 60, A4 = 69, C-1 = 0.

    A letter A-G (either case), accidentals ``#``/``♯``, ``b``/``♭``, double sharp ``##``/``x``
    /``𝄪``, double flat ``bb``/``♭♭``/``𝄫``, then an octave number (may be negative). The
    octave belongs to the letter: Cb4 = B3 = 59, B#3 = C4 = 60. The result must lie in 0..127.
    """
    if not isinstance(name, str):
        raise NoteError(f"expected a note name, got {name!r}")
    text = name.strip()
    match = _NOTE_RE.fullmatch(text)
    if not text or match is None:
        raise NoteError(f"cannot read {name!r} as a note")
    letter, accidental, octave, rest = match.groups()
    if letter.upper() not in _LETTER_PC:
        if letter.upper() == "H":
            raise NoteError(f"unknown note letter {letter!r} in {name!r}",
                            "H is the German name of B: write B for H, and Bb for the German B")
        raise NoteError(f"unknown note letter {letter!r} in {name!r}")
    sign = accidental.replace("♯", "#").replace("♭", "b").replace("𝄪", "##").replace("𝄫", "bb")
    if sign not in _ACCIDENTAL:
        raise NoteError(f"cannot read the accidental {accidental!r} in {name!r}")
    if octave is None:
        if rest:
            raise NoteError(f"cannot read {name!r} as a note")
        raise NoteError(f"note {name!r} has no octave number")
    if rest:
        raise NoteError(f"unexpected {rest!r} after the note {text[: -len(rest)]!r}")
    if len(octave.lstrip("-")) > 3:  # also keeps int() away from huge digit strings
        raise NoteError(f"octave {octave} in {name!r} is outside -1..9")
    midi = 12 * (int(octave) + 1) + _LETTER_PC[letter.upper()] + _ACCIDENTAL[sign]
    if not 0 <= midi <= 127:
        raise NoteError(
            f"note {name!r} is outside the MIDI range C-1..G9",
            "notes run from C-1 (MIDI 0) to G9 (MIDI 127)",
        )
    return midi


def note_name(midi: int) -> str:
    """Name of a MIDI note, spelled with ``PITCH_CLASSES``: 60 -> "C4", 54 -> "F#3", 82 -> "Bb5"."""
    if isinstance(midi, bool) or not isinstance(midi, Integral) or not 0 <= midi <= 127:
        raise NoteError(f"{midi!r} is not a MIDI note number 0..127", "C-1 = 0, C4 = 60, G9 = 127")
    return f"{PITCH_CLASSES[int(midi) % 12]}{int(midi) // 12 - 1}"


def parse_note_range(text: str) -> list[int]:
    """Every semitone from LOW to HIGH inclusive, from text ``"LOW..HIGH"`` (e.g. ``"C3..C5"``)."""
    hint = "write the lowest and highest note joined by '..', e.g. C3..C5"
    if isinstance(text, str) and re.search(r"\.{3,}", text):
        raise NoteError(f"the note range {text!r} joins its notes with more than two dots", hint)
    if not isinstance(text, str) or text.count("..") != 1:
        raise NoteError(f"cannot read {text!r} as a note range", hint)
    low_text, high_text = (part.strip() for part in text.split(".."))
    if not low_text or not high_text:
        raise NoteError(f"the note range {text!r} needs a note on each side of '..'", hint)
    low, high = parse_note(low_text), parse_note(high_text)
    if high < low:
        raise NoteError(
            f"the note range {text!r} runs downwards",
            f"put the lower note first: {high_text}..{low_text}",
        )
    return list(range(low, high + 1))


def scale_notes(tonic: int, pattern: str | Sequence[int], count: int) -> list[int]:
    """``count`` notes of a scale starting at ``tonic`` (MIDI), cycling the step pattern.

    ``pattern`` names one of ``SCALE_PATTERNS`` or gives positive semitone steps. C major from
    C4: 60, 62, 64, 65, 67, 69, 71, 72.
    """
    if isinstance(pattern, str):
        if pattern not in SCALE_PATTERNS:
            names = ", ".join(SCALE_PATTERNS)
            raise NoteError(f"unknown scale {pattern!r}", f"choose one of: {names}")
        steps = SCALE_PATTERNS[pattern]
    else:
        steps = tuple(pattern)
        if not steps or not all(
            isinstance(s, Integral) and not isinstance(s, bool) and s > 0 for s in steps
        ):
            raise NoteError(
                f"scale steps {list(pattern)!r} must be positive whole semitones",
                "for example [2, 2, 1, 2, 2, 2, 1] for a major scale",
            )
    if count < 0:
        raise NoteError(f"cannot make {count} notes", "ask for one note or more")
    notes = [tonic]
    for i in range(count - 1):
        notes.append(notes[-1] + int(steps[i % len(steps)]))
    notes = notes[:count]
    if notes and not (0 <= notes[0] and notes[-1] <= 127):
        raise NoteError(
            f"the scale from {note_name(tonic)} runs past G9, the highest note",
            "start lower or ask for fewer notes",
        )
    return notes
