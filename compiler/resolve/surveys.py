"""Surveys: an instrument as measured, predicted by the transfer-matrix model, never changed.

The measured bore (a cylinder, or cones between stations), the holes as they are, and the
blowing end go into ``compiler.acoustics.impedance``; ``compiler.acoustics.playing`` finds each
fingering's first two resonances: the peaks of the input admittance for a flue-blown or open
end, of the input impedance for a closed (reed) end. Each is compared with the note it should
sound (when the spec says) and with the nearest note of the spec's tuning. Sensitivities: cents
per °C per fingering (the air 0.5 K warmer and cooler), and cents per mm of tube length for the
lowest fingering (the foot trimmed).

The open ends and holes radiate as a flute's do: the foot's end correction sees the wall
(Dalmont, Nederveen & Joly 2001), and the holes take ``flutes.HOLE_RADIATION``. Head details as
for flutes (common practice, from memory): a duct head's block fills the tube
down to the window's upper edge (the duct exit); a side-blown head's cork sits one bore
diameter above the embouchure centre unless the spec gives it. A reed end's reed and
mouthpiece are an extra length of closed bore above the top end.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np
from numpy.typing import NDArray

from compiler.acoustics import playing, solve
from compiler.acoustics.impedance import LIP_COVERAGE, Bore, Instrument, Segment
from compiler.acoustics.impedance import Head as EngineHead
from compiler.acoustics.impedance import Hole as EngineHole
from compiler.acoustics.tuning import cents
from compiler.errors import PhysicsError, Position
from compiler.ir import BoreStation, Curve, Fingering, Group, Head, Hole, Note, Pipe
from compiler.resolve import calibration
from compiler.resolve.environment import GroupAir, group_air
from compiler.resolve.flutes import HOLE_RADIATION, check_cork_clear, jig
from compiler.resolve.inputs import SurveyInputs
from compiler.resolve.targets import nearest_note, target_hz
from compiler.spec import model as spec_model
from compiler.spec.notes import note_name

FAMILY = "survey"
BREATH_ENDS = ("duct", "embouchure", "reed")
"""Blown ends get warm breath by default; plain open and closed ends room air."""
SENSITIVITY_STEP_M = 1e-4
SENSITIVITY_STEP_K = 0.5
CURVE_POINTS = 400
STOCK_BORE_TOLERANCE_M = 5e-5
"""A copy's stock whose bore differs from the measured one by more than this plays
differently: say so (our threshold: a twentieth of a millimetre)."""


def pattern(closed: tuple[bool, ...]) -> str:
    return "".join("x" if c else "o" for c in closed) or "(no holes)"


def _mm(metres: float) -> str:
    return f"{metres * 1000:.1f} mm"


@dataclass(frozen=True)
class _Row:
    """One fingering in one register, with what it is compared with."""

    closed: tuple[bool, ...]
    register: int
    note: int | None
    frequency_hz: float | None
    position: Position


def _bore(survey: spec_model.Survey) -> Bore:
    """The engine's bore profile from the stations, checked against the tube."""
    name = f"survey `{survey.id}`"
    stations = survey.bore
    for s in stations:
        if s.from_top_m > survey.length_m:
            raise PhysicsError.at(s.position, f"{name}: a bore station {_mm(s.from_top_m)} from "
                                  f"the top lies beyond the end of the {_mm(survey.length_m)} "
                                  "tube", "measure stations from the top end, within `length`")
    segments = []
    if stations[0].from_top_m > 0:
        r = stations[0].diameter_m / 2
        segments.append(Segment(stations[0].from_top_m, r, r))
    for a, b in zip(stations, stations[1:], strict=False):
        if b.from_top_m > a.from_top_m:
            segments.append(Segment(b.from_top_m - a.from_top_m, a.diameter_m / 2,
                                    b.diameter_m / 2))
    if not segments:
        r = stations[-1].diameter_m / 2
        segments.append(Segment(survey.length_m, r, r))
    return Bore(tuple(segments))


