"""The solver's unknowns and the maker's limits on them, as linear inequalities.

The unknowns are the tube length, the free hole positions, the free hole diameters and (for
a side-blown flute) the cork's distance above the embouchure centre, packed into one vector
in millimetres. The limits are linear in them:

- ``top``: the top hole's edge a web below the mouth opening;
- ``web``: a web between neighbouring hole edges; ``span``: at most the hand's span between
  neighbouring centres; ``fingers``: at least the least span between the centres of holes
  that neighbouring fingers cover;
- ``foot``: the bottom hole's edge a web above the open foot;
- ``smallest`` / ``largest``: a hole's diameter within its limits (the largest is the absolute
  limit or the ratio to the local bore, taken at the current positions);
- ``cork-low`` / ``cork-high``: the cork within its range.

Each Gauss–Newton step is the strictly convex quadratic programme min ½sᵀHs + gᵀs subject to
G(u + s) ≥ h, solved by the dual active-set method of D. Goldfarb & A. Idnani, "A numerically
stable dual method for solving strictly convex quadratic programs", Mathematical Programming
27, 1–33 (1983): it starts from the unconstrained minimum and adds violated constraints one
at a time, so it needs no feasible start (a step may restore a geometry that drill snapping
made infeasible). The multipliers of the active constraints say which limit holds a note
back, which ``advice`` turns into a maker's words.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

from compiler.acoustics.solve_request import DesignError, Request

Float = NDArray[np.float64]

MM = 1000.0
"""The unknown vector is in millimetres (better scaled than metres for the linear algebra)."""


@dataclass(frozen=True)
class Geometry:
    """A flute's free geometry: tube length, hole centres and diameters, cork (m)."""

    length_m: float
    positions_m: tuple[float, ...]
    diameters_m: tuple[float, ...]
    cork_m: float

    @classmethod
    def of(cls, length: float, positions: Float, diameters: Float, cork: float) -> Geometry:
        return cls(float(length), tuple(float(x) for x in positions),
                   tuple(float(d) for d in diameters), float(cork))

    @property
    def x(self) -> Float:
        return np.array(self.positions_m, dtype=np.float64)

    @property
    def d(self) -> Float:
        return np.array(self.diameters_m, dtype=np.float64)


@dataclass(frozen=True)
class Unknowns:
    """Which quantities the solver may change: the length, the positions and diameters of the
    listed holes (indices from 0 at the top), the cork."""

    length: bool
    positions: tuple[int, ...]
    diameters: tuple[int, ...]
    cork: bool

    @property
    def size(self) -> int:
        return int(self.length) + len(self.positions) + len(self.diameters) + int(self.cork)

    def variables(self) -> list[tuple[str, int]]:
        """The unknowns in vector order: ("L", -1), ("x", h), ("d", h), ("c", -1)."""
        out = [("L", -1)] if self.length else []
        out += [("x", h) for h in self.positions] + [("d", h) for h in self.diameters]
        return out + ([("c", -1)] if self.cork else [])

    def pack(self, g: Geometry) -> Float:
        value = {"L": lambda h: g.length_m, "x": lambda h: g.positions_m[h],
                 "d": lambda h: g.diameters_m[h], "c": lambda h: g.cork_m}
        return np.array([value[k](h) for k, h in self.variables()], dtype=np.float64) * MM

    def unpack(self, g: Geometry, u: Float) -> tuple[Float, Float, Float, Float]:
        """Length (n,), positions (n, holes), diameters (n, holes), cork (n,) of a batch of
        unknown vectors u (n, size), metres."""
        n = u.shape[0]
        L, c = np.full(n, g.length_m), np.full(n, g.cork_m)
        X, D = np.tile(g.x, (n, 1)), np.tile(g.d, (n, 1))
        for i, (k, h) in enumerate(self.variables()):
            col = u[:, i] / MM
            if k == "L":
                L = col
            elif k == "x":
                X[:, h] = col
            elif k == "d":
                D[:, h] = col
            else:
                c = col
        return L, X, D, c

    def geometry(self, g: Geometry, u: Float) -> Geometry:
        L, X, D, c = self.unpack(g, u[None])
        return Geometry.of(float(L[0]), X[0], D[0], float(c[0]))


@dataclass(frozen=True)
class Limit:
    """One of the maker's limits (module docstring): its kind and the holes it concerns."""

    kind: str
    hole: int = -1
    other: int = -1


@dataclass(frozen=True, eq=False)
class Limits:
    """The limits that involve an unknown, as G·u ≥ h (u in mm)."""

    G: Float
    h: Float
    limits: tuple[Limit, ...]


