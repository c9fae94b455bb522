"""The sounding pitch of a recorded pipe: the fundamental of its steady tone, with an
uncertainty in cents.

Pure functions on samples (numpy arrays scaled to full scale ±1) and a sample rate; the
file formats are read in ``compiler.recordings``. The steps:

1. *Checks*: a recording too short to hold a steady tone, silent (peak below −60 dBFS),
   or clipped (flat tops: runs of samples stuck at the recording's extreme, near full
   scale) is refused with a ``RecordingProblem`` saying what to do instead.
2. *A pitch track*: the RMS level and a first pitch of frames 20 ms apart over the whole
   recording, by YIN (A. de Cheveigné and H. Kawahara 2002, "YIN, a fundamental frequency
   estimator for speech and music", J. Acoust. Soc. Am. 111(4), 1917–1930): the
   cumulative-mean-normalised difference function, its first dip below an absolute
   threshold (or, in noise, the first dip within 0.1 of the deepest). The period of the
   whole waveform, not the strongest partial: a weak or missing fundamental (a stopped
   pipe's strong 3rd partial, a loud octave) gives the right pitch.
3. *The steady part*: of the frames that sound (within 20 dB of the loud level), the pitch
   held longest is the pipe's; frames more than a semitone from it sounded another pitch
   (the pipe overblowing for a while, louder or softer than its tone) and are counted and
   left out, whatever their level. The steady part is the longest run of frames at the held
   pitch no more than 3 dB below the level held longest at that pitch (the 3 dB band of
   level holding the most of its frames: a slow attack and the release are left out, and a
   loud accent or chiff at the start does not set the level), less 50 ms at each end.
4. *The settled tone*: a pipe often speaks sharp or flat and settles. In blocks of 0.1 s
   (at least 8 periods) the pitch must have stopped moving at the end of the steady part
   (less than 2 cents over its last third or last second, a trend beyond the blocks'
   scatter); if it still glides there, the recording is refused ("the pitch never
   settled"). The settled tone starts after the last block, before that end, still away
   from the settled pitch (by 0.5 cent, or three times the blocks' scatter).
   *The fine pitch*: in the Hann-windowed, zero-padded spectrum of the settled tone every
   harmonic h·f0 above the local noise is located by parabolic interpolation of the log
   magnitude (J. O. Smith, "Spectral Audio Signal Processing", 2011, "Quadratic
   interpolation of spectral peaks"), and f0 is the weighted least-squares fit of
   f_h = h·f0 (weights: the partial's power).
5. *Its uncertainty*: the same fit in blocks of about 0.25 s gives the scatter
   (``spread_cents``, the pipe's wander); the uncertainty is the standard error of the
   blocks' mean (one standard deviation), or the distance of that mean from the whole
   tone's pitch, or half the blocks' drift (a tone still settling) where larger, and at
   least 0.01 cent.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

Samples = NDArray[np.float64]

LOWEST_HZ = 25.0
"""Lowest fundamental looked for (a 16 ft C1 is 32.7 Hz)."""
HIGHEST_HZ = 5000.0
"""Highest fundamental looked for (C8 is 4186 Hz)."""
MIN_STEADY_S = 0.3
"""Shortest steady tone accepted: about 10 periods of the lowest pipes, and enough blocks
to tell the pitch's scatter."""
SILENT_PEAK = 10 ** (-60 / 20)
"""A recording whose loudest sample is below −60 dBFS holds no usable tone."""
CLIP_LEVEL = 0.99
CLIP_RUN = 4
CLIP_RUNS = 3
"""Clipped: at least CLIP_RUNS flat tops of CLIP_RUN or more samples exactly at the
recording's extreme, where that extreme is within 1 % of full scale. (A sine peaking at
full scale repeats its top code on at most 3 samples at 44.1 kHz down to 30 Hz in 16 bits.)"""
STEADY_DB = 3.0
SOUNDING_DB = 20.0
"""Frames within this of the recording's loud level are sounding: the pipe's tone at
whatever pitch (the attack, a stretch overblown louder or softer); below it, room noise and
the release's tail."""
TRACK_HOP_S, MAX_TRACK_FRAMES, EDGE_S = 0.02, 800, 0.05
BLOCK_S = 0.25
MAX_BLOCKS = 16
MAX_ANALYSED_S = 8.0
"""Of a longer steady tone, the middle 8 s are analysed (enough for 0.01 cent)."""
YIN_THRESHOLD = 0.15
YIN_APERIODIC = 0.5
"""A frame whose deepest normalised dip stays above this holds no clear period."""
DIP_REACH = 1.2
"""How far past a dip's first local minimum its bottom is looked for, as a multiple of the
period there (our choice: the next period's dip lies at twice it)."""
SAME_PITCH_CENTS = 50.0
ANOTHER_PITCH_CENTS = 100.0
"""Sounding frames more than a semitone from the pitch held longest sounded another pitch:
an overblown partial (an octave or more away) or another pipe. Nearer ones are the tone
settling: a pipe speaks some tens of cents sharp or flat at first (common practice)."""
SETTLED_CENTS = 2.0
SETTLED_TAIL_S = 1.0
"""A settled tone drifts less than SETTLED_CENTS over the last third of its steady part,
or over its last SETTLED_TAIL_S if longer (a short part: less than 2 cents a second)."""
SETTLE_BLOCK_S = 0.1
SETTLE_FLOOR_CENTS = 0.5
"""The settled tone starts where its pitch stays within this (or three times its own block
scatter, if larger) of the settled pitch."""
HARMONICS = 24
PEAK_OVER_NOISE = 10.0
"""A partial is used when its peak stands 20 dB above the median of the spectrum near it."""
UNCERTAINTY_FLOOR_CENTS = 0.01


