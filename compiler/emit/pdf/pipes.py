"""Pipe pages: a dimensioned drawing and tables for each pipe, or a table per page for ranks.

A group of up to ``PER_PIPE_LIMIT`` pipes (and every pipe with holes) gets a page per pipe:
the side view on the left; pitch, dimensions, sensitivities and acoustic lengths on the
right; the holes below. A larger rank gets pages of a table, one row per pipe, under a key
drawing whose letters head the table's columns, so a 600-pipe organ stays at tens of pages.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass, replace

from reportlab.pdfgen.canvas import Canvas

from compiler.display import Inches, fitted
from compiler.emit.pdf import duct_block, fingering
from compiler.emit.pdf.document import (
    Block,
    Column,
    Heading,
    Page,
    Spacer,
    Table,
    fit_size,
    flow,
    wrap,
)
from compiler.emit.pdf.sideview import draw_view
from compiler.emit.pdf.style import (
    FONT,
    FONT_BOLD,
    GREY,
    INK,
    MM,
    Frame,
    celsius,
    cents,
    fixed,
    hz,
    inches_of,
    length,
    mm,
    per_step_words,
    safe,
    sensitivity,
    speed,
    strip_prefix,
)
from compiler.geometry import dimensions as D
from compiler.geometry.side_view import side_view
from compiler.ir import Group, Mouth, Pipe, Resolved

SECTION = "Pipes"
PER_PIPE_LIMIT = 12
"""Groups with more pipes than this are shown as tables (a page per group of rows)."""
VIEW_WIDTH = 88 * MM
TITLE_BAND = 15 * MM
KEY_BAND = 78 * MM


def pages(resolved: Resolved, frame: Frame) -> list[Page]:
    """The pipe pages of every group, in the order of the resolved model."""
    inches = inches_of(resolved.fabrication)
    by_id = {p.id: p for p in resolved.pipes}
    out: list[Page] = []
    for group in resolved.groups:
        pipes = [by_id[i] for i in group.pipe_ids if i in by_id]
        if not pipes:
            continue
        if len(pipes) <= PER_PIPE_LIMIT or any(p.holes or p.fingerings for p in pipes):
            for pipe in pipes:
                out.append(Page(SECTION, PipePage(pipe, inches), label=pipe.id))
                out += fingering.pages(pipe, frame, inches)
                out += duct_block.pages(pipe, frame, inches)
        else:
            out += _group_pages(group, pipes, frame, inches)
    if out:
        out[0] = replace(out[0], bookmark="Pipes")
    return out


FAMILY_WORDS = {
    "open-flue": "open flue pipe",
    "stopped-flue": "stopped flue pipe",
    "stopped-tube": "stopped tube",
    "open-tube": "open tube",
    "duct-flute": "duct flute",
    "side-blown-flute": "side-blown flute",
    "survey": "survey (as measured)",
}

CONSTRUCTION_WORDS = {
    "rolled-sheet": "rolled sheet",
    "boards": "boards",
    "stock-tube": "stock tube",
}


def family_words(family: str) -> str:
    return FAMILY_WORDS.get(family, family)


def construction_words(construction: str) -> str:
    return CONSTRUCTION_WORDS.get(construction, construction)


def describe(pipe: Pipe) -> str:
    """One line: note, kind, construction, stock and material."""
    return (f"{pipe.note} · {family_words(pipe.family)} · "
            f"{construction_words(pipe.construction)} · stock {pipe.stock} ({pipe.material})")


def _two_col(name: str, inches: Inches | None) -> tuple[Column, ...]:
    cols = (Column(name, 2.2), Column("mm", 1.0, "right"))
    return cols + ((Column("in", 0.9, "right"),) if inches else ())


def _length_row(name: str, value_m: float, inches: Inches | None) -> tuple[str, ...]:
    return (name, mm(value_m)) + ((inches.text(value_m),) if inches else ())


def pipe_blocks(pipe: Pipe, inches: Inches | None) -> list[Block]:
    """The tables beside a pipe's drawing: pitch, dimensions, sensitivity, acoustic lengths."""
    harmonics = ", ".join(hz(f) for f in pipe.harmonics_hz[:4])
    pitch = Table((Column("pitch", 1.5), Column("", 2.1, "right")), (
        ("target", f"{hz(pipe.target_hz)} Hz"),
        ("predicted", f"{hz(pipe.predicted_hz)} Hz"),
        ("error", f"{cents(pipe.error_cents)} cents"),
        ("sounds on harmonic", str(pipe.harmonic)),
    ), min_rows=1)
    blocks: list[Block] = [pitch]
    if harmonics:
        blocks.append(Table((Column("predicted harmonics (Hz)", 1.0),), ((harmonics,),),
                            min_rows=1))
    dims = D.dimensions(pipe)
    blocks += [Spacer(2 * MM), Table(_two_col("dimension", inches),
                                     tuple(_length_row(d.name, d.value_m, inches)
                                           for d in dims), min_rows=1)]
    acoustic = [_length_row("acoustic length", pipe.acoustic_length_m, inches),
                _length_row("end correction", pipe.end_correction_m, inches)]
    if pipe.mouth is not None:
        acoustic.append(_length_row("mouth correction", pipe.mouth.correction_m, inches))
    blocks += [Spacer(2 * MM), Table(_two_col("acoustic lengths", inches), tuple(acoustic),
                                     min_rows=1)]
    if pipe.mouth is not None and pipe.mouth.band_percent:
        blocks += [Spacer(2 * MM), mouth_band_table(pipe)]
    if pipe.mouth is not None:
        across = "width" if pipe.section == "rect" else "circumference"
        blocks += [Spacer(2 * MM), Table((Column("mouth proportions", 2.4),
                                          Column("", 1.0, "right")), (
            (f"mouth width / {across}", fixed(pipe.mouth.width_fraction, 4)),
            ("cut-up / mouth width", fixed(pipe.mouth.cutup_fraction, 4)),
        ), min_rows=1)]
    rows = [("cents per mm longer", sensitivity(pipe.cents_per_mm))]
    if inches:
        rows.append((f"cents per {per_step_words()} longer",
                     sensitivity(inches.per_step(pipe.cents_per_mm))))
    rows.append(("cents per °C warmer", sensitivity(pipe.cents_per_c)))
    if pipe.mouth is not None and pipe.mouth.band_percent:
        rows.append(("cents per mm more cut-up", sensitivity(pipe.mouth.cutup_cents_per_mm)))
        if inches:
            rows.append((f"cents per {per_step_words()} more cut-up",
                         sensitivity(inches.per_step(pipe.mouth.cutup_cents_per_mm))))
    blocks += [Spacer(2 * MM), Table((Column("sensitivity", 2.4), Column("", 1.0, "right")),
                                     tuple(rows), min_rows=1)]
    return blocks


