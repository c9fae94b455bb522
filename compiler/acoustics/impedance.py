"""The instrument model (bore, holes, head) and the impedance its exciting jet sees.

Conventions: SI units; every position is measured from the TOP END of the tube (the head end,
where the block or the cork sits), increasing toward the foot. Time convention e^{+jωt}.
Fingerings are boolean arrays of shape (n_fingerings, n_holes), True = hole closed.

Model (transfer-matrix method, as in Keefe 1990, "Woodwind air column models", JASA 88(1),
35–51, bibliography from memory; each element's source is in its module's docstring):

- Downstream of the mouth: the bore from the mouth to the foot (cylinders and frusta with
  visco-thermal losses, ``compiler.acoustics.bore``), the holes as T-networks
  (``compiler.acoustics.holes``), the open foot as a radiation impedance
  (``compiler.acoustics.radiation``). This gives Z_down at the mouth.
- Above the mouth, a head cavity of length ``cavity_length_m`` (embouchure flute: mouth to cork;
  duct flute: usually 0, the block face) is a closed branch in parallel: Y_j = 1/Z_down + Y_cav.
- The mouth opening (duct flute window, or embouchure hole partly covered by the lip) is treated
  like an open side hole of the same area, as Fletcher & Rossing 1998 (The Physics of Musical
  Instruments, 2nd ed., ch. 16) and Nederveen 1969 treat the embouchure hole (from memory):
  inner length t_i, a chimney of the window or riser thickness (+ matching length t_m), and the
  radiation impedance of its outer opening, all IN SERIES between the jet and the junction:
  Z_total = Zr + Chimney(1/Y_j + jωρ t_i/S_m) + jωρ·extra_length_m/S_bore.
  This is our reading of that treatment; its end-correction coefficients are not calibrated
  against measured flutes, which is what ``Head.extra_length_m`` is for.
- The tube above the head cavity (the block, or beyond the cork) takes no part.
- The jet is a flow source at the outer face of the mouth, so it sees Z_total; a flue
  instrument sounds near the minima of |Z_total|, i.e. the peaks of Y = 1/Z_total, which
  ``compiler.acoustics.playing`` locates as upward zero crossings of Im Z_total.
- Head kind ``"open"``: the exciting end is a plain open end of the bore, Z_total = Z_down + Zr
  with the instrument's end model (an open pipe driven at its end; used for checks and plain
  tubes).
- Head kind ``"closed"``: the exciting end is closed at the mouth position (a reed or a
  mouthpiece): Z_total = 1/Y_j, the input impedance there, with any head cavity above it (a
  reed's and mouthpiece's equivalent volume, as a closed length of bore) in parallel. A
  pressure-driven end sounds near the MAXIMA of |Z_total|; ``compiler.acoustics.playing``
  takes care of that (``played``).

Everything is vectorised over instruments × fingerings × frequencies; the only Python loops
run along the bore (pieces and holes).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

from compiler.acoustics.air import Air
from compiler.acoustics.bore import LOSS_MODELS, characteristic, cylinder_matrix, frustum_matrix
from compiler.acoustics.holes import (
    HOLE_RADIATION_MODELS,
    hole_elements,
    inner_length,
    matching_length,
    radiation_length,
)
from compiler.acoustics.radiation import (
    FLANGED_RESISTANCE,
    RADIATION_MODELS,
    UNFLANGED_RESISTANCE,
    lumped_radiation_impedance,
    radiation_impedance,
)

HEAD_KINDS: tuple[str, ...] = ("duct", "embouchure", "open", "closed")

Complex = NDArray[np.complex128]
Float = NDArray[np.float64]


@dataclass(frozen=True)
class Segment:
    """A piece of bore profile: a frustum (or cylinder) of axial length and end radii, metres."""

    length_m: float
    radius_in_m: float
    radius_out_m: float


@dataclass(frozen=True)
class Bore:
    """The bore profile from the top end (position 0) downward, as consecutive segments.

    Beyond the last segment the profile continues as a cylinder of the last radius, so a profile
    may be shorter than the tube (e.g. one cylinder segment for stock tube of any length).
    """

    segments: tuple[Segment, ...]

    def __post_init__(self) -> None:
        if not self.segments:
            raise ValueError("a bore needs at least one segment")
        for s in self.segments:
            if not (s.length_m > 0.0 and s.radius_in_m > 0.0 and s.radius_out_m > 0.0):
                raise ValueError("bore segments need positive length and radii")

    @classmethod
    def cylinder(cls, radius_m: float, length_m: float = 1.0) -> Bore:
        """A plain cylindrical bore (stock tube) of the given radius."""
        return cls((Segment(length_m, radius_m, radius_m),))

    @property
    def length_m(self) -> float:
        return float(sum(s.length_m for s in self.segments))

    @property
    def uniform_radius_m(self) -> float | None:
        """The radius if the whole profile is one cylinder (a fast path), else None."""
        radii = {r for s in self.segments for r in (s.radius_in_m, s.radius_out_m)}
        return radii.pop() if len(radii) == 1 else None

    def profile(self) -> tuple[Float, Float, Float]:
        """(edges, radius_in, radius_out) of the segments; the last edge is +inf when the
        last segment is cylindrical, else a cylindrical extension segment is appended."""
        edges = np.concatenate([[0.0], np.cumsum([s.length_m for s in self.segments])])
        r_in = np.array([s.radius_in_m for s in self.segments])
        r_out = np.array([s.radius_out_m for s in self.segments])
        if r_in[-1] == r_out[-1]:
            edges[-1] = np.inf
        else:
            edges = np.append(edges, np.inf)
            r_in = np.append(r_in, r_out[-1])
            r_out = np.append(r_out, r_out[-1])
        return edges, r_in, r_out

    def radius_at(self, position_m: ArrayLike) -> Float:
        """Bore radius (m) at positions measured from the top end (at a step: the lower side)."""
        x = np.asarray(position_m, dtype=np.float64)
        uniform = self.uniform_radius_m
        if uniform is not None:
            return np.full(x.shape, uniform)
        edges, r_in, r_out = self.profile()
        j = np.clip(np.searchsorted(edges, x, side="right") - 1, 0, len(r_in) - 1)
        return _radius_in_segment(edges, r_in, r_out, j, x)


def _radius_in_segment(
    edges: Float, r_in: Float, r_out: Float, j: int | NDArray[np.intp], x: Float
) -> Float:
    lo: Float = edges[j]
    hi: Float = edges[np.asarray(j) + 1]
    span = np.where(np.isinf(hi), 1.0, hi - lo)
    frac = np.where(np.isinf(hi), 0.0, np.clip((x - lo) / span, 0.0, 1.0))
    return np.asarray(r_in[j] + (r_out[j] - r_in[j]) * frac, dtype=np.float64)


@dataclass(frozen=True)
class Hole:
    """A side hole: centre position from the top end, outer radius, chimney height (the wall
    thickness at the hole), and undercut (extra radius at the bore, see ``holes``); metres."""

    position_m: float
    radius_m: float
    chimney_m: float
    undercut_m: float = 0.0


LIP_COVERAGE = 0.25
"""Fraction of the embouchure hole the lip covers when nobody says: players cover about a
quarter to a third (common practice, from memory). A quarter, the lower end: the starter and
the examples use it, and a flute designed there is lipped down to pitch by covering more (the
easier direction for most players); a fit to measured pitches finds the player's own."""