def limits(req: Request, unknowns: Unknowns, g: Geometry) -> Limits:
    """The maker's limits on ``unknowns`` around geometry ``g`` (fixed values move to h)."""
    lim = req.limits
    web, n = lim.min_web_m, req.n_holes
    half = req.mouth_half_m + req.template.head.mouth_position_m
    dmax = req.max_diameter(g.x)
    rows: list[tuple[Limit, dict[tuple[str, int], float], float]] = []
    if n:
        rows.append((Limit("top", 0), {("x", 0): 1.0, ("d", 0): -0.5}, half + web))
        rows.append((Limit("foot", n - 1), {("L", -1): 1.0, ("x", n - 1): -1.0,
                                            ("d", n - 1): -0.5}, web))
    for i in range(n - 1):
        rows.append((Limit("web", i, i + 1), {("x", i + 1): 1.0, ("x", i): -1.0,
                                             ("d", i): -0.5, ("d", i + 1): -0.5}, web))
        span = req.spans[i]
        if span is not None:
            rows.append((Limit("span", i, i + 1), {("x", i): 1.0, ("x", i + 1): -1.0}, -span))
    for pair in req.fingers:
        rows.append((Limit("fingers", pair.upper, pair.lower),
                     {("x", pair.lower): 1.0, ("x", pair.upper): -1.0}, pair.along_m))
    for h in range(n):
        rows.append((Limit("smallest", h), {("d", h): 1.0}, lim.min_diameter_m))
        rows.append((Limit("largest", h), {("d", h): -1.0}, -float(dmax[h])))
    if req.cork is not None:
        rows.append((Limit("cork-low"), {("c", -1): 1.0}, req.cork.low_m))
        rows.append((Limit("cork-high"), {("c", -1): -1.0}, -req.cork.high_m))
    fixed = {"L": lambda h: g.length_m, "x": lambda h: g.positions_m[h],
             "d": lambda h: g.diameters_m[h], "c": lambda h: g.cork_m}
    column = {v: i for i, v in enumerate(unknowns.variables())}
    G, h_out, kept = [], [], []
    for limit, terms, bound in rows:
        vector = np.zeros(unknowns.size)
        rhs = bound
        for var, coef in terms.items():
            if var in column:
                vector[column[var]] = coef
            else:
                rhs -= coef * fixed[var[0]](var[1])
        if np.any(vector != 0.0):
            G.append(vector)
            h_out.append(rhs * MM)
            kept.append(limit)
    return Limits(np.array(G, dtype=np.float64).reshape(len(G), unknowns.size),
                  np.array(h_out, dtype=np.float64), tuple(kept))


@dataclass(frozen=True, eq=False)
class Step:
    """A quadratic programme's solution: the step, the active limits and their multipliers."""

    s: Float
    active: tuple[int, ...]
    multipliers: Float
    feasible: bool


def quadratic_step(H: Float, g: Float, G: Float, b: Float, tol: float = 1e-9) -> Step:
    """min ½sᵀHs + gᵀs subject to G s ≥ b (H positive definite), by the dual method of
    Goldfarb & Idnani (1983) in its plain form (the active set's projections re-solved at
    each change; our problems have at most a few dozen unknowns and limits)."""
    n = H.shape[0]
    Hinv = np.linalg.inv(H)
    s = -Hinv @ g
    active: list[int] = []
    u = np.zeros(0)
    for _ in range(4 * (len(b) + n) + 10):
        slack = G @ s - b if len(b) else np.zeros(0)
        candidates = [i for i in range(len(b)) if i not in active]
        if not candidates or min(slack[candidates]) >= -tol * max(1.0, float(np.abs(b).max())):
            return Step(s, tuple(active), u, True)
        p = min(candidates, key=lambda i: slack[i])
        u_plus = np.append(u, 0.0)
        while True:
            N = G[active].T if active else np.zeros((n, 0))
            npv = G[p]
            if active:
                M = N.T @ Hinv @ N
                Nstar = np.linalg.pinv(M) @ N.T @ Hinv
                z = Hinv @ npv - Hinv @ N @ (Nstar @ npv)
                r = Nstar @ npv
            else:
                z = Hinv @ npv
                r = np.zeros(0)
            positive = [j for j in range(len(active)) if r[j] > 1e-12]
            t1 = min((u_plus[j] / r[j] for j in positive), default=np.inf)
            k = min(positive, key=lambda j: u_plus[j] / r[j]) if positive else -1
            zn = float(z @ npv)
            t2 = -float(npv @ s - b[p]) / zn if abs(zn) > 1e-14 else np.inf
            if not np.isfinite(t1) and not np.isfinite(t2):
                return Step(s, tuple(active), u, False)
            if not np.isfinite(t2):  # dependent normal: drop a limit and try again
                u_plus = np.append(u_plus[:-1] - t1 * r, u_plus[-1] + t1)
                u_plus = np.delete(u_plus, k)
                active.pop(k)
                continue
            t = min(t1, t2)
            s = s + t * z
            u_plus = np.append(u_plus[:-1] - t * r, u_plus[-1] + t)
            if t == t2:
                active.append(p)
                u = u_plus
                break
            u_plus = np.delete(u_plus, k)
            active.pop(k)
    return Step(s, tuple(active), u, False)