class RecordingProblem(Exception):
    """A recording that holds no usable tone: ``message`` says why, ``hint`` what to do."""

    def __init__(self, message: str, hint: str) -> None:
        super().__init__(message)
        self.message = message
        self.hint = hint


@dataclass(frozen=True)
class PitchEstimate:
    frequency_hz: float
    uncertainty_cents: float
    """Standard error of the mean over the blocks (one standard deviation)."""
    spread_cents: float
    """Standard deviation of the blocks' pitches: how much the tone wandered."""
    steady_from_s: float
    steady_to_s: float
    blocks: int
    partials: int
    """Partials found above the noise in the whole steady part."""
    other_pitch_share: float
    """Share of the steady part that sounded another pitch (left out), 0..1."""
    other_pitch_ratio: float
    """That other pitch over the one reported (2.0: the octave), or 0 when none."""


def cents(ratio: float) -> float:
    """1200·log2(ratio): the cent (A. J. Ellis 1885)."""
    return 1200.0 * math.log2(ratio)


def check_samples(samples: Samples, rate: float) -> None:
    """Refuse a recording that is too short, silent or clipped."""
    duration = len(samples) / rate
    if duration < MIN_STEADY_S:
        raise RecordingProblem(
            f"too short: {duration:.2f} s of sound (at least {MIN_STEADY_S:g} s of steady "
            "tone is needed)", "record each pipe for 2 s or more after it has spoken")
    peak = float(np.max(np.abs(samples))) if len(samples) else 0.0
    if peak < SILENT_PEAK:
        level = "no sound at all" if peak == 0 else f"peak {20 * math.log10(peak):.0f} dBFS"
        raise RecordingProblem(f"silent: {level}",
                               "check the microphone and the input level, then record again")
    flat = _flat_tops(samples)
    if flat >= CLIP_RUNS:
        raise RecordingProblem(
            f"clipped: {flat} flat tops at full scale (the tone's peaks were cut off)",
            "record again with less input gain, or the microphone further from the pipe; "
            "keep the peaks below about −6 dBFS")