def mouth_band_table(pipe: Pipe) -> Table:
    """How uncertain the mouth correction is, as a length and as pitch at the speaking length."""
    assert pipe.mouth is not None
    m = pipe.mouth
    band = f"±{fixed(m.band_percent, 2)} %"
    return Table((Column(f"mouth correction {band}", 2.4), Column("", 1.3, "right")), (
        ("as a length", f"±{mm(m.band_m)} mm"),
        ("pitch if it is smaller", f"{cents(m.band_sharp_cents)} cents"),
        ("pitch if it is larger", f"{cents(m.band_flat_cents)} cents"),
        ("inside its fitted range", "yes" if m.in_fitted_range else "no: band widened"),
    ), min_rows=1)


def holes_table(pipe: Pipe, inches: Inches | None) -> Table:
    """The holes of a pipe: positions from both ends, diameters, angles, chimneys."""
    cols = (Column("hole", 0.8), Column("label", 1.0), Column("from top\nmm", 1.3, "right"),
            Column("from bottom\nmm", 1.4, "right"), Column("diameter\nmm", 1.2, "right"),
            Column("angle\n°", 0.9, "right"), Column("chimney\nmm", 1.1, "right"),
            Column("undercut\nmm", 1.1, "right"), Column("fixed\nin spec", 1.0, "centre"))
    rows = tuple((str(h.number), h.label, mm(h.position_from_top_m), mm(h.position_from_bottom_m),
                  mm(h.diameter_m), fixed(h.angle_deg, 2), mm(h.chimney_m), mm(h.undercut_m),
                  "yes" if h.fixed else "") for h in pipe.holes)
    sub: tuple[tuple[str, ...], ...] = ()
    if inches:
        sub = tuple(("", "", f"{inches.text(h.position_from_top_m)} in",
                     f"{inches.text(h.position_from_bottom_m)} in",
                     f"{inches.text(h.diameter_m)} in", "",
                     "", "", "") for h in pipe.holes)
    return Table(cols, rows, sub, title_rows=2, min_rows=1)


