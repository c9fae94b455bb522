"""Inverse design of a holed pipe: tube length, hole positions and diameters (and a side-blown
flute's cork) for target notes in one or two registers.

The request, its frozen types and its errors are in ``solve_request``; the least squares in
``solve_lsq``; the unknowns, the maker's limits and drill snapping in ``solve_active``. Here is
the order of work:

1. Checks that need no solving: notes below the all-closed note, a fixed length too short,
   notes above what the shortest configuration reaches (every hole open, the top hole as close
   to the mouth as the web allows, every hole at its largest size).
2. Starting point: diameters by the trade's rule where the caller fixed none; the tube length
   from the all-closed note (the model, holes closed); hole positions from the closed-form
   effective length of one open hole (derived approximation after Nederveen 1969/1998,
   Acoustical Aspects of Woodwind Instruments; attribution from memory), bottom hole first.
3. The first register: least squares on its rows, unknowns the length, the free positions and
   the free diameters (pulled toward the rule), within the limits. A determined table (one
   note per hole and the all-closed note) is met to 0.01 cent, or the request is refused with
   what holds it back.
4. Both registers (when the table has second-register rows): weighted least squares from the
   first-register solution, the second register's rows weighted ``second_weight`` (0.5–1),
   the cork free within its range as well.
5. The free diameters snapped to the drill set, and the rest solved again (the length, the
   free positions and the cork).

Impossible requests raise ``DesignError`` (message and hint in a maker's words, with the row
or hole concerned as fields). Positions are measured from the top end of the tube.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np
from numpy.typing import ArrayLike, NDArray

from compiler.acoustics.air import Air
from compiler.acoustics.holes import downstream_for_shortening, effective_length, end_distance
from compiler.acoustics.impedance import Bore, Head, Hole, Instrument
from compiler.acoustics.playing import predictions, resonances, second_register_quality
from compiler.acoustics.radiation import end_correction
from compiler.acoustics.solve_active import MM, Geometry, Limit, Unknowns, advice, snap
from compiler.acoustics.solve_lsq import Fit, Problem, least_squares
from compiler.acoustics.solve_request import (
    CORK_RANGE,
    DIAMETER_RULE,
    MIN_SPAN_M,
    SECOND_REGISTER_WEIGHT,
    CorkRange,
    DesignError,
    FingerPair,
    FixedHole,
    HoleConstraints,
    Request,
    finger_pairs,
    read_request,
    rule_diameters,
)

__all__ = [
    "CORK_RANGE",
    "DIAMETER_RULE",
    "MIN_SPAN_M",
    "SECOND_REGISTER_WEIGHT",
    "CorkRange",
    "Design",
    "DesignError",
    "FingerPair",
    "FixedHole",
    "HoleConstraints",
    "design_holes",
    "finger_pairs",
    "rule_diameters",
]

Float = NDArray[np.float64]

FIRST_TOLERANCE_CENTS = 0.1
"""A determined first register that the model cannot bring this close is refused."""


@dataclass(frozen=True)
class Design:
    """The solved pipe. Positions from the top end; predicted_hz rows: (register 1, register 2);
    residual_cents: prediction in the row's register minus its target; octave_cents: 1200·log2
    (f2/(2·f1)); cork_m: the cork's distance above the mouth (0 without one); unsnapped_*: the
    solution before drill snapping; advice: per row, what would bring it closer to its target,
    in a maker's words (empty when no limit holds it back)."""

    instrument: Instrument
    length_m: float
    hole_positions_m: tuple[float, ...]
    hole_diameters_m: tuple[float, ...]
    cork_m: float
    target_hz: tuple[float, ...]
    registers: tuple[int, ...]
    predicted_hz: tuple[tuple[float, float], ...]
    residual_cents: tuple[float, ...]
    octave_cents: tuple[float, ...]
    iterations: int
    unsnapped_hole_diameters_m: tuple[float, ...]
    unsnapped_residual_cents: tuple[float, ...]
    advice: tuple[str, ...]


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
    cork: CorkRange | None = None,
    second_weight: float = SECOND_REGISTER_WEIGHT,
    end_wall_m: float = 0.0,
) -> Design:
    """Solve tube length, hole positions and diameters (and the cork) for a fingering table.

    bore: profile from the top end (``Bore.cylinder(r)`` for stock tube); wall_m: wall thickness
    (the holes' chimney height); head: the blowing end. fingerings: (n_rows, n_holes) booleans,
    True = closed, holes numbered from the top; targets_hz: (n_rows,); registers: 1 or 2 per row
    (default 1). fixed: per hole a ``FixedHole`` or None; drills_m: available drill diameters
    (empty: no snapping); length_m: a fixed tube length (default: solved). note_names: per row,
    e.g. "G5", used in messages. cork: the cork's range above the mouth (None: the head's
    cavity is fixed). second_weight: weight of second-register rows (first register 1).
    end_wall_m: the tube's wall at its open ends (``Instrument.wall_m``).
    Returns a ``Design``; raises ``DesignError`` for impossible requests (module docstring).
    """
    n_holes = np.asarray(fingerings).shape[-1] if np.asarray(fingerings).ndim == 2 else 0
    holes = tuple(Hole(0.1 + 0.01 * i, 0.002, wall_m) for i in range(n_holes))
    template = Instrument(bore, holes, head, 1.0, radiation, hole_radiation, losses, end_wall_m)
    req = read_request(
        template, air, fingerings, targets_hz, registers=registers,
        second_weight=second_weight, note_names=note_names, fixed=fixed,
        limits=constraints or HoleConstraints(), drills_m=drills_m, length_m=length_m,
        cork=cork)
    cork_start = cork.start_m if cork is not None else head.cavity_length_m
    D = np.where(np.isfinite(req.fixed_d), req.fixed_d, req.rule_diameters())
    f_closed = _lowest(req)
    x_m = head.mouth_position_m
    a_top = float(bore.radius_at(x_m))
    L = length_m if length_m is not None else x_m + air.speed_m_s / (2.0 * f_closed) - 2.6 * a_top
    X = np.where(np.isfinite(req.fixed_x), req.fixed_x,
                 x_m + (L - x_m) * np.linspace(0.45, 0.9, n_holes))
    g = Geometry.of(L, X, D, cork_start)
    g, f_len, iterations = _length(req, g, f_closed)
    if length_m is not None and np.any(req.targets[req.first] < f_len * 2.0 ** (-20.0 / 1200.0)):
        i = int(req.first[np.argmin(req.targets[req.first])])
        raise DesignError(
            f"{req.names[i]} ({req.targets[i]:.1f} Hz) is lower than this tube's all-closed "
            f"pitch ({f_len:.1f} Hz with the length fixed at {g.length_m * MM:.1f} mm)",
            "leave the tube length free, or give a longer tube", row=i)
    if n_holes and np.isnan(req.fixed_x[0]):
        _check_reach(req, g)
    g = Geometry.of(g.length_m, _start(req, g, f_closed), g.d, g.cork_m)
    free_x = tuple(int(h) for h in np.flatnonzero(np.isnan(req.fixed_x)))
    free_d = tuple(int(h) for h in np.flatnonzero(np.isnan(req.fixed_d)))
    rule = g.d
    # The first register.
    first = Problem(req, req.first, Unknowns(length_m is None, free_x, free_d, False), rule)
    fit = least_squares(first, g)
    iterations += fit.iterations
    if first.determined and np.max(np.abs(fit.cents)) > FIRST_TOLERANCE_CENTS:
        raise _not_reached(req, first, fit)
    # Both registers, the cork free (second-register rows the model finds no resonance for
    # are left to the report).
    both = _resonating(req, fit.geometry)
    second = bool(np.any((req.registers[both] == 2) & (req.weights[both] > 0)))
    free_cork = second and req.cork is not None and req.cork.free
    if second:
        problem = Problem(req, both, Unknowns(length_m is None, free_x, free_d, free_cork), rule)
        fit = least_squares(problem, fit.geometry)
        iterations += fit.iterations
    unsnapped_fit = fit
    unsnapped = fit.geometry
    unsnapped_r = _all_residuals(req, fit, both if second else req.first)
    # Drills, then the rest again.
    rows = both if second else req.first
    if req.drills.size and free_d:
        fit, it = _snap_and_resolve(req, rows, fit, free_x, free_d, free_cork, rule)
        iterations += it
    final = fit.geometry
    instrument = _instrument(req, final)
    pred, resid, octave = predictions(instrument, air, req.closed, req.targets, req.registers)
    return Design(
        instrument=instrument,
        length_m=final.length_m,
        hole_positions_m=final.positions_m,
        hole_diameters_m=final.diameters_m,
        cork_m=final.cork_m,
        target_hz=tuple(float(t) for t in req.targets),
        registers=tuple(int(r) for r in req.registers),
        predicted_hz=tuple((float(a), float(b)) for a, b in pred),
        residual_cents=tuple(float(x) for x in resid),
        octave_cents=tuple(float(x) for x in octave),
        iterations=iterations,
        unsnapped_hole_diameters_m=unsnapped.diameters_m,
        unsnapped_residual_cents=tuple(float(x) for x in unsnapped_r),
        advice=_advice_by_row(req, rows, fit, unsnapped_fit,
                              _fixed_cork(req, instrument, np.asarray(resid))),
    )


