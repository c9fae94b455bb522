"""The cover: what is built, from which spec, in what air and tuning, and a summary."""

from __future__ import annotations

from collections.abc import Sequence

from compiler.display import fitted
from compiler.emit.pdf import trims
from compiler.emit.pdf.document import (
    Block,
    Column,
    Heading,
    KeyValues,
    Page,
    Paragraph,
    Spacer,
    Table,
    flow_pages,
)
from compiler.emit.pdf.style import (
    GREY,
    MM,
    Frame,
    celsius,
    cents,
    fixed,
    hz,
    inches_of,
    length,
    speed,
)
from compiler.ir import AirReport, Pipe, Resolved

SECTION = "Cover"
WARNINGS_SHOWN = 12


def _settings(resolved: Resolved) -> tuple[tuple[str, str], ...]:
    """The fabrication settings that apply to this build: sheet, spacing and seam only where
    parts are nested on sheets (a flute's or a copy's jig too) or rolled; the saw kerf
    (``tube_kerf``, else ``kerf``) only where tube is cut from stock lengths; the tuning
    allowance only where it is added (not to flutes, cut to their solved length, nor to
    instruments as measured)."""
    fab = resolved.fabrication
    inches = inches_of(fab)
    constructions = {p.construction for p in resolved.pipes}
    nested = bool(constructions & {"rolled-sheet", "boards"}) or any(
        g.holder is not None for g in resolved.groups) or any(
        p.jig is not None for p in resolved.pipes)
    items = [("work to", f"{length(fab.precision_m, inches)} (fabrication precision)")]
    if nested:
        items += [("sheet size", f"{length(fab.sheet_length_m, inches)} × "
                                 f"{length(fab.sheet_width_m, inches)} (length × width)"),
                  ("kerf, spacing", f"{length(fab.kerf_m, inches)}, "
                                    f"{length(fab.spacing_m, inches)}")]
    planned = {p.stock for p in resolved.pipes if p.construction == "stock-tube"} & {
        s.name for s in resolved.stock if s.kind == "tube" and s.length_m}
    if planned:  # tube lengths planned out of stock lengths: the saw's cut between pieces
        saw = fab.kerf_m if fab.tube_kerf_m is None else fab.tube_kerf_m
        items.append(("tube saw kerf", length(saw, inches)))
    if "rolled-sheet" in constructions:
        items.append(("seam allowance", length(fab.seam_allowance_m, inches)))
    if any(g.kind not in ("flute", "survey") for g in resolved.groups):
        items.append(("tuning allowance", fab.tuning_allowance))
    return tuple(items)


def _title_blocks(resolved: Resolved) -> list[Block]:
    fab = resolved.fabrication
    inches = inches_of(fab)
    return [
        Paragraph(resolved.instrument, 20, bold=True),
        Paragraph("Build sheet: cut list, pipe drawings, predicted tuning, full-size "
                  "templates and safety notes", 10.5, colour=GREY),
        Spacer(3 * MM),
        KeyValues((
            ("spec file", resolved.spec_file),
            ("spec sha256", resolved.spec_sha256),
            ("lengths", "millimetres" + (f", inches beside them to the nearest "
                                         f"{inches.step_text}" if inches else "")
             + f" (spec written in {fab.units})"),
            *_settings(resolved),
            ("tuning", f"A4 = {hz(resolved.tuning.a4_hz)} Hz, {resolved.tuning.temperament} "
                       f"temperament, tonic {resolved.tuning.tonic}"),
        ), 9.5, 0.22),
    ]


def _names(ids: Sequence[str]) -> str:
    """Group ids for one table row: all of them, or the first and last of a long run."""
    if len(ids) <= 3:
        return ", ".join(ids)
    return f"{ids[0]} to {ids[-1]} ({len(ids)})"


def _air_blocks(resolved: Resolved) -> list[Block]:
    cols = (Column("groups", 2.1), Column("air", 0.7), Column("temperature", 1.0, "right"),
            Column("humidity", 0.9, "right"), Column("pressure", 1.1, "right"),
            Column("CO2", 1.1, "right"), Column("speed of sound", 1.3, "right"),
            Column("model", 1.1))
    alike: dict[object, list[str]] = {}
    for g in resolved.groups:
        alike.setdefault(g.air, []).append(g.id)
    rows = tuple((_names(ids), air.preset, celsius(air.temperature_c),
                  f"{fixed(air.humidity_percent, 2)} %", f"{fixed(air.pressure_pa, 1)} Pa",
                  f"{fixed(air.co2_ppm, 1)} ppm", speed(air.speed_m_s), air.sound_speed_model)
                 for air, ids in ((a, i) for a, i in alike.items() if isinstance(a, AirReport)))
    out: list[Block] = [Table(cols, rows, size=8)]
    rules = sorted({g.air.sound_speed_formula for g in resolved.groups
                    if g.air.sound_speed_formula})
    if rules:
        out.append(Paragraph("Speed of sound: " + "; ".join(rules) + ".", 8, colour=GREY))
    defaults = sorted({name for g in resolved.groups for name in g.air.defaults})
    if defaults:
        out.append(Paragraph("Not given in the spec, so taken from the defaults for room air "
                             "or breath: " + ", ".join(defaults) + ".", 8, colour=GREY))
    return out