def _head(survey: spec_model.Survey, bore: Bore) -> tuple[EngineHead, Head]:
    """The blowing end for the engine (positions from the measured top end) and the report."""
    h, name, end = survey.head, f"survey `{survey.id}`", survey.blowing_end

    def at(key: str) -> Position:
        return survey.where.get(key) or survey.where.get("head") or survey.position

    if end == "duct":
        assert h.window_length_m is not None and h.window_width_m is not None
        assert h.window_from_top_m is not None
        labium, window = h.window_from_top_m, h.window_length_m
        bore_d = 2 * float(bore.radius_at(labium))
        if labium >= survey.length_m:
            raise PhysicsError.at(at("head.window.from_top"), f"{name}: the labium "
                                  f"{_mm(labium)} from the top lies beyond the end of the "
                                  f"{_mm(survey.length_m)} tube",
                                  "measure `window.from_top` from the top end to the labium edge")
        if labium <= window:
            raise PhysicsError.at(at("head.window.from_top"), f"{name}: the labium "
                                  f"{_mm(labium)} from the top leaves no room for the block "
                                  f"above a {_mm(window)} window",
                                  "`window.from_top` runs from the top end to the labium edge")
        if h.window_width_m > bore_d:
            raise PhysicsError.at(at("head.window.width"), f"{name}: the window "
                                  f"({_mm(h.window_width_m)}) is wider than the bore "
                                  f"({_mm(bore_d)})", "check the window's width and the bore")
        if h.duct_height_m is not None and h.duct_height_m >= bore_d / 2:
            raise PhysicsError.at(at("head.duct.height"), f"{name}: a duct "
                                  f"{_mm(h.duct_height_m)} high takes half the bore or more",
                                  "ducts are commonly 1 to 1.5 mm high")
        engine = EngineHead("duct", mouth_position_m=labium - window / 2,
                            window_length_m=window, window_width_m=h.window_width_m,
                            window_thickness_m=survey.wall_m, cavity_length_m=window / 2)
        return engine, Head("duct", window, h.window_width_m, h.duct_height_m, labium, None,
                            None, None)
    if end == "embouchure":
        assert h.embouchure_diameter_m is not None and h.embouchure_from_top_m is not None
        mouth, diameter = h.embouchure_from_top_m, h.embouchure_diameter_m
        bore_d = 2 * float(bore.radius_at(mouth))
        if mouth >= survey.length_m:
            raise PhysicsError.at(at("head.embouchure.from_top"), f"{name}: the embouchure hole "
                                  f"{_mm(mouth)} from the top lies beyond the end of the "
                                  f"{_mm(survey.length_m)} tube",
                                  "measure `embouchure.from_top` from the top end to its centre")
        if diameter >= bore_d:
            raise PhysicsError.at(at("head.embouchure.diameter"), f"{name}: the embouchure "
                                  f"hole ({_mm(diameter)}) is as wide as the bore "
                                  f"({_mm(bore_d)}) or wider",
                                  "check the hole's diameter and the bore")
        cork = h.cork_m if h.cork_m is not None else min(bore_d, mouth)
        check_cork_clear(cork, diameter, at("head.cork"), name)
        if cork > mouth:
            raise PhysicsError.at(at("head.cork"), f"{name}: a cork {_mm(cork)} above the "
                                  f"embouchure hole would sit above the top end (the hole is "
                                  f"{_mm(mouth)} from the top)",
                                  "measure `cork` from the hole's centre up to the cork's face")
        cover = h.lip_cover if h.lip_cover is not None else LIP_COVERAGE
        engine = EngineHead("embouchure", mouth_position_m=mouth,
                            embouchure_radius_m=diameter / 2, embouchure_chimney_m=survey.wall_m,
                            cavity_length_m=cork, lip_coverage=cover)
        return engine, Head("embouchure", None, None, None, None, diameter, mouth, cork)
    extra = survey.reed_length_m if end == "reed" else 0.0
    kind = "open" if end == "open" else "closed"
    return (EngineHead(kind, mouth_position_m=extra, cavity_length_m=extra),
            Head(end, None, None, None, None, None, None, None))