def _title(c: Canvas, frame: Frame, title: str, line: str) -> None:
    """The page's title and a line under it, made smaller (and the line wrapped) to fit."""
    c.setFillColor(INK)
    c.setFont(FONT_BOLD, fit_size(title, FONT_BOLD, 14, frame.content_width, 9))
    c.drawString(frame.left, frame.top - 6 * MM, safe(title))
    size = fit_size(line, FONT, 9, frame.content_width, 7)
    c.setFont(FONT, size)
    c.setFillColor(GREY)
    for k, text in enumerate(wrap(line, FONT, size, frame.content_width)[:2]):
        c.drawString(frame.left, frame.top - 10.5 * MM - k * size * 1.1, text)
    c.setFillColor(INK)


@dataclass(frozen=True)
class PipePage:
    """One pipe's page: its side view, its tables and its holes."""

    pipe: Pipe
    inches: Inches | None

    def draw(self, c: Canvas, frame: Frame) -> None:
        pipe, inches = self.pipe, self.inches
        _title(c, frame, pipe.id, describe(pipe) + f" · spec {pipe.source.shown()}")
        top = frame.top - TITLE_BAND
        width = frame.content_width
        holes = holes_table(pipe, inches) if pipe.holes else None
        holes_h = holes.height(width) + 10 * MM if holes else 0.0
        view = side_view(pipe)
        view_h = top - frame.bottom - holes_h - 6 * MM
        note = draw_view(c, view, frame.left, frame.bottom + holes_h + 6 * MM, VIEW_WIDTH,
                         view_h, inches)
        c.setFont(FONT, 7.5)
        c.setFillColor(GREY)
        c.drawString(frame.left, frame.bottom + holes_h + 1 * MM,
                     f"Side view, dimensions in mm{' (inches in brackets)' if inches else ''}; "
                     f"{note}.")
        c.setFillColor(INK)
        x = frame.left + VIEW_WIDTH + 6 * MM
        col_w = frame.right - x
        y = top
        for block in pipe_blocks(pipe, inches):
            block.draw(c, x, y, col_w)
            y -= block.height(col_w)
        if holes is not None:
            hy = frame.bottom + holes_h
            Heading(f"Holes ({len(pipe.holes)}), positions of the hole centres", 10).draw(
                c, frame.left, hy, width)
            holes.draw(c, frame.left, hy - 6 * MM, width)