@dataclass(frozen=True)
class Head:
    """The blowing end.

    kind: ``"duct"`` (window of window_length_m along the tube × window_width_m across, in a wall
    of window_thickness_m at the labium), ``"embouchure"`` (hole of embouchure_radius_m with a
    chimney or riser of embouchure_chimney_m, of which the lip covers the fraction lip_coverage of
    the area: common practice, from memory, a quarter to a third), ``"open"`` (a plain open
    end) or ``"closed"`` (a closed, reed-driven end; see the module docstring).
    mouth_position_m: centre of the window or embouchure hole, or where a closed end sits, from
    the top end. cavity_length_m: closed head cavity above the mouth centre (to the cork or
    block face; for a closed end, the reed's equivalent volume as a length of bore; the tube
    and its bore profile must reach that far up). extra_length_m: a calibration term, extra
    inertance at the mouth expressed as a length of bore (0 unless fitted to measured pitches).
    """

    kind: str
    mouth_position_m: float = 0.0
    window_length_m: float = 0.0
    window_width_m: float = 0.0
    window_thickness_m: float = 0.0
    embouchure_radius_m: float = 0.0
    embouchure_chimney_m: float = 0.0
    cavity_length_m: float = 0.0
    lip_coverage: float = LIP_COVERAGE
    extra_length_m: float = 0.0

    def __post_init__(self) -> None:
        if self.kind not in HEAD_KINDS:
            raise ValueError(f"unknown head kind {self.kind!r}; expected one of {HEAD_KINDS}")
        if self.kind == "duct" and not (self.window_length_m > 0 and self.window_width_m > 0):
            raise ValueError("a duct head needs a window length and width")
        if self.kind == "embouchure" and not self.embouchure_radius_m > 0:
            raise ValueError("an embouchure head needs an embouchure radius")
        if not 0.0 <= self.lip_coverage < 1.0:
            raise ValueError("lip_coverage is a fraction in [0, 1)")
        if self.cavity_length_m < 0 or self.cavity_length_m > self.mouth_position_m + 1e-12:
            raise ValueError("the head cavity must lie inside the tube, above the mouth")

    @property
    def opening_radius_m(self) -> float:
        """Radius of the circle with the open area of the mouth (0 for an ``"open"`` head)."""
        if self.kind == "duct":
            return float(np.sqrt(self.window_length_m * self.window_width_m / np.pi))
        if self.kind == "embouchure":
            return float(self.embouchure_radius_m * np.sqrt(1.0 - self.lip_coverage))
        return 0.0

    @property
    def opening_chimney_m(self) -> float:
        return self.window_thickness_m if self.kind == "duct" else self.embouchure_chimney_m


