"""The design request of a holed pipe: what is asked, what is fixed, what limits the holes.

``read_request`` checks the shapes and the obvious impossibilities of a request (one target
per fingering row, fixed holes in order below the mouth, a fixed diameter inside its limits)
and returns a frozen ``Request`` that the solver reads: the instrument template (bore, head,
chimneys and models), the fingering rows with their registers and weights, the fixed values
and the limits. Positions are measured from the top end of the tube; holes are numbered
from 1 at the top in messages, from 0 in fields.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

from compiler.acoustics.air import Air
from compiler.acoustics.impedance import Instrument

Float = NDArray[np.float64]

DIAMETER_RULE = (0.45, 0.60)
"""Default hole diameters as a fraction of the bore diameter, top hole to bottom hole (linear
in between). Common practice, from memory: finger holes of about half the bore, larger toward
the foot where the spacing widens. The solver keeps to them unless the notes ask otherwise."""

CORK_RANGE = (0.25, 1.2)
"""Where a free cork may sit, as bore diameters above the embouchure centre. Common practice,
from memory: a concert flute's cork sits about 17 mm (0.9 bore diameters) above the
embouchure centre; much closer and the low notes lose their tone, much further and the
octaves collapse."""

MIN_SPAN_M = 0.015
"""Default least centre-to-centre distance between holes covered by neighbouring fingers.
Common practice, from memory: an adult's finger pads sit about 17–22 mm apart, centre to
centre, when they cover a flute's or whistle's holes. 15 mm is below that on purpose: it
never refuses the spacing of an ordinary flute, still fits small instruments (high whistles)
whose players squeeze their fingers together, and rules out holes no two fingers can cover
(10–12 mm apart). A spec sets its own, or ``0 mm`` for none."""

SECOND_REGISTER_WEIGHT = 0.5
"""Default weight of second-register rows in the least squares (first register 1): the
player bends an overblown note more easily than a fundamental, so it gives way first."""


class DesignError(ValueError):
    """An impossible design request: ``message`` and ``hint`` in a maker's words, and what it
    concerns: ``row`` (index of a fingering row of the request), ``hole`` (index of a hole,
    0 at the top), or ``about`` (``"fingerings"`` or ``"holes"`` as a whole)."""

    def __init__(
        self,
        message: str,
        hint: str = "",
        *,
        row: int | None = None,
        hole: int | None = None,
        about: str = "",
    ) -> None:
        super().__init__(message)
        self.message = message
        self.hint = hint
        self.row = row
        self.hole = hole
        self.about = about


@dataclass(frozen=True)
class FingerPair:
    """Two holes covered by neighbouring fingers (indices from 0 at the top, upper first) and
    the least distance along the tube between their centres, metres: the least span itself for
    holes in line, less where one is turned round the tube (the span is measured on the
    surface, ``finger_pairs``)."""

    upper: int
    lower: int
    along_m: float


@dataclass(frozen=True)
class HoleConstraints:
    """Limits on the holes, metres. max_ratio: hole diameter over the local bore diameter.
    min_web_m: wood or metal left between neighbouring hole edges, and between the top hole and
    the mouth opening. max_span_m: largest centre-to-centre distance between adjacent holes, one
    value for every gap or a tuple with one entry per gap (None: no limit, e.g. between hands).
    min_span_m: least centre-to-centre distance between holes covered by neighbouring fingers
    (None or 0: no limit; the resolver's default is ``MIN_SPAN_M``), applied to ``fingers``
    (None: every pair of adjacent holes, in line)."""

    min_diameter_m: float = 0.002
    max_diameter_m: float = 0.011
    max_ratio: float = 0.8
    min_web_m: float = 0.003
    max_span_m: float | tuple[float | None, ...] | None = None
    min_span_m: float | None = None
    fingers: tuple[FingerPair, ...] | None = None


def finger_pairs(angles_deg: tuple[float, ...], outside_diameter_m: float,
                 min_span_m: float) -> tuple[FingerPair, ...]:
    """The holes neighbouring fingers cover, and how far apart along the tube each pair must
    be for their centres to be ``min_span_m`` apart on the tube's outside.

    Fingers cover the holes on the front (less than 90° round the tube from the front line),
    one finger each, in order down the tube; a hole on the back is a thumb's and is left out
    (the pair is then the front holes above and below it). Two holes turned apart by an arc
    ``s`` of the outside surface need only ``sqrt(span² − s²)`` along the tube (the surface
    distance, unrolled: plane geometry)."""
    front = [i for i, a in enumerate(angles_deg) if abs(_wrapped(a)) < 90.0]
    pairs = []
    for i, j in zip(front, front[1:], strict=False):
        turn = abs(_wrapped(angles_deg[j] - angles_deg[i]))
        arc = np.pi * outside_diameter_m * turn / 360.0
        pairs.append(FingerPair(i, j, float(np.sqrt(max(min_span_m ** 2 - arc ** 2, 0.0)))))
    return tuple(pairs)


def _wrapped(angle_deg: float) -> float:
    """An angle round the tube as −180° to 180° from the front line."""
    return (angle_deg + 180.0) % 360.0 - 180.0


@dataclass(frozen=True)
class FixedHole:
    """A hole the maker has decided: position from the top end and/or diameter, metres."""

    position_m: float | None = None
    diameter_m: float | None = None


@dataclass(frozen=True)
class CorkRange:
    """The cork's distance above the mouth centre: fixed (``low == high``) or free between."""

    low_m: float
    high_m: float
    start_m: float
    low_is_hole_edge: bool = False
    """The lowest place is the embouchure hole's edge (a nearer cork would sit in the hole)."""

    @property
    def free(self) -> bool:
        return self.high_m > self.low_m


@dataclass(frozen=True, eq=False)
class Request:
    """A checked design request (arrays are not to be modified)."""

    template: Instrument
    """Bore, head, chimneys and models; its length and hole geometry are placeholders."""
    air: Air
    closed: NDArray[np.bool_]
    """Fingering rows (n_rows, n_holes), True = closed."""
    targets: Float
    registers: NDArray[np.int_]
    weights: Float
    """Least-squares weight per row (1 for register 1)."""
    names: tuple[str, ...]
    limits: HoleConstraints
    spans: tuple[float | None, ...]
    fingers: tuple[FingerPair, ...]
    """The pairs held ``limits.min_span_m`` apart (none without a least span)."""
    fixed_x: Float
    """Fixed position per hole, NaN where free."""
    fixed_d: Float
    length_m: float | None
    cork: CorkRange | None
    """None: the head has no cork to move (duct flutes, plain pipes)."""
    drills: Float
    mouth_half_m: float
    """Half the mouth opening along the tube (the top hole's web is measured from its edge)."""
    mouth_word: str

    @property
    def n_holes(self) -> int:
        return int(self.closed.shape[1])

    @property
    def first(self) -> NDArray[np.intp]:
        """Rows of the first register."""
        return np.flatnonzero(self.registers == 1)

    def max_diameter(self, positions: Float) -> Float:
        """Largest allowed diameter of holes at ``positions``: the absolute limit or the ratio
        to the local bore, whichever is smaller."""
        bore = 2.0 * self.template.bore.radius_at(positions)
        return np.asarray(np.minimum(self.limits.max_diameter_m, self.limits.max_ratio * bore))

    def ratio_binds(self, position_m: float) -> bool:
        """True where the bore ratio, not the absolute diameter, sets the largest hole."""
        bore = 2.0 * float(self.template.bore.radius_at(position_m))
        return self.limits.max_ratio * bore < self.limits.max_diameter_m

    def top_limit(self, diameters: Float) -> Float:
        """Highest centre position of a top hole of the given diameter (web to the mouth)."""
        x_m = self.template.head.mouth_position_m
        return np.asarray(x_m + self.mouth_half_m + 0.5 * diameters + self.limits.min_web_m)

    def rule_diameters(self) -> Float:
        """``DIAMETER_RULE`` fractions of the bore diameter at the mouth, within the limits."""
        a_top = float(self.template.bore.radius_at(self.template.head.mouth_position_m))
        return rule_diameters(self.n_holes, 2.0 * a_top, self.limits)


def rule_diameters(n_holes: int, bore_diameter_m: float, constraints: HoleConstraints) -> Float:
    """Default diameters: ``DIAMETER_RULE`` fractions of the bore diameter, within the limits."""
    top, bottom = DIAMETER_RULE
    frac = np.linspace(top, bottom, n_holes) if n_holes > 1 else np.array([top])
    hi = min(constraints.max_diameter_m, constraints.max_ratio * bore_diameter_m)
    return np.asarray(np.clip(frac * bore_diameter_m, constraints.min_diameter_m, hi))


def read_request(
    template: Instrument,
    air: Air,
    fingerings: ArrayLike,
    targets_hz: ArrayLike,
    *,
    registers: ArrayLike | None,
    second_weight: float,
    note_names: tuple[str, ...] | None,
    fixed: tuple[FixedHole | None, ...] | None,
    limits: HoleConstraints,
    drills_m: tuple[float, ...],
    length_m: float | None,
    cork: CorkRange | None,
) -> Request:
    """Check a request's shapes and fixed values; raise ``DesignError`` for what cannot be."""
    table = np.asarray(fingerings, dtype=bool)
    targets = np.asarray(targets_hz, dtype=np.float64)
    if table.ndim != 2 or targets.shape != (table.shape[0],) or table.shape[0] == 0:
        raise DesignError("the fingering table and the target notes do not match",
                          "give one target per fingering row", about="fingerings")
    n_rows, n_holes = table.shape
    regs = np.ones(n_rows, dtype=int) if registers is None else np.asarray(registers, dtype=int)
    if not np.any(regs == 1) or np.any((regs != 1) & (regs != 2)) or np.any(~(targets > 0)):
        raise DesignError("every fingering needs a positive target in register 1 or 2, and at "
                          "least one is in register 1", "check the fingering table",
                          about="fingerings")
    if note_names is not None and len(note_names) != n_rows:
        raise DesignError("one note name per fingering row is needed", about="fingerings")
    names = (tuple(note_names) if note_names
             else tuple(f"fingering {i + 1}" for i in range(n_rows)))
    fixed = fixed or (None,) * n_holes
    gaps = max(n_holes - 1, 0)
    spans = (limits.max_span_m if isinstance(limits.max_span_m, tuple)
             else (limits.max_span_m,) * gaps)
    if len(fixed) != n_holes or len(spans) != gaps:
        raise DesignError("the fixed holes or spans do not match the number of holes",
                          "give one fixed entry per hole and one span per gap (None: free)",
                          about="holes")
    fx = np.array([np.nan if f is None or f.position_m is None else f.position_m for f in fixed])
    fd = np.array([np.nan if f is None or f.diameter_m is None else f.diameter_m for f in fixed])
    head = template.head
    x_m = head.mouth_position_m
    given = fx[np.isfinite(fx)]
    beyond = length_m is not None and np.any(given >= length_m)
    if np.any(np.diff(given) <= 0) or np.any(given <= x_m) or beyond:
        raise DesignError("the fixed hole positions must lie in order below the mouth and "
                          "inside the tube", "check the fixed positions (measured from the "
                          "top end)", about="holes")
    fingers = _fingers(limits, n_holes, fx, spans)
    word = {"duct": "window", "embouchure": "embouchure hole", "open": "top end"}[head.kind]
    half = {"duct": 0.5 * head.window_length_m, "embouchure": head.embouchure_radius_m}
    weight = float(np.clip(second_weight, 0.0, 1.0))
    request = Request(
        template=template, air=air, closed=table, targets=targets, registers=regs,
        weights=np.where(regs == 1, 1.0, weight), names=names, limits=limits,
        spans=tuple(spans), fingers=fingers, fixed_x=fx, fixed_d=fd, length_m=length_m, cork=cork,
        drills=np.sort(np.asarray(drills_m, dtype=np.float64)),
        mouth_half_m=half.get(head.kind, 0.0), mouth_word=word)
    dmax = request.max_diameter(np.where(np.isfinite(fx), fx, x_m + 0.1))
    for h in np.flatnonzero(np.isfinite(fd)):
        if not limits.min_diameter_m - 1e-9 <= fd[h] <= dmax[h] + 1e-9:
            raise DesignError(
                f"hole {h + 1} is fixed at {fd[h] * 1e3:.2f} mm, outside the allowed "
                f"{limits.min_diameter_m * 1e3:.1f}–{dmax[h] * 1e3:.1f} mm",
                "change the fixed diameter or the hole-size limits", hole=int(h))
    return request


def _fingers(limits: HoleConstraints, n_holes: int, fixed_x: Float,
             spans: list[float | None] | tuple[float | None, ...]) -> tuple[FingerPair, ...]:
    """The pairs held apart by the least span, checked against the fixed positions and the
    largest span; raise ``DesignError`` at the lower hole of a pair that cannot be."""
    least = limits.min_span_m or 0.0
    if least <= 0.0:
        return ()
    pairs = (limits.fingers if limits.fingers is not None else
             tuple(FingerPair(i, i + 1, least) for i in range(n_holes - 1)))
    for p in pairs:
        if not 0 <= p.upper < p.lower < n_holes:
            raise DesignError("a pair of neighbouring finger holes names holes that are not "
                              "there", "list each pair once, upper hole first", about="holes")
        apart = fixed_x[p.lower] - fixed_x[p.upper]
        if np.isfinite(apart) and apart < p.along_m - 1e-9:
            raise DesignError(
                f"holes {p.upper + 1} and {p.lower + 1} are fixed {apart * 1e3:.1f} mm apart "
                f"along the tube, closer than the {least * 1e3:.1f} mm two neighbouring fingers "
                "need between their centres (`min_span`)",
                "move them apart or turn one round the tube (`angle`), or set a smaller "
                "`min_span` if the fingers that cover them fit closer", hole=p.lower)
        widest = spans[p.upper] if p.lower == p.upper + 1 else None
        if widest is not None and widest < p.along_m - 1e-9:
            raise DesignError(
                f"holes {p.upper + 1} and {p.lower + 1} must be {least * 1e3:.1f} mm apart or "
                f"more (`min_span`) and {widest * 1e3:.1f} mm or less (`max_span`)",
                "give a `max_span` larger than `min_span`", hole=p.lower)
    return tuple(pairs)