def _advice_by_row(req: Request, rows: NDArray[np.intp], fit: Fit, unsnapped: Fit,
                   cork: tuple[str, ...]) -> tuple[str, ...]:
    """Per row of the request, what would bring it closer (``solve_active.advice``); a fixed
    tube length is named first, since the solver could not touch it. The drills fix the
    diameters before the last solve, whose limits then cannot name them: for a row that
    missed its goal before the drills too, the diameter limits that held the free solution
    (``max_diameter``, ``max_ratio``, ``min_diameter``) are named before the others, and a
    cork the spec fixes (``cork``, per row from ``_fixed_cork``) before those."""
    out = [""] * req.targets.size
    fixed = (f"a tube length other than the fixed {req.length_m * MM:.1f} mm (`length`)"
             if req.length_m is not None else "")
    for k, row in enumerate(rows):
        sizes = ""
        if unsnapped is not fit and abs(unsnapped.cents[k]) > GOAL_CENTS[int(req.registers[row])]:
            sizes = advice(req, unsnapped.geometry, [
                limit for limit in unsnapped.by_row[k] if limit.kind in ("largest", "smallest")])
        words = advice(req, fit.geometry, list(fit.by_row[k]))
        out[int(row)] = "; ".join(w for w in (fixed, cork[int(row)], sizes, words) if w)
    return tuple(out)