@dataclass(frozen=True)
class Instrument:
    """A pipe with side holes: bore profile, holes (sorted by position), head, and tube length.

    length_m: total tube length from the top end to the open foot. radiation: foot end model
    (``radiation.RADIATION_MODELS``); hole_radiation: open holes' and mouth opening's radiation
    length (``holes.HOLE_RADIATION_MODELS``); losses: ``bore.LOSS_MODELS``. wall_m: the tube's
    wall at its open ends (the foot, and the top of an ``"open"`` head), which moves their end
    correction toward the flanged value (``radiation.radiation_impedance``); 0 is a thin wall.
    mouth_radiation: the mouth opening's radiation length alone (None: ``hole_radiation``), so
    the tone holes' model can be varied with the mouth held (``playing.hole_model_band``).
    """

    bore: Bore
    holes: tuple[Hole, ...]
    head: Head
    length_m: float
    radiation: str = "unflanged"
    hole_radiation: str = "unflanged"
    losses: str = "keefe"
    wall_m: float = 0.0
    mouth_radiation: str | None = None

    def __post_init__(self) -> None:
        if self.radiation not in RADIATION_MODELS:
            raise ValueError(f"unknown radiation model {self.radiation!r}")
        for model in (self.hole_radiation, self.mouth_radiation or self.hole_radiation):
            if model not in HOLE_RADIATION_MODELS:
                raise ValueError(f"unknown hole radiation model {model!r}")
        if self.losses not in LOSS_MODELS:
            raise ValueError(f"unknown loss model {self.losses!r}")
        xs = [self.head.mouth_position_m] + [h.position_m for h in self.holes] + [self.length_m]
        if any(b <= a for a, b in zip(xs, xs[1:], strict=False)):
            raise ValueError("holes must lie in order between the mouth and the foot")
        if any(h.radius_m <= 0 or h.chimney_m < 0 or h.undercut_m < 0 for h in self.holes):
            raise ValueError("holes need a positive radius and a non-negative chimney and undercut")
        if self.wall_m < 0:
            raise ValueError("the wall thickness cannot be negative")

    def outer_radius_m(self, bore_radius_m: ArrayLike) -> Float | None:
        """Outer radius of the tube's open end where the bore radius is given (None: thin)."""
        if self.wall_m <= 0.0:
            return None
        return np.asarray(np.asarray(bore_radius_m, dtype=np.float64) + self.wall_m)