def _holes(survey: spec_model.Survey, bore: Bore, head: EngineHead,
           outside_diameter: float) -> tuple[Hole, ...]:
    """The holes as reported, checked: on the tube, below the head, in order, apart, and no
    wider than the bore."""
    name, length = f"survey `{survey.id}`", survey.length_m
    top_limit = _head_bottom(survey, head)
    circumference = math.pi * outside_diameter
    out: list[Hole] = []
    for i, h in enumerate(survey.holes):
        at = h.where.get(f"from_{h.measured_from}", h.position)
        x, r = h.from_top_m, h.diameter_m / 2
        label = h.label or ("T" if 90.0 < abs(h.angle_deg) % 360.0 < 270.0 else str(i + 1))
        measured = x if h.measured_from == "top" else length - x
        where = f"hole {label} ({_mm(h.diameter_m)} at {_mm(measured)} from the {h.measured_from})"
        if x - r < 0 or x + r > length:
            raise PhysicsError.at(at, f"{name}: {where} does not lie on the {_mm(length)} "
                                  "tube", "check the hole's position, its end (`from_top` or "
                                  "`from_bottom`) and the survey's `length`")
        if x - r <= top_limit:
            raise PhysicsError.at(at, f"{name}: {where} is not below the "
                                  f"{_head_words(survey)} (which reaches {_mm(top_limit)} "
                                  "from the top)", "holes are measured from the top end")
        bore_d = 2 * float(bore.radius_at(x))
        if h.diameter_m + 2 * h.undercut_m > bore_d:
            raise PhysicsError.at(h.where.get("diameter", h.position),
                                  f"{name}: {where} is wider than the bore there "
                                  f"({_mm(bore_d)})" + (", undercut included"
                                                        if h.undercut_m else ""),
                                  "check the hole's diameter and the bore at that place")
        if out:
            above = out[-1]
            if x <= above.position_from_top_m:
                raise PhysicsError.at(at, f"{name}: {where} is not below hole {above.label} "
                                      f"({_mm(above.position_from_top_m)} from the top)",
                                      "list the holes from the head downward")
        for other in out:
            gap = _apart(x, h.angle_deg, other, circumference)
            overlap = (h.diameter_m + other.diameter_m) / 2 - gap
            if overlap > 0:
                raise PhysicsError.at(at, f"{name}: {where} overlaps hole {other.label} by "
                                      f"{_mm(overlap)}", "check both holes' positions and "
                                      "diameters: measured holes cannot run into each other")
        out.append(Hole(number=i + 1, label=label, position_from_top_m=x,
                        position_from_bottom_m=length - x, diameter_m=h.diameter_m,
                        angle_deg=h.angle_deg,
                        chimney_m=h.chimney_m if h.chimney_m is not None else survey.wall_m,
                        undercut_m=h.undercut_m, fixed=True, source=h.position))
    return tuple(out)


def _around(angle_deg: float, circumference: float) -> float:
    return ((angle_deg + 180.0) % 360.0 - 180.0) / 360.0 * circumference


def _apart(x: float, angle_deg: float, other: Hole, circumference: float) -> float:
    """Centre-to-centre distance of a hole at ``x``, ``angle_deg`` from ``other``, on the
    tube's outside unrolled (plane geometry)."""
    dx = abs(_around(angle_deg, circumference) - _around(other.angle_deg, circumference))
    return math.hypot(min(dx, circumference - dx), x - other.position_from_top_m)


def _finger_notes(survey: spec_model.Survey, holes: tuple[Hole, ...],
                  outside_diameter: float) -> list[Note]:
    """Neighbouring front holes closer than two fingers commonly cover (``solve.MIN_SPAN_M``,
    the flutes' default least span): a measuring slip, or an instrument for small hands or
    fingertips. Only a warning: a survey is predicted as it is, and a copy keeps the spacing."""
    pairs = solve.finger_pairs(tuple(h.angle_deg for h in holes), outside_diameter,
                               solve.MIN_SPAN_M)
    circumference = math.pi * outside_diameter
    notes = []
    for pair in pairs:
        upper, lower = holes[pair.upper], holes[pair.lower]
        if lower.position_from_top_m - upper.position_from_top_m >= pair.along_m - 1e-9:
            continue
        apart = _apart(lower.position_from_top_m, lower.angle_deg, upper, circumference)
        notes.append(Note(lower.source or survey.position,
                          f"survey `{survey.id}`: holes {upper.label} and {lower.label} are "
                          f"{_mm(apart)} apart centre to centre, closer than two neighbouring "
                          f"fingers commonly cover ({_mm(solve.MIN_SPAN_M)}): check the "
                          "measurement; a copy keeps this spacing"))
    return notes