CORK_PROBE_M = 0.001
"""How far the fixed cork is moved to see which way would help a second-register note."""


def _fixed_cork(req: Request, instrument: Instrument, resid: Float) -> tuple[str, ...]:
    """Per row, for a cork the spec fixes: whether a shorter or longer one would bring a
    second-register note that misses its goal closer (by a cent or more per millimetre; the
    cork tunes the octaves, the holes and length the first register), in a maker's words."""
    out = [""] * req.targets.size
    goals = np.array([GOAL_CENTS[int(r)] for r in req.registers])
    miss = (req.registers == 2) & np.isfinite(resid) & (np.abs(resid) > goals)
    if req.cork is None or req.cork.free or not np.any(miss):
        return tuple(out)
    cork = instrument.head.cavity_length_m
    gains: dict[str, Float] = {}
    for word, move in (("shorter", -CORK_PROBE_M), ("longer", CORK_PROBE_M)):
        if cork + move <= 0.0:
            continue
        moved = replace(instrument, head=replace(instrument.head, cavity_length_m=cork + move))
        _, other, _ = predictions(moved, req.air, req.closed, req.targets, req.registers)
        gains[word] = np.abs(resid) - np.abs(np.where(np.isfinite(other), other, np.inf))
    for row in np.flatnonzero(miss):
        best = max(gains, key=lambda w: gains[w][row], default=None)
        if best is not None and gains[best][row] >= 1.0:
            out[int(row)] = (f"a {best} cork than the fixed {cork * MM:.1f} mm above the "
                             f"{req.mouth_word} (`cork`; leave it out and boresmith places it)")
    return tuple(out)


def _resonating(req: Request, g: Geometry) -> NDArray[np.intp]:
    """The rows worth tuning on geometry ``g``: every first-register row, and the second-
    register rows whose resonance the model finds clear (``playing.second_register_quality``:
    a weak or split one is no note to tune, and the report says so)."""
    instrument = _instrument(req, g)
    res = resonances(instrument, req.air, req.closed,
                     float(req.targets[req.first].min()) / 2.0, float(req.targets.max()) * 2.2)
    quality = second_register_quality(instrument, req.air, req.closed, res.frequencies_hz)
    keep = (req.registers == 1) | np.array([q == "clear" for q in quality])
    return np.asarray(np.flatnonzero(keep))