def _as_fingerings(fingerings: ArrayLike | None, n_holes: int) -> NDArray[np.bool_]:
    if fingerings is None:
        return np.ones((1, n_holes), dtype=bool)
    closed = np.asarray(fingerings, dtype=bool)
    if closed.ndim == 1:
        closed = closed[None, :]
    if closed.ndim != 2 or closed.shape[1] != n_holes:
        raise ValueError(f"fingerings must have shape (n_fingerings, {n_holes})")
    return closed


def _as_freqs(freqs_hz: ArrayLike) -> Float:
    f = np.asarray(freqs_hz, dtype=np.float64)
    if np.any(~(f > 0.0)):
        raise ValueError("frequencies must be positive")
    while f.ndim < 3:
        f = f[None]
    return f


def _piece_matrices(
    instrument: Instrument, air: Air, omega: Float, xa: Float, xb: Float
) -> list[tuple[Complex, Complex, Complex, Complex]]:
    """Transfer matrices of the bore pieces [xa, xb] (arrays of any shape, broadcast against
    ``omega``), split at the profile's segment edges: one matrix set per profile segment that
    any piece overlaps, in order from the top of the profile down (identity where a piece does
    not overlap the segment)."""
    uniform = instrument.bore.uniform_radius_m
    if uniform is not None:
        zc, gamma = characteristic(air, uniform, omega, instrument.losses)
        return [cylinder_matrix(xb - xa, zc, gamma)]
    edges, r_in, r_out = instrument.bore.profile()
    out = []
    for j in range(len(r_in)):
        lo = np.clip(edges[j], xa, xb)
        hi = np.clip(edges[j + 1], xa, xb)
        length = hi - lo
        if not np.any(length > 0.0):
            continue
        r1 = _radius_in_segment(edges, r_in, r_out, j, lo)
        r2 = _radius_in_segment(edges, r_in, r_out, j, hi)
        out.append(frustum_matrix(air, length, r1, r2, omega, instrument.losses))
    return out


def _column(values: ArrayLike | None, default: list[float], n_inst: int) -> Float:
    if values is None:
        return np.broadcast_to(np.asarray(default, dtype=np.float64), (n_inst, len(default)))
    arr = np.asarray(values, dtype=np.float64)
    return arr[None, :] if arr.ndim == 1 else arr