def advice(req: Request, g: Geometry, binding: list[Limit]) -> str:
    """What would let the notes reach their targets, in a maker's words, from the limits that
    hold the solution back (most binding first); empty when nothing binds."""
    words: list[str] = []
    pairs: list[str] = []
    web = req.limits.min_web_m * MM
    for limit in binding:
        h, o = limit.hole, limit.other
        if limit.kind == "largest":
            if req.ratio_binds(g.positions_m[h]):
                text = (f"larger holes than {req.limits.max_ratio:.2g} of the bore "
                        "(`max_ratio`), or a narrower bore")
            else:
                text = (f"holes larger than {req.limits.max_diameter_m * MM:.1f} mm "
                        "(`max_diameter`)")
        elif limit.kind == "smallest":
            text = f"holes smaller than {req.limits.min_diameter_m * MM:.1f} mm (`min_diameter`)"
        elif limit.kind == "top":
            text = (f"hole 1 closer to the {req.mouth_word} than the {web:.1f} mm web allows "
                    "(`min_web`), or a narrower bore")
        elif limit.kind == "web":
            text = f"a web thinner than {web:.1f} mm between holes {h + 1} and {o + 1} (`min_web`)"
        elif limit.kind == "span":
            span = (req.spans[min(h, o)] or 0.0) * MM
            text = f"a span wider than {span:.1f} mm between holes {h + 1} and {o + 1} (`max_span`)"
        elif limit.kind == "fingers":
            pairs.append(f"{h + 1} and {o + 1}")
            text = _FINGERS  # every pair in one piece of advice, written below
        elif limit.kind == "foot":
            text = f"more tube below hole {h + 1}"
        elif limit.kind == "cork-low" and req.cork is not None and req.cork.low_is_hole_edge:
            text = ("a shorter head cavity, which this embouchure hole does not leave room "
                    f"for (the cork already sits at its edge, {req.cork.low_m * MM:.1f} mm "
                    "above the centre)")
        elif limit.kind == "cork-low" and req.cork is not None:
            text = f"a shorter cork (closer than {req.cork.low_m * MM:.1f} mm: set `cork`)"
        elif limit.kind == "cork-high" and req.cork is not None:
            text = f"a longer head cavity (cork above {req.cork.high_m * MM:.1f} mm: set `cork`)"
        else:
            continue
        if text not in words:
            words.append(text)
    if pairs:
        least = (req.limits.min_span_m or 0.0) * MM
        words[words.index(_FINGERS)] = (
            f"holes {', '.join(pairs)} closer than {least:.1f} mm (`min_span`, if the player's "
            "fingers fit) or turned apart round the tube (`angle`)")
    return "; ".join(words[:3])


_FINGERS = "fingers"


def snap(req: Request, g: Geometry, holes: tuple[int, ...],
         down: Mapping[int, int] | None = None) -> Geometry:
    """The diameters of ``holes`` snapped to drills within their limits: the nearest drill,
    or for a hole in ``down`` the largest drill not above its size, then ``down[h] − 1`` drills
    smaller still. Raises ``DesignError`` when no drill fits a hole."""
    dmax = req.max_diameter(g.x)
    lo = req.limits.min_diameter_m
    d = g.d
    for h in holes:
        ok = req.drills[(req.drills >= lo - 1e-9) & (req.drills <= dmax[h] + 1e-9)]
        if ok.size == 0:
            raise DesignError(f"no drill in the drill set fits hole {h + 1} (allowed "
                              f"{lo * MM:.1f}–{dmax[h] * MM:.1f} mm)",
                              "add a drill size in that range", hole=h)
        steps = (down or {}).get(h, 0)
        if steps <= 0:
            d[h] = float(ok[np.argmin(np.abs(ok - d[h]))])
            continue
        below = ok[ok <= d[h] + 1e-9]
        d[h] = float(below[max(below.size - steps, 0)] if below.size else ok.min())
    return Geometry.of(g.length_m, g.x, d, g.cork_m)
