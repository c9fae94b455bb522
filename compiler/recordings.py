"""``boresmith measure``: recordings of pipes in, ``measured:`` entries for the spec out.

Reads WAV (PCM 8/16/24/32-bit and IEEE float 32/64-bit, mono or stereo, plain or
WAVE_FORMAT_EXTENSIBLE) and FLAC, finds each recording's pitch
(``compiler.acoustics.pitch``) and writes the entries, ready to paste under a rank's or
tube set's ``measured:``. PCM WAV is read by the standard library's ``wave``; IEEE-float
and extensible WAV, which ``wave`` refuses, by the small RIFF reader below (Microsoft's
RIFF/WAVE format: a ``fmt `` chunk with the format tag, channels, rate and sample size,
then the ``data`` chunk); FLAC by ``soundfile`` (libsndfile), a decoder we would not write.
"""

from __future__ import annotations

import math
import re
import struct
import wave
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from compiler.acoustics.pitch import PitchEstimate, RecordingProblem, Samples, estimate
from compiler.spec.notes import NoteError, note_name, parse_note

PCM, IEEE_FLOAT, EXTENSIBLE = 1, 3, 0xFFFE
FAR_FROM_NOTE_CENTS = 600.0
"""A take this far from the note it is named for (half an octave) is flagged: a prototype cut
long is some tens of cents flat, so this is another note or an overblown pipe."""
MAX_BYTES = 1 << 30
"""Largest recording read (a minute of 96 kHz 32-bit stereo is 46 MB)."""


class RecordingError(Exception):
    """A recording that cannot be used: ``message`` and ``hint`` for the maker."""

    def __init__(self, message: str, hint: str = "") -> None:
        super().__init__(message)
        self.message = message
        self.hint = hint


@dataclass(frozen=True)
class Audio:
    samples: Samples
    """Mono (the channels averaged), full scale ±1."""
    rate: float
    channels: int
    encoding: str
    """In words: ``16-bit PCM``, ``32-bit float``, ``FLAC``."""
    announced_s: float | None = None
    """A WAV file cut short (its data chunk ends before the length its header gives): the
    seconds the header announces; None for a whole file."""

    @property
    def seconds(self) -> float:
        return len(self.samples) / self.rate if self.rate > 0 else 0.0


@dataclass(frozen=True)
class Take:
    """One analysed recording."""

    file: str
    note: int
    note_from: str
    """``--note``, ``file name`` or ``nearest note`` (guessed: check it)."""
    pitch: PitchEstimate
    length: str | None
    audio: Audio
    cents_from_note: float = 0.0
    """The pitch found less the named note's equal-tempered pitch (at ``--a4``)."""


# ---------------------------------------------------------------------------------------------
# Reading


def read_audio(path: Path) -> Audio:
    """The samples of a WAV or FLAC file; ``RecordingError`` for anything unreadable."""
    try:
        size = path.stat().st_size
        with path.open("rb") as handle:
            head = handle.read(12)
    except FileNotFoundError:
        raise RecordingError("no such file") from None
    except IsADirectoryError:
        raise RecordingError("is a folder, not a recording") from None
    except OSError as exc:
        raise RecordingError(f"cannot read ({exc.strerror})") from None
    if size > MAX_BYTES:
        raise RecordingError(f"the file is {size} bytes; the limit is {MAX_BYTES}",
                             "trim the recording to the note")
    if head[:4] == b"fLaC":
        return _read_flac(path)
    if head[:4] != b"RIFF" or head[8:12] != b"WAVE":
        raise RecordingError("not a WAV or FLAC file",
                             "export the recording as WAV (PCM or float) or FLAC")
    try:
        return _read_pcm(path)
    except wave.Error as exc:
        if "unknown format" not in str(exc):
            raise RecordingError(f"a damaged WAV file ({exc})", "export it again") from None
    except EOFError:
        raise RecordingError("a damaged WAV file (it ends early)", "export it again") from None
    except RuntimeError:  # `wave` seeking past the end: a chunk longer than the file
        raise RecordingError("a damaged WAV file (a chunk runs past its end)",
                             "export it again") from None
    return _read_riff(path.read_bytes())


def _read_pcm(path: Path) -> Audio:
    with wave.open(str(path), "rb") as w:
        channels, width, rate = w.getnchannels(), w.getsampwidth(), w.getframerate()
        announced = w.getnframes()
        raw = w.readframes(announced)
    return Audio(_mono(_pcm(raw, width, channels), channels), float(rate), channels,
                 f"{8 * width}-bit PCM",
                 _cut_short(len(raw), announced * width * channels, width * channels, rate))


def _cut_short(held: int, announced: int, frame: int, rate: float) -> float | None:
    """The seconds a data chunk's header announces when the file holds fewer bytes (a
    recorder stopped while writing, a copy cut short), else None."""
    if held >= announced or frame <= 0 or rate <= 0:
        return None
    return announced / frame / rate