def impedance_batch(
    instrument: Instrument,
    air: Air,
    freqs_hz: ArrayLike,
    fingerings: ArrayLike | None = None,
    *,
    length_m: ArrayLike | None = None,
    hole_positions_m: ArrayLike | None = None,
    hole_radii_m: ArrayLike | None = None,
    downstream_only: bool = False,
    cavity_length_m: ArrayLike | None = None,
) -> Complex:
    """Z_total (Pa·s/m³) seen by the jet, for a batch of variants of one instrument.

    The variants share the bore profile, head, chimneys and models of ``instrument`` and differ in
    tube length (``length_m``, shape (n_inst,)), hole positions and hole radii (shape
    (n_inst, n_holes)) and head cavity length (``cavity_length_m``, shape (n_inst,): the
    cork's distance above the mouth); omitted overrides take the instrument's values.
    freqs_hz broadcasts to (n_inst, n_fingerings, n_freqs): a 1-D grid for all, or
    per-fingering frequencies of shape (n_fingerings, n) or (n_inst, n_fingerings, n).
    Returns an array of shape (n_inst, n_fingerings, n_freqs). ``downstream_only`` returns
    Z_down at the mouth instead (no head elements). Holes must stay in order between the
    mouth and the foot.
    """
    holes = instrument.holes
    n_holes = len(holes)
    closed = _as_fingerings(fingerings, n_holes)
    f = _as_freqs(freqs_hz)
    omega = 2.0 * np.pi * f
    rho, c = air.density_kg_m3, air.speed_m_s
    k = omega / c
    lengths = np.atleast_1d(
        np.asarray(instrument.length_m if length_m is None else length_m, dtype=np.float64)
    )
    xs = _column(hole_positions_m, [h.position_m for h in holes], lengths.shape[0])
    rs = _column(hole_radii_m, [h.radius_m for h in holes], lengths.shape[0])
    cavity = np.atleast_1d(np.asarray(
        instrument.head.cavity_length_m if cavity_length_m is None else cavity_length_m,
        dtype=np.float64))
    n_inst = max(lengths.shape[0], xs.shape[0], rs.shape[0], f.shape[0], cavity.shape[0])
    lengths = np.broadcast_to(lengths, (n_inst,))[:, None, None]
    cavity = np.broadcast_to(cavity, (n_inst,))[:, None, None]
    xs = np.broadcast_to(xs, (n_inst, n_holes))
    rs = np.broadcast_to(rs, (n_inst, n_holes))
    head = instrument.head
    x_m = np.full((n_inst, 1, 1), head.mouth_position_m)

    bore = instrument.bore
    # Pieces and holes gain an axis after the instrument axis: (n_inst, n_pieces, n_fing, n_f).
    om4 = omega[:, None]
    xa = np.concatenate([x_m[:, :, 0], xs], axis=1)[:, :, None, None]
    xb = np.concatenate([xs, lengths[:, :, 0]], axis=1)[:, :, None, None]
    if np.any(xb <= xa):
        raise ValueError("holes must lie in order between the mouth and the foot")
    pieces = _piece_matrices(instrument, air, om4, xa, xb)
    if n_holes:
        za_o, ys_o, za_c, ys_c = hole_elements(
            air,
            om4,
            bore.radius_at(xs)[:, :, None, None],
            rs[:, :, None, None],
            np.array([h.chimney_m for h in holes])[None, :, None, None],
            np.array([h.undercut_m for h in holes])[None, :, None, None],
            instrument.losses,
            instrument.hole_radiation,
        )
        shut = closed.T[None, :, :, None]
        za = np.where(shut, za_c, za_o)
        ys = np.where(shut, ys_c, ys_o)
    a_foot = bore.radius_at(lengths)
    p = radiation_impedance(instrument.radiation, a_foot, k, rho * c / (np.pi * a_foot**2),
                            instrument.outer_radius_m(a_foot))
    u = np.ones_like(p)
    for h in range(n_holes, -1, -1):
        for A, B, C, D in reversed(pieces):
            p, u = A[:, h] * p + B[:, h] * u, C[:, h] * p + D[:, h] * u
        if h == 0:
            break
        zah, ysh = za[:, h - 1], ys[:, h - 1]
        p = p + 0.5 * zah * u
        u = u + ysh * p
        p = p + 0.5 * zah * u
    shape = (n_inst, closed.shape[0], f.shape[-1])
    if downstream_only:
        return np.broadcast_to(p / u, shape).astype(np.complex128)
    y_j = u / p + _cavity_admittance(instrument, air, omega, x_m, cavity)
    if head.kind == "closed":
        return np.broadcast_to(1.0 / y_j, shape).astype(np.complex128)
    a_m = float(bore.radius_at(head.mouth_position_m))
    if head.kind == "open":
        z = 1.0 / y_j + radiation_impedance(
            instrument.radiation, a_m, k, rho * c / (np.pi * a_m**2),
            instrument.outer_radius_m(a_m)
        )
    else:
        z = _mouth(instrument, air, omega, a_m, 1.0 / y_j)
    return np.broadcast_to(z, shape).astype(np.complex128)


def _cavity_admittance(
    instrument: Instrument, air: Air, omega: Float, x_m: Float, cavity: Float
) -> Complex | float:
    """Admittance of the closed head cavity at the mouth (0 where there is none)."""
    if not np.any(cavity > 0.0):
        return 0.0
    if np.any(cavity > instrument.head.mouth_position_m + 1e-12) or np.any(cavity < 0.0):
        raise ValueError("the head cavity must lie inside the tube, above the mouth")
    # Closed at the cork: start from (P, U) = (1, 0) there and carry it down to the mouth
    # through the reversed matrices [[D, B], [C, A]] (U counted toward the cork). A zero
    # cavity gives the identity (no piece overlaps it) and adds nothing.
    cp: Complex | float = 1.0
    cu: Complex | float = 0.0
    for A, B, C, D in _piece_matrices(instrument, air, omega, x_m - cavity, x_m):
        cp, cu = D * cp + B * cu, C * cp + A * cu
    return np.asarray(cu / cp, dtype=np.complex128)


