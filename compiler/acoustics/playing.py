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
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

from compiler.acoustics.air import Air
from compiler.acoustics.impedance import Instrument, impedance_batch, input_impedance
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
    if guess is not None:
        f, slope, ok = track(evaluate, np.broadcast_to(guess, shape)[..., None].copy())
        if np.all(ok):
            return f[..., 0], slope[..., 0]
    lo, hi = bracket(evaluate, log_grid(f_lo, f_hi), shape, registers=1)
    f, slope = refine(evaluate, lo, hi)
    return f[..., 0], slope[..., 0]


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