def _pcm(raw: bytes, width: int, channels: int) -> Samples:
    """Little-endian integer samples scaled to ±1 (8-bit WAV is unsigned, offset 128)."""
    usable = len(raw) - len(raw) % (width * channels)
    raw = raw[:usable]
    if width == 1:
        return (np.frombuffer(raw, dtype=np.uint8).astype(np.float64) - 128.0) / 128.0
    if width == 3:
        bytes3 = np.frombuffer(raw, dtype=np.uint8).reshape(-1, 3).astype(np.int32)
        value = bytes3[:, 0] | (bytes3[:, 1] << 8) | (bytes3[:, 2] << 16)
        value = np.where(value >= 1 << 23, value - (1 << 24), value)
        return value.astype(np.float64) / float(1 << 23)
    if width in (2, 4):
        kind = np.dtype(f"<i{width}")
        return np.frombuffer(raw, dtype=kind).astype(np.float64) / float(1 << (8 * width - 1))
    raise RecordingError(f"{8 * width}-bit samples are not a WAV sample size boresmith reads",
                         "export as 16-bit, 24-bit or 32-bit PCM, or float")


def _mono(samples: Samples, channels: int) -> Samples:
    if channels < 1:
        raise RecordingError("the WAV file says it has no channels", "export it again")
    if channels == 1:
        return samples
    frames = samples[: len(samples) - len(samples) % channels].reshape(-1, channels)
    mono: Samples = frames.mean(axis=1)
    return mono