def _flat_tops(samples: Samples) -> int:
    count = 0
    for extreme in (float(np.max(samples)), float(np.min(samples))):
        if abs(extreme) < CLIP_LEVEL:
            continue
        stuck = np.concatenate(([0], (samples == extreme).astype(np.int8), [0]))
        edges = np.flatnonzero(np.diff(stuck))
        runs = edges[1::2] - edges[::2]
        count += int(np.sum(runs >= CLIP_RUN))
    return count


def _difference(frame: Samples, longest: int) -> Samples:
    """YIN's difference function d(τ) = Σ (x_j − x_{j+τ})², j < W, for τ = 0..longest."""
    width = len(frame) - longest
    size = 1 << (2 * len(frame) - 1).bit_length()
    spectrum = np.fft.rfft(frame, size)
    head = np.fft.rfft(frame[:width], size)
    correlation = np.fft.irfft(spectrum * np.conj(head), size)[: longest + 1]
    energy = np.cumsum(np.concatenate(([0.0], frame * frame)))
    lags = np.arange(longest + 1)
    shifted = energy[lags + width] - energy[lags]
    difference: Samples = np.maximum(energy[width] + shifted - 2.0 * correlation, 0.0)
    return difference


def yin_period(frame: Samples, shortest: int, longest: int) -> tuple[float, float]:
    """(period in samples, depth of its normalised dip); period 0 when none is found."""
    d = _difference(frame, longest)
    running = np.cumsum(d[1:])
    normalised = np.ones_like(d)
    normalised[1:] = d[1:] * np.arange(1, len(d)) / np.maximum(running, 1e-300)
    window = normalised[shortest: longest]
    if len(window) < 3:
        return 0.0, 1.0
    inner = window[1:-1]
    minima = np.flatnonzero((inner <= window[:-2]) & (inner < window[2:])) + 1
    if not len(minima):
        return 0.0, 1.0
    deepest = float(np.min(window[minima]))
    if deepest > YIN_APERIODIC:
        return 0.0, deepest
    limit = max(YIN_THRESHOLD, deepest + 0.1)
    chosen = int(minima[np.argmax(window[minima] <= limit)])
    # In noise the dip's falling flank is rippled, and its first local minimum lies short of
    # the bottom (a low pipe in 5 dB of noise read 60 cents sharp): the period is the
    # bottom of the dip, searched up to 1.2 times the first minimum, short of the next
    # period's dip at twice it.
    reach = min(len(window) - 1, int((shortest + chosen) * DIP_REACH) - shortest)
    chosen += int(np.argmin(window[chosen: reach + 1]))
    chosen = min(max(chosen, 1), len(window) - 2)
    tau = shortest + chosen
    before, at, after = normalised[tau - 1], normalised[tau], normalised[tau + 1]
    bend = before - 2.0 * at + after
    offset = 0.5 * (before - after) / bend if bend > 0 else 0.0
    return tau + offset, float(at)


@dataclass(frozen=True)
class Track:
    """YIN pitch and RMS level of overlapping frames over the whole recording."""

    starts: NDArray[np.int64]
    """First sample of each frame."""
    width: int
    hop: int
    level: Samples
    pitch: Samples
    """Hz; 0 where the frame is not sounding or has no clear period."""
    sounding: NDArray[np.bool_]
    """Within ``SOUNDING_DB`` of the loud level."""


