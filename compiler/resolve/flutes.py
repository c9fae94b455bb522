"""Flutes (duct flutes and side-blown flutes): holes placed and sized by the transfer-matrix
model (``compiler.acoustics.solve``), or only predicted where the spec fixes them.

Head defaults (common practice, from memory): a duct flute's labium sits two bore diameters
plus the window length below the top end (the block fills the tube above the window); a
side-blown flute's cork sits one bore diameter above the embouchure centre, with 15 mm of
tube above the cork. The tube is cut to the solved length: a flute is tuned by the holes and
the length together, so no tuning allowance is added.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from compiler.acoustics import playing, solve
from compiler.acoustics.air import Air
from compiler.acoustics.impedance import LIP_COVERAGE, Bore, Instrument
from compiler.acoustics.impedance import Head as EngineHead
from compiler.acoustics.tuning import cents
from compiler.errors import PhysicsError, Position
from compiler.ir import Group, Head, Hole, Jig, Note, Pipe
from compiler.resolve import calibration, flute_calibration, flute_report, plain
from compiler.resolve.environment import GroupAir, group_air
from compiler.resolve.inputs import FluteInputs, SurveyInputs
from compiler.resolve.targets import target_hz
from compiler.spec import model as spec_model
from compiler.spec.notes import note_name

NO_SECOND_REGISTER = spec_model.NO_SECOND_REGISTER
ABOVE_CORK_M = 0.015
CORK_ROOM_M = 0.005
"""A free cork stays at least this far below the top end, room for the cork itself (our
choice)."""
CORK_RIM_M = 0.001
"""A free cork keeps at least this much wall between the embouchure hole's upper edge and its
face (our choice): a cork face inside the hole would close part of it."""
DEFAULT_JIG_STOCK = "jig-sheet"
DEFAULT_JIG_MATERIAL = "plywood"
DEFAULT_JIG_THICKNESS_M = 0.003
"""Without a `jig` in the spec, the drilling jig and head gauges are cut from 3 mm plywood
(MDF or acrylic serve as well): stiff enough to clamp, thin enough to drill through."""
HOLE_RADIATION = {"unflanged": "on-cylinder", "flanged": "flanged",
                  "frequency-dependent": "frequency-dependent"}
"""The spec's radiation model for the open holes (see ``compiler.acoustics.holes``): an
opening in the tube's surface radiates as a hole on a cylinder; "flanged" keeps the
infinite-flange limit."""
SENSITIVITY_STEP_M = 1e-4
SENSITIVITY_STEP_K = 0.5


def _at(flute: spec_model.Flute, key: str) -> Position:
    return flute.where.get(key) or flute.where.get("head") or flute.position


def check_cork_clear(cork_m: float, embouchure_d: float, where: Position, name: str) -> None:
    """A cork measured or given from the embouchure centre must sit above the hole's upper
    edge (half the hole's diameter): its face cannot be inside the hole."""
    if cork_m < embouchure_d / 2 - 1e-9:
        raise PhysicsError.at(where, f"{name}: a cork {cork_m * 1000:.1f} mm above the "
                              f"embouchure centre lies inside the {embouchure_d * 1000:.1f} mm "
                              f"hole (its upper edge is {embouchure_d * 500:.1f} mm above the "
                              "centre)",
                              "measure `cork` from the hole's centre up to the cork's face; "
                              "corks usually sit about 0.8 to 1 bore diameter above the centre")


def _head(flute: spec_model.Flute, bore_d: float,
          wall: float) -> tuple[EngineHead, Head, solve.CorkRange | None]:
    """The exciting end, checked against the tube it sits in, and the cork's range (None for
    a duct flute; fixed where the spec gives `cork`)."""
    h = flute.head
    name = f"flute `{flute.id}`"
    if flute.family == "duct-flute":
        assert h.window_length_m is not None and h.window_width_m is not None
        labium = h.window_from_top_m or (2 * bore_d + h.window_length_m)
        if h.window_width_m > bore_d:
            raise PhysicsError.at(_at(flute, "head.window.width"),
                                  f"{name}: the window ({h.window_width_m * 1000:.1f} mm) is "
                                  f"wider than the bore ({bore_d * 1000:.1f} mm)",
                                  "a window is usually 1/2 to 3/4 of the bore diameter")
        if labium <= h.window_length_m:
            raise PhysicsError.at(_at(flute, "head.window.from_top"),
                                  f"{name}: the labium {labium * 1000:.1f} mm from the top "
                                  f"leaves no room for the block above a "
                                  f"{h.window_length_m * 1000:.1f} mm window",
                                  "put the labium at least two bore diameters from the top end")
        if h.duct_height_m is not None and h.duct_height_m >= bore_d / 2:
            raise PhysicsError.at(_at(flute, "head.duct.height"),
                                  f"{name}: a duct {h.duct_height_m * 1000:.1f} mm high takes "
                                  f"half the bore ({bore_d * 1000:.1f} mm) or more",
                                  "ducts are commonly 1 to 1.5 mm high")
        mouth = labium - h.window_length_m / 2
        # The bore is closed at the block's face, the window's upper edge: half a window
        # above the mouth's centre.
        engine = EngineHead("duct", mouth_position_m=mouth, window_length_m=h.window_length_m,
                            window_width_m=h.window_width_m, window_thickness_m=wall,
                            cavity_length_m=h.window_length_m / 2)
        report = Head("duct", h.window_length_m, h.window_width_m, h.duct_height_m, labium,
                      None, None, None)
        return engine, report, None
    assert h.embouchure_diameter_m is not None
    if h.embouchure_diameter_m >= bore_d:
        raise PhysicsError.at(_at(flute, "head.embouchure.diameter"),
                              f"{name}: the embouchure hole ({h.embouchure_diameter_m * 1000:.1f}"
                              f" mm) is as wide as the bore ({bore_d * 1000:.1f} mm) or wider",
                              "an embouchure hole is commonly 1/2 to 2/3 of the bore diameter")
    low, high = (r * bore_d for r in solve.CORK_RANGE)
    mouth = h.embouchure_from_top_m or ((h.cork_m or high) + ABOVE_CORK_M)
    if h.cork_m is not None and h.cork_m >= mouth:
        raise PhysicsError.at(_at(flute, "head.cork"),
                              f"{name}: the cork {h.cork_m * 1000:.1f} mm above the embouchure "
                              f"hole would sit above the top end (the hole is "
                              f"{mouth * 1000:.1f} mm from the top)",
                              "make `cork` smaller than `embouchure.from_top`, or move the hole "
                              "further down")
    if h.cork_m is not None:
        check_cork_clear(h.cork_m, h.embouchure_diameter_m, _at(flute, "head.cork"), name)
        cork = solve.CorkRange(h.cork_m, h.cork_m, h.cork_m)
    else:
        # Never closer than the hole's edge and a rim: a nearer cork is no option to offer.
        rim = h.embouchure_diameter_m / 2 + CORK_RIM_M
        at_rim = rim >= low
        low = max(low, rim)
        high = min(high, mouth - CORK_ROOM_M)
        if high <= low:
            raise PhysicsError.at(_at(flute, "head.embouchure.from_top"),
                                  f"{name}: the embouchure hole {mouth * 1000:.1f} mm from the "
                                  f"top leaves no room for a cork {low * 1000:.1f} mm or more "
                                  "above it",
                                  "move the embouchure hole further down, or give `cork`")
        cork = solve.CorkRange(low, high, min(max(bore_d, low), high), at_rim)
    engine = EngineHead("embouchure", mouth_position_m=mouth,
                        embouchure_radius_m=h.embouchure_diameter_m / 2,
                        embouchure_chimney_m=wall, cavity_length_m=cork.start_m,
                        lip_coverage=h.lip_cover if h.lip_cover is not None else LIP_COVERAGE)
    report = Head("embouchure", None, None, None, None, h.embouchure_diameter_m, mouth,
                  cork.start_m)
    return engine, report, cork


def _rows(flute: spec_model.Flute, inputs: FluteInputs) -> flute_report.Rows:
    """Fingering table rows: every fingering in register 1, then again in register 2; each
    row's spec position is its fingering's."""
    table, targets, registers, names, where = [], [], [], [], []
    for f in flute.fingerings:
        table.append(f.closed)
        targets.append(target_hz(inputs.tuning, f.note, f.frequency_hz))
        registers.append(1)
        names.append(note_name(f.note))
        where.append(f.position)
    for f, first in zip(flute.fingerings, list(targets), strict=True):
        if f.second_register == NO_SECOND_REGISTER:
            continue
        second = f.second_register if f.second_register is not None else f.note + 12
        table.append(f.closed)
        targets.append(target_hz(inputs.tuning, second) if second <= 127 else 2 * first)
        registers.append(2)
        names.append(note_name(min(second, 127)))
        where.append(f.position)
    return flute_report.Rows(tuple(table), tuple(targets), tuple(registers), tuple(names),
                             tuple(where))


def _where(flute: spec_model.Flute, exc: solve.DesignError,
           row_positions: tuple[Position, ...]) -> Position:
    """The spec position a design error concerns: its hole, its fingering row, or the part of
    the flute it names."""
    if exc.hole is not None and 0 <= exc.hole < len(flute.holes):
        return flute.holes[exc.hole].position
    if exc.row is not None and 0 <= exc.row < len(row_positions):
        return row_positions[exc.row]
    return flute.where.get(exc.about, flute.position)


def _check_fixed(flute: spec_model.Flute, head: EngineHead, min_web_m: float) -> None:
    """Fixed hole positions the maker gave that no solving can use, pointed at the hole:
    above the mouth, beyond a fixed tube length, out of order, or overlapping a fixed
    neighbour (edges closer than the web)."""
    label = f"flute `{flute.id}`"
    previous: tuple[int, float, float | None] | None = None
    for i, hole in enumerate(flute.holes):
        x = hole.position_m
        if x is None:
            continue
        if x <= head.mouth_position_m:
            raise PhysicsError.at(hole.position, f"{label}: hole {i + 1} is fixed at "
                                  f"{x * 1000:.1f} mm from the top, not below the "
                                  f"{'window' if head.kind == 'duct' else 'embouchure hole'} "
                                  f"(at {head.mouth_position_m * 1000:.1f} mm)",
                                  "positions are measured from the top end of the tube")
        if flute.length_m is not None and x >= flute.length_m:
            raise PhysicsError.at(hole.position, f"{label}: hole {i + 1} is fixed at "
                                  f"{x * 1000:.1f} mm from the top, beyond the end of the "
                                  f"{flute.length_m * 1000:.1f} mm tube",
                                  "give a position inside the tube, or a longer `length`")
        if previous is not None:
            j, x_above, d_above = previous
            if x <= x_above:
                raise PhysicsError.at(hole.position, f"{label}: hole {i + 1} is fixed at "
                                      f"{x * 1000:.1f} mm, not below hole {j + 1} "
                                      f"({x_above * 1000:.1f} mm)",
                                      "holes are listed from the head downward")
            if d_above is not None and hole.diameter_m is not None:
                web = x - x_above - (d_above + hole.diameter_m) / 2
                if web < min_web_m:
                    what = (f"overlap by {-web * 1000:.1f} mm" if web < 0 else
                            f"leave {web * 1000:.1f} mm between their edges, less than the "
                            f"{min_web_m * 1000:.1f} mm web allowed (`min_web`)")
                    raise PhysicsError.at(hole.position, f"{label}: the fixed holes {j + 1} and "
                                          f"{i + 1} {what}",
                                          "move them apart or make them smaller")
        previous = (i, x, hole.diameter_m)


def _first_register(instrument: Instrument, air: Air, closed: np.ndarray) -> float:
    return float(playing.resonances(instrument, air, closed[None, :]).frequencies_hz[0, 0])


def _as_cut(flute: spec_model.Flute, design: solve.Design, limits: solve.HoleConstraints,
            head: EngineHead, step: float) -> tuple[float, ...]:
    """Free hole positions rounded to the precision, each nudged by one more step where the
    rounding would break a web, the span or the fingers' least span the solution kept (fixed
    positions stay)."""
    x = [x if h.position_m is not None else plain.round_to(x, step)
         for h, x in zip(flute.holes, design.hole_positions_m, strict=True)]
    free = [h.position_m is None for h in flute.holes]
    d = design.hole_diameters_m
    spans = (limits.max_span_m if isinstance(limits.max_span_m, tuple)
             else (limits.max_span_m,) * max(len(x) - 1, 0))
    top = head.mouth_position_m + (head.window_length_m / 2 if head.kind == "duct"
                                   else head.embouchure_radius_m)
    if x and free[0] and x[0] - d[0] / 2 - top < limits.min_web_m - 1e-9:
        x[0] = round(x[0] + step, 9)
    for i in range(len(x) - 1):
        web = x[i + 1] - x[i] - (d[i] + d[i + 1]) / 2
        span = spans[i]
        if web < limits.min_web_m - 1e-9:
            move = 1.0
        elif span is not None and x[i + 1] - x[i] > span + 1e-9:
            move = -1.0
        else:
            continue
        if free[i + 1]:
            x[i + 1] = round(x[i + 1] + move * step, 9)
        elif free[i]:
            x[i] = round(x[i] - move * step, 9)
    for pair in limits.fingers or ():
        if x[pair.lower] - x[pair.upper] >= pair.along_m - 1e-9:
            continue
        if free[pair.lower]:
            x[pair.lower] = round(x[pair.lower] + step, 9)
        elif free[pair.upper]:
            x[pair.upper] = round(x[pair.upper] - step, 9)
    return tuple(x)


@dataclass(frozen=True)
class _Made:
    """A solved flute as it will be cut: the design, the instrument with its length, free
    hole positions and free cork rounded to the spec's precision, and those positions."""

    design: solve.Design
    instrument: Instrument
    positions: tuple[float, ...]


def _design(flute: spec_model.Flute, inputs: FluteInputs, engine_head: EngineHead,
            cork: solve.CorkRange | None, rows: flute_report.Rows,
            limits: solve.HoleConstraints, air: GroupAir) -> _Made:
    """Solve the flute, then round it as cut (drills are already snapped)."""
    stock = inputs.stock_named(flute.stock)
    assert stock is not None and stock.inside_diameter_m is not None
    bore_d, wall = stock.inside_diameter_m, stock.thickness_m
    fixed = tuple(solve.FixedHole(h.position_m, h.diameter_m) for h in flute.holes)
    try:
        design = solve.design_holes(
            Bore.cylinder(bore_d / 2), wall, engine_head, np.array(rows.closed, dtype=bool),
            np.array(rows.targets_hz), air.state, registers=np.array(rows.registers),
            constraints=limits, fixed=fixed, drills_m=inputs.fabrication.drills_m,
            length_m=flute.length_m, radiation=flute.radiation,
            hole_radiation=HOLE_RADIATION[flute.radiation], losses=flute.losses,
            note_names=rows.names, cork=cork, end_wall_m=wall,
            second_weight=(solve.SECOND_REGISTER_WEIGHT if flute.second_register_weight is None
                           else flute.second_register_weight))
    except solve.DesignError as exc:
        raise PhysicsError.at(_where(flute, exc, rows.positions),
                              f"flute `{flute.id}`: {exc.message}", exc.hint) from None
    step = inputs.fabrication.precision_m
    length = flute.length_m or plain.round_to(design.length_m, step)
    positions = _as_cut(flute, design, limits, engine_head, step)
    cavity = design.cork_m if cork is None or not cork.free else plain.round_to(
        design.cork_m, step)
    instrument = replace(design.instrument, length_m=length, head=replace(
        design.instrument.head, cavity_length_m=cavity), holes=tuple(
        replace(h, position_m=x) for h, x in zip(design.instrument.holes, positions,
                                                 strict=True)))
    return _Made(design, instrument, positions)


def prototype(inputs: FluteInputs) -> Instrument:
    """The flute as the uncalibrated model makes it, as cut: what a measured prototype is
    taken to be (``flute_calibration``)."""
    flute = inputs.group
    air = group_air(flute.family, inputs.environment, flute.environment)
    stock = inputs.stock_named(flute.stock)
    assert stock is not None and stock.inside_diameter_m is not None
    engine_head, _, cork = _head(flute, stock.inside_diameter_m, stock.thickness_m)
    limits = _limits(flute, _outside(stock))
    _check_fixed(flute, engine_head, limits.min_web_m)
    return _design(flute, inputs, engine_head, cork, _rows(flute, inputs), limits, air).instrument


def _outside(stock: spec_model.Stock) -> float:
    """The tube's outside diameter, where the fingers are."""
    assert stock.inside_diameter_m is not None
    return stock.outside_diameter_m or stock.inside_diameter_m + 2 * stock.thickness_m


def jig(name: str | None, inputs: FluteInputs | SurveyInputs) -> Jig:
    """The sheet a holed tube's cutter parts come from: the spec's `jig`, else the default."""
    item = inputs.stock_named(name) if name is not None else None
    if item is None:
        return Jig(DEFAULT_JIG_STOCK, DEFAULT_JIG_MATERIAL, DEFAULT_JIG_THICKNESS_M, "sheet")
    return Jig(item.name, item.material, item.thickness_m, item.kind)


def _limits(flute: spec_model.Flute, outside_diameter_m: float) -> solve.HoleConstraints:
    """The spec's limits on the holes, the solver's defaults where it gives none. The least
    span holds the front holes apart, pair by pair (``solve.finger_pairs``)."""
    c = flute.constraints
    defaults = solve.HoleConstraints()
    least = c.min_span_m if c.min_span_m is not None else solve.MIN_SPAN_M
    if c.min_span_m is None and c.max_span_m is not None and c.max_span_m < least:
        raise PhysicsError.at(flute.where.get("constraints.max_span", _at(flute, "constraints")),
                              f"flute `{flute.id}`: max_span ({c.max_span_m * 1000:g} mm) is "
                              f"less than the {least * 1000:g} mm two neighbouring fingers "
                              "need between their holes' centres (the default `min_span`)",
                              "give a larger `max_span`, or a `min_span` below it if the "
                              "player's fingers fit that close")
    angles = tuple(h.angle_deg for h in flute.holes)
    return solve.HoleConstraints(
        min_diameter_m=c.min_diameter_m or defaults.min_diameter_m,
        max_diameter_m=c.max_diameter_m or defaults.max_diameter_m,
        max_ratio=c.max_ratio or defaults.max_ratio,
        min_web_m=c.min_web_m if c.min_web_m is not None else defaults.min_web_m,
        max_span_m=c.max_span_m, min_span_m=least,
        fingers=solve.finger_pairs(angles, outside_diameter_m, least) if least > 0 else ())


def resolve_flute(inputs: FluteInputs) -> tuple[Group, list[Pipe], list[Note]]:
    """Place and size the holes (or predict fixed ones) and report every fingering."""
    flute = inputs.group
    air = group_air(flute.family, inputs.environment, flute.environment)
    stock = inputs.stock_named(flute.stock)
    assert stock is not None and stock.inside_diameter_m is not None
    bore_d, wall = stock.inside_diameter_m, stock.thickness_m
    engine_head, head, cork = _head(flute, bore_d, wall)
    rows = _rows(flute, inputs)
    limits = _limits(flute, _outside(stock))
    _check_fixed(flute, engine_head, limits.min_web_m)
    made = _design(flute, inputs, engine_head, cork, rows, limits, air)
    fit = calibration.uncalibrated()
    if flute.measured:
        # The prototype is the flute as the uncalibrated model made it; the head's fitted
        # corrections then shape the flute to cut.
        correction, fit = flute_calibration.fit(flute, made.instrument, air, rows)
        engine_head = replace(engine_head, extra_length_m=correction.extra_length_m)
        if correction.lip_cover is not None:
            engine_head = replace(engine_head, lip_coverage=correction.lip_cover)
        made = _design(flute, inputs, engine_head, cork, rows, limits, air)
    design, instrument, positions = made.design, made.instrument, made.positions
    length, cavity = instrument.length_m, instrument.head.cavity_length_m
    if stock.length_m is not None and length > stock.length_m:
        raise PhysicsError.at(flute.where.get("stock", flute.position),
                              f"flute `{flute.id}`: the tube must be {length * 1000:.1f} mm long, "
                              f"but stock `{stock.name}` is {stock.length_m * 1000:.0f} mm",
                              "use longer stock, or a higher lowest note")
    found = flute_report.report(flute, instrument, air.state, rows, design.advice)
    holes = tuple(
        Hole(number=i + 1, label=spec_hole.label or ("T" if abs(spec_hole.angle_deg) >= 90
                                                   else str(i + 1)),
             position_from_top_m=x, position_from_bottom_m=length - x, diameter_m=d,
             angle_deg=spec_hole.angle_deg, chimney_m=wall, undercut_m=spec_hole.undercut_m,
             fixed=spec_hole.position_m is not None and spec_hole.diameter_m is not None,
             source=spec_hole.position)
        for i, (spec_hole, x, d) in enumerate(zip(flute.holes, positions,
                                                  design.hole_diameters_m, strict=True)))
    head = replace(head, cork_m=cavity if head.kind == "embouchure" else None,
                   resonance_hz=found.head_resonance_hz)
    lowest = int(np.argmin([t if r == 1 else np.inf
                            for t, r in zip(rows.targets_hz, rows.registers, strict=True)]))
    closed = np.array(rows.closed[lowest], dtype=bool)
    base = _first_register(instrument, air.state, closed)
    longer = _first_register(replace(instrument, length_m=length + SENSITIVITY_STEP_M),
                             air.state, closed)
    shorter = _first_register(replace(instrument, length_m=length - SENSITIVITY_STEP_M),
                              air.state, closed)
    t = air.state.temperature_k
    warm = _first_register(instrument, air.at_temperature(t + SENSITIVITY_STEP_K), closed)
    cool = _first_register(instrument, air.at_temperature(t - SENSITIVITY_STEP_K), closed)
    target = rows.targets_hz[lowest]
    pipe = Pipe(
        id=flute.id, group=flute.id, family=flute.family, construction="stock-tube",
        note=rows.names[lowest], harmonic=1, stock=stock.name, material=stock.material,
        target_hz=target, predicted_hz=base, error_cents=cents(base, target),
        harmonics_hz=tuple(f for f in found.predicted_hz[lowest] if np.isfinite(f)),
        cents_per_mm=cents(longer, shorter) / (2 * SENSITIVITY_STEP_M * 1000),
        cents_per_c=cents(warm, cool) / (2 * SENSITIVITY_STEP_K),
        section="round", inside_diameter_m=bore_d, outside_diameter_m=stock.outside_diameter_m,
        inside_width_m=None, inside_depth_m=None, wall_m=wall,
        # Speaking length: from the centre of the window or embouchure to the open foot;
        # acoustic length: the open-open pipe that would sound the lowest note, c/(2f).
        acoustic_length_m=air.state.speed_m_s / (2 * base),
        end_correction_m=air.state.speed_m_s / (2 * base) - (length
                                                             - engine_head.mouth_position_m),
        speaking_length_m=length - engine_head.mouth_position_m,
        cut_length_m=length, mouth=None, foot=None, block=None, stopper=None, head=head,
        holes=holes, fingerings=found.fingerings, curves=found.curves, source=flute.position,
        jig=jig(flute.jig, inputs))
    group = Group(id=flute.id, kind="flute", family=flute.family, construction="stock-tube",
                  air=air.report, end_correction_model=flute.radiation,
                  calibration=fit, holder=None, pipe_ids=(pipe.id,), losses=flute.losses,
                  source=flute.position)
    warnings = list(air.warnings) + list(found.warnings) + calibration.disagreement(
        fit, f"flute `{flute.id}`", flute.where.get("measured", flute.position),
        flute_calibration.CHECK)
    return group, [pipe], warnings