def _instrument(req: Request, g: Geometry) -> Instrument:
    wall = req.template.holes[0].chimney_m if req.template.holes else 0.0
    return replace(req.template, length_m=g.length_m, head=replace(
        req.template.head, cavity_length_m=g.cork_m), holes=tuple(
        Hole(x, 0.5 * d, wall) for x, d in zip(g.positions_m, g.diameters_m, strict=True)))


def _all_residuals(req: Request, fit: Fit, rows: NDArray[np.intp]) -> Float:
    out = np.full(req.targets.size, np.nan)
    out[rows] = fit.cents
    return out


def _lowest(req: Request) -> float:
    """Target of the all-closed fingering (a whole tone under the lowest note if there is none);
    raise for a note asked below it: opening holes only raises the pitch."""
    closed, targets, names = req.closed[req.first], req.targets[req.first], req.names
    rows = np.flatnonzero(closed.all(axis=1))
    if rows.size == 0:
        return float(targets.min() * 2.0 ** (-2.0 / 12.0))
    f_closed = float(targets[rows[0]])
    low = np.flatnonzero(targets < f_closed * 2.0 ** (-0.5 / 1200.0))
    if low.size:
        i = int(req.first[low[np.argmin(targets[low])]])
        raise DesignError(
            f"{names[i]} ({req.targets[i]:.1f} Hz) is lower than the all-closed "
            f"{names[int(req.first[rows[0]])]} ({f_closed:.1f} Hz): opening holes only raises "
            "the pitch",
            "give the lowest note the all-closed fingering, or check the fingering table", row=i)
    return f_closed


def _length(req: Request, g: Geometry, f_closed: float) -> tuple[Geometry, float, int]:
    """The tube length that sounds ``f_closed`` with every hole closed (or the fixed length's
    all-closed pitch)."""
    # Holes whose place is still to be found are left out (their stand-in positions would
    # only get in the length's way); fixed ones are real and stay.
    kept = np.flatnonzero(np.isfinite(req.fixed_x))
    template = replace(req.template, holes=tuple(req.template.holes[h] for h in kept))
    closed_req = replace(req, template=template, closed=np.ones((1, kept.size), dtype=bool),
                         targets=np.array([f_closed]), registers=np.array([1]),
                         weights=np.array([1.0]), names=("the all-closed note",),
                         fixed_x=req.fixed_x[kept], fixed_d=req.fixed_d[kept], spans=(),
                         fingers=())
    problem = Problem(closed_req, np.array([0]), Unknowns(req.length_m is None, (), (), False),
                      g.d[kept], bounded=False)
    try:
        fit = least_squares(problem, Geometry.of(g.length_m, g.x[kept], g.d[kept], g.cork_m))
    except DesignError:
        rows = [int(i) for i in req.first if req.closed[i].all()]
        where = f"{req.names[rows[0]]} ({f_closed:.1f} Hz)" if rows else (
            f"the all-closed note ({f_closed:.1f} Hz)")
        raise DesignError(
            f"the model finds no resonance of the tube with every hole closed near {where}: "
            f"the tube of {g.length_m * MM:.1f} mm cannot sound it",
            "check the tube's length and the lowest note", row=rows[0] if rows else None,
            about="fingerings") from None
    return (Geometry.of(fit.geometry.length_m, g.x, g.d, g.cork_m),
            float(fit.frequencies_hz[0]), fit.iterations)