def pitch_track(samples: Samples, rate: float) -> Track:
    """The level and YIN pitch of frames ``TRACK_HOP_S`` apart (at most
    ``MAX_TRACK_FRAMES``), each two periods of the lowest pitch looked for wide."""
    longest = min(int(rate / LOWEST_HZ) + 1, len(samples) // 2 - 1)
    shortest = max(int(rate / HIGHEST_HZ), 2)
    width = 2 * longest
    if longest <= shortest + 2 or width > len(samples):
        raise RecordingProblem("too short: the tone is shorter than two periods of the lowest "
                               "pitch looked for",
                               "record each pipe for 2 s or more after it has spoken")
    hop = max(int(TRACK_HOP_S * rate), (len(samples) - width) // MAX_TRACK_FRAMES, 1)
    starts = np.arange(0, len(samples) - width + 1, hop, dtype=np.int64)
    power = np.cumsum(np.concatenate(([0.0], samples * samples)))
    level = np.sqrt(np.maximum(power[starts + width] - power[starts], 0.0) / width)
    sounding = level >= float(np.percentile(level, 95)) * 10 ** (-SOUNDING_DB / 20)
    pitch = np.zeros(len(starts))
    for k in np.flatnonzero(sounding):
        tau, _ = yin_period(samples[starts[k]: starts[k] + width], shortest, longest)
        pitch[k] = rate / tau if tau > 0 else 0.0
    return Track(starts, width, hop, level, pitch, sounding)


def _off(pitch: Samples, held: float) -> Samples:
    """Cents of each frame's pitch from ``held`` (inf where a frame has none)."""
    out: Samples = np.full(len(pitch), np.inf)
    clear = pitch > 0
    out[clear] = np.abs(1200 * np.log2(pitch[clear] / held))
    return out


def _held_pitch(pitches: Samples) -> tuple[float, float, float]:
    """The pitch held longest among the sounding frames, the share of them that sounded
    another pitch (more than ``ANOTHER_PITCH_CENTS`` away), and that pitch's ratio to it
    (the most frames of them; 0 when none)."""
    clear = pitches[pitches > 0]
    if len(clear) < max(3, len(pitches) // 2):
        raise RecordingProblem("no steady pitch: the recording sounds like noise, or like "
                               "several pipes at once",
                               "record one pipe at a time, close to its mouth, in a quiet room")
    groups: list[list[float]] = []
    for f in sorted(clear):
        if groups and abs(cents(f / float(np.median(groups[-1])))) <= SAME_PITCH_CENTS:
            groups[-1].append(f)
        else:
            groups.append([f])
    groups.sort(key=lambda g: (-len(g), float(np.median(g))))
    held = float(np.median(groups[0]))
    away = [g for g in groups[1:] if abs(cents(float(np.median(g)) / held))
            > ANOTHER_PITCH_CENTS]
    share = sum(len(g) for g in away) / len(pitches)
    ratio = float(np.median(away[0])) / held if away else 0.0
    return held, share, ratio


def held_level(levels: Samples) -> float:
    """The floor of the level held longest: of the ``STEADY_DB`` wide bands of level, the
    one holding the most frames (the louder of equals), as the pitch held longest is the
    pipe's. A loud accent or chiff at the start, however long, does not set it, nor does a
    slow attack or the release."""
    db = np.sort(20 * np.log10(np.maximum(levels, 1e-300)))
    held = np.searchsorted(db, db + STEADY_DB, side="right") - np.arange(len(db))
    floor = float(db[len(db) - 1 - int(np.argmax(held[::-1]))])
    return 10 ** (floor / 20)


def steady_part(track: Track, held: float, length: int, rate: float) -> tuple[int, int]:
    """First and last+1 sample of the steady tone (see the module's step 3): the longest
    run of frames at the held pitch (or with none clear: a frame lost in noise does not cut
    the tone) at or above the floor of its level held longest (:func:`held_level`), less
    ``EDGE_S`` each end."""
    off = _off(track.pitch, held)
    near = track.sounding & ((track.pitch == 0) | (off <= SAME_PITCH_CENTS))
    # a lone frame at another pitch between two at the held one: YIN's octave slip in noise
    lone = np.zeros(len(near), dtype=bool)
    lone[1:-1] = near[:-2] & near[2:]
    near |= lone & track.sounding
    steady = near & (track.level >= held_level(track.level[off <= SAME_PITCH_CENTS]))
    padded = np.concatenate(([False], steady, [False])).astype(np.int8)
    edges = np.flatnonzero(np.diff(padded))
    runs = list(zip(edges[::2], edges[1::2], strict=True))
    first, last = max(runs, key=lambda r: (r[1] - r[0], -r[0]))
    centre = track.width // 2
    edge = int(EDGE_S * rate)
    begin = max(int(track.starts[first]) + centre - track.hop // 2, 0) + edge
    end = min(int(track.starts[last - 1]) + centre + track.hop // 2, length) - edge
    return begin, max(begin, end)


def settled_from(part: Samples, rate: float, held: float) -> int:
    """The first sample of ``part`` from which its pitch has settled (the module's step 4);
    ``RecordingProblem`` when it never does: the tone still glides at its end."""
    # blocks of SETTLE_BLOCK_S, fewer but at least 4 in a short part, each at least 8
    # periods long (the partials resolved)
    size = max(min(int(SETTLE_BLOCK_S * rate), len(part) // 4), int(8 * rate / held))
    count = len(part) // size
    if count < 3:
        return 0  # too short to tell; its blocks' drift is in its uncertainty
    times, offsets = [], []
    for i in range(count):
        f, used = fine_pitch(part[i * size: (i + 1) * size], rate, held)
        if used and abs(cents(f / held)) <= SAME_PITCH_CENTS:
            times.append((i + 0.5) * size / rate)
            offsets.append(cents(f / held))
    if len(times) < 3:
        return 0
    t, c = np.array(times), np.array(offsets)
    tail_s = max(SETTLED_TAIL_S, len(part) / rate / 3)
    tail = t >= len(part) / rate - tail_s
    tt, cc = t[tail], c[tail]
    if len(tt) < 3:
        return 0
    slope, intercept = np.polyfit(tt, cc, 1)
    residual = cc - (slope * tt + intercept)
    spread = float(np.sqrt(np.sum(residual**2) / max(len(tt) - 2, 1)))
    slope_error = spread / math.sqrt(float(np.sum((tt - tt.mean()) ** 2)))
    # the drift over the tail, or over SETTLED_TAIL_S at the rate it still moves at the end
    drift = abs(float(slope)) * max(float(tt[-1] - tt[0]), SETTLED_TAIL_S)
    if drift > SETTLED_CENTS and abs(float(slope)) > 3 * slope_error:
        moved = float(c[-1] - c[0])
        raise RecordingProblem(
            f"the pitch never settled: it moved {moved:+.0f} cents over the "
            f"{(t[-1] - t[0]):.1f} s of steady tone and still moves {abs(float(slope)):.1f} "
            f"cents a second at its end (a settled pipe moves less than {SETTLED_CENTS:g} "
            f"cents in a second)",
            "record a longer steady note: hold it 2 s or more after the pipe has settled, "
            "with the wind steady")
    level = float(np.mean(cc))
    tolerance = max(SETTLE_FLOOR_CENTS, 3 * spread)
    # Before the tail, the last block still away from the settled pitch ends the settling.
    away = np.flatnonzero(~tail & (np.abs(c - level) > tolerance))
    if not len(away):
        return 0
    return int(round((t[away[-1]] + 0.5 * size / rate) * rate))


def _spectrum(part: Samples, rate: float) -> tuple[Samples, float]:
    """Log magnitude of the Hann-windowed part, zero-padded 8 times; and Hz per bin."""
    size = 1 << (8 * len(part) - 1).bit_length()
    window = np.hanning(len(part))
    magnitude = np.abs(np.fft.rfft((part - np.mean(part)) * window, size))
    return np.log(np.maximum(magnitude, 1e-300)), rate / size


def fine_pitch(part: Samples, rate: float, near_hz: float) -> tuple[float, int]:
    """Weighted least-squares f0 from the harmonics of ``part`` near multiples of
    ``near_hz``; and the number of harmonics used (0: none stood above the noise)."""
    log_mag, step = _spectrum(part, rate)
    top = min(0.45 * rate, 12000.0)
    numerator = denominator = 0.0
    used = 0
    for h in range(1, HARMONICS + 1):
        centre = h * near_hz
        if centre > top:
            break
        half = max(min(0.03 * centre, 0.4 * near_hz), 3 * step)
        lo, hi = int((centre - half) / step), int((centre + half) / step) + 1
        band = log_mag[max(lo, 1): hi]
        if len(band) < 3:
            continue
        k = int(np.argmax(band)) + max(lo, 1)
        if k <= 0 or k >= len(log_mag) - 1:
            continue
        wide = log_mag[max(int((centre - near_hz / 2) / step), 1): int((centre + near_hz / 2)
                                                                      / step) + 1]
        if log_mag[k] - float(np.median(wide)) < math.log(PEAK_OVER_NOISE):
            continue
        a, b, c = log_mag[k - 1], log_mag[k], log_mag[k + 1]
        bend = a - 2.0 * b + c
        offset = 0.5 * (a - c) / bend if bend < 0 else 0.0
        frequency = (k + offset) * step
        weight = math.exp(2.0 * (b - 0.25 * (a - c) * offset))
        numerator += weight * h * frequency
        denominator += weight * h * h
        used += 1
    return (numerator / denominator if denominator else 0.0), used


def estimate(samples: Samples, rate: float) -> PitchEstimate:
    """The fundamental of the steady tone in ``samples`` (mono, full scale ±1) at ``rate``
    samples per second; ``RecordingProblem`` when there is none to be had."""
    samples = np.asarray(samples, dtype=np.float64)
    check_samples(samples, rate)
    samples = samples - float(np.mean(samples))
    track = pitch_track(samples, rate)
    held, share, ratio = _held_pitch(track.pitch[track.sounding])
    begin, end = steady_part(track, held, len(samples), rate)
    if (end - begin) / rate < MIN_STEADY_S:
        raise RecordingProblem(
            f"too short: the steady tone lasts {(end - begin) / rate:.2f} s (at least "
            f"{MIN_STEADY_S:g} s is needed)",
            "hold the note longer, and record 2 s or more after the pipe has spoken")
    # A pipe often speaks sharp or flat and settles: the tone counts from where it has.
    begin += settled_from(samples[begin:end], rate, held)
    if (end - begin) / rate < MIN_STEADY_S:
        raise RecordingProblem(
            f"the pitch never settled: it held steady for only {(end - begin) / rate:.2f} s "
            f"(at least {MIN_STEADY_S:g} s is needed)",
            "record a longer steady note: hold it 2 s or more after the pipe has settled, "
            "with the wind steady")
    longest = int(MAX_ANALYSED_S * rate)
    if end - begin > longest:
        begin += (end - begin - longest) // 2
        end = begin + longest
    part = samples[begin:end]
    count = int(min(MAX_BLOCKS, max(3, len(part) / (BLOCK_S * rate))))
    size = len(part) // count
    blocks = []
    for i in range(count):
        f, used = fine_pitch(part[i * size: (i + 1) * size], rate, held)
        if used and abs(cents(f / held)) <= SAME_PITCH_CENTS:
            blocks.append(f)
    whole, partials = fine_pitch(part, rate, held)
    if not blocks or not partials:
        raise RecordingProblem("no steady pitch: no partial stands clear of the noise",
                               "record closer to the pipe, in a quieter room")
    offsets = np.array([cents(f / whole) for f in blocks])
    spread = float(np.std(offsets, ddof=1)) if len(offsets) > 1 else 0.0
    error = max(spread / math.sqrt(len(offsets)), abs(float(np.mean(offsets))))
    if len(offsets) >= 3:  # a tone still settling: its pitch is known to half its drift
        slope = float(np.polyfit(np.arange(len(offsets)), offsets, 1)[0])
        error = max(error, abs(slope) * (len(offsets) - 1) / 2)
    return PitchEstimate(
        frequency_hz=float(whole),
        uncertainty_cents=max(error, UNCERTAINTY_FLOOR_CENTS),
        spread_cents=spread,
        steady_from_s=begin / rate,
        steady_to_s=end / rate,
        blocks=len(offsets),
        partials=partials,
        other_pitch_share=share,
        other_pitch_ratio=ratio,
    )