def _calibration_table(resolved: Resolved) -> Table:
    cols = (Column("groups", 2.0), Column("status", 1.4), Column("fitted", 2.1),
            Column("value", 1.1, "right"), Column("rms cents", 0.9, "right"),
            Column("measured minus predicted (cents)", 2.5))
    rows = []
    plain = [g.id for g in resolved.groups if not g.calibration.calibrated]
    if plain:
        rows.append((_names(plain), "not calibrated", "-", "-", "-",
                     "no measured pipes in the spec"))
    for g in resolved.groups:
        cal = g.calibration
        if cal.calibrated:
            rows.append((g.id, "calibrated", cal.parameter, fitted(cal.value, cal.unit),
                         fixed(cal.rms_cents, 2),
                         ", ".join(f"{r.note} {cents(r.error_cents)}" for r in cal.residuals)))
            rows += [("", "", m.name, f"{m.value:.4f}", "", "") for m in cal.more]
    return Table(cols, tuple(rows), size=8)


def _summary_table(resolved: Resolved) -> Table:
    by_id = {p.id: p for p in resolved.pipes}
    cols = (Column("group", 1.4), Column("kind", 0.7), Column("family", 1.2),
            Column("construction", 1.1), Column("pipes", 0.6, "right"),
            Column("notes", 0.9), Column("stock", 0.9),
            Column("1st register\nlargest cents", 1.1, "right"),
            Column("2nd register\nlargest cents", 1.2, "right"))
    rows = []
    for g in resolved.groups:
        pipes = [by_id[i] for i in g.pipe_ids if i in by_id]
        notes = f"{pipes[0].note} to {pipes[-1].note}" if len(pipes) > 1 else (
            pipes[0].note if pipes else "-")
        stock = ", ".join(sorted({p.stock for p in pipes}))
        rows.append((g.id, g.kind, g.family, g.construction, str(len(pipes)), notes, stock,
                     *_register_errors(pipes)))
    return Table(cols, tuple(rows), size=8, title_rows=2)


def _register_errors(pipes: Sequence[Pipe]) -> tuple[str, str]:
    """The largest error in cents of the first register (a pipe's own pitch, or a holed
    pipe's first-register fingerings) and of the second; a weak or split second-register
    resonance is counted, not given a number."""
    first = [p.error_cents for p in pipes if not p.fingerings]
    first += [f.error_cents for p in pipes for f in p.fingerings if f.register == 1]
    second = [f.error_cents for p in pipes for f in p.fingerings
              if f.register == 2 and f.resonance == "clear"]
    flagged = sum(1 for p in pipes for f in p.fingerings
                  if f.register == 2 and f.resonance != "clear")
    one = cents(max(first, key=abs)) if first else "-"
    two = cents(max(second, key=abs)) if second else "-"
    if flagged:
        two = f"{two}, {flagged} weak or split" if second else f"{flagged} weak or split"
    return one, two


def _contents(contents: Sequence[tuple[str, int]]) -> Table:
    return Table((Column("section", 4.0), Column("page", 1.0, "right")),
                 tuple((title, str(page)) for title, page in contents), size=9, min_rows=1)


def pages(resolved: Resolved, frame: Frame, contents: Sequence[tuple[str, int]]) -> list[Page]:
    """The cover page(s); ``contents`` lists (section, first page) for the rest."""
    blocks = _title_blocks(resolved)
    blocks += [Spacer(2 * MM), Heading("Summary", 12), _summary_table(resolved),
               Spacer(2 * MM), Heading("Air and speed of sound", 12), *_air_blocks(resolved),
               Spacer(2 * MM), Heading("Calibration", 12), _calibration_table(resolved),
               *trims.blocks(resolved)]
    if any(not g.calibration.calibrated and g.kind == "rank" for g in resolved.groups):
        blocks.append(Paragraph(
            "Before cutting a whole rank: make one or two pipes, measure their pitch and the "
            "room temperature, and add them under `measured:` in the spec. The mouth's end "
            "correction is known to about ±8 % (each pipe page gives its band in mm and "
            "cents, and the cut lengths leave room for it); the rebuild then corrects every "
            "pipe to your measurements.", 8.5))
    if resolved.warnings:
        blocks += [Spacer(2 * MM), Heading("Notes from the resolver", 12)]
        for note in resolved.warnings[:WARNINGS_SHOWN]:
            blocks.append(Paragraph(f"{note.position.shown()}: {note.message}", 8.5))
        extra = len(resolved.warnings) - WARNINGS_SHOWN
        if extra > 0:
            blocks.append(Paragraph(f"... and {extra} more (boresmith resolve lists them "
                                    "all).", 8.5, colour=GREY))
    blocks += [Spacer(2 * MM), Heading("Contents", 12), _contents(contents)]
    return flow_pages(SECTION, blocks, frame, "Cover")