def head_impedance(
    instrument: Instrument,
    air: Air,
    freqs_hz: ArrayLike,
    cavity_length_m: ArrayLike | None = None,
) -> Complex:
    """The impedance the jet sees from the head alone: the mouth opening in series with the
    closed head cavity, the bore below the mouth blocked (Pa·s/m³, shape (n_inst, n_freqs) for
    ``cavity_length_m`` of shape (n_inst,), default the head's own).

    Its upward reactance zero is the head's own (Helmholtz-like) resonance: the mouth's
    inertance against the cavity's compliance. Only ``"duct"`` and ``"embouchure"`` heads have
    one; an ``"open"`` or ``"closed"`` head raises ValueError.
    """
    head = instrument.head
    if head.kind in ("open", "closed"):
        raise ValueError(f"an {head.kind} head has no mouth opening")
    f = np.atleast_1d(np.asarray(freqs_hz, dtype=np.float64))
    if np.any(~(f > 0.0)):
        raise ValueError("frequencies must be positive")
    cavity = np.atleast_1d(np.asarray(
        head.cavity_length_m if cavity_length_m is None else cavity_length_m, dtype=np.float64))
    omega = 2.0 * np.pi * np.broadcast_to(f, (cavity.size, f.size))
    x_m = np.full((cavity.size, 1), head.mouth_position_m)
    y_cav = _cavity_admittance(instrument, air, omega, x_m, cavity[:, None])
    if not np.any(np.asarray(y_cav) != 0.0):
        raise ValueError("a head without a cavity has no resonance of its own")
    a_m = float(instrument.bore.radius_at(head.mouth_position_m))
    z_cav = np.asarray(1.0 / np.asarray(y_cav), dtype=np.complex128)
    return np.asarray(_mouth(instrument, air, omega, a_m, z_cav), dtype=np.complex128)


def _mouth(instrument: Instrument, air: Air, omega: Float, a_m: float, z_j: Complex) -> Complex:
    """Series elements of the mouth opening between the jet and the junction (module docstring)."""
    head = instrument.head
    rho, c = air.density_kg_m3, air.speed_m_s
    b = head.opening_radius_m
    area = np.pi * b * b
    k = omega / c
    z = z_j + 1j * omega * rho * inner_length(b, a_m, k) / area
    height = head.opening_chimney_m + float(matching_length(b, a_m))
    A, B, C, D = frustum_matrix(air, height, b, b, omega, instrument.losses)
    z = (A * z + B) / (C * z + D)
    model = instrument.mouth_radiation or instrument.hole_radiation
    t_r = radiation_length(model, b, a_m + head.opening_chimney_m, k)
    resistance = UNFLANGED_RESISTANCE if model == "unflanged" else FLANGED_RESISTANCE
    z = z + lumped_radiation_impedance(k, b, t_r, resistance, rho * c / area)
    return np.asarray(
        z + 1j * omega * rho * head.extra_length_m / (np.pi * a_m**2), dtype=np.complex128
    )


def input_impedance(
    instrument: Instrument, air: Air, freqs_hz: ArrayLike, fingerings: ArrayLike | None = None
) -> Complex:
    """Z_total seen by the jet, shape (n_fingerings, n_freqs), Pa·s/m³ (module docstring).

    freqs_hz: a 1-D grid, or per-fingering frequencies of shape (n_fingerings, n).
    fingerings: (n_fingerings, n_holes) booleans, True = closed; None = all closed.
    """
    return np.asarray(impedance_batch(instrument, air, freqs_hz, fingerings)[0])


def input_admittance(
    instrument: Instrument, air: Air, freqs_hz: ArrayLike, fingerings: ArrayLike | None = None
) -> Complex:
    """Admittance Y = 1/Z_total seen by the jet, shape (n_fingerings, n_freqs), m³/(Pa·s).

    Flue excitation plays near the peaks of |Y| (see the module docstring).
    """
    return np.asarray(
        1.0 / input_impedance(instrument, air, freqs_hz, fingerings), dtype=np.complex128
    )


def bore_impedance(
    instrument: Instrument, air: Air, freqs_hz: ArrayLike, fingerings: ArrayLike | None = None
) -> Complex:
    """Z_down: the impedance at the mouth position looking down the bore (holes and foot),
    without the mouth opening or head cavity; shape (n_fingerings, n_freqs)."""
    return np.asarray(
        impedance_batch(instrument, air, freqs_hz, fingerings, downstream_only=True)[0]
    )