def _head_bottom(survey: spec_model.Survey, head: EngineHead) -> float:
    """How far down the tube the blowing end reaches (holes must lie below it)."""
    if survey.blowing_end == "duct":
        return head.mouth_position_m + head.window_length_m / 2
    if survey.blowing_end == "embouchure":
        return head.mouth_position_m + head.embouchure_radius_m
    return 0.0


def _head_words(survey: spec_model.Survey) -> str:
    return {"duct": "window", "embouchure": "embouchure hole"}.get(survey.blowing_end,
                                                                    "top end")


def _rows(survey: spec_model.Survey) -> list[_Row]:
    """Register 1 of every fingering, then register 2 (unless `second_register: none`).
    Without a table: all holes closed, then opened one by one from the bottom."""
    table = [(f.closed, f.note, f.frequency_hz, f.second_register, f.position)
             for f in survey.fingerings]
    if not table:
        n, where = len(survey.holes), survey.where.get("holes", survey.position)
        table = [(tuple(i < n - k for i in range(n)), None, None, None, where)
                 for k in range(n + 1)]
    rows = [_Row(c, 1, note, freq, pos) for c, note, freq, _, pos in table]
    rows += [_Row(c, 2, second, None, pos) for c, _, _, second, pos in table
             if second != spec_model.NO_SECOND_REGISTER]
    return rows


def _instrument(survey: spec_model.Survey, bore: Bore, head: EngineHead,
                holes: tuple[Hole, ...]) -> Instrument:
    """The engine's instrument. A reed's extra length is closed bore above the top end, so
    the engine's positions run from the top of that extension."""
    shift = head.cavity_length_m if survey.blowing_end == "reed" else 0.0
    if shift > 0:
        r = bore.segments[0].radius_in_m
        bore = Bore((Segment(shift, r, r), *bore.segments))
    engine_holes = tuple(EngineHole(h.position_from_top_m + shift, h.diameter_m / 2, h.chimney_m,
                                    h.undercut_m) for h in holes)
    return Instrument(bore, engine_holes, head, survey.length_m + shift,
                      radiation=survey.radiation,
                      hole_radiation=HOLE_RADIATION[survey.radiation], losses=survey.losses,
                      wall_m=survey.wall_m)


def _resonances(instrument: Instrument, air: GroupAir, closed: NDArray[np.bool_],
                temperature_k: float | None = None) -> NDArray[np.float64]:
    state = air.state if temperature_k is None else air.at_temperature(temperature_k)
    return playing.resonances(instrument, state, closed).frequencies_hz


@dataclass(frozen=True)
class _Predicted:
    """Per row: the frequency (NaN: none found), cents per °C (NaN: not found), how its
    resonance looks (``playing.second_register_quality``), its lattice cutoff and its band
    under the open holes' radiation model (``playing.hole_model_band``)."""

    frequency_hz: tuple[float, ...]
    per_c: tuple[float, ...]
    resonance: tuple[str, ...]
    cutoff_hz: tuple[float | None, ...]
    model_band_cents: tuple[tuple[float, float] | None, ...]


def _predict(instrument: Instrument, air: GroupAir, rows: list[_Row]) -> _Predicted:
    unique = sorted({r.closed for r in rows})
    closed = np.array(unique, dtype=bool).reshape(len(unique), len(instrument.holes))
    t = air.state.temperature_k
    base, warm, cool = (_resonances(instrument, air, closed, temp)
                        for temp in (None, t + SENSITIVITY_STEP_K, t - SENSITIVITY_STEP_K))
    quality = playing.second_register_quality(instrument, air.state, closed, base)
    cutoffs = playing.lattice_cutoffs(instrument, air.state, closed)
    pick = [(unique.index(r.closed), r.register - 1) for r in rows]
    with np.errstate(invalid="ignore"):
        per_c = tuple(1200 * math.log2(warm[i, k] / cool[i, k]) / (2 * SENSITIVITY_STEP_K)
                      if np.isfinite(warm[i, k] * cool[i, k]) else math.nan for i, k in pick)
    resonance = tuple(quality[i] if k == 1 else "clear" for i, k in pick)
    chosen = np.array([base[i, k] if q == "clear" else np.nan
                       for (i, k), q in zip(pick, resonance, strict=True)])
    bands = playing.hole_model_band(instrument, air.state, closed[[i for i, _ in pick]], chosen)
    return _Predicted(tuple(float(base[i, k]) for i, k in pick), per_c, resonance,
                      tuple(cutoffs[i] for i, _ in pick), bands)


