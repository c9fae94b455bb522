"""Playing frequencies of a flue-excited pipe: the minima of the impedance its jet sees.

A flue instrument sounds near the peaks of the admittance Y = 1/Z_total seen by the jet
(``compiler.acoustics.impedance``). We define the n-th register's frequency as the n-th upward
zero crossing of the reactance Im Z_total above ``f_min``: there the impedance is a series-type
minimum (in the lossless limit exactly the peak of |Y|); at impedance maxima the reactance
crosses zero downward, so they are never taken. The jet's own phase delay is not modelled: the
frequencies are those of the air column as the jet drives it.

A closed, pressure-driven end (head kind ``"closed"``: a reed or a mouthpiece) sounds near the
maxima of |Z| instead; there the susceptance Im(1/Z) crosses zero upward, so for such an end
every function here looks at 1/Z (``played``) and the definition above applies unchanged.

Method: scan a logarithmic grid (vectorised over fingerings), bracket each crossing, then refine
all brackets at once by safeguarded Newton iterations on Im Z(f) (finite-difference slope,
bisection when a step leaves its bracket) to a relative 1e-10 (far below 0.01 cent).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, replace

import numpy as np
from numpy.typing import ArrayLike, NDArray

from compiler.acoustics.air import Air
from compiler.acoustics.holes import effective_length, lattice_cutoff
from compiler.acoustics.impedance import (
    Instrument,
    head_impedance,
    impedance_batch,
    input_impedance,
)
from compiler.acoustics.tuning import cents

Float = NDArray[np.float64]
Evaluate = Callable[[Float], NDArray[np.complex128]]
"""Z_total for frequencies of shape (n_inst, n_fingerings, n) → same shape."""

GRID_STEP_CENTS = 20.0
"""Scan grid spacing. A minimum and a maximum closer than this could hide each other; in a
flute they are hundreds of cents apart."""

_EPS = 1e-6  # relative frequency step for the reactance slope


@dataclass(frozen=True)
class Resonances:
    """First- and second-register frequencies per fingering, and the octave mismatch.

    frequencies_hz: shape (n_fingerings, 2), NaN where no crossing lies in the scanned range.
    octave_cents: 1200·log2(f2 / (2 f1)), shape (n_fingerings,).
    """

    frequencies_hz: Float
    octave_cents: Float


def played(instrument: Instrument, z_total: NDArray[np.complex128]) -> NDArray[np.complex128]:
    """The quantity whose upward reactance crossings are played: Z_total for a flow-driven
    mouth (flue instruments sound near its minima), 1/Z_total for a closed, pressure-driven
    end (a reed sounds near the maxima of Z; see the module docstring)."""
    if instrument.head.kind == "closed":
        return np.asarray(1.0 / z_total, dtype=np.complex128)
    return z_total


def default_range(instrument: Instrument, air: Air) -> tuple[float, float]:
    """A scan range (Hz) that holds the first two registers of every fingering.

    From an eighth of the quarter-wave frequency of the whole tube (below any register 1) to
    twelve times the half-wave frequency of the bore below the mouth (above the second register
    of a fingering whose first open hole sits a third of the way down).
    """
    below_mouth = instrument.length_m - instrument.head.mouth_position_m
    f_lo = air.speed_m_s / (4.0 * instrument.length_m) / 8.0
    f_hi = 12.0 * air.speed_m_s / (2.0 * below_mouth)
    return f_lo, f_hi


def log_grid(f_lo: float, f_hi: float, step_cents: float = GRID_STEP_CENTS) -> Float:
    """Logarithmic frequency grid from f_lo to f_hi (Hz) with the given spacing in cents."""
    n = int(np.ceil(1200.0 * np.log2(f_hi / f_lo) / step_cents)) + 1
    return np.geomspace(f_lo, f_hi, max(n, 2))


def bracket(
    evaluate: Evaluate, grid: Float, shape: tuple[int, int], registers: int = 2
) -> tuple[Float, Float]:
    """Brackets (lo, hi), shape (n_inst, n_fingerings, registers), of the first ``registers``
    upward zero crossings of Im Z on ``grid``; NaN where fewer crossings exist."""
    g = evaluate(np.broadcast_to(grid, (*shape, grid.size))).imag
    up = (g[..., :-1] < 0.0) & (g[..., 1:] >= 0.0)
    count = np.cumsum(up, axis=-1)
    lo = np.full((*shape, registers), np.nan)
    hi = np.full((*shape, registers), np.nan)
    for r in range(registers):
        idx = np.argmax(count >= r + 1, axis=-1)
        found = count[..., -1] >= r + 1
        lo[..., r] = np.where(found, grid[idx], np.nan)
        hi[..., r] = np.where(found, grid[idx + 1], np.nan)
    return lo, hi


def refine(
    evaluate: Evaluate,
    lo: Float,
    hi: Float,
    start: Float | None = None,
    check: bool = False,
    tol: float = 1e-9,
    max_iter: int = 60,
) -> tuple[Float, Float]:
    """Zero crossings of Im Z inside brackets [lo, hi] (Im Z(lo) < 0 ≤ Im Z(hi)), vectorised.

    start: first guesses inside the brackets (default: their geometric middle). check: verify
    the bracket signs (in the first evaluation) and give NaN where they do not hold.
    Returns (frequencies, slope d(Im Z)/df at the root); NaN brackets give NaN.
    Newton steps on Im Z with a forward-difference slope; a step leaving the bracket (or with a
    non-positive slope) is replaced by bisection, and each evaluation shrinks the bracket.
    Stops at a relative step of ``tol`` (1e-9 is 0.002 cent).
    """
    lo = np.array(lo, dtype=np.float64)
    hi = np.array(hi, dtype=np.float64)
    bad = ~(np.isfinite(lo) & np.isfinite(hi))
    lo[bad], hi[bad] = 1.0, 1.0 + 1e-3
    f = (
        np.sqrt(lo * hi)
        if start is None
        else np.where(bad, lo, np.asarray(start, dtype=np.float64))
    )
    slope = np.ones_like(f)
    n = f.shape[-1]
    for i in range(max_iter):
        probe = [f, f * (1.0 + _EPS)] + ([lo, hi] if check and i == 0 else [])
        g_all = evaluate(np.concatenate(probe, axis=-1)).imag
        g, g2 = g_all[..., :n], g_all[..., n : 2 * n]
        if check and i == 0:
            bad |= ~((g_all[..., 2 * n : 3 * n] < 0.0) & (g_all[..., 3 * n :] >= 0.0))
        slope = (g2 - g) / (f * _EPS)
        below = g < 0.0
        lo = np.where(below, np.maximum(lo, f), lo)
        hi = np.where(below, hi, np.minimum(hi, f))
        with np.errstate(divide="ignore", invalid="ignore"):
            step = np.where(slope > 0.0, -g / slope, np.nan)
        converged = np.isfinite(step) & (np.abs(step) <= tol * f)
        new = f + step
        ok = np.isfinite(new) & (new >= lo) & (new <= hi)
        new = np.where(ok, new, 0.5 * (lo + hi))
        done = converged | (hi - lo <= tol * f)
        f = new
        if np.all(done | bad):
            break
    f[bad] = np.nan
    return f, slope


def track(
    evaluate: Evaluate, guess: Float, width: float = 0.03
) -> tuple[Float, Float, NDArray[np.bool_]]:
    """Follow known crossings after a small change of geometry: bracket each at guess·(1 ± width).

    Returns (frequencies, slopes, ok); ok is False where the bracket did not straddle a single
    upward crossing (the caller should scan again).
    """
    f, slope = refine(
        evaluate, guess * (1.0 - width), guess * (1.0 + width), start=guess, check=True
    )
    return f, slope, np.isfinite(f)


def register_frequencies(
    evaluate: Evaluate,
    shape: tuple[int, int],
    registers: ArrayLike,
    f_lo: float,
    f_hi: float,
    guess: Float | None = None,
) -> tuple[Float, Float]:
    """Each fingering's chosen register: frequencies (shape (n_inst, n_fingerings)) and
    reactance slopes d(Im Z)/df. ``registers``: 1, 2, ... per fingering (the n-th upward
    crossing). Tracked from ``guess`` (broadcastable to ``shape``) when given, else, or when
    any fails to track, picked from a scan from f_lo to f_hi (Hz); NaN where none is found."""
    regs = np.broadcast_to(np.asarray(registers, dtype=int), (shape[1],))
    if guess is not None:
        f, slope, ok = track(evaluate, np.broadcast_to(guess, shape)[..., None].copy())
        if np.all(ok):
            return f[..., 0], slope[..., 0]
    lo, hi = bracket(evaluate, log_grid(f_lo, f_hi), shape, registers=int(regs.max()))
    rows = np.arange(shape[1])
    f, slope = refine(evaluate, lo[:, rows, regs - 1][..., None], hi[:, rows, regs - 1][..., None])
    return f[..., 0], slope[..., 0]


def first_register(
    evaluate: Evaluate,
    shape: tuple[int, int],
    f_lo: float,
    f_hi: float,
    guess: Float | None = None,
) -> tuple[Float, Float]:
    """Register-1 frequencies (shape (n_inst, n_fingerings)) and reactance slopes d(Im Z)/df:
    tracked from ``guess`` (broadcastable to ``shape``) when given, else, or when any fails to
    track, the lowest crossing of a scan from f_lo to f_hi (Hz)."""
    return register_frequencies(evaluate, shape, np.ones(shape[1], dtype=int), f_lo, f_hi, guess)


def resonances(
    instrument: Instrument,
    air: Air,
    fingerings: ArrayLike | None = None,
    f_min_hz: float | None = None,
    f_max_hz: float | None = None,
) -> Resonances:
    """Playing frequencies (Hz) of registers 1 and 2 for every fingering, and octave mismatch.

    fingerings: (n_fingerings, n_holes) booleans, True = closed (None: all closed). The scan
    range defaults to ``default_range``. See the module docstring for the definition.
    """
    closed_rows = _fingerings(instrument, fingerings)
    # Repeated fingerings (one row per register in a table) are computed once.
    closed, back = np.unique(closed_rows, axis=0, return_inverse=True)

    def evaluate(freqs: Float) -> NDArray[np.complex128]:
        return played(instrument, impedance_batch(instrument, air, freqs, closed))

    lo_default, hi_default = default_range(instrument, air)
    grid = log_grid(f_min_hz or lo_default, f_max_hz or hi_default)
    lo, hi = bracket(evaluate, grid, (1, closed.shape[0]))
    f, _ = refine(evaluate, lo, hi)
    f = f[0][np.ravel(back)]
    found = np.isfinite(f).all(axis=1)
    octave = np.where(
        found, cents(np.where(found, f[:, 1], 2.0), 2.0 * np.where(found, f[:, 0], 1.0)), np.nan
    )
    return Resonances(frequencies_hz=f, octave_cents=octave)


def spectrum(
    instrument: Instrument,
    air: Air,
    fingerings: ArrayLike | None = None,
    f_min_hz: float = 50.0,
    f_max_hz: float = 4000.0,
    n: int = 2000,
) -> tuple[Float, Float]:
    """(freqs, |Y|) for plots: n linearly spaced frequencies (Hz) and the admittance magnitude
    seen by the jet, shape (n_fingerings, n), m³/(Pa·s). For a closed (reed) end, whose playing
    frequencies are impedance peaks, |Z| instead (Pa·s/m³): the curve peaks where it plays."""
    freqs = np.linspace(f_min_hz, f_max_hz, n)
    closed = _fingerings(instrument, fingerings)
    return freqs, np.abs(1.0 / played(instrument, input_impedance(instrument, air, freqs, closed)))


def _fingerings(instrument: Instrument, fingerings: ArrayLike | None) -> NDArray[np.bool_]:
    n_holes = len(instrument.holes)
    if fingerings is None:
        return np.ones((1, n_holes), dtype=bool)
    closed = np.asarray(fingerings, dtype=bool)
    return closed[None, :] if closed.ndim == 1 else closed


def predictions(
    instrument: Instrument,
    air: Air,
    fingerings: ArrayLike,
    targets_hz: ArrayLike,
    registers: ArrayLike,
) -> tuple[Float, Float, Float]:
    """For a fingering table with a target and a register (1 or 2) per row: the predicted
    frequencies of registers 1 and 2 per row (Hz, shape (n, 2)), the residual in cents of the
    row's register against its target, and the octave mismatch in cents (see ``resonances``).

    The scan runs from half the lowest register-1 target to 2.2 times the highest target."""
    targets = np.asarray(targets_hz, dtype=np.float64)
    regs = np.asarray(registers, dtype=int)
    f_lo = float(targets[regs == 1].min()) / 2.0 if np.any(regs == 1) else targets.min() / 4.0
    res = resonances(instrument, air, fingerings, f_lo, float(targets.max()) * 2.2)
    chosen = res.frequencies_hz[np.arange(targets.size), regs - 1]
    found = np.isfinite(chosen)
    resid = np.where(found, cents(np.where(found, chosen, 1.0), targets), np.nan)
    return res.frequencies_hz, np.asarray(resid, dtype=np.float64), res.octave_cents


HOLE_MODEL_LIMITS = ("unflanged", "flanged")
"""The physical limits of an open tone hole's radiation length (``holes.radiation_length``):
0.6133b, a hole with no flange (Levine & Schwinger 1948), and 0.8216b, a hole in an infinite
flat flange (Norris & Sheng 1989; both quoted by Dalmont, Nederveen & Joly 2001). A hole in a
tube's surface has a flange that is flat along the tube and curves away round it, so its
length lies between the two."""

BAND_TRACK_WIDTHS = (0.03, 0.1)
"""Relative half-widths of the brackets in which ``hole_model_band`` follows a resonance: the
narrow one first (a band is tens of cents), the wider one for the rows it missed."""


def hole_model_band(
    instrument: Instrument, air: Air, fingerings: ArrayLike, frequencies_hz: ArrayLike
) -> tuple[tuple[float, float] | None, ...]:
    """How far each row's predicted pitch could move with its open holes' radiation length
    anywhere between ``HOLE_MODEL_LIMITS``: (low, high) in cents from the prediction.

    The geometry is held as it is; only the open tone holes' radiation length is set to each
    limit in turn (the mouth opening keeps the instrument's model), and the resonance at
    ``frequencies_hz`` (one per row, the row's register; NaN: skip it) is followed to its new
    frequency (``track``). A longer radiation length lowers the pitch, so ``"flanged"`` gives
    the low end. The band also holds 0, the instrument's own model: the on-cylinder fit
    (``holes.radiation_length``, from memory) falls below the unflanged limit for holes wide
    against the tube (b/(a+t) above about 0.36), and nothing verified rules it out, so the
    prediction itself stays inside the band. None where no hole is open (the model of the holes
    cannot matter), where the row has no frequency, or where the resonance cannot be followed.
    """
    closed = _fingerings(instrument, fingerings)
    f = np.asarray(frequencies_hz, dtype=np.float64)
    rows = np.flatnonzero(np.isfinite(f) & ~closed.all(axis=1))
    out: list[tuple[float, float] | None] = [None] * f.size
    if rows.size == 0:
        return tuple(out)
    guess = f[rows]
    shifts = []
    for model in HOLE_MODEL_LIMITS:
        variant = replace(instrument, hole_radiation=model,
                          mouth_radiation=instrument.mouth_radiation or instrument.hole_radiation)

        def evaluate(freqs: Float, variant: Instrument = variant) -> NDArray[np.complex128]:
            return played(variant, impedance_batch(variant, air, freqs, closed[rows]))

        moved = np.full(rows.size, np.nan)
        for width in BAND_TRACK_WIDTHS:
            todo = ~np.isfinite(moved)
            if not todo.any():
                break
            found, _, _ = track(evaluate, guess[None, :, None].copy(), width)
            moved = np.where(todo, found[0, :, 0], moved)
        followed = np.isfinite(moved)
        shift = np.full(rows.size, np.nan)
        shift[followed] = cents(moved[followed], guess[followed])
        shifts.append(shift)
    for j, i in enumerate(rows):
        pair = (float(shifts[0][j]), float(shifts[1][j]))
        if np.isfinite(pair).all():
            out[i] = (min(*pair, 0.0), max(*pair, 0.0))
    return tuple(out)


WEAK_RATIO = 0.1
"""A second-register admittance peak under this fraction of the same fingering's first is
reported as weak: the jet finds it hard to hold. Our threshold, not a published one: the
ratio depends on the losses (radiation alone, a lossless bore gives about a quarter; wall
losses raise it), so only a clearly smaller peak counts; a measured prototype is the better
judge."""

SPLIT_CENTS = 150.0
"""Two upward reactance crossings this close to a second-register resonance make it split:
the jet may settle on either (a head resonance or a cross-fingering near the register).
Our threshold, not a published one."""


def second_register_quality(
    instrument: Instrument, air: Air, fingerings: ArrayLike, frequencies_hz: ArrayLike
) -> tuple[str, ...]:
    """``"clear"``, ``"weak"``, ``"split"`` or ``"none"`` for each fingering's second register.

    frequencies_hz: shape (n_fingerings, 2), registers 1 and 2 (NaN: not found, ``"none"``).
    Split: another upward crossing of Im Z within ``SPLIT_CENTS`` of the second register.
    Weak: above the cutoff of the fingering's open tone-hole lattice (``lattice_cutoffs``:
    there the open holes no longer end the air column, Benade 1960), or an admittance peak
    |Y| under ``WEAK_RATIO`` of the first register's.
    """
    closed = _fingerings(instrument, fingerings)
    f = np.asarray(frequencies_hz, dtype=np.float64)
    found = np.isfinite(f[:, 0]) & np.isfinite(f[:, 1])
    safe = np.where(np.isfinite(f), f, 1000.0)
    y = np.abs(1.0 / played(instrument, input_impedance(instrument, air, safe, closed)))
    span = 2.0 ** (SPLIT_CENTS / 1200.0)
    offsets = np.geomspace(1.0 / span, span, 61)
    grid = safe[:, 1:2] * offsets[None, :]
    g = played(instrument, impedance_batch(instrument, air, grid, closed)[0]).imag
    crossings = ((g[:, :-1] < 0.0) & (g[:, 1:] >= 0.0)).sum(axis=1)
    cutoffs = lattice_cutoffs(instrument, air, closed)
    out = []
    for i in range(closed.shape[0]):
        cutoff = cutoffs[i]
        if not found[i]:
            out.append("none")
        elif crossings[i] >= 2:
            out.append("split")
        elif (cutoff is not None and f[i, 1] > cutoff) or y[i, 1] < WEAK_RATIO * y[i, 0]:
            out.append("weak")
        else:
            out.append("clear")
    return tuple(out)


def head_resonance(instrument: Instrument, air: Air, f_max_hz: float = 20000.0) -> float | None:
    """The head's own resonance (Hz): the lowest upward reactance zero of the mouth opening in
    series with the closed cavity above it, the bore blocked (``impedance.head_impedance``); None
    without a cavity or below ``f_max_hz``. The cavity's compliance against the mouth's
    inertance, a Helmholtz resonator (Rayleigh, The Theory of Sound, 1896, §303, from memory):
    register notes near it lose their octaves, those above it their strength."""
    if instrument.head.kind in ("open", "closed") or instrument.head.cavity_length_m <= 0.0:
        return None

    def evaluate(freqs: Float) -> NDArray[np.complex128]:
        shaped = np.asarray(freqs)
        return head_impedance(instrument, air, shaped.reshape(-1)).reshape(shaped.shape)

    lo, hi = bracket(evaluate, log_grid(100.0, f_max_hz), (1, 1), registers=1)
    f, _ = refine(evaluate, lo, hi)
    value = float(f[0, 0, 0])
    return value if np.isfinite(value) else None


def lattice_cutoffs(instrument: Instrument, air: Air, fingerings: ArrayLike) -> tuple[
        float | None, ...]:
    """Benade's tone-hole lattice cutoff (Hz) of each fingering's open holes (``holes.
    lattice_cutoff``), with the mean centre spacing, radius and effective length of the open
    holes from the topmost open one down and the bore at them; None with fewer than two open
    holes there. Above it the open holes no longer end the air column: second-register notes
    above it are weak (Benade 1960, JASA 32, 1591–1608, from memory)."""
    closed = _fingerings(instrument, fingerings)
    holes = instrument.holes
    x = np.array([h.position_m for h in holes])
    b = np.array([h.radius_m for h in holes])
    a = instrument.bore.radius_at(x)
    t_e = effective_length(b, a, np.array([h.chimney_m for h in holes]),
                           instrument.hole_radiation,
                           np.array([h.undercut_m for h in holes])) if holes else np.zeros(0)
    out: list[float | None] = []
    for row in closed:
        opened = np.flatnonzero(~row)
        if opened.size < 2 or np.any(row[opened[0]:]):
            # Fewer than two open holes, or closed holes below the first open one (a cross
            # fingering): no regular open lattice.
            out.append(None)
            continue
        spacing = float(np.mean(np.diff(x[opened])))
        value = lattice_cutoff(air.speed_m_s, float(np.mean(a[opened])),
                               float(np.mean(b[opened])), spacing, float(np.mean(t_e[opened])))
        out.append(float(value))
    return tuple(out)