def group_table(group: Group, pipes: Sequence[Pipe], inches: Inches | None) -> Table:
    """One row per pipe: pitch, the key dimensions (lettered) and the sensitivities."""
    keyed = [d for d in D.dimensions(pipes[0]) if d.key]
    named = any(strip_prefix(p.id, group.id) != p.note for p in pipes)
    cols = [Column("pipe", 1.35)] if named else []
    cols += [Column("note", 0.75), Column("target\nHz", 1.05, "right"),
             Column("predicted\nHz", 1.1, "right"), Column("error\ncents", 0.9, "right")]
    cols += [Column(f"{d.key}\nmm", 1.0, "right") for d in keyed]
    per_mm = "cents\n/ mm" + (f"\n(/ {per_step_words()})" if inches else "")
    cols += [Column(per_mm, 0.9, "right"), Column("cents\n/ °C", 0.9, "right")]
    stocks = len({p.stock for p in pipes}) > 1
    if stocks:
        cols.append(Column("stock", 1.1))
    rows, sub = [], []
    for pipe in pipes:
        values = {d.name: d.value_m for d in D.dimensions(pipe)}
        row = [strip_prefix(pipe.id, group.id)] if named else []
        row += [pipe.note, hz(pipe.target_hz), hz(pipe.predicted_hz), cents(pipe.error_cents)]
        row += [mm(values[d.name]) if d.name in values else "-" for d in keyed]
        row += [sensitivity(pipe.cents_per_mm), sensitivity(pipe.cents_per_c)]
        row += [pipe.stock] if stocks else []
        rows.append(tuple(row))
        if inches:
            lead = ("",) * (5 if named else 4)
            sub.append(lead + tuple(inches.text(values[d.name]) if d.name in values else ""
                                    for d in keyed)
                       + (sensitivity(inches.per_step(pipe.cents_per_mm)), "")
                       + (("",) if stocks else ()))
    return Table(tuple(cols), tuple(rows), tuple(sub), size=8, title_rows=2)


def _group_pages(group: Group, pipes: Sequence[Pipe], frame: Frame, inches: Inches | None
                 ) -> list[Page]:
    table = group_table(group, pipes, inches)
    height = frame.content_height - TITLE_BAND - KEY_BAND
    chunks = flow([table], frame.content_width, height)
    out = []
    for i, chunk in enumerate(chunks):
        part = f"{i + 1} of {len(chunks)}"
        out.append(Page(SECTION, GroupTablePage(group, tuple(pipes), chunk[0], part, inches),
                        label=f"{group.id} ({part})"))
    return out


@dataclass(frozen=True)
class GroupTablePage:
    """A page of a large group's table, under a key drawing of its first pipe."""

    group: Group
    pipes: tuple[Pipe, ...]
    table: Block
    part: str
    inches: Inches | None

    def draw(self, c: Canvas, frame: Frame) -> None:
        group, pipes, table = self.group, self.pipes, self.table
        part, inches = self.part, self.inches
        first = pipes[0]
        _title(c, frame, f"{group.id}: {len(pipes)} pipes, {pipes[0].note} to {pipes[-1].note}"
               f" (table {part})", f"{family_words(group.family)} · "
               f"{construction_words(group.construction)} · stock "
               f"{', '.join(sorted({p.stock for p in pipes}))} ({first.material}) · one row "
               "per pipe, lengths in mm")
        top = frame.top - TITLE_BAND
        key_w = 62 * MM
        draw_view(c, side_view(first), frame.left, top - KEY_BAND + 6 * MM, key_w,
                  KEY_BAND - 8 * MM, inches, key=True)
        c.setFont(FONT, 7)
        c.setFillColor(GREY)
        c.drawString(frame.left, top - KEY_BAND + 2 * MM,
                     f"Key drawing: proportions of {first.note}.")
        x = frame.left + key_w + 6 * MM
        _legend(c, x, top - 2 * MM, frame.right - x, group, pipes, inches)
        table.draw(c, frame.left, top - KEY_BAND, frame.content_width)