def _report(rows: list[_Row], predicted: _Predicted,
            tuning: spec_model.Tuning) -> tuple[list[Fingering], list[_Row]]:
    """Fingerings with a prediction, and the rows the model found no resonance for."""
    done, missing = [], []
    for i, row in enumerate(rows):
        f, slope = predicted.frequency_hz[i], predicted.per_c[i]
        if not math.isfinite(f):
            missing.append(row)
            continue
        near, near_hz = nearest_note(tuning, f)
        note = row.note if row.note is not None else near
        target = target_hz(tuning, note, row.frequency_hz)
        done.append(Fingering(note=note_name(note), closed=row.closed, register=row.register,
                              target_hz=target, predicted_hz=f, error_cents=cents(f, target),
                              nearest_note=note_name(near), nearest_cents=cents(f, near_hz),
                              cents_per_c=slope if math.isfinite(slope) else None,
                              resonance=predicted.resonance[i],
                              cutoff_hz=predicted.cutoff_hz[i],
                              model_band_cents=predicted.model_band_cents[i],
                              source=row.position))
    return done, missing


def resolve_survey(inputs: SurveyInputs) -> tuple[Group, list[Pipe], list[Note]]:
    """Predict every fingering of a measured instrument (nothing is changed)."""
    survey = inputs.group
    name = f"survey `{survey.id}`"
    air = group_air(FAMILY, inputs.environment, survey.environment,
                    preset="breath" if survey.blowing_end in BREATH_ENDS else "room")
    stock = inputs.stock_named(survey.stock) if survey.stock is not None else None
    bore = _bore(survey)
    top_d = 2 * float(bore.radius_at(0.0))
    outside = (survey.outside_diameter_m or (stock.outside_diameter_m if stock else None)
               or top_d + 2 * survey.wall_m)
    if outside <= top_d:
        raise PhysicsError.at(survey.where.get("outside_diameter", survey.position),
                              f"{name}: the outside diameter ({_mm(outside)}) is not larger "
                              f"than the bore at the top ({_mm(top_d)})",
                              "check `outside_diameter` against the bore")
    stock_notes = _stock_notes(survey, stock, top_d) if stock is not None else []
    engine_head, head = _head(survey, bore)
    holes = _holes(survey, bore, engine_head, outside)
    instrument = _instrument(survey, bore, engine_head, holes)
    rows = _rows(survey)
    fingerings, missing = _report(rows, _predict(instrument, air, rows), inputs.tuning)
    warnings = list(air.warnings)
    warnings += [Note(r.position, f"{name}: the model finds no register-{r.register} resonance "
                      f"for the fingering {pattern(r.closed)}; it is left out of the report")
                 for r in missing]
    lowest = min((f for f in fingerings if f.register == 1), key=lambda f: f.predicted_hz,
                 default=None)
    if lowest is None:
        raise PhysicsError.at(survey.position, f"{name}: the model finds no resonance for any "
                              "fingering", "check the length, bore and holes as measured")
    warnings += _finger_notes(survey, holes, outside) + stock_notes
    pipe = replace(_pipe(survey, air, instrument, engine_head, head, holes, (top_d, outside),
                         fingerings, lowest, stock), jig=jig(survey.jig, inputs))
    group = Group(id=survey.id, kind="survey", family=FAMILY, construction="stock-tube",
                  air=air.report, end_correction_model=survey.radiation,
                  calibration=calibration.uncalibrated(), holder=None, pipe_ids=(pipe.id,),
                  losses=survey.losses, source=survey.position)
    return group, [pipe], warnings


def _stock_notes(survey: spec_model.Survey, stock: spec_model.Stock, top_d: float) -> list[Note]:
    where = survey.where.get("stock", survey.position)
    if stock.length_m is not None and survey.length_m > stock.length_m:
        raise PhysicsError.at(where, f"survey `{survey.id}`: the copy is {_mm(survey.length_m)} "
                              f"long, but stock `{stock.name}` comes in lengths of "
                              f"{_mm(stock.length_m)}", "use longer stock")
    inside = stock.inside_diameter_m
    if inside is not None and abs(inside - top_d) > STOCK_BORE_TOLERANCE_M:
        return [Note(where, f"survey `{survey.id}`: stock `{stock.name}` has a "
                     f"{inside * 1000:.2f} mm bore, the measured one {top_d * 1000:.2f} mm: "
                     "a copy cut from it plays differently from this prediction")]
    return []


