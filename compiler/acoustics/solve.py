"""Inverse design of a holed pipe: tube length, hole positions and diameters for target notes.

Method:

1. Checks that need no solving: notes below the all-closed note, notes above what the shortest
   configuration reaches (every hole open, the top hole as close to the mouth as the web allows,
   every hole at its largest size), holes larger than allowed.
2. Starting point: diameters by ``rule_diameters`` where the caller fixed none; the tube length
   from the all-closed note (Newton on the transfer-matrix model, holes closed); hole positions
   from the closed-form effective length of one open hole (derived approximation after
   Nederveen 1969/1998, Acoustical Aspects of Woodwind Instruments; attribution from memory),
   bottom hole first (``holes.downstream_for_shortening``).
3. Damped Gauss–Newton on the transfer-matrix model: residuals are the first-register errors in
   cents of the register-1 rows of the fingering table; unknowns the length and the free hole
   positions (and diameters where a position is fixed or pinned). The Jacobian comes from one
   batched evaluation of all perturbed instruments at the current playing frequencies, using
   df/du = −(∂ImZ/∂u)/(∂ImZ/∂f) (implicit function theorem on the reactance zero). Square
   systems are solved exactly (to 0.01 cent), larger tables in the least-squares sense.
4. Constraints (web between hole edges, hand span between adjacent centres, clearance from the
   mouth) are checked on the solution; a violated one pins that hole's position at the limit and
   frees its diameter instead, then the model is solved again (an active set).
5. Free diameters are snapped to the drill set (toward the side that keeps a pinned constraint
   satisfied), pins are released, and positions and length are solved again.

Second-register targets (register 2 rows) are predicted and reported, not solved for.
Impossible requests raise ``DesignError`` with a message in a maker's words, a hint, and the
subject it concerns (``"note G5"``, ``"hole 3"``, ``"fingerings"``, ``"holes"``) so that a
caller can point at the spec.
Positions are measured from the top end of the tube; holes are numbered from 1 at the top.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np
from numpy.typing import ArrayLike, NDArray

from compiler.acoustics.air import Air
from compiler.acoustics.holes import downstream_for_shortening, effective_length, end_distance
from compiler.acoustics.impedance import Bore, Head, Hole, Instrument, impedance_batch
from compiler.acoustics.playing import first_register, predictions
from compiler.acoustics.radiation import end_correction
from compiler.acoustics.tuning import cents

Float = NDArray[np.float64]

DIAMETER_RULE = (0.45, 0.60)
"""Default hole diameters as a fraction of the bore diameter, top hole to bottom hole (linear
in between). Common practice, from memory: finger holes of about half the bore, larger toward
the foot where the spacing widens."""

TOLERANCE_CENTS = 0.01
"""Convergence goal of the Newton iterations on square systems (the contract is 0.1 cent)."""

_H = 1e-6  # finite-difference step of lengths, positions and diameters, m


class DesignError(ValueError):
    """An impossible design request: ``message``, ``hint`` (what would fix it), ``subject``."""

    def __init__(self, message: str, hint: str = "", subject: str = "") -> None:
        super().__init__(message)
        self.message = message
        self.hint = hint
        self.subject = subject


@dataclass(frozen=True)
class HoleConstraints:
    """Limits on the holes, metres. max_ratio: hole diameter over the local bore diameter.
    min_web_m: wood or metal left between neighbouring hole edges, and between the top hole and
    the mouth opening. max_span_m: largest centre-to-centre distance between adjacent holes, one
    value for every gap or a tuple with one entry per gap (None: no limit, e.g. between hands)."""

    min_diameter_m: float = 0.002
    max_diameter_m: float = 0.011
    max_ratio: float = 0.8
    min_web_m: float = 0.003
    max_span_m: float | tuple[float | None, ...] | None = None


@dataclass(frozen=True)
class FixedHole:
    """A hole the maker has decided: position from the top end and/or diameter, metres."""

    position_m: float | None = None
    diameter_m: float | None = None


@dataclass(frozen=True)
class Design:
    """The solved pipe. Positions from the top end; predicted_hz rows: (register 1, register 2);
    residual_cents: prediction in the row's register minus its target; octave_cents: 1200·log2
    (f2/(2·f1)); unsnapped_*: the solution before drill snapping (residuals of the register-1
    rows, NaN for register-2 rows)."""

    instrument: Instrument
    length_m: float
    hole_positions_m: tuple[float, ...]
    hole_diameters_m: tuple[float, ...]
    target_hz: tuple[float, ...]
    registers: tuple[int, ...]
    predicted_hz: tuple[tuple[float, float], ...]
    residual_cents: tuple[float, ...]
    octave_cents: tuple[float, ...]
    iterations: int
    unsnapped_hole_diameters_m: tuple[float, ...]
    unsnapped_residual_cents: tuple[float, ...]


def rule_diameters(n_holes: int, bore_diameter_m: float, constraints: HoleConstraints) -> Float:
    """Default diameters: ``DIAMETER_RULE`` fractions of the bore diameter, within the limits."""
    top, bottom = DIAMETER_RULE
    frac = np.linspace(top, bottom, n_holes) if n_holes > 1 else np.array([top])
    hi = min(constraints.max_diameter_m, constraints.max_ratio * bore_diameter_m)
    return np.asarray(np.clip(frac * bore_diameter_m, constraints.min_diameter_m, hi))


@dataclass(frozen=True)
class _Problem:
    template: Instrument
    air: Air
    closed: NDArray[np.bool_]  # register-1 rows only
    targets: Float
    names: tuple[str, ...]
    limits: HoleConstraints
    spans: tuple[float | None, ...]
    mouth_half: float
    mouth_word: str

    def evaluate(self, L: Float, X: Float, D: Float, freqs: Float) -> NDArray[np.complex128]:
        inst, air, closed = self.template, self.air, self.closed
        return impedance_batch(
            inst, air, freqs, closed, length_m=L, hole_positions_m=X, hole_radii_m=0.5 * D
        )

    def max_diameter(self, X: Float) -> Float:
        bore = 2.0 * self.template.bore.radius_at(X)
        return np.asarray(np.minimum(self.limits.max_diameter_m, self.limits.max_ratio * bore))

    def top_limit(self, D: Float) -> Float:
        x_m = self.template.head.mouth_position_m
        return np.asarray(x_m + self.mouth_half + 0.5 * D + self.limits.min_web_m)


@dataclass(frozen=True)
class _Plan:
    """Which quantities are unknown: u = [L?] + X[x_holes] + D[d_holes]; pins tie a hole's
    position to a limit: (hole, kind, neighbour) with kind "span", "web" or "top"."""

    free_length: bool
    x_holes: tuple[int, ...]
    d_holes: tuple[int, ...]
    pins: tuple[tuple[int, str, int], ...] = ()


def _pack(plan: _Plan, L: float, X: Float, D: Float) -> Float:
    head = [L] if plan.free_length else []
    return np.array(head + [X[h] for h in plan.x_holes] + [D[h] for h in plan.d_holes])


def _unpack(
    prob: _Problem, plan: _Plan, L: float, X: Float, D: Float, u: Float
) -> tuple[Float, Float, Float]:
    """Geometry of a batch of unknown vectors u (n_inst, n_u), with pins applied."""
    n = u.shape[0]
    Ls = u[:, 0].copy() if plan.free_length else np.full(n, L)
    Xs = np.tile(X, (n, 1))
    Ds = np.tile(D, (n, 1))
    i = int(plan.free_length)
    for h in plan.x_holes:
        Xs[:, h] = u[:, i]
        i += 1
    for h in plan.d_holes:
        Ds[:, h] = u[:, i]
        i += 1
    for _ in range(len(plan.pins)):  # chains of pins settle in as many passes
        for h, kind, nb in plan.pins:
            if kind == "top":
                Xs[:, h] = prob.top_limit(Ds[:, h])
                continue
            gap_index = min(h, nb)
            if kind == "span":
                gap = np.full(n, prob.spans[gap_index] or 0.0)
            else:
                gap = 0.5 * (Ds[:, h] + Ds[:, nb]) + prob.limits.min_web_m
            Xs[:, h] = Xs[:, nb] + np.where(h > nb, gap, -gap)
    return Ls, Xs, Ds


def _valid(prob: _Problem, L: Float, X: Float, D: Float) -> NDArray[np.bool_]:
    """Physically evaluable geometry (not the maker's constraints): holes in order inside the
    tube, diameters positive and narrower than the bore."""
    x_m = prob.template.head.mouth_position_m
    ok = (L > x_m + 0.01) & np.all(D > 2e-4, axis=1)
    ok &= np.all(D < 1.96 * prob.template.bore.radius_at(X), axis=1)
    if X.shape[1]:
        ok &= (X[:, 0] > x_m + 1e-3) & (X[:, -1] < L - 1e-3)
        ok &= np.all(np.diff(X, axis=1) > 5e-4, axis=1)
    return np.asarray(ok)


def _frequencies(
    prob: _Problem, L: Float, X: Float, D: Float, guess: Float | None
) -> tuple[Float, Float]:
    """Register-1 frequencies (n_inst, n_rows) and reactance slopes of a batch of geometries."""

    def evaluate(freqs: Float) -> NDArray[np.complex128]:
        return prob.evaluate(L, X, D, freqs)

    f_lo, f_hi = float(prob.targets.min()) / 2.5, float(prob.targets.max()) * 2.0
    return first_register(evaluate, (L.shape[0], prob.closed.shape[0]), f_lo, f_hi, guess)


def _residuals(prob: _Problem, f: Float) -> Float:
    bad = ~np.isfinite(f)
    r = np.asarray(cents(np.where(bad, 1.0, f), np.broadcast_to(prob.targets, f.shape)))
    return np.where(bad, np.nan, r)


def _newton(
    prob: _Problem, plan: _Plan, L: float, X: Float, D: Float, f: Float | None, max_iter: int = 40
) -> tuple[float, Float, Float, Float, Float, int]:
    """Damped Gauss–Newton on the unknowns of ``plan``: (L, X, D, f, residuals, iterations)."""
    u = _pack(plan, L, X, D)
    Ls, Xs, Ds = _unpack(prob, plan, L, X, D, u[None])
    fb, slope = _frequencies(prob, Ls, Xs, Ds, f)
    if not np.all(np.isfinite(fb)):
        raise DesignError(
            "the model finds no first-register resonance for some fingerings",
            "check the fingering table and the tube",
            "fingerings",
        )
    r = _residuals(prob, fb)[0]
    n_u = u.size
    square = n_u >= r.size
    it = 0
    for it in range(1, max_iter + 1):  # noqa: B007 - the count is reported
        if n_u == 0 or (square and np.max(np.abs(r)) <= TOLERANCE_CENTS):
            break
        pert = u[None] + _H * np.vstack([np.zeros(n_u), np.eye(n_u)])
        Lp, Xp, Dp = _unpack(prob, plan, L, X, D, pert)
        g = prob.evaluate(Lp, Xp, Dp, np.broadcast_to(fb[0], (n_u + 1, fb.shape[1]))[..., None])
        dg = (g.imag[1:, :, 0] - g.imag[0, :, 0]) / _H  # (n_u, rows)
        J = (-(dg / slope[0]) / fb[0] * (1200.0 / np.log(2.0))).T  # cents per metre
        step = np.linalg.lstsq(J, -r, rcond=None)[0]
        step *= min([1.0, *_limit(plan, step)])
        alpha = 1.0
        accepted = False
        while alpha >= 1.0 / 64.0:
            Lt, Xt, Dt = _unpack(prob, plan, L, X, D, (u + alpha * step)[None])
            if _valid(prob, Lt, Xt, Dt)[0]:
                guess = fb * 2.0 ** (alpha * (J @ step) / 1200.0)  # the linear prediction
                ft, st = _frequencies(prob, Lt, Xt, Dt, guess)
                rt = _residuals(prob, ft)[0]
                if np.all(np.isfinite(rt)) and np.sum(rt**2) < np.sum(r**2):
                    accepted = True
                    break
            alpha *= 0.5
        if not accepted:
            break
        old = np.sum(r**2)
        u, fb, slope, r = u + alpha * step, ft, st, rt
        if not square and old - np.sum(r**2) <= 1e-10 * max(old, 1e-12):
            break
    Lf, Xf, Df = _unpack(prob, plan, L, X, D, u[None])
    return float(Lf[0]), Xf[0], Df[0], fb[0], r, it


def _limit(plan: _Plan, step: Float) -> list[float]:
    """Factors that keep one Newton step within 40 mm of length, 20 mm of position, 1.5 mm of
    diameter (beyond that the linearisation is poor and the step may jump a resonance)."""
    caps = ([0.04] if plan.free_length else []) + [0.02] * len(plan.x_holes)
    caps += [0.0015] * len(plan.d_holes)
    return [c / abs(s) for c, s in zip(caps, step, strict=True) if abs(s) > c]


def _violation(
    prob: _Problem, plan: _Plan, L: float, X: Float, D: Float
) -> tuple[str, int, int] | None:
    """The first broken constraint, top to bottom: ("top", 0, -1), ("web", i, i+1),
    ("span", i, i+1), ("foot", n-1, -1), ("size", h, -1); None if all hold (0.01 mm slack)."""
    slack = 1e-5
    web = prob.limits.min_web_m
    pinned = {h for h, _, _ in plan.pins}
    if X.size and X[0] < prob.top_limit(D[0]) - slack:
        return ("top", 0, -1)
    for i in range(X.size - 1):
        if X[i + 1] - X[i] < 0.5 * (D[i] + D[i + 1]) + web - slack:
            return ("web", i, i + 1)
        span = prob.spans[i]
        if span is not None and X[i + 1] - X[i] > span + slack:
            return ("span", i, i + 1)
    if X.size and X[-1] > L - 0.5 * D[-1] - web + slack:
        return ("foot", X.size - 1, -1)
    dmax = prob.max_diameter(X)
    for h in pinned | set(plan.d_holes):
        if D[h] > dmax[h] + slack or D[h] < prob.limits.min_diameter_m - slack:
            return ("size", h, -1)
    return None


def _pin_options(kind: str, i: int, j: int) -> list[tuple[int, str, int]]:
    if kind == "top":
        return [(0, "top", -1)]
    if kind in ("web", "span"):
        return [(j, kind, i), (i, kind, j)]  # move the lower hole first, else the upper one
    return []


def _explain(
    prob: _Problem, kind: str, i: int, j: int, X: Float, D: Float, fingering_of: dict[int, int]
) -> DesignError:
    """A broken constraint that no pin could relieve, in a maker's words."""
    web, span = prob.limits.min_web_m * 1e3, (prob.spans[i] or 0.0) * 1e3 if j >= 0 else 0.0
    if kind == "top":
        name = prob.names[fingering_of.get(0, int(np.argmax(prob.targets)))]
        return DesignError(
            f"{name} is beyond this tube's reach: hole 1 would have to sit closer to the "
            f"{prob.mouth_word} than the {web:.1f} mm web allows, even at its largest allowed size",
            "choose a lower top note, allow larger holes, or use a wider bore",
            name,
        )
    text = {
        "web": (
            f"holes {i + 1} and {j + 1} would come closer than the {web:.1f} mm web allows, "
            "with the hole sizes allowed",
            "allow a thinner web or larger holes, or move these notes further apart",
        ),
        "span": (
            f"holes {i + 1} and {j + 1} must sit farther apart than the {span:.1f} mm span "
            "allowed between their centres, with the hole sizes allowed",
            "allow a wider span, smaller holes (minimum diameter), or a narrower bore",
        ),
        "foot": (
            f"hole {i + 1} would sit closer to the foot than its web allows",
            "lower the all-closed note or use smaller holes near the foot",
        ),
    }.get(
        kind,
        (
            f"hole {i + 1} would need a diameter of {D[i] * 1e3:.2f} mm, outside the allowed "
            f"{prob.limits.min_diameter_m * 1e3:.1f}–{prob.max_diameter(X)[i] * 1e3:.1f} mm",
            "relax the hole-size limits or the span and web constraints around this hole",
        ),
    )
    return DesignError(text[0], text[1], f"hole {max(i, j) + 1}")


def _not_reached(prob: _Problem, r: Float) -> DesignError:
    row = int(np.nanargmax(np.abs(r)))
    name, err = prob.names[row], float(r[row])
    if err < 0:
        return DesignError(
            f"{name} stays {-err:.0f} cents flat of its target: the holes that make it cannot sit "
            "high enough or be large enough within the limits",
            "choose a lower note, allow larger holes or a wider bore, or check its fingering",
            name,
        )
    return DesignError(
        f"{name} stays {err:.0f} cents sharp of its target within the limits",
        "check its fingering (a lower note needs more holes closed), or allow smaller holes",
        name,
    )


def _snap(d: float, drills: Float, direction: int, hi: float, lo: float) -> float | None:
    """The drill for a diameter: nearest (direction 0), or the nearest not smaller (+1) or not
    larger (−1) one, within [lo, hi]; None if no drill fits."""
    ok = drills[(drills >= lo - 1e-9) & (drills <= hi + 1e-9)]
    if ok.size == 0:
        return None
    if direction > 0 and np.any(ok >= d - 1e-9):
        return float(ok[ok >= d - 1e-9].min())
    if direction < 0 and np.any(ok <= d + 1e-9):
        return float(ok[ok <= d + 1e-9].max())
    return float(ok[np.argmin(np.abs(ok - d))])


def _snap_direction(pin: tuple[int, str, int] | None) -> int:
    """Snap so that a released pin stays satisfied: a hole pinned by a span must not move away
    from its neighbour, one pinned by a web or the top limit must not move toward it. A larger
    hole moves down the tube, a smaller one up."""
    if pin is None:
        return 0
    h, kind, nb = pin
    if kind == "top":
        return +1
    below = h > nb
    if kind == "span":
        return -1 if below else +1
    return +1 if below else -1


def design_holes(
    bore: Bore,
    wall_m: float,
    head: Head,
    fingerings: ArrayLike,
    targets_hz: ArrayLike,
    air: Air,
    *,
    registers: ArrayLike | None = None,
    constraints: HoleConstraints | None = None,
    fixed: tuple[FixedHole | None, ...] | None = None,
    drills_m: tuple[float, ...] = (),
    length_m: float | None = None,
    radiation: str = "unflanged",
    hole_radiation: str = "unflanged",
    losses: str = "keefe",
    note_names: tuple[str, ...] | None = None,
) -> Design:
    """Solve tube length, hole positions and hole diameters for a fingering table.

    bore: profile from the top end (``Bore.cylinder(r)`` for stock tube); wall_m: wall thickness
    (the holes' chimney height); head: the blowing end. fingerings: (n_rows, n_holes) booleans,
    True = closed, holes numbered from the top; targets_hz: (n_rows,); registers: 1 or 2 per row
    (default 1; register-2 rows are predicted, not solved). fixed: per hole a ``FixedHole`` or
    None; drills_m: available drill diameters (empty: no snapping); length_m: a fixed tube
    length (default: solved). note_names: per row, e.g. "G5": messages and error subjects say
    "note G5" (default "fingering 1", ...).
    Returns a ``Design``; raises ``DesignError`` for impossible requests (module docstring).
    """
    lim = constraints or HoleConstraints()
    table, targets, regs, names, fx, fd, spans = _read(
        fingerings, targets_hz, registers, note_names, fixed, lim
    )
    first = np.flatnonzero(regs == 1)
    n_holes = table.shape[1]
    a_top = float(bore.radius_at(head.mouth_position_m))
    D = np.where(np.isfinite(fd), fd, rule_diameters(n_holes, 2.0 * a_top, lim))
    f_closed = _lowest(table[first], targets[first], tuple(names[i] for i in first))
    x_m = head.mouth_position_m
    L = length_m if length_m is not None else x_m + air.speed_m_s / (2.0 * f_closed) - 2.6 * a_top
    even = x_m + (L - x_m) * np.linspace(0.45, 0.9, n_holes)
    fixed_x = fx[np.isfinite(fx)]
    beyond = length_m is not None and np.any(fixed_x >= length_m)
    if np.any(np.diff(fixed_x) <= 0) or np.any(fixed_x <= x_m) or beyond:
        raise DesignError(
            "the fixed hole positions must lie in order below the mouth and inside the tube",
            "check the fixed positions (measured from the top end)",
            "holes",
        )
    X = np.where(np.isfinite(fx), fx, even)
    # The template carries bore, head, chimneys and models; geometry is passed per evaluation.
    holes = tuple(Hole(float(x), 0.5 * float(d), wall_m) for x, d in zip(even, D, strict=True))
    template = Instrument(bore, holes, head, float(L), radiation, hole_radiation, losses)
    word = {"duct": "window", "embouchure": "embouchure hole", "open": "top end"}[head.kind]
    half = {"duct": 0.5 * head.window_length_m, "embouchure": head.embouchure_radius_m}
    prob = _Problem(
        template,
        air,
        table[first],
        targets[first],
        tuple(names[i] for i in first),
        lim,
        spans,
        half.get(head.kind, 0.0),
        word,
    )
    dmax = prob.max_diameter(X)
    for h in np.flatnonzero(np.isfinite(fd)):
        if not lim.min_diameter_m - 1e-9 <= fd[h] <= dmax[h] + 1e-9:
            raise DesignError(
                f"hole {h + 1} is fixed at {fd[h] * 1e3:.2f} mm, outside the allowed "
                f"{lim.min_diameter_m * 1e3:.1f}–{dmax[h] * 1e3:.1f} mm",
                "change the fixed diameter or the hole-size limits",
                f"hole {h + 1}",
            )
    # The length from the all-closed note (holes closed), then the reach check.
    closed_prob = replace(prob, closed=np.ones((1, n_holes), bool), targets=np.array([f_closed]))
    L, _, _, f_len, _, iterations = _newton(
        closed_prob, _Plan(length_m is None, (), ()), L, X, D, None
    )
    if length_m is not None and np.any(targets[first] < f_len[0] * 2.0 ** (-20.0 / 1200.0)):
        i = int(first[np.argmin(targets[first])])
        raise DesignError(
            f"{names[i]} ({targets[i]:.1f} Hz) is lower than this tube's all-closed pitch "
            f"({f_len[0]:.1f} Hz with the length fixed at {L * 1e3:.1f} mm)",
            "leave the tube length free, or give a longer tube",
            names[i],
        )
    if n_holes and np.isnan(fx[0]):
        _check_reach(prob, L, D, fd)
    X, fingering_of = _start(prob, L, X, D, fx, float(f_len[0]), wall_m)
    plan = _Plan(
        length_m is None,
        tuple(int(h) for h in np.flatnonzero(np.isnan(fx))),
        tuple(int(h) for h in np.flatnonzero(np.isfinite(fx) & np.isnan(fd))),
    )
    free_d = set(np.flatnonzero(np.isnan(fd)).tolist())
    plan, L, X, D, f, r, it = _constrained(prob, plan, L, X, D, free_d, fingering_of)
    iterations += it
    unsnapped_D = D.copy()
    unsnapped_r = np.full(len(targets), np.nan)
    unsnapped_r[first] = r
    if drills_m and free_d:
        drills = np.sort(np.asarray(drills_m, dtype=np.float64))
        L, X, D, _, it = _snap_and_resolve(prob, plan, L, X, D, f, fx, free_d, drills, fingering_of)
        iterations += it
    holes = tuple(Hole(float(x), 0.5 * float(d), wall_m) for x, d in zip(X, D, strict=True))
    final = replace(template, holes=holes, length_m=float(L))
    pred, resid, octave = predictions(final, air, table, targets, regs)
    return Design(
        instrument=final,
        length_m=float(L),
        hole_positions_m=tuple(float(x) for x in X),
        hole_diameters_m=tuple(float(d) for d in D),
        target_hz=tuple(float(t) for t in targets),
        registers=tuple(int(g) for g in regs),
        predicted_hz=tuple((float(a), float(b)) for a, b in pred),
        residual_cents=tuple(float(x) for x in resid),
        octave_cents=tuple(float(x) for x in octave),
        iterations=iterations,
        unsnapped_hole_diameters_m=tuple(float(d) for d in unsnapped_D),
        unsnapped_residual_cents=tuple(float(x) for x in unsnapped_r),
    )


def _read(
    fingerings: ArrayLike,
    targets_hz: ArrayLike,
    registers: ArrayLike | None,
    note_names: tuple[str, ...] | None,
    fixed: tuple[FixedHole | None, ...] | None,
    lim: HoleConstraints,
) -> tuple[
    NDArray[np.bool_],
    Float,
    NDArray[np.int_],
    tuple[str, ...],
    Float,
    Float,
    tuple[float | None, ...],
]:
    """Check the request's shapes: (table, targets, registers, names, fixed x, fixed d, spans)."""
    table = np.asarray(fingerings, dtype=bool)
    targets = np.asarray(targets_hz, dtype=np.float64)
    if table.ndim != 2 or targets.shape != (table.shape[0],) or table.shape[0] == 0:
        raise DesignError(
            "the fingering table and the target notes do not match",
            "give one target per fingering row",
            "fingerings",
        )
    n_rows, n_holes = table.shape
    regs = np.ones(n_rows, dtype=int) if registers is None else np.asarray(registers, dtype=int)
    if not np.any(regs == 1) or np.any((regs != 1) & (regs != 2)) or np.any(~(targets > 0)):
        raise DesignError(
            "every fingering needs a positive target in register 1 or 2, and at "
            "least one is in register 1",
            "check the fingering table",
            "fingerings",
        )
    if note_names is not None and len(note_names) != n_rows:
        raise DesignError("one note name per fingering row is needed", "", "fingerings")
    names = (
        tuple(f"note {n}" for n in note_names)
        if note_names
        else tuple(f"fingering {i + 1}" for i in range(n_rows))
    )
    fixed = fixed or (None,) * n_holes
    gaps = max(n_holes - 1, 0)
    spans = lim.max_span_m if isinstance(lim.max_span_m, tuple) else (lim.max_span_m,) * gaps
    if len(fixed) != n_holes or len(spans) != gaps:
        raise DesignError(
            "the fixed holes or spans do not match the number of holes",
            "give one fixed entry per hole and one span per gap (None: free)",
            "holes",
        )
    fx = np.array([np.nan if f is None or f.position_m is None else f.position_m for f in fixed])
    fd = np.array([np.nan if f is None or f.diameter_m is None else f.diameter_m for f in fixed])
    return table, targets, regs, names, fx, fd, tuple(spans)


def _lowest(closed: NDArray[np.bool_], targets: Float, names: tuple[str, ...]) -> float:
    """Target of the all-closed fingering (a whole tone under the lowest note if there is none);
    raise for a note asked below it: opening holes only raises the pitch."""
    rows = np.flatnonzero(closed.all(axis=1))
    if rows.size == 0:
        return float(targets.min() * 2.0 ** (-2.0 / 12.0))
    f_closed = float(targets[rows[0]])
    low = np.flatnonzero(targets < f_closed * 2.0 ** (-0.5 / 1200.0))
    if low.size:
        i = int(low[np.argmin(targets[low])])
        raise DesignError(
            f"{names[i]} ({targets[i]:.1f} Hz) is lower than the all-closed {names[rows[0]]} "
            f"({f_closed:.1f} Hz): opening holes only raises the pitch",
            "give the lowest note the all-closed fingering, or check the fingering table",
            names[i],
        )
    return f_closed


def _start(
    prob: _Problem, L: float, X: Float, D: Float, fx: Float, f_closed: float, wall_m: float
) -> tuple[Float, dict[int, int]]:
    """Closed-form hole positions (Nederveen 1969/1998 one-hole effective length, a derived
    approximation; attribution from memory), bottom hole first, and the register-1 row that
    each hole controls (the one where it is the topmost open hole, most holes open).

    The acoustic end of a note's column sits at x_ref + c/(2f), x_ref fitted to the all-closed
    pipe (whose frequency in the model is ``f_closed``); each hole is placed so that the column
    ends there, given the open holes below it in its row."""
    inst, c, closed = prob.template, prob.air.speed_m_s, prob.closed
    n = X.size
    model = inst.radiation if inst.radiation != "rule-of-thumb" else "unflanged"
    e_closed = L + float(end_correction(model, float(inst.bore.radius_at(L))))
    x_ref = e_closed - c / (2.0 * f_closed)
    top_open = np.array([int(np.argmin(row)) if not row.all() else -1 for row in closed])
    fingering_of: dict[int, int] = {}
    for h in range(n):
        rows = np.flatnonzero(top_open == h)
        if rows.size:
            fingering_of[h] = int(rows[np.argmax((~closed[rows]).sum(axis=1))])
    X = X.copy()
    a = inst.bore.radius_at(X)
    t_e = effective_length(0.5 * D, a, wall_m, inst.hole_radiation)
    x_m = inst.head.mouth_position_m
    for h in range(n - 1, -1, -1):
        below = X[h + 1] if h + 1 < n else L
        if np.isfinite(fx[h]):
            continue
        x_new = below - 0.03
        if h in fingering_of:
            e = e_closed
            for j in range(n - 1, h, -1):
                if not closed[fingering_of[h], j]:
                    e = X[j] + float(end_distance(e - X[j], a[j], 0.5 * D[j], t_e[j]))
            s = e - (x_ref + c / (2.0 * prob.targets[fingering_of[h]]))
            if s > 1e-4:
                x_new = e - float(downstream_for_shortening(s, a[h], 0.5 * D[h], t_e[h]))
        gap = 0.5 * (D[h] + (D[h + 1] if h + 1 < n else 0.0)) + prob.limits.min_web_m
        X[h] = max(min(x_new, below - gap), x_m + 2e-3 * (h + 1))
    return X, fingering_of


def _constrained(
    prob: _Problem,
    plan: _Plan,
    L: float,
    X: Float,
    D: Float,
    free_d: set[int],
    fingering_of: dict[int, int],
) -> tuple[_Plan, float, Float, Float, Float, Float, int]:
    """Solve, then enforce the maker's constraints by pinning (an active set): a violated web or
    span pins the lower hole at the limit and frees its diameter; if that diameter leaves its
    limits (or the notes stop converging), the upper hole is pinned instead."""
    failed: set[tuple[int, str, int]] = set()
    trial: (
        tuple[tuple[int, str, int], tuple[str, int, int], _Plan, float, Float, Float, Float | None]
        | None
    ) = None
    f: Float | None = None
    iterations = 0
    for _ in range(4 * X.size + 4):
        L, X, D, f, r, it = _newton(prob, plan, L, X, D, f)
        iterations += it
        square = len(plan.x_holes) + len(plan.d_holes) + int(plan.free_length) >= r.size
        done = not square or np.max(np.abs(r)) <= 0.1
        viol = _violation(prob, plan, L, X, D)
        if trial is not None:
            pin, before, *state = trial
            h = pin[0]
            lim = prob.limits
            resized = not (lim.min_diameter_m - 1e-5 <= D[h] <= prob.max_diameter(X)[h] + 1e-5)
            if resized or not done:  # the pin did not work: back to the state before it
                failed.add(pin)
                plan, L, X, D, f = state  # type: ignore[assignment]
                viol = before
            trial = None
        if viol is None:
            if done:
                return plan, L, X, D, f, r, iterations
            raise _not_reached(prob, r)
        pinned = {p[0] for p in plan.pins}
        options = [
            o
            for o in _pin_options(*viol)
            if o not in failed and o[0] in free_d and o[0] not in pinned and o[0] in plan.x_holes
        ]
        if not options:
            # Unconverged, the notes are the problem; converged, the constraint is.
            raise _explain(prob, *viol, X, D, fingering_of) if done else _not_reached(prob, r)
        trial = (options[0], viol, plan, L, X.copy(), D.copy(), None if f is None else f.copy())
        h = options[0][0]
        plan = replace(
            plan,
            x_holes=tuple(x for x in plan.x_holes if x != h),
            d_holes=tuple(sorted((*plan.d_holes, h))),
            pins=(*plan.pins, options[0]),
        )
    raise _not_reached(prob, r)


def _check_reach(prob: _Problem, L: float, D: Float, fd: Float) -> None:
    """Raise for notes above the shortest configuration: every hole open, at its largest allowed
    size, packed from the top limit down at the minimum web (a bound on register 1)."""
    n = D.size
    Dm = np.where(np.isfinite(fd), fd, prob.max_diameter(np.full(n, L / 2.0)))
    X = np.empty(n)
    X[0] = prob.top_limit(Dm[0])
    for h in range(1, n):
        X[h] = X[h - 1] + 0.5 * (Dm[h - 1] + Dm[h]) + prob.limits.min_web_m
    if X[-1] >= L - 0.5 * Dm[-1] - prob.limits.min_web_m:
        return  # the holes do not even fit side by side: the solver will say where
    p_open = replace(prob, closed=np.zeros((1, n), dtype=bool))
    f_reach = float(_frequencies(p_open, np.array([L]), X[None], Dm[None], None)[0][0, 0])
    over = np.flatnonzero(prob.targets > f_reach * 2.0 ** (1.0 / 1200.0))
    if over.size:
        i = int(over[np.argmax(prob.targets[over])])
        raise DesignError(
            f"{prob.names[i]} ({prob.targets[i]:.1f} Hz) is beyond this tube's reach: with every "
            f"hole open, at its largest allowed size and as close to the {prob.mouth_word} as the "
            f"web allows, the tube sounds {f_reach:.1f} Hz",
            "choose a lower top note, allow larger holes, or use a wider bore",
            prob.names[i],
        )


def _snap_and_resolve(
    prob: _Problem,
    plan: _Plan,
    L: float,
    X: Float,
    D: Float,
    f: Float | None,
    fx: Float,
    free_d: set[int],
    drills: Float,
    fingering_of: dict[int, int],
) -> tuple[float, Float, Float, Float | None, int]:
    """Snap the free diameters to drills, release the pins, and solve positions and length."""
    pins = {p[0]: p for p in plan.pins}
    dmax = prob.max_diameter(X)
    D = D.copy()
    for h in sorted(free_d):
        d = _snap(D[h], drills, _snap_direction(pins.get(h)), dmax[h], prob.limits.min_diameter_m)
        if d is None:
            raise DesignError(
                f"no drill in the drill set fits hole {h + 1} (allowed "
                f"{prob.limits.min_diameter_m * 1e3:.1f}–{dmax[h] * 1e3:.1f} mm)",
                "add a drill size in that range",
                f"hole {h + 1}",
            )
        D[h] = d
    plan = _Plan(plan.free_length, tuple(int(h) for h in np.flatnonzero(np.isnan(fx))), ())
    iterations = 0
    for _ in range(2 * len(free_d) + 2):
        L, X, D, f, r, it = _newton(prob, plan, L, X, D, f)
        iterations += it
        viol = _violation(prob, plan, L, X, D)
        if viol is None:
            return L, X, D, f, iterations
        # One drill step in the direction that relieves the broken constraint.
        kind, i, j = viol
        moves = {"top": [(0, +1)], "web": [(j, +1), (i, -1)], "span": [(j, -1), (i, +1)]}
        dmax = prob.max_diameter(X)
        for h, sign in moves.get(kind, []):
            if h not in free_d:
                continue
            pool = drills[(drills > D[h] + 1e-9) if sign > 0 else (drills < D[h] - 1e-9)]
            pool = pool[(pool <= dmax[h] + 1e-9) & (pool >= prob.limits.min_diameter_m - 1e-9)]
            if pool.size:
                D[h] = float(pool.min() if sign > 0 else pool.max())
                break
        else:
            raise _explain(prob, kind, i, j, X, D, fingering_of)
    raise _not_reached(prob, r)