def _band_legend(mouths: Sequence[Mouth], inches: Inches | None) -> str:
    """The mouth correction's uncertainty over a rank, in one sentence (the per-pipe figures
    are in resolved.json); the cut-up's sensitivity per 1/16 in too for a spec in inches."""
    def span(values: list[float], show: Callable[[float], str]) -> str:
        lo, hi = min(values), max(values)
        return show(lo) if show(lo) == show(hi) else f"{show(lo)} to {show(hi)}"

    percent = span([m.band_percent for m in mouths], lambda v: fixed(v, 2))
    return (f"Mouth correction: uncertain by ±{percent} % (±16 % outside the range its fit "
            f"covers), ±{span([m.band_m for m in mouths], mm)} mm or "
            f"{span([m.band_sharp_cents for m in mouths], cents)} cents at the speaking "
            "length; the cut lengths leave room for a pipe that sounds that sharp. 1 mm "
            f"more cut-up: {span([m.cutup_cents_per_mm for m in mouths], sensitivity)} "
            "cents" + (f"; {per_step_words()} more: " + span(
                [inches.per_step(m.cutup_cents_per_mm) for m in mouths], sensitivity)
                + " cents" if inches else "") + ". Each pipe's figures are in resolved.json.")


def common(pipes: Sequence[Pipe]) -> list[D.Dim]:
    """The unlettered dimensions that are the same for every pipe of a group."""
    first = [d for d in D.dimensions(pipes[0]) if not d.key]
    rest = [{d.name: mm(d.value_m) for d in D.dimensions(p)} for p in pipes[1:]]
    return [d for d in first if all(r.get(d.name) == mm(d.value_m) for r in rest)]


def _legend(c: Canvas, x: float, y: float, width: float, group: Group,
            pipes: Sequence[Pipe], inches: Inches | None = None) -> None:
    keyed = [d for d in D.dimensions(pipes[0]) if d.key]
    c.setFillColor(INK)
    c.setFont(FONT_BOLD, 9)
    c.drawString(x, y - 3 * MM, "Letters on the drawing and in the table")
    c.setFont(FONT, 8.5)
    yy = y - 8 * MM
    half = (len(keyed) + 1) // 2
    for i, d in enumerate(keyed):
        cx = x + (0 if i < half else width / 2)
        cy = yy - (i % half) * 4.3 * MM
        c.setFont(FONT_BOLD, 8.5)
        c.drawString(cx, cy, d.key)
        c.setFont(FONT, 8.5)
        c.drawString(cx + 5 * MM, cy, safe(d.name))
    yy -= half * 4.3 * MM + 3 * MM
    air = group.air
    lines = [f"Air: {celsius(air.temperature_c)}, speed of sound {speed(air.speed_m_s)} "
             f"({air.sound_speed_model}); end correction: {group.end_correction_model}"
             + (f"; wall losses: {group.losses}." if group.losses else "."),
             "Error: predicted minus target, in cents. Sensitivity: cents for 1 mm more "
             "speaking length, and for 1 °C warmer air."]
    banded = [p.mouth for p in pipes if p.mouth is not None and p.mouth.band_percent]
    if len(banded) == len(pipes):
        lines.append(_band_legend(banded, inches))
    same = [f"{d.name} {length(d.value_m, inches)}" for d in common(pipes)]
    mouths = [p.mouth for p in pipes if p.mouth is not None]
    if len(mouths) == len(pipes) and mouths:
        across = "width" if pipes[0].section == "rect" else "circumference"
        for text, values in ((f"mouth width / {across}", [m.width_fraction for m in mouths]),
                             ("cut-up / mouth width", [m.cutup_fraction for m in mouths])):
            if len({fixed(v, 4) for v in values}) == 1:
                same.append(f"{text} {fixed(values[0], 4)}")
    if same:
        lines.append("The same for every pipe: " + ", ".join(same) + ".")
    if group.calibration.calibrated:
        cal = group.calibration
        lines.append(f"Calibrated: {cal.parameter} {fitted(cal.value, cal.unit)}, rms "
                     f"{cal.rms_cents:.2f} cents.")
    c.setFillColor(INK)  # these lines carry dimensions the cuts depend on: 8 pt, black
    c.setFont(FONT, 8)
    for text in lines:
        for line in wrap(text, FONT, 8, width):
            c.drawString(x, yy, line)
            yy -= 3.5 * MM
