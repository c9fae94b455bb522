"""Tube sets: stopped tubes (closed at the bottom, blown across the top) and open tubes.

Where a set lists several stock tubes, each note takes the tube that fits best: the
speaking length must be at least ``MIN_ASPECT`` inside diameters (shorter, and the end
corrections stop being a small fix: common practice) and fit the stock tube's length;
of those, the one whose length-to-diameter ratio is nearest ``PREFERRED_ASPECT`` wins.
"""

from __future__ import annotations

from compiler.acoustics import simple
from compiler.errors import PhysicsError
from compiler.ir import Group, Holder, Note, Pipe, Stopper
from compiler.resolve import calibration, plain, trim
from compiler.resolve.environment import GroupAir, group_air
from compiler.resolve.inputs import TubeSetInputs
from compiler.resolve.targets import target_hz
from compiler.spec import model as spec_model
from compiler.spec.notes import note_name

MIN_ASPECT = 4.0
PREFERRED_ASPECT = 12.0
"""Length over inside diameter that tube sets commonly aim for (common practice, from memory)."""
DEFAULT_PLUG_FRACTION = 0.5
"""A plug as long as half the inside diameter, at least 10 mm (common practice, from memory)."""


def _acoustics(tubes: spec_model.TubeSet, stock: spec_model.Stock,
               scale: float) -> simple.PipeAcoustics:
    stopped = tubes.family == "stopped-tube"
    assert stock.inside_diameter_m is not None
    radius = stock.inside_diameter_m / 2
    outer = None if stock.outside_diameter_m is None else stock.outside_diameter_m / 2
    return simple.PipeAcoustics(
        stopped=stopped, open_ends=1 if stopped else 2, radius_m=radius,
        end_model=tubes.end_correction.model, k=tubes.end_correction.k,
        end_ratio=simple.wall_end_ratio(radius, outer), scale=scale, losses=tubes.losses)


def _plug(tubes: spec_model.TubeSet, stock: spec_model.Stock) -> float:
    assert stock.inside_diameter_m is not None
    return tubes.plug_length_m or max(DEFAULT_PLUG_FRACTION * stock.inside_diameter_m, 0.01)


def _choose_stock(tubes: spec_model.TubeSet, inputs: TubeSetInputs, note: int, target: float,
                  air: GroupAir) -> spec_model.Stock:
    override = next((o for o in tubes.overrides if o.note == note), None)
    names = (override.stock,) if override and override.stock else tubes.stock
    candidates = []
    reasons = []
    for name in names:
        stock = inputs.stock_named(name)
        assert stock is not None and stock.inside_diameter_m is not None
        length, _ = simple.solve_length(_acoustics(tubes, stock, 1.0), target, air.state,
                                        tubes.harmonic)
        aspect = length / stock.inside_diameter_m
        cut = length + (_plug(tubes, stock) if tubes.family == "stopped-tube" else 0.0)
        if aspect < MIN_ASPECT:
            reasons.append(f"`{name}` would be only {aspect:.1f} diameters long")
        elif stock.length_m is not None and cut > stock.length_m:
            reasons.append(f"`{name}` is {stock.length_m * 1000:.0f} mm long, "
                           f"{cut * 1000:.0f} mm is needed")
        else:
            candidates.append((abs(aspect - PREFERRED_ASPECT), name, stock))
    if not candidates:
        where = override.position if override else tubes.where.get("stock", tubes.position)
        raise PhysicsError.at(
            where, f"tube set `{tubes.id}`: no listed stock can make {note_name(note)} "
            f"({target:.2f} Hz): " + "; ".join(reasons),
            "add a narrower tube for high notes, or a longer one for low notes")
    return min(candidates, key=lambda c: (c[0], c[1]))[2]