def _check_reach(req: Request, g: Geometry) -> None:
    """Raise for notes above the shortest configuration: every hole open, at its largest allowed
    size, packed from the top limit down at the minimum web (a bound on register 1)."""
    n = req.n_holes
    L = g.length_m
    Dm = np.where(np.isfinite(req.fixed_d), req.fixed_d, req.max_diameter(np.full(n, L / 2.0)))
    X = np.empty(n)
    X[0] = req.top_limit(Dm[0])
    for h in range(1, n):
        X[h] = X[h - 1] + 0.5 * (Dm[h - 1] + Dm[h]) + req.limits.min_web_m
        X[h] = max([X[h]] + [X[p.upper] + p.along_m for p in req.fingers if p.lower == h])
    if X[-1] >= L - 0.5 * Dm[-1] - req.limits.min_web_m:
        return  # the holes do not even fit side by side: the solver will say where
    open_req = replace(req, closed=np.zeros((1, n), dtype=bool), targets=np.array(
        [req.targets[req.first].max()]), registers=np.array([1]), weights=np.array([1.0]))
    problem = Problem(open_req, np.array([0]), Unknowns(False, (), (), False), Dm)
    f_reach = float(problem.frequencies(Geometry.of(L, X, Dm, g.cork_m), np.zeros(0), None)[0][0])
    targets = req.targets[req.first]
    over = np.flatnonzero(targets > f_reach * 2.0 ** (1.0 / 1200.0))
    if over.size:
        i = int(req.first[over[np.argmax(targets[over])]])
        raise DesignError(
            f"{req.names[i]} ({req.targets[i]:.1f} Hz) is beyond this tube's reach: with every "
            f"hole open, at its largest allowed size and as close to the {req.mouth_word} as "
            f"the {'web and the fingers allow' if req.fingers else 'web allows'}, the tube "
            f"sounds {f_reach:.1f} Hz",
            "choose a lower top note, allow larger holes, or use a wider bore", row=i)


def _start(req: Request, g: Geometry, f_closed: float) -> Float:
    """Closed-form hole positions (Nederveen 1969/1998 one-hole effective length, a derived
    approximation; attribution from memory), bottom hole first.

    The acoustic end of a note's column sits at x_ref + c/(2f), x_ref fitted to the all-closed
    pipe (whose frequency is ``f_closed``); each hole is placed so that the column ends there,
    given the open holes below it in the row where it is the topmost open hole."""
    inst, c = req.template, req.air.speed_m_s
    closed = req.closed[req.first]
    targets = req.targets[req.first]
    L, X, D, n = g.length_m, g.x, g.d, req.n_holes
    model = inst.radiation if inst.radiation != "rule-of-thumb" else "unflanged"
    e_closed = L + float(end_correction(model, float(inst.bore.radius_at(L))))
    x_ref = e_closed - c / (2.0 * f_closed)
    top_open = np.array([int(np.argmin(row)) if not row.all() else -1 for row in closed])
    a = inst.bore.radius_at(X)
    t_e = effective_length(0.5 * D, a, inst.holes[0].chimney_m if n else 0.0,
                           inst.hole_radiation)
    x_m = inst.head.mouth_position_m
    for h in range(n - 1, -1, -1):
        below = X[h + 1] if h + 1 < n else L
        if np.isfinite(req.fixed_x[h]):
            continue
        x_new = below - 0.03
        rows = np.flatnonzero(top_open == h)
        if rows.size:
            row = int(rows[np.argmax((~closed[rows]).sum(axis=1))])
            e = e_closed
            for j in range(n - 1, h, -1):
                if not closed[row, j]:
                    e = X[j] + float(end_distance(e - X[j], a[j], 0.5 * D[j], t_e[j]))
            s = e - (x_ref + c / (2.0 * targets[row]))
            if s > 1e-4:
                x_new = e - float(downstream_for_shortening(s, a[h], 0.5 * D[h], t_e[h]))
        gap = 0.5 * (D[h] + (D[h + 1] if h + 1 < n else 0.0)) + req.limits.min_web_m
        highest = min([below - gap] + [X[p.lower] - p.along_m for p in req.fingers
                                       if p.upper == h])
        X[h] = max(min(x_new, highest), x_m + 2e-3 * (h + 1))
    return X


