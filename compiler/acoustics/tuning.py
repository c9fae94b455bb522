"""Tuning: temperaments and target frequencies (note names live in ``compiler.spec.notes``).

Notes are MIDI numbers in scientific pitch notation (C4 = 60 is middle C, A4 = 69, C-1 = 0).
Equal temperament is referenced to A4 (ISO 16:1975 sets A4 = 440 Hz). A temperament is a
cents offset per pitch class from 12-tone equal temperament (12-TET), built from its definition
(a chain of fifths with a stated tempering, or just ratios), then re-referenced so that A keeps
the reference pitch.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from types import MappingProxyType
from typing import overload

import numpy as np
from numpy.typing import NDArray

TEMPERAMENTS: tuple[str, ...] = (
    "equal", "quarter-comma-meantone", "werckmeister-3", "vallotti", "pythagorean", "just",
)  # fmt: skip
"""Named temperaments; ``"custom"`` is also accepted, with 12 offsets given by the caller."""

PURE_FIFTH_CENTS = 1200.0 * math.log2(3 / 2)
"""The just fifth 3/2: 701.955 cents."""
PYTHAGOREAN_COMMA_CENTS = 1200.0 * math.log2(3**12 / 2**19)
"""Twelve pure fifths over seven octaves, 3^12 / 2^19: 23.460 cents."""
SYNTONIC_COMMA_CENTS = 1200.0 * math.log2(81 / 80)
"""Four pure fifths over a pure major third and two octaves, 81/80: 21.506 cents."""

_PC_A = 9
# The chain of fifths Eb-Bb-F-C-G-D-A-E-B-F#-C#-G# as pitch classes; the twelfth fifth (G#-Eb)
# is the wolf of a non-circulating temperament, or closes the circle of a circulating one.
_CHAIN = (3, 10, 5, 0, 7, 2, 9, 4, 11, 6, 1, 8)
_C_INDEX = _CHAIN.index(0)

# Per temperament: how much each of the 11 chain fifths (Eb-Bb, Bb-F, ..., C#-G#) is narrowed,
# as (fraction, comma). Werckmeister III narrows C-G, G-D, D-A and B-F# by 1/4 Pythagorean
# comma (tonalsoft.com encyclopedia, "Werckmeister"); Vallotti narrows F-C-G-D-A-E-B by 1/6.
_P, _S = PYTHAGOREAN_COMMA_CENTS, SYNTONIC_COMMA_CENTS
_FIFTH_NARROWING: Mapping[str, tuple[float, ...]] = MappingProxyType(
    {
        "pythagorean": (0.0,) * 11,
        "quarter-comma-meantone": (_S / 4,) * 11,
        #                 Eb-Bb Bb-F F-C   C-G    G-D    D-A    A-E E-B B-F#   F#-C# C#-G#
        "werckmeister-3": (0.0, 0.0, 0.0, _P / 4, _P / 4, _P / 4, 0.0, 0.0, _P / 4, 0.0, 0.0),
        "vallotti": (0.0, 0.0, _P / 6, _P / 6, _P / 6, _P / 6, _P / 6, _P / 6, 0.0, 0.0, 0.0),
    }
)

# 5-limit just intonation on C, one common choice of chromatic ratios (9/5 for Bb, 45/32 for F#).
_JUST_RATIOS = (
    (1, 1), (16, 15), (9, 8), (6, 5), (5, 4), (4, 3),
    (45, 32), (3, 2), (8, 5), (5, 3), (9, 5), (15, 8),
)  # fmt: skip


def _chain_offsets(narrowing: Sequence[float]) -> list[float]:
    """Offsets from 12-TET (cents, C = 0) of a chain of 11 fifths narrowed as given."""
    offsets = [0.0] * 12
    deviation = [PURE_FIFTH_CENTS - 700.0 - n for n in narrowing]  # each fifth against 700 c
    for k in range(_C_INDEX + 1, len(_CHAIN)):
        offsets[_CHAIN[k]] = offsets[_CHAIN[k - 1]] + deviation[k - 1]
    for k in range(_C_INDEX - 1, -1, -1):
        offsets[_CHAIN[k]] = offsets[_CHAIN[k + 1]] - deviation[k]
    return offsets


def _c_based_offsets(name: str) -> list[float]:
    if name == "equal":
        return [0.0] * 12
    if name == "just":
        return [1200.0 * math.log2(p / q) - 100.0 * pc for pc, (p, q) in enumerate(_JUST_RATIOS)]
    return _chain_offsets(_FIFTH_NARROWING[name])


def temperament_cents(
    name: str, tonic_pc: int = 0, custom: Sequence[float] | None = None
) -> tuple[float, ...]:
    """Offsets in cents from 12-TET per pitch class (0 = C .. 11 = B), tonic offset 0.

    Chain-of-fifths temperaments: fifths of 3/2 (701.955 c) narrowed by a fraction of a comma,
    Pythagorean comma 1200 log2(3^12/2^19), syntonic comma 1200 log2(81/80), along the chain
    Eb..G# (wolf G#-Eb): Pythagorean (all pure), quarter-comma meantone (all narrowed by 1/4
    syntonic comma), Werckmeister III (C-G, G-D, D-A, B-F# narrowed by 1/4 Pythagorean comma),
    Vallotti (F-C-G-D-A-E-B narrowed by 1/6 Pythagorean comma). ``just``: 5-limit ratios 1/1,
    16/15, 9/8, 6/5, 5/4, 4/3, 45/32, 3/2, 8/5, 5/3, 9/5, 15/8. The temperament is built on C,
    then rotated so that its C sits on ``tonic_pc``. ``custom``: the 12 given offsets (per
    pitch class C..B, relative to 12-TET) as they are, with no rotation.
    """
    if name == "custom":
        if custom is None or len(custom) != 12:
            raise ValueError("a custom temperament needs 12 offsets in cents, for C..B")
        values = tuple(float(v) for v in custom)
        if not all(math.isfinite(v) for v in values):
            raise ValueError("custom temperament offsets must be finite numbers")
        return values
    if custom is not None:
        raise ValueError(f"custom offsets given, but the temperament is {name!r}, not 'custom'")
    if name not in TEMPERAMENTS:
        names = ", ".join((*TEMPERAMENTS, "custom"))
        raise ValueError(f"unknown temperament {name!r}; choose one of: {names}")
    if isinstance(tonic_pc, bool) or not isinstance(tonic_pc, (int, np.integer)):
        raise ValueError(f"tonic pitch class {tonic_pc!r} is not a whole number 0..11")
    if not 0 <= tonic_pc <= 11:
        raise ValueError(f"tonic pitch class {tonic_pc} is outside 0..11")
    base = _c_based_offsets(name)
    return tuple(base[(pc - int(tonic_pc)) % 12] + 0.0 for pc in range(12))  # no -0.0


def note_frequencies(
    midis: Sequence[int] | NDArray[np.integer],
    a4_hz: float = 440.0,
    temperament: str = "equal",
    tonic_pc: int = 0,
    custom: Sequence[float] | None = None,
    offset_cents: float = 0.0,
    offsets: Mapping[int, float] | None = None,
) -> NDArray[np.float64]:
    """Target frequencies in Hz of MIDI notes.

    f = a4 2^((m - 69)/12) 2^((T(pc) - T(A) + offset_cents + offsets[m]) / 1200): 12-TET from
    A4, plus the temperament offset T from ``temperament_cents`` re-referenced so that A keeps
    exactly ``a4_hz``, plus a global offset and optional per-note offsets (cents, keyed by MIDI
    number; missing notes get 0). ISO 16:1975 gives A4 = 440 Hz.
    """
    if not (math.isfinite(a4_hz) and a4_hz > 0.0):
        raise ValueError(f"reference pitch {a4_hz} Hz is not a positive number")
    given = np.asarray(midis)
    if given.dtype.kind not in "iu" and not np.array_equal(given, np.round(given)):
        raise ValueError("MIDI note numbers must be whole numbers")
    m = given.astype(np.int64)
    table = np.asarray(temperament_cents(temperament, tonic_pc, custom), dtype=np.float64)
    shift = table[m % 12] - table[_PC_A] + float(offset_cents)
    if offsets:
        shift = shift + np.array([float(offsets.get(int(k), 0.0)) for k in m.ravel()]).reshape(
            m.shape
        )
    return np.asarray(a4_hz * 2.0 ** ((m - 69) / 12.0 + shift / 1200.0), dtype=np.float64)


def note_frequency(
    midi: int,
    a4_hz: float = 440.0,
    temperament: str = "equal",
    tonic_pc: int = 0,
    custom: Sequence[float] | None = None,
    offset_cents: float = 0.0,
) -> float:
    """Target frequency in Hz of one MIDI note; the formula is that of ``note_frequencies``."""
    return float(note_frequencies([midi], a4_hz, temperament, tonic_pc, custom, offset_cents)[0])


@overload
def cents(f_hz: float, ref_hz: float) -> float: ...
@overload
def cents(
    f_hz: NDArray[np.floating], ref_hz: float | NDArray[np.floating]
) -> NDArray[np.float64]: ...
@overload
def cents(f_hz: float, ref_hz: NDArray[np.floating]) -> NDArray[np.float64]: ...


def cents(
    f_hz: float | NDArray[np.floating], ref_hz: float | NDArray[np.floating]
) -> float | NDArray[np.float64]:
    """Interval from ``ref_hz`` up to ``f_hz`` in cents: 1200 log2(f / ref).

    Works on floats (returns a float) and numpy arrays (broadcast, returns an array).
    """
    f = np.asarray(f_hz, dtype=np.float64)
    ref = np.asarray(ref_hz, dtype=np.float64)
    if not (np.all(f > 0.0) and np.all(ref > 0.0)):
        raise ValueError("cents need positive frequencies")
    out = 1200.0 * np.log2(f / ref)
    if out.ndim == 0:
        return float(out)
    return np.asarray(out, dtype=np.float64)


def nearest_note(f_hz: float, a4_hz: float = 440.0) -> tuple[int, float]:
    """The 12-TET note nearest ``f_hz`` and the deviation from it: (MIDI, cents in [-50, 50)).

    m = 69 + 12 log2(f / a4); a deviation of exactly +50 cents rounds up to the next note.
    The MIDI number is not clipped to 0..127.
    """
    position = 69.0 + cents(float(f_hz), float(a4_hz)) / 100.0
    midi = math.floor(position + 0.5)
    deviation = 100.0 * (position - midi)
    if deviation >= 50.0:  # rounding in floating point
        midi, deviation = midi + 1, deviation - 100.0
    return midi, deviation