def resolve_tube_set(inputs: TubeSetInputs) -> tuple[Group, list[Pipe], list[Note]]:
    tubes = inputs.group
    air = group_air(tubes.family, inputs.environment)
    if tubes.family == "stopped-tube" and tubes.harmonic % 2 == 0:
        raise PhysicsError.at(tubes.where.get("harmonic", tubes.position),
                              f"tube set `{tubes.id}`: a stopped tube has only odd harmonics, "
                              f"not harmonic {tubes.harmonic}", "use 1, 3, 5 ...")
    chosen = {}
    for note in tubes.notes:
        override = next((o for o in tubes.overrides if o.note == note), None)
        target = target_hz(inputs.tuning, note, override.frequency_hz if override else None)
        chosen[note] = (target, _choose_stock(tubes, inputs, note, target, air))

    def observe(m: spec_model.Measurement) -> calibration.Observation:
        target, stock = chosen[m.note]
        fab = inputs.fabrication
        return plain.observation(_acoustics(tubes, stock, 1.0), m, target, tubes.harmonic,
                                 air, fab.precision_m, (fab.allowance_fraction, fab.allowance_m))

    fit = calibration.fit_measured(tubes.measured, tuple(chosen), f"tube set `{tubes.id}`",
                                   "measure a tube of this set", observe)
    pipes = []
    fab = inputs.fabrication
    for note in tubes.notes:
        target, stock = chosen[note]
        name = note_name(note)
        acoustics = _acoustics(tubes, stock, fit.value)
        where = tubes.where.get("notes", tubes.position)
        solved = plain.solve_plain(acoustics, target, tubes.harmonic, air, fab.precision_m,
                                   f"tube set `{tubes.id}`, {name}", where,
                                   "use a narrower tube for this note")
        length = solved.speaking_length_m
        stopper = None
        cut = length + plain.round_to(length * fab.allowance_fraction + fab.allowance_m,
                                      fab.precision_m)
        if tubes.family == "stopped-tube":
            plug = plain.round_to(_plug(tubes, stock), fab.precision_m)
            stopper = Stopper(position_m=length, length_m=plug,
                              travel_m=plain.round_to(cut - length, fab.precision_m))
            cut += plug
        assert stock.inside_diameter_m is not None
        pipes.append(Pipe(
            id=f"{tubes.id}-{name}".replace("#", "s"), group=tubes.id, family=tubes.family,
            construction="stock-tube", note=name, harmonic=tubes.harmonic, stock=stock.name,
            material=stock.material, target_hz=target, predicted_hz=solved.predicted_hz,
            error_cents=solved.error_cents, harmonics_hz=solved.harmonics_hz,
            cents_per_mm=solved.cents_per_mm, cents_per_c=solved.cents_per_c, section="round",
            inside_diameter_m=stock.inside_diameter_m,
            outside_diameter_m=stock.outside_diameter_m, inside_width_m=None,
            inside_depth_m=None, wall_m=stock.thickness_m,
            acoustic_length_m=solved.acoustic_length_m,
            end_correction_m=solved.end_correction_m, speaking_length_m=length,
            cut_length_m=plain.round_to(cut, fab.precision_m), mouth=None, foot=None,
            block=None, stopper=stopper, head=None, holes=(), fingerings=(), curves=(),
            source=tubes.position))
    holder = None
    if tubes.holder is not None:
        plate = inputs.stock_named(tubes.holder.stock)
        assert plate is not None
        holder = Holder(plate.name, plate.material, plate.thickness_m, tubes.holder.spacing_m,
                        tubes.holder.margin_m, tubes.holder.clearance_m,
                        tubes.where.get("holder", tubes.position))
    group = Group(id=tubes.id, kind="tube-set", family=tubes.family,
                  construction="stock-tube", air=air.report,
                  end_correction_model=tubes.end_correction.model, losses=tubes.losses,
                  calibration=fit,
                  holder=holder, pipe_ids=tuple(p.id for p in pipes), source=tubes.position,
                  trims=trim.advise(tubes.measured, observe, fit.value, air, pipes,
                                    fab.precision_m))
    return group, pipes, list(air.warnings) + calibration.disagreement(
        fit, f"tube set `{tubes.id}`", tubes.where.get("measured", tubes.position),
        calibration.CHECK_PIPES)