def _not_reached(req: Request, problem: Problem, fit: Fit) -> DesignError:
    """A first register the limits keep from its targets: the worst note, and what holds it."""
    k = int(np.nanargmax(np.abs(fit.cents)))
    row = int(problem.rows[k])
    name, err = req.names[row], float(fit.cents[k])
    holding = list(fit.by_row[k]) or list(fit.binding)
    words = advice(req, fit.geometry, holding)
    side = "flat" if err < 0 else "sharp"
    pair = holding[0] if holding and holding[0].kind in ("web", "span", "fingers") else None
    if pair is not None and pair.kind == "fingers":
        least = (req.limits.min_span_m or 0.0) * MM
        return DesignError(
            f"holes {pair.hole + 1} and {pair.other + 1} must sit {least:.1f} mm apart for the "
            f"two fingers that cover them (`min_span`), and there {name} stays {_cents(err)} "
            f"cents {side} of its target",
            f"allow {words}; a smaller hole {pair.hole + 1} (it sits higher for the same note) "
            f"or a larger hole {pair.other + 1} (it sits lower) parts them, and so does a lower "
            "key (a longer tube)", hole=pair.other)
    if pair is not None:
        gap = "span" if pair.kind == "span" else "web"
        limit = ((req.spans[min(pair.hole, pair.other)] or 0.0) if gap == "span"
                 else req.limits.min_web_m) * MM
        return DesignError(
            f"holes {pair.hole + 1} and {pair.other + 1} are held by the {limit:.1f} mm {gap} "
            f"allowed between them, and {name} stays {_cents(err)} cents {side} of its target",
            f"allow {words}", hole=pair.other)
    if err < 0:
        return DesignError(
            f"{name} stays {_cents(err)} cents flat of its target: the holes that make it cannot "
            "sit high enough or be large enough within the limits",
            f"allow {words}" if words else
            "choose a lower note, allow larger holes or a wider bore, or check its fingering",
            row=row)
    return DesignError(
        f"{name} stays {_cents(err)} cents sharp of its target within the limits",
        f"allow {words}" if words else
        "check its fingering (a lower note needs more holes closed), or allow smaller holes",
        row=row)


def _cents(error: float) -> str:
    """A miss in cents as a maker reads it: whole cents, tenths below one."""
    return f"{abs(error):.0f}" if abs(error) >= 1.0 else f"{abs(error):.1f}"


def _snap_and_resolve(
    req: Request,
    rows: NDArray[np.intp],
    unsnapped: Fit,
    free_x: tuple[int, ...],
    free_d: tuple[int, ...],
    free_cork: bool,
    rule: Float,
) -> tuple[Fit, int]:
    """Snap the free diameters to the nearest drills (the one below for holes pressed against
    a web) and solve the length, the free positions and the cork again. A hole whose
    drill leaves no room (a web or span that cannot hold) takes the next smaller drill. While
    a note then misses its goal (``GOAL_CENTS``) by more than the drills can explain, single
    drill changes are tried (``_drill_moves``) and the best one kept, two rounds at most."""
    problem = Problem(req, rows, Unknowns(req.length_m is None, free_x, (), free_cork), rule)
    unsnapped_cost = _cost(req, rows, unsnapped)
    g = unsnapped.geometry
    # Holes pressed against a web take the drill below their size: one above would break
    # the web and cost the solve a position.
    down = {h: 1 for limit in unsnapped.binding if limit.kind in ("web", "top")
            for h in (limit.hole, limit.other) if h in free_d}
    iterations = 0
    for _ in range(4 * len(free_d) + 4):
        fit = least_squares(problem, snap(req, g, free_d, down))
        iterations += fit.iterations
        squeezed = _squeezed(req, fit.geometry)
        if squeezed is None:
            break
        culprits = [h for h in (squeezed.hole, squeezed.other) if h in free_d]
        if squeezed.kind == "fingers":
            culprits = culprits[:1] if squeezed.hole in free_d else []  # smaller: higher
        if not culprits:
            raise _squeeze_error(req, squeezed)
        h = max(culprits)
        down[h] = down.get(h, 0) + 1
    else:
        raise _squeeze_error(req, _squeezed(req, fit.geometry) or Limit("foot", req.n_holes - 1))
    for _ in range(2):  # a couple of rounds of single drill changes while the drills cost
        # notes their goal (not where the design missed it before the drills already)
        if not _misses(req, rows, fit) or _cost(req, rows, fit) < 1.25 * unsnapped_cost:
            break
        best = fit
        for h, direction in _drill_moves(g, fit, free_d):
            other = _next_drill(req, fit.geometry, h, direction)
            if other is None:
                continue
            d = fit.geometry.d
            d[h] = other
            start = Geometry.of(fit.geometry.length_m, fit.geometry.x, d, fit.geometry.cork_m)
            trial = least_squares(problem, start)
            iterations += trial.iterations
            if _squeezed(req, trial.geometry) is None and _cost(req, rows, trial) < _cost(
                    req, rows, best):
                best = trial
        if best is fit:
            break
        fit = best
    return fit, iterations