def _pipe(survey: spec_model.Survey, air: GroupAir, instrument: Instrument,
          engine_head: EngineHead, head: Head, holes: tuple[Hole, ...],
          diameters: tuple[float, float], fingerings: list[Fingering], lowest: Fingering,
          stock: spec_model.Stock | None) -> Pipe:
    """The survey as one pipe of the IR; ``diameters``: the bore at the top and outside."""
    top_d, outside = diameters
    closed = np.array(lowest.closed, dtype=bool).reshape(1, len(holes))
    registers = _resonances(instrument, air, closed)[0]
    longer, shorter = (
        _resonances(replace(instrument, length_m=instrument.length_m + step), air, closed)[0, 0]
        for step in (SENSITIVITY_STEP_M, -SENSITIVITY_STEP_M))
    speaking = survey.length_m - (engine_head.mouth_position_m
                                  if survey.blowing_end in ("duct", "embouchure") else 0.0)
    # Acoustic length: the plain pipe that sounds the lowest note: closed-open (a quarter
    # wave) when the closed end overblows nearer a twelfth than an octave (a cylinder), else
    # open-open (a half wave; a cone closed at its narrow end plays like one).
    quarter = (instrument.head.kind == "closed" and len(registers) > 1
               and registers[1] / registers[0] > 2.5)
    acoustic = air.state.speed_m_s / ((4 if quarter else 2) * lowest.predicted_hz)
    return Pipe(
        id=survey.id, group=survey.id, family=FAMILY, construction="stock-tube",
        note=lowest.note, harmonic=1, stock=stock.name if stock else survey.id,
        material=survey.material or (stock.material if stock else "as measured"),
        target_hz=lowest.target_hz, predicted_hz=lowest.predicted_hz,
        error_cents=lowest.error_cents,
        harmonics_hz=tuple(float(f) for f in registers if np.isfinite(f)),
        cents_per_mm=cents(float(longer), float(shorter)) / (2 * SENSITIVITY_STEP_M * 1000),
        cents_per_c=next(f.cents_per_c for f in [lowest, *fingerings]
                         if f.cents_per_c is not None),
        section="round", inside_diameter_m=top_d, outside_diameter_m=outside,
        inside_width_m=None, inside_depth_m=None, wall_m=survey.wall_m,
        acoustic_length_m=acoustic, end_correction_m=acoustic - speaking,
        speaking_length_m=speaking, cut_length_m=survey.length_m, mouth=None, foot=None,
        block=None, stopper=None, head=head, holes=holes, fingerings=tuple(fingerings),
        curves=_curves(survey, instrument, air, fingerings), source=survey.position,
        bore=tuple(BoreStation(s.from_top_m, s.diameter_m) for s in survey.bore)
        if len(survey.bore) > 1 else ())


def _curves(survey: spec_model.Survey, instrument: Instrument, air: GroupAir,
            fingerings: list[Fingering]) -> tuple[Curve, ...]:
    """Admittance (or, for a closed end, impedance) magnitude of three fingerings: the lowest,
    a middle and the last of register 1."""
    first = [f for f in fingerings if f.register == 1]
    picks = [first[i] for i in sorted({0, len(first) // 2, len(first) - 1})]
    top = max(f.predicted_hz for f in fingerings) * 1.3
    closed = np.array([f.closed for f in picks], dtype=bool).reshape(len(picks),
                                                                     len(instrument.holes))
    freqs, magnitude = playing.spectrum(instrument, air.state, closed, f_min_hz=50.0,
                                        f_max_hz=max(top, 100.0), n=CURVE_POINTS)
    quantity = "impedance" if instrument.head.kind == "closed" else "admittance"
    return tuple(Curve(f"{f.note} {pattern(f.closed)}", tuple(float(v) for v in freqs),
                       tuple(float(v) for v in magnitude[k]), quantity)
                 for k, f in enumerate(picks))