def _read_riff(data: bytes) -> Audio:
    """IEEE-float or extensible WAV (``wave`` reads only plain PCM)."""
    fmt: bytes | None = None
    payload: bytes | None = None
    announced = 0
    at = 12
    while at + 8 <= len(data):
        name, size = data[at: at + 4], struct.unpack_from("<I", data, at + 4)[0]
        body = data[at + 8: at + 8 + size]
        if name == b"fmt ":
            fmt = body
        elif name == b"data":
            payload, announced = body, size
        at += 8 + size + (size & 1)  # chunks are padded to an even length
    if fmt is None or len(fmt) < 16 or payload is None:
        raise RecordingError("a damaged WAV file (no format or no sound data)",
                             "export it again")
    tag, channels, rate, _, _, bits = struct.unpack_from("<HHIIHH", fmt)
    if tag == EXTENSIBLE:
        if len(fmt) < 40:
            raise RecordingError("a damaged WAV file (short extensible format)",
                                 "export it again")
        tag = struct.unpack_from("<H", fmt, 24)[0]  # the sub-format GUID's first two bytes
    short = _cut_short(len(payload), announced, bits // 8 * channels, float(rate))
    if tag == PCM and bits in (8, 16, 24, 32):
        return Audio(_mono(_pcm(payload, bits // 8, channels), channels), float(rate),
                     channels, f"{bits}-bit PCM", short)
    if tag == IEEE_FLOAT and bits in (32, 64):
        usable = len(payload) - len(payload) % (bits // 8 * max(channels, 1))
        samples = np.frombuffer(payload[:usable], dtype=f"<f{bits // 8}").astype(np.float64)
        if not np.all(np.isfinite(samples)):
            raise RecordingError("the float samples hold NaN or infinity", "export it again")
        return Audio(_mono(samples, channels), float(rate), channels, f"{bits}-bit float",
                     short)
    raise RecordingError(f"a WAV encoding boresmith does not read (format {tag}, {bits} bits)",
                         "export as PCM (16, 24 or 32-bit) or 32-bit float")


def _read_flac(path: Path) -> Audio:
    try:
        import soundfile
    except OSError as exc:  # the package is there, its libsndfile is not
        raise RecordingError(f"FLAC needs libsndfile, which could not be loaded ({exc})",
                             "export the recording as WAV instead") from None
    try:
        data, rate = soundfile.read(str(path), dtype="float64", always_2d=True)
    except RuntimeError as exc:
        raise RecordingError(f"a damaged FLAC file ({exc})", "export it again") from None
    channels = int(data.shape[1])
    return Audio(np.asarray(data.mean(axis=1)), float(rate), channels, "FLAC")


# ---------------------------------------------------------------------------------------------
# Notes and entries

_NOTE_IN_NAME = re.compile(r"(?<![A-Za-z])([A-Ga-g])(#|s|b)?(-?\d)(?!\d)")


def note_in_name(path: Path) -> int | None:
    """A note written in the file name (``G2.wav``, ``gedackt-F#3.wav``, ``Bb4-take2``;
    ``s`` for a sharp as in pipe ids: ``Fs3``), or None."""
    found = None
    for match in _NOTE_IN_NAME.finditer(path.stem):
        letter, accidental, octave = match.groups()
        accidental = {"s": "#", None: ""}.get(accidental, accidental)
        try:
            found = parse_note(f"{letter.upper()}{accidental}{octave}")
        except NoteError:
            continue
    return found


def nearest_note(frequency_hz: float, a4_hz: float) -> int:
    """The equal-tempered note nearest a frequency: 69 + 12·log2(f/A4), rounded."""
    return int(round(69 + 12 * math.log2(frequency_hz / a4_hz)))


def analyse(path: Path, shown: str, note: str | None, length: str | None,
            a4_hz: float) -> Take:
    """Read and analyse one recording; ``RecordingError`` with a message and a hint."""
    audio = read_audio(path)
    try:
        pitch = estimate(audio.samples, audio.rate)
    except RecordingProblem as problem:
        if audio.announced_s is not None:  # what is left of a damaged file does not do
            raise RecordingError(f"a damaged WAV file ({_cut_short_text(audio)}): "
                                 f"{problem.message}", "export it again") from None
        raise RecordingError(problem.message, problem.hint) from None
    if note is not None:
        midi, source = parse_note(note), "--note"  # checked by the command line
    else:
        named = note_in_name(path)
        if named is not None:
            midi, source = named, "file name"
        else:
            midi, source = nearest_note(pitch.frequency_hz, a4_hz), "nearest note"
    named_hz = a4_hz * 2 ** ((midi - 69) / 12)
    off = 1200 * math.log2(pitch.frequency_hz / named_hz)
    return Take(shown, midi, source, pitch, length, audio, off)


def _cut_short_text(audio: Audio) -> str:
    return (f"it ends after {audio.seconds:.2f} s of the {audio.announced_s:.2f} s its header "
            "announces")


def _decimals(frequency_hz: float) -> int:
    """Hz decimals so the rounding stays below 0.05 cent."""
    step = frequency_hz * (2 ** (0.05 / 1200) - 1)
    return max(2, math.ceil(-math.log10(step)))


def entry(take: Take, temperature: str) -> str:
    """One ``measured:`` item in flow style, with what the analysis found as a comment."""
    f = take.pitch.frequency_hz
    fields = [f"note: {note_name(take.note)}", f"frequency: {f:.{_decimals(f)}f} Hz",
              f"temperature: {temperature}"]
    if take.length is not None:
        fields.append(f"length: {take.length}")
    notes = [f"{take.file}: ±{take.pitch.uncertainty_cents:.2f} cents",
             f"{take.pitch.steady_to_s - take.pitch.steady_from_s:.1f} s steady"]
    if take.pitch.spread_cents >= 1.0:
        notes.append(f"wandered {take.pitch.spread_cents:.1f} cents")
    if take.pitch.other_pitch_share >= 0.05:
        ratio = take.pitch.other_pitch_ratio
        what = "an octave higher (overblown)" if abs(ratio - 2) < 0.03 else (
            "a twelfth higher (overblown)" if abs(ratio - 3) < 0.045 else
            f"{ratio:.2f} times higher" if ratio > 1 else f"{ratio:.2f} times lower")
        notes.append(f"{take.pitch.other_pitch_share:.0%} of it sounded {what}, left out")
    if take.audio.announced_s is not None:
        notes.append(f"CHECK: the file is cut short ({_cut_short_text(take.audio)}); "
                     "measured on what is there")
    if take.note_from == "nearest note":
        notes.append("note guessed from the pitch: check it")
    elif abs(take.cents_from_note) >= FAR_FROM_NOTE_CENTS:
        # A pipe cut long sounds some cents flat, not half an octave: another note, or a
        # pipe that overblew for most of the take.
        octave = " (overblown?)" if abs(take.cents_from_note - 1200) < 50 else ""
        notes.append(f"CHECK: {take.cents_from_note:+.0f} cents from "
                     f"{note_name(take.note)}{octave}: is it the right note?")
    return "  - {" + ", ".join(fields) + "}   # " + "; ".join(notes)


def entries(takes: list[Take], temperature: str) -> str:
    """The ``measured:`` block: a YAML snippet to paste into a rank or tube set."""
    lines = [f"measured:   # boresmith measure: {len(takes)} recording"
             + ("" if len(takes) == 1 else "s") + f" at {temperature}"]
    lines += [entry(t, temperature) for t in takes]
    return "\n".join(lines) + "\n"


def as_dicts(takes: list[Take], temperature_c: float) -> list[dict[str, object]]:
    """The takes for ``--json``: frequency, uncertainty and what was found, per file."""
    return [{
        "file": t.file,
        "note": note_name(t.note),
        "note_from": t.note_from,
        "frequency_hz": round(t.pitch.frequency_hz, 4),
        "uncertainty_cents": round(t.pitch.uncertainty_cents, 3),
        "spread_cents": round(t.pitch.spread_cents, 3),
        "steady_from_s": round(t.pitch.steady_from_s, 3),
        "steady_to_s": round(t.pitch.steady_to_s, 3),
        "partials": t.pitch.partials,
        "other_pitch_share": round(t.pitch.other_pitch_share, 3),
        "other_pitch_ratio": round(t.pitch.other_pitch_ratio, 3),
        "duration_s": round(t.audio.seconds, 3),
        "announced_s": None if t.audio.announced_s is None else round(t.audio.announced_s, 3),
        "cents_from_note": round(t.cents_from_note, 2),
        "temperature_c": round(temperature_c, 2),
        "length": t.length,
        "sample_rate_hz": t.audio.rate,
        "channels": t.audio.channels,
        "encoding": t.audio.encoding,
    } for t in takes]
