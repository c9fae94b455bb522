"""Weighted least squares in cents on the transfer-matrix model, within the maker's limits.

Residuals: each fingering row's error in cents at its register (the n-th upward zero crossing
of Im Z, ``compiler.acoustics.playing``) times the row's weight, plus a small pull of every
free diameter toward its starting value (``PULL_CENTS_PER_MM``: among equally good designs,
the one nearest the trade's rule of hole sizes).

Method: damped Gauss–Newton (Levenberg–Marquardt: K. Levenberg 1944, D. W. Marquardt 1963,
"An algorithm for least-squares estimation of nonlinear parameters", J. SIAM 11(2), 431–441)
with the limits of ``solve_active`` as linear inequalities in each step's quadratic
programme. The Jacobian comes from one batched evaluation of all perturbed instruments at
the current playing frequencies: df/du = −(∂ImZ/∂u)/(∂ImZ/∂f), the implicit function theorem
on the reactance zero. A step is kept if it lowers the sum of squares, and the damping
follows how well the linear model predicted the gain (Nielsen's rule); steps are also capped
(40 mm of length, 20 mm of position, 1.5 mm of diameter, 3 mm of cork) so that a playing
frequency cannot jump to another resonance between evaluations, and a step that moves a
resonance far beyond its prediction is refused (``JUMP_CENTS``).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

from compiler.acoustics.impedance import impedance_batch
from compiler.acoustics.playing import register_frequencies
from compiler.acoustics.solve_active import (
    MM,
    Geometry,
    Limit,
    Limits,
    Unknowns,
    limits,
    quadratic_step,
)
from compiler.acoustics.solve_request import DesignError, Request
from compiler.acoustics.tuning import cents

Float = NDArray[np.float64]

PULL_CENTS_PER_MM = 0.02
"""Weight of a free diameter's distance from its starting value, cents per millimetre: small
enough never to cost a note a hundredth of a cent it could have, large enough to pick one
design among equally good ones."""

TOLERANCE_CENTS = 0.01
"""Goal of a determined fit (as many unknowns as notes): every note within this."""

SETTLED_CENTS = 0.005
"""A fit whose last step moved no note further than this has settled."""

JUMP_CENTS = 150.0
"""A step that moves a resonance this much further than the linear prediction is refused."""

_STEP_MM = 1e-3  # finite-difference step of every unknown, mm
_CAPS_MM = {"L": 40.0, "x": 20.0, "d": 1.5, "c": 3.0}
_CENTS = 1200.0 / np.log(2.0)


@dataclass(frozen=True, eq=False)
class Fit:
    """A least-squares solution: the geometry, each row's playing frequency and error in cents
    (unweighted), the iterations, the limits that hold it back (most binding first), and for
    each row those whose release would bring it closer (most first)."""

    geometry: Geometry
    frequencies_hz: Float
    cents: Float
    iterations: int
    binding: tuple[Limit, ...]
    by_row: tuple[tuple[Limit, ...], ...]


@dataclass(frozen=True, eq=False)
class Problem:
    """What one least-squares run fits: some rows of the request, some unknowns."""

    request: Request
    rows: NDArray[np.intp]
    unknowns: Unknowns
    pull_to: Float
    """The diameters the free ones are pulled toward (one per hole, m)."""
    bounded: bool = True
    """False: no limit applies (the tube's length alone, the holes being placeholders)."""

    def limits(self, g: Geometry) -> Limits:
        if self.bounded:
            return limits(self.request, self.unknowns, g)
        return Limits(np.zeros((0, self.unknowns.size)), np.zeros(0), ())

    @property
    def determined(self) -> bool:
        """As many lengths and positions free as there are notes (the diameters are pulled
        toward the rule, so they do not count): every note can be met."""
        u = self.unknowns
        return int(u.length) + len(u.positions) + int(u.cork) >= self.rows.size

    def valid(self, L: Float, X: Float, D: Float) -> NDArray[np.bool_]:
        """Geometry the model can evaluate (not the maker's limits): holes in order inside the
        tube, diameters positive and narrower than the bore."""
        req = self.request
        x_m = req.template.head.mouth_position_m
        ok = (L > x_m + 0.01) & np.all(D > 2e-4, axis=1)
        ok &= np.all(D < 1.96 * req.template.bore.radius_at(X), axis=1)
        if X.shape[1]:
            ok &= (X[:, 0] > x_m + 1e-3) & (X[:, -1] < L - 1e-3)
            ok &= np.all(np.diff(X, axis=1) > 5e-4, axis=1)
        return np.asarray(ok)

    def evaluate(self, g: Geometry, U: Float, freqs: Float) -> NDArray[np.complex128]:
        L, X, D, C = self.unknowns.unpack(g, U)
        req = self.request
        return impedance_batch(req.template, req.air, freqs, req.closed[self.rows],
                               length_m=L, hole_positions_m=X, hole_radii_m=0.5 * D,
                               cavity_length_m=C)

    def frequencies(self, g: Geometry, u: Float, guess: Float | None) -> tuple[Float, Float]:
        """Playing frequency and reactance slope of each row, for the unknowns ``u``."""
        req = self.request
        targets = req.targets[self.rows]
        first = targets[req.registers[self.rows] == 1]
        f_lo = float((first if first.size else targets).min()) / 2.5
        f_hi = float(targets.max()) * 2.0

        def evaluate(freqs: Float) -> NDArray[np.complex128]:
            return self.evaluate(g, u[None], freqs)

        f, slope = register_frequencies(evaluate, (1, self.rows.size), req.registers[self.rows],
                                        f_lo, f_hi, guess)
        return f[0], slope[0]

    def residuals(self, g: Geometry, u: Float, f: Float) -> Float:
        req = self.request
        rows = np.asarray(cents(np.where(np.isfinite(f), f, 1.0), req.targets[self.rows]))
        rows = np.where(np.isfinite(f), rows, np.nan) * req.weights[self.rows]
        return np.concatenate([rows, self._pull(g, u)])

    def _pull(self, g: Geometry, u: Float) -> Float:
        _, _, D, _ = self.unknowns.unpack(g, u[None])
        holes = list(self.unknowns.diameters)
        return np.asarray(PULL_CENTS_PER_MM * (D[0, holes] - self.pull_to[holes]) * MM)

    def jacobian(self, g: Geometry, u: Float, f: Float, slope: Float) -> Float:
        """d(residuals)/du, one row per residual, one column per unknown (cents per mm)."""
        n = self.unknowns.size
        U = u[None] + _STEP_MM * np.vstack([np.zeros(n), np.eye(n)])
        z = self.evaluate(g, U, np.broadcast_to(f, (n + 1, f.size))[..., None])
        dg = (z.imag[1:, :, 0] - z.imag[0, :, 0]) / _STEP_MM  # (n, rows)
        rows = (-(dg / slope) / f * _CENTS).T * self.request.weights[self.rows][:, None]
        pull = np.zeros((len(self.unknowns.diameters), n))
        for k, (kind, hole) in enumerate(self.unknowns.variables()):
            if kind == "d":
                pull[self.unknowns.diameters.index(hole), k] = PULL_CENTS_PER_MM
        return np.vstack([rows, pull])


def no_resonance(problem: Problem, f: Float) -> DesignError:
    """The model finds no resonance for a row: which one, in a maker's words."""
    req = problem.request
    row = int(problem.rows[np.flatnonzero(~np.isfinite(f))[0]])
    pattern = "".join("x" if c else "o" for c in req.closed[row])
    register = "first" if req.registers[row] == 1 else "second"
    return DesignError(
        f"the model finds no {register}-register resonance for {req.names[row]} "
        f"({pattern}) near {req.targets[row]:.1f} Hz with this tube and head",
        "check this fingering and its note, and the head's dimensions", row=row)


def least_squares(problem: Problem, g: Geometry, max_iter: int = 40) -> Fit:
    """Damped Gauss–Newton from ``g`` (module docstring). Raises ``DesignError`` when the
    model finds no resonance for a row at the start."""
    unknowns = problem.unknowns
    u = unknowns.pack(g)
    f, slope = problem.frequencies(g, u, None)
    if not np.all(np.isfinite(f)):
        raise no_resonance(problem, f)
    r = problem.residuals(g, u, f)
    cost = float(r @ r)
    damping = 1e-4
    binding: tuple[Limit, ...] = ()
    it = 0
    s = np.zeros(unknowns.size)
    n_rows = problem.rows.size
    for it in range(1, max_iter + 1):  # noqa: B007 - the count is reported
        if unknowns.size == 0 or np.max(np.abs(r[:n_rows])) <= TOLERANCE_CENTS:
            break
        J = problem.jacobian(g, u, f, slope)
        lims = problem.limits(g)
        JtJ = J.T @ J
        scale = np.maximum(np.diag(JtJ), 1e-6)
        slack = lims.G @ u - lims.h if lims.h.size else np.zeros(0)
        inside = bool(np.all(slack >= -1e-6))
        accepted = False
        growth = 2.0
        while damping < 1e8:
            step = quadratic_step(JtJ + damping * np.diag(scale), J.T @ r, lims.G, -slack)
            if not step.feasible:
                break
            s = step.s
            if inside:
                s = s * min([1.0] + [_CAPS_MM[k] / abs(v) for (k, _), v in
                                     zip(unknowns.variables(), s, strict=True)
                                     if abs(v) > _CAPS_MM[k]])
            trial = unknowns.geometry(g, u + s)
            L, X, D, _ = unknowns.unpack(g, (u + s)[None])
            if problem.valid(L, X, D)[0]:
                guess = f * 2.0 ** ((J[:n_rows] @ s) / (1200.0 * problem.request.weights[
                    problem.rows].clip(1e-9)))
                ft, st = problem.frequencies(g, u + s, guess)
                rt = problem.residuals(g, u + s, ft)
                # A row whose resonance jumped far from the linear prediction has left its
                # register (or split): not a step to take.
                jumped = np.any(np.abs(cents(ft, guess)) > JUMP_CENTS)
                predicted = r + J @ s
                gain = cost - float(predicted @ predicted)
                ratio = (cost - float(rt @ rt)) / gain if gain > 0 else -1.0
                if np.all(np.isfinite(rt)) and not jumped and (ratio > 0 or not inside):
                    accepted = True
                    break
            damping *= growth
            growth *= 2.0
        if not accepted:
            break
        old = cost
        g, u, f, slope, r = trial, u + s, ft, st, rt
        cost = float(r @ r)
        # Nielsen's update (H. B. Nielsen 1999, "Damping parameter in Marquardt's method",
        # IMM-REP-1999-05, DTU): less damping where the linear model predicted the gain well,
        # more where it did not (a zig-zag across a curved valley).
        damping = max(damping * max(1.0 / 3.0, 1.0 - (2.0 * min(ratio, 1.0) - 1.0) ** 3), 1e-7)
        # Done when the last step moved no note by more than a tenth of a cent and gained
        # under 1 % (a least-squares compromise converges only linearly, creeping along its
        # valley; what is left is inaudible).
        moved = float(np.max(np.abs(J[:n_rows] @ s) / problem.request.weights[
            problem.rows].clip(1e-9)))
        if inside and (old - cost <= 1e-10 * max(old, 1e-12) or moved < SETTLED_CENTS or (
                moved < 0.1 and old - cost < 0.01 * old)):
            break
    by_row: tuple[tuple[Limit, ...], ...] = tuple(() for _ in range(n_rows))
    if unknowns.size and it > 1:
        # Tracking follows a resonance from step to step; make sure it is still the row's
        # register (the n-th crossing from below), and report the register's own otherwise.
        scanned, scanned_slope = problem.frequencies(g, u, None)
        strayed = ~np.isfinite(scanned) | (np.abs(cents(scanned, f)) > 1.0)
        if np.any(strayed):
            if not np.all(np.isfinite(scanned)):
                raise no_resonance(problem, scanned)
            f = np.where(strayed, scanned, f)
            slope = np.where(strayed, scanned_slope, slope)
            r = problem.residuals(g, u, f)
    if unknowns.size and np.all(np.isfinite(r)):
        binding, by_row = _binding(problem, g, u, f, slope, r)
    return Fit(g, f, np.asarray(cents(f, problem.request.targets[problem.rows])), it, binding,
               by_row)


def _binding(problem: Problem, g: Geometry, u: Float, f: Float, slope: Float,
             r: Float) -> tuple[tuple[Limit, ...], tuple[tuple[Limit, ...], ...]]:
    """The limits that hold the solution back: active in the Gauss–Newton step's quadratic
    programme (barely damped) with a positive multiplier, the one whose release lowers the sum
    of squares most first; and for each row, those whose release (one millimetre) would bring
    that row closer to its target, most first (the sensitivity of the constrained optimum,
    from its KKT system)."""
    n_rows = problem.rows.size
    none: tuple[tuple[Limit, ...], ...] = tuple(() for _ in range(n_rows))
    J = problem.jacobian(g, u, f, slope)
    lims = problem.limits(g)
    if not lims.h.size:
        return (), none
    H = J.T @ J
    H = H + 1e-6 * np.diag(np.maximum(np.diag(H), 1e-6))
    step = quadratic_step(H, J.T @ r, lims.G, lims.h - lims.G @ u)
    scale = max(float(r @ r), 1e-12)
    held = [(i, m) for i, m in zip(step.active, step.multipliers, strict=True)
            if m > 1e-6 * scale]
    if not held:
        return (), none
    ranked = tuple(lims.limits[i] for i, _ in sorted(held, key=lambda a: -a[1]))
    rows_active = [i for i, _ in held]
    G_a = lims.G[rows_active]
    n, m = H.shape[0], len(rows_active)
    kkt = np.block([[H, -G_a.T], [G_a, np.zeros((m, m))]])
    gains = np.zeros((n_rows, m))
    for k in range(m):
        rhs = np.zeros(n + m)
        rhs[n + k] = -1.0  # the limit moved back by a millimetre
        du = np.linalg.lstsq(kkt, rhs, rcond=None)[0][:n]
        gains[:, k] = -np.sign(r[:n_rows]) * (J[:n_rows] @ du)
    per_row = []
    for row in range(n_rows):
        useful = [k for k in np.argsort(-gains[row]) if gains[row, k] > 1e-3]
        per_row.append(tuple(lims.limits[rows_active[k]] for k in useful))
    return ranked, tuple(per_row)