def _drill_moves(unsnapped: Geometry, fit: Fit, free_d: tuple[int, ...]) -> list[
        tuple[int, int]]:
    """Single drill changes worth a try: each hole toward its unsnapped size, and the holes a
    binding web or top limit squeezes one drill smaller (a span: larger)."""
    moves = {(h, 1 if unsnapped.diameters_m[h] > fit.geometry.diameters_m[h] else -1)
             for h in free_d}
    for limit in fit.binding:
        if limit.kind in ("web", "top", "span"):
            step = 1 if limit.kind == "span" else -1
            moves |= {(h, step) for h in (limit.hole, limit.other) if h in free_d}
        elif limit.kind == "fingers":
            # a smaller hole sits higher for the same note, a larger one lower: both part them
            moves |= {(h, step) for h, step in ((limit.hole, -1), (limit.other, 1))
                      if h in free_d}
    return sorted(moves)


GOAL_CENTS = {1: 2.0, 2: 10.0}
"""What a design aims at, register by register: within these of every target."""


def _misses(req: Request, rows: NDArray[np.intp], fit: Fit) -> bool:
    goals = np.array([GOAL_CENTS[int(r)] for r in req.registers[rows]])
    return bool(np.any(np.abs(fit.cents) > goals))


def _cost(req: Request, rows: NDArray[np.intp], fit: Fit) -> float:
    r = fit.cents * req.weights[rows]
    return float(r @ r)


def _next_drill(req: Request, g: Geometry, h: int, direction: int) -> float | None:
    """The next drill above (direction 1) or below (−1) hole h's diameter, within its limits."""
    dmax = float(req.max_diameter(g.x)[h])
    ok = req.drills[(req.drills >= req.limits.min_diameter_m - 1e-9)
                    & (req.drills <= dmax + 1e-9)]
    now = g.diameters_m[h]
    side = ok[ok > now + 1e-9] if direction > 0 else ok[ok < now - 1e-9]
    if side.size == 0:
        return None
    return float(side.min() if direction > 0 else side.max())


def _squeezed(req: Request, g: Geometry) -> Limit | None:
    """The first limit a snapped geometry breaks (0.01 mm slack), or None."""
    X, D, web = g.x, g.d, req.limits.min_web_m
    if X.size and X[0] < float(req.top_limit(D[0])) - 1e-5:
        return Limit("top", 0)
    for i in range(X.size - 1):
        if X[i + 1] - X[i] < 0.5 * (D[i] + D[i + 1]) + web - 1e-5:
            return Limit("web", i, i + 1)
        span = req.spans[i]
        if span is not None and X[i + 1] - X[i] > span + 1e-5:
            return Limit("span", i, i + 1)
    for pair in req.fingers:
        if X[pair.lower] - X[pair.upper] < pair.along_m - 1e-5:
            return Limit("fingers", pair.upper, pair.lower)
    if X.size and X[-1] > g.length_m - 0.5 * D[-1] - web + 1e-5:
        return Limit("foot", X.size - 1)
    return None


def _squeeze_error(req: Request, limit: Limit) -> DesignError:
    web = req.limits.min_web_m * MM
    if limit.kind == "top":
        return DesignError(
            f"hole 1 cannot sit {web:.1f} mm below the {req.mouth_word} with any drill of the "
            "set", "add smaller drills, or allow a thinner web", hole=0)
    if limit.kind == "foot":
        return DesignError(
            f"hole {limit.hole + 1} would sit closer to the foot than its web allows",
            "lower the all-closed note or use smaller holes near the foot", hole=limit.hole)
    if limit.kind == "fingers":
        least = (req.limits.min_span_m or 0.0) * MM
        return DesignError(
            f"holes {limit.hole + 1} and {limit.other + 1} cannot sit {least:.1f} mm apart for "
            "the two fingers that cover them with the drills of the set (`min_span`)",
            "add drill sizes, turn one of them a little round the tube (`angle`), or set a "
            "smaller `min_span` if the player's fingers fit closer", hole=limit.other)
    gap = (f"the {(req.spans[limit.hole] or 0.0) * MM:.1f} mm span" if limit.kind == "span"
           else f"a {web:.1f} mm web")
    return DesignError(
        f"holes {limit.hole + 1} and {limit.other + 1} cannot keep {gap} between them with "
        "the drills of the set", "add drill sizes, or relax the web and span limits",
        hole=limit.other)
