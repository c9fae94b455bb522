"""Ranks of flue pipes (open and stopped; rolled sheet or wooden boards).

Scaling, mouths, feet, blocks and stoppers follow the trade's rules of thumb; each default
below is common practice (named "from memory" where no source was checked) and can be
set in the spec.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from compiler.acoustics import mouth, simple
from compiler.errors import PhysicsError
from compiler.ir import (
    Block,
    Foot,
    Group,
    Mouth,
    Note,
    Pipe,
    Stopper,
)
from compiler.resolve import calibration, mouth_band, plain, trim
from compiler.resolve.environment import GroupAir, group_air
from compiler.resolve.inputs import RankInputs
from compiler.resolve.targets import target_hz
from compiler.spec import model as spec_model
from compiler.spec.notes import note_name

DEFAULT_MOUTH_WIDTH = {"rolled-sheet": 0.25, "boards": 1.0}
"""Mouth width: 1/4 of the circumference (Töpfer 1855 Normalmensur, via Adelung 1991,
Einführung in den Orgelbau; seen only in secondary sources); wooden pipes commonly take the
whole inside width (common practice)."""
DEFAULT_CUTUP = {"open-flue": 0.25, "stopped-flue": 0.4}
"""Cut-up over mouth width: principals 1/4-1/3, stopped 1/3-1/2 (organ-building trade rule,
common practice, from memory)."""
USUAL_CUTUP = (0.15, 0.6)
DEFAULT_TOE = 0.25
"""Toe hole diameter over body diameter (common practice, from memory; opened when voicing)."""
WOOD_LIP_M = 0.002
"""A wooden upper lip is bevelled to about 2 mm at the edge (common practice, from memory)."""


@dataclass(frozen=True)
class Section:
    round: bool
    diameter_m: float | None
    width_m: float | None
    depth_m: float | None

    @property
    def area_m2(self) -> float:
        if self.round:
            assert self.diameter_m is not None
            return math.pi * self.diameter_m**2 / 4
        assert self.width_m is not None and self.depth_m is not None
        return self.width_m * self.depth_m

    @property
    def radius_m(self) -> float:
        if self.round:
            assert self.diameter_m is not None
            return self.diameter_m / 2
        assert self.width_m is not None and self.depth_m is not None
        return plain.equivalent_radius(self.width_m, self.depth_m)

    @property
    def mouth_side_m(self) -> float:
        """What the mouth width is a fraction of: circumference, or the inside width."""
        if self.round:
            assert self.diameter_m is not None
            return math.pi * self.diameter_m
        assert self.width_m is not None
        return self.width_m


def halving_factor(semitones: float, halving_interval: float) -> float:
    """Size ratio ``semitones`` above a reference: 2^(−n/h).

    Töpfer 1855 (Normalmensur, h = 16: area 1:√8 per octave), via Adelung 1991, Einführung in
    den Orgelbau, pp. 85–86; seen only in secondary sources.
    """
    return float(2.0 ** (-semitones / halving_interval))


def section_for(rank: spec_model.Rank, note: int, step: float | None = None) -> Section:
    """The cross-section of one pipe: override, explicit table, or the halving rule;
    rounded to ``step`` (the spec's precision) when given, as it will be made."""
    round_ = rank.construction == "rolled-sheet"
    override = _override(rank, note)
    scale = rank.scale
    h = scale.halving_interval
    if scale.table:
        ref_note, a, b = min(scale.table, key=lambda e: (abs(e[0] - note), e[0]))
        f = halving_factor(note - ref_note, h)
        d, w, dp = (a * f, None, None) if round_ else (None, a * f, (b or a) * f)
    else:
        ref = scale.reference_note if scale.reference_note is not None else note
        f = halving_factor(note - ref, h)
        d = scale.diameter_m * f if scale.diameter_m else None
        w = scale.width_m * f if scale.width_m else None
        dp = scale.depth_m * f if scale.depth_m else None
        if not round_ and w is None and d is not None:
            w = dp = d
        if not round_ and dp is None:
            dp = w
    if override is not None:
        d = override.diameter_m or d
        w = override.width_m or w
        dp = override.depth_m or dp
    if step:
        d, w, dp = (None if v is None else plain.round_to(v, step) for v in (d, w, dp))
    return Section(round_, d, w, dp)


def _override(rank: spec_model.Rank, note: int) -> spec_model.Override | None:
    return next((o for o in rank.overrides if o.note == note), None)


def resolve_rank(inputs: RankInputs) -> tuple[Group, list[Pipe], list[Note]]:
    """All pipes of one rank, calibrated to its measurements if it has any."""
    rank = inputs.group
    air = group_air(rank.family, inputs.environment)
    _check_rank(rank)
    stock = inputs.stock_named(rank.stock)
    assert stock is not None
    warnings = list(air.warnings)
    def observe(m: spec_model.Measurement) -> calibration.Observation:
        return _observation(rank, inputs, stock, air, m)

    fit = calibration.fit_measured(rank.measured, rank.notes, f"rank `{rank.id}`",
                                   "measure a pipe of this rank", observe)
    found = mouth_band.Shortfalls(rank.id, rank.construction == "rolled-sheet",
                                  inputs.fabrication.precision_m)
    pipes = [_pipe(rank, inputs, stock, air, note, fit.value, warnings, found)
             for note in rank.notes]
    fab = inputs.fabrication
    warnings += calibration.disagreement(fit, f"rank `{rank.id}`",
                                         rank.where.get("measured", rank.position),
                                         calibration.CHECK_PIPES)
    warnings += found.notes(plain.allowance_text(fab.allowance_fraction, fab.allowance_m)
                            if fab.allowance_fraction or fab.allowance_m else "none",
                            fab.allowance_at or rank.position,
                            rank.stopper.travel_m,
                            rank.where.get("stopper", rank.position))
    group = Group(
        id=rank.id, kind="rank", family=rank.family, construction=rank.construction,
        air=air.report, end_correction_model=rank.end_correction.model, losses=rank.losses,
        calibration=fit,
        holder=None, pipe_ids=tuple(p.id for p in pipes), source=rank.position,
        trims=trim.advise(rank.measured, observe, fit.value, air, pipes,
                          inputs.fabrication.precision_m))
    return group, pipes, warnings


def _check_rank(rank: spec_model.Rank) -> None:
    where = rank.where
    if rank.family == "stopped-flue" and rank.harmonic % 2 == 0:
        raise PhysicsError.at(where.get("harmonic", rank.position),
                              f"rank `{rank.id}`: a stopped pipe has only odd harmonics, "
                              f"not harmonic {rank.harmonic}", "use 1, 3, 5 ...")
    s = rank.scale
    if not s.table and (s.reference_note is None or not (s.diameter_m or s.width_m)):
        raise PhysicsError.at(where.get("scale", rank.position),
                              f"rank `{rank.id}`: the scale needs a reference pipe (note and "
                              "size) or a table",
                              "for example `reference: {note: C2, diameter: 155.5 mm}`")
    mouths = [(where.get("mouth.width", rank.position), "width", rank.mouth.width),
              (where.get("mouth.cutup", rank.position), "cut-up", rank.mouth.cutup)]
    mouths += [(o.position, "width", o.mouth_width) for o in rank.overrides]
    mouths += [(o.position, "cut-up", o.cutup) for o in rank.overrides]
    for position, what, value in mouths:
        if value == 0:
            raise PhysicsError.at(position, f"rank `{rank.id}`: a mouth {what} of zero leaves "
                                  "no mouth: the pipe cannot speak",
                                  "mouth width: 1/4 of the circumference (round) or the whole "
                                  "width (wood); cut-up: 1/4 to 1/2 of the mouth width")
    if rank.construction == "rolled-sheet" and not s.table and not s.diameter_m:
        raise PhysicsError.at(where.get("scale.reference", rank.position),
                              f"rank `{rank.id}`: rolled pipes are round: give the reference "
                              "`diameter`", "width and depth are for wooden pipes")


def _mouth_term(section: Section, width: float, cutup: float, lip: float) -> tuple[float, bool]:
    """The mouth correction (m) and whether the mouth lies inside its fit's range."""
    if section.round:
        d = section.diameter_m
        assert d is not None
        return (mouth.round_correction(d, width, cutup, lip),
                mouth.round_in_range(width / d, cutup / d))
    w, depth = section.width_m, section.depth_m
    assert w is not None and depth is not None
    return (mouth.wood_correction(w, depth, width, cutup, lip),
            mouth.wood_in_range(w, depth, width, cutup))


def _acoustics(rank: spec_model.Rank, section: Section, mouth_width: float, cutup: float,
               lip: float, wall: float, scale: float) -> simple.PipeAcoustics:
    stopped = rank.family == "stopped-flue"
    # The open top's wall: the rolled sheet, or the boards of a wooden pipe.
    if section.round:
        end_ratio = simple.wall_end_ratio(section.radius_m, section.radius_m + wall)
        loss_radius = section.radius_m
    else:
        w, depth = section.width_m, section.depth_m
        assert w is not None and depth is not None
        end_ratio = mouth.wooden_top_ratio(wall, w)
        loss_radius = w * depth / (w + depth)  # 2S/P: see simple.PipeAcoustics.loss_radius_m
    return simple.PipeAcoustics(
        stopped=stopped, open_ends=0 if stopped else 1, radius_m=section.radius_m,
        end_model=rank.end_correction.model, k=rank.end_correction.k, end_ratio=end_ratio,
        mouth_m=_mouth_term(section, mouth_width, cutup, lip)[0], scale=scale,
        losses=rank.losses, loss_radius_m=loss_radius)


def _mouth_numbers(rank: spec_model.Rank, note: int, section: Section, thickness: float,
                   step: float) -> tuple[float, float, float, float, float]:
    override = _override(rank, note)
    wf = (override.mouth_width if override and override.mouth_width else None) or (
        rank.mouth.width or DEFAULT_MOUTH_WIDTH[rank.construction])
    cf = (override.cutup if override and override.cutup else None) or (
        rank.mouth.cutup or DEFAULT_CUTUP[rank.family])
    width = plain.round_to(wf * section.mouth_side_m, step)
    lip = rank.mouth.lip_thickness_m or (
        thickness if rank.construction == "rolled-sheet" else min(thickness, WOOD_LIP_M))
    return wf, cf, width, plain.round_to(width * cf, step), lip


def _observation(rank: spec_model.Rank, inputs: RankInputs, stock: spec_model.Stock,
                 air: GroupAir, m: spec_model.Measurement) -> calibration.Observation:
    step = inputs.fabrication.precision_m
    section = section_for(rank, m.note, step)
    _, _, width, cutup, lip = _mouth_numbers(rank, m.note, section, stock.thickness_m, step)
    override = _override(rank, m.note)
    target = target_hz(inputs.tuning, m.note, override.frequency_hz if override else None)
    base = _acoustics(rank, section, width, cutup, lip, stock.thickness_m, 1.0)
    fab = inputs.fabrication
    allowance = (fab.allowance_fraction, fab.allowance_m)
    if m.length_m is None and not base.stopped:
        # Cut as the uncalibrated model had it: the allowance covers the mouth band too.
        length = plain.round_to(simple.solve_length(base, target, air.state,
                                                    rank.harmonic)[0], step)
        extra = mouth_band.extra_length(base, _mouth_term(section, width, cutup, lip)[1],
                                        length, target, rank.harmonic, air.state)
        allowance = (0.0, max(plain.round_to(length * allowance[0] + allowance[1], step),
                              mouth_band.round_up(extra, step)))
    return plain.observation(base, m, target, rank.harmonic, air, step, allowance)


def _pipe(rank: spec_model.Rank, inputs: RankInputs, stock: spec_model.Stock,
          air: GroupAir, note: int, scale: float, warnings: list[Note],
          found: mouth_band.Shortfalls) -> Pipe:
    name = note_name(note)
    label = f"rank `{rank.id}`, {name}"
    where = rank.where.get("notes", rank.position)
    override = _override(rank, note)
    if override is not None:
        where = override.position
    section = section_for(rank, note, inputs.fabrication.precision_m)
    t = stock.thickness_m
    inner = section.diameter_m if section.round else min(section.width_m or 0,
                                                         section.depth_m or 0)
    # A rolled body narrower than two walls cannot be rolled; a wooden pipe narrower than
    # its board is thick cannot be glued up with a block and cap (common practice).
    least = 2 * t if section.round else t
    if inner is None or inner <= least:
        walls = "two walls" if section.round else "one board"
        raise PhysicsError.at(rank.where.get("scale", rank.position),
                              f"{label}: the scale gives {1000 * (inner or 0):.1f} mm inside, "
                              f"no wider than {walls} of {1000 * t:.1f} mm",
                              "use a wider scale or a larger halving interval, or thinner stock")
    wf, cf, width, cutup, lip = _mouth_numbers(rank, note, section, t,
                                               inputs.fabrication.precision_m)
    limit = section.diameter_m if section.round else section.width_m
    assert limit is not None
    if width > limit:
        raise PhysicsError.at(rank.where.get("mouth.width", where),
                              f"{label}: the mouth ({1000 * width:.1f} mm) is wider than the "
                              f"pipe ({1000 * limit:.1f} mm)",
                              "a round pipe's mouth is at most about 3/10 of the circumference "
                              "(then nearly as wide as the pipe); use 1/4 or 2/9"
                              if section.round else
                              "a wooden pipe's mouth is at most its inside width: `width: 1`")
    if cf > 1.0:
        raise PhysicsError.at(rank.where.get("mouth.cutup", where),
                              f"{label}: a cut-up of {cf:.2f} × the mouth width is taller than "
                              "the mouth is wide", "use 1/4 to 1/2 of the mouth width")
    if not USUAL_CUTUP[0] <= cf <= USUAL_CUTUP[1] and note == rank.notes[0]:
        warnings.append(Note(rank.where.get("mouth.cutup", where),
                             f"rank `{rank.id}`: cut-up {cf:.2f} × mouth width is outside the "
                             f"usual {USUAL_CUTUP[0]}-{USUAL_CUTUP[1]}"))
    target = target_hz(inputs.tuning, note, override.frequency_hz if override else None)
    acoustics = _acoustics(rank, section, width, cutup, lip, t, scale)
    solved = plain.solve_plain(
        acoustics, target, rank.harmonic, air, inputs.fabrication.precision_m, label, where,
        "use a narrower scale or a smaller mouth for the highest pipes, or leave them out")
    fab = inputs.fabrication
    length = solved.speaking_length_m
    _, inside = _mouth_term(section, width, cutup, lip)
    spread = mouth_band.band(acoustics, inside, length, target, rank.harmonic, air.state, cutup,
                             lambda h: _acoustics(rank, section, width, h, lip, t, scale))
    if not inside:
        across = section.diameter_m if section.round else width
        assert across is not None
        ratios = (width / across, cutup / across, 0.0) if section.round else (
            width / section.mouth_side_m, cutup / width,
            (section.depth_m or 0.0) / section.mouth_side_m)
        mouth_where = where if override and (override.mouth_width or override.cutup) else (
            rank.where.get("mouth", rank.position))
        found.outside.setdefault(mouth_where, []).append((name, *ratios))
    # The cut leaves room for a mouth term smaller than modelled (module mouth_band).
    cover = mouth_band.round_up(spread.extra_m, fab.precision_m)
    allowance = plain.round_to(length * fab.allowance_fraction + fab.allowance_m,
                               fab.precision_m)
    stopped = rank.family == "stopped-flue"
    wood_stopper = stopped and not section.round
    if allowance < cover and not wood_stopper:
        found.short.append((name, spread.extra_m, length))
        allowance = cover
    foot = block = stopper = None
    mouth_ir = Mouth(width, cutup, lip, wf, cf, acoustics.mouth_m * scale,
                     band_percent=100 * spread.fraction, band_m=spread.length_m,
                     band_sharp_cents=spread.sharp_cents, band_flat_cents=spread.flat_cents,
                     cutup_cents_per_mm=spread.cutup_cents_per_mm, in_fitted_range=inside)
    side = section.diameter_m if section.round else section.depth_m
    assert side is not None
    if stopped:
        stopper_length = rank.stopper.length_m or max(side, 0.03)
        travel = rank.stopper.travel_m or plain.round_to(max(0.1 * length, 0.01),
                                                         fab.precision_m)
        if wood_stopper and travel < cover:
            if rank.stopper.travel_m is not None:
                found.travel.append((name, cover))
            travel = cover
        stopper = Stopper(position_m=length, length_m=stopper_length, travel_m=travel)
    if section.round:
        d = section.diameter_m
        assert d is not None
        foot_length = rank.foot.length_m or plain.round_to(min(max(2.5 * d, 0.12), 0.35),
                                                           fab.precision_m)
        toe = (rank.foot.toe or DEFAULT_TOE) * d
        foot = Foot(length_m=foot_length, top_diameter_m=d, toe_diameter_m=toe, toe_hole_m=toe)
        cut = length + allowance
    else:
        assert section.width_m is not None
        block = Block(length_m=plain.round_to(side, fab.precision_m),
                      flue_m=plain.round_to(min(max(section.width_m / 40, 0.0006), 0.003),
                                            fab.precision_m))
        cut = block.length_m + length + (allowance if not stopped else 0.0)
        if stopper is not None:
            cut += stopper.length_m + stopper.travel_m
    return Pipe(
        id=f"{rank.id}-{name}".replace("#", "s"),
        group=rank.id, family=rank.family, construction=rank.construction, note=name,
        harmonic=rank.harmonic, stock=stock.name, material=stock.material,
        target_hz=target, predicted_hz=solved.predicted_hz, error_cents=solved.error_cents,
        harmonics_hz=solved.harmonics_hz, cents_per_mm=solved.cents_per_mm,
        cents_per_c=solved.cents_per_c,
        section="round" if section.round else "rect",
        inside_diameter_m=section.diameter_m,
        outside_diameter_m=(section.diameter_m + 2 * t) if section.diameter_m else None,
        inside_width_m=section.width_m if not section.round else None,
        inside_depth_m=section.depth_m if not section.round else None,
        wall_m=t, acoustic_length_m=solved.acoustic_length_m,
        end_correction_m=solved.end_correction_m, speaking_length_m=length,
        cut_length_m=plain.round_to(cut, fab.precision_m), mouth=mouth_ir, foot=foot,
        block=block,
        stopper=stopper, head=None, holes=(), fingerings=(), curves=(),
        source=where if override is not None else rank.position)
