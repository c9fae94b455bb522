"""The cut list, by stock: what to cut from each sheet, board and tube, and the sheets used.

Sheet and board parts are listed one row per pipe with a column per part name (body,
foot, languid...), so a large rank stays compact; a stock with many different part names
falls back to one row per part. Tubes list one length per pipe. Each stock ends with its
sheets and their utilisation.
"""

from __future__ import annotations

from collections.abc import Sequence

from compiler.display import Inches, in_inches
from compiler.emit.pdf.document import Block, Column, Heading, Page, Paragraph, Spacer, Table
from compiler.emit.pdf.document import flow_pages as _flow_pages
from compiler.emit.pdf.style import (
    MM,
    Frame,
    inch_pair,
    inches_of,
    length,
    mm_of,
    percent,
)
from compiler.geometry.model import Part, Parts, Sheet, StockLength, TubeCut
from compiler.ir import Resolved, StockItem

SECTION = "Cut list"
PIVOT_LIMIT = 6
"""More part names than this in one stock: one row per part instead of one per pipe."""


def _stock_line(name: str, item: StockItem | None, inches: Inches | None, material: str) -> str:
    if item is None:
        return f"{name}: {material}"
    text = f"{name}: {item.material}, {item.kind}, {length(item.thickness_m, inches)} thick"
    if item.outside_diameter_m is not None:
        text = (f"{name}: {item.material} tube, {length(item.outside_diameter_m, inches)} "
                f"outside, {length(item.thickness_m, inches)} wall")
        if item.inside_diameter_m is not None:
            text += f" ({length(item.inside_diameter_m, inches)} inside)"
    if item.length_m is not None and item.width_m is not None:
        text += f", {length(item.length_m, inches)} × {length(item.width_m, inches)}"
    elif item.length_m is not None:
        text += f", lengths of {length(item.length_m, inches)}"
    return text


def _inches(part: Part, inches: Inches) -> str:
    return inch_pair(*part.length_by_width, inches)


def _size(part: Part) -> str:
    length, width = part.length_by_width
    text = f"{mm_of(length)} × {mm_of(width)}"
    return f"{part.quantity}× {text}" if part.quantity > 1 else text


def _sheet_names(parts: Sequence[Part], sheets: Sequence[Sheet], stock: str) -> dict[str, str]:
    """Part id → the sheet(s) it is nested on (``1``, ``2, 3``)."""
    where: dict[str, list[str]] = {}
    for sheet in sheets:
        # ``sheet-03-spotted-metal`` -> ``03``: the material heads the table already, and the
        # column says "sheet no."
        short = sheet.id.split("-")[1] if sheet.id.startswith("sheet-") else sheet.id
        for pl in sheet.placements:
            names = where.setdefault(pl.part_id, [])
            if short not in names:
                names.append(short)
    return {p.id: ", ".join(where.get(p.id, [])) or "-" for p in parts}


def _note(part: Part, inches: Inches | None) -> str:
    """A part's note, its lengths in inches too for a spec in inches (as in cut-list.csv)."""
    return in_inches(part.note, inches)


def _shared_notes(parts: Sequence[Part], inches: Inches | None) -> dict[str, str]:
    """Part name → its note, where every part of that name has the same one (said once
    under the table rather than in every row)."""
    notes: dict[str, set[str]] = {}
    for p in parts:
        notes.setdefault(p.name, set()).add(_note(p, inches))
    return {name: next(iter(found)) for name, found in notes.items()
            if len(found) == 1 and next(iter(found)) and
            sum(1 for p in parts if p.name == name) > 1}


def _pivot(parts: Sequence[Part], sheet_of: dict[str, str], inches: Inches | None
           ) -> list[Block] | None:
    names: list[str] = []
    for p in parts:
        if p.name not in names:
            names.append(p.name)
    if len(names) > PIVOT_LIMIT:
        return None
    rows_by: dict[str, dict[str, Part]] = {}
    order: list[str] = []
    for p in parts:
        key = p.pipe_id or p.id
        if key not in rows_by:
            rows_by[key] = {}
            order.append(key)
        if p.name in rows_by[key]:
            return None  # two parts of one name for a pipe: the pivot would hide one
        rows_by[key][p.name] = p
    shared = _shared_notes(parts, inches)
    cols = (Column("pipe", 1.5),) + tuple(Column(f"{n}\nlength × width mm", 1.7)
                                          for n in names) + (Column("sheet no.", 0.9),)
    rows, sub = [], []
    for key in order:
        found = rows_by[key]
        row = [key] + [_size(found[n]) if n in found else "" for n in names]
        sheets = sorted({s for p in found.values() for s in sheet_of[p.id].split(", ")},
                        key=lambda s: (len(s), s))
        row.append(", ".join(s for s in sheets if s != "-") or "-")
        rows.append(tuple(row))
        sub.append(("",) + tuple(_second_line(found.get(n), inches, n in shared)
                                 for n in names) + ("",))
    has_notes = any(any(cell for cell in s) for s in sub)
    out: list[Block] = [Table(cols, tuple(rows), tuple(sub) if has_notes else (), size=8,
                              title_rows=2)]
    for name in names:
        if name in shared:
            out.append(Paragraph(f"Every {name}: {shared[name]}.", 8.5))
    return out


def _second_line(part: Part | None, inches: Inches | None, shared: bool) -> str:
    """Under a size: the inches (spec in inches) and the part's note (unless it is the
    same for every pipe and said under the table)."""
    if part is None:
        return ""
    note = "" if shared else _note(part, inches)
    return " · ".join(t for t in ((_inches(part, inches) if inches else ""), note) if t)


def _per_part(parts: Sequence[Part], sheet_of: dict[str, str], inches: Inches | None
              ) -> list[Block]:
    """One row per part (pipe, part name); notes the same for every part of a name are
    said once under the table."""
    shared = _shared_notes(parts, inches)
    cols = (Column("pipe", 1.4), Column("part", 0.9), Column("qty", 0.4, "right"),
            Column("length × width mm", 1.5), Column("sheet no.", 0.8), Column("note", 3.6))
    rows = tuple((p.pipe_id or p.id, p.name if p.pipe_id else "-", str(p.quantity),
                  "{} × {}".format(*map(mm_of, p.length_by_width)), sheet_of[p.id],
                  "" if p.name in shared else _note(p, inches))
                 for p in parts)
    sub = tuple(("", "", "", _inches(p, inches), "", "") for p in parts) if inches else ()
    out: list[Block] = [Table(cols, rows, sub, size=8)]
    names = list(dict.fromkeys(p.name for p in parts))
    out += [Paragraph(f"Every {name}: {shared[name]}.", 8.5) for name in names
            if name in shared]
    return out


def _sheets_table(sheets: Sequence[Sheet]) -> Table:
    cols = (Column("sheet", 2.4), Column("length × width mm", 1.6),
            Column("parts", 0.7, "right"),
            Column("utilisation", 1.0, "right"))
    rows = tuple((s.id, f"{mm_of(s.length_mm)} × {mm_of(s.width_mm)}", str(len(s.placements)),
                  percent(s.utilisation)) for s in sheets)
    return Table(cols, rows, size=8)


def _tubes_table(cuts: Sequence[TubeCut], notes: dict[str, str], inches: Inches | None,
                 from_length: dict[str, str]) -> Table:
    cols = (Column("pipe", 1.8), Column("length mm", 1.0, "right"),
            Column("outside ø mm", 1.0, "right"), Column("from stock length", 1.0, "right"),
            Column("note", 2.2))
    rows = [(t.pipe_id, mm_of(t.length_mm), mm_of(t.outside_diameter_mm),
             from_length.get(t.pipe_id, "-"), notes.get(t.pipe_id, "")) for t in cuts]
    total = sum(t.length_mm for t in cuts)
    pieces = "1 piece" if len(cuts) == 1 else f"{len(cuts)} pieces"
    rows.append((f"total ({pieces}, kerf not included)", mm_of(total), "", "", ""))
    sub: tuple[tuple[str, ...], ...] = ()
    if inches:
        sub = tuple(("", f"{inches.text_of_mm(t.length_mm)} in",
                     f"{inches.text_of_mm(t.outside_diameter_mm)} in", "", "") for t in cuts) + (
            ("", f"{inches.text_of_mm(total)} in", "", "", ""),)
    return Table(cols, tuple(rows), sub, size=8, shade=(len(rows) - 1,))


def _stock_plan(bars: Sequence[StockLength], kerf_mm: float, inches: Inches | None
                ) -> list[Block]:
    """The lengths of one stock tube to buy and what each is cut into, in order."""
    if not bars:
        return [Paragraph("No stock length given for this tube: add its `length` to plan "
                          "how many lengths to buy.", 8.5)]
    count = f"{len(bars)} length" + ("" if len(bars) == 1 else "s")
    size = length(bars[0].length_mm / 1000, inches)
    cols = (Column("stock length", 0.9, "right"), Column("cut into, in this order", 4.0),
            Column("pieces and kerfs mm", 1.2, "right"), Column("offcut mm", 0.9, "right"))
    rows = tuple((str(b.number), ", ".join(b.pieces), mm_of(b.used_mm), mm_of(b.offcut_mm))
                 for b in bars)
    sub = tuple(("", "", f"{inches.text_of_mm(b.used_mm)} in",
                 f"{inches.text_of_mm(b.offcut_mm)} in") for b in bars) if inches else ()
    return [Spacer(1.5 * MM),
            Paragraph(f"Buy {count} of {size}: a saw cut of {length(kerf_mm / 1000, inches)} "
                      "between "
                      "pieces, planned longest piece first, each into the first length it "
                      "fits (first-fit decreasing: few lengths, not always the fewest).", 8.5),
            Table(cols, rows, sub, size=8, min_rows=1)]


def blocks(resolved: Resolved, parts: Parts) -> list[Block]:
    """Headings and tables for every stock the parts use, in the order of the stock names."""
    inches = inches_of(resolved.fabrication)
    items = {s.name: s for s in resolved.stock}
    cut_parts = [p for p in parts.parts if p.kind in ("sheet", "board")]
    tube_notes = {p.pipe_id: _note(p, inches) for p in parts.parts
                  if p.kind == "tube" and p.pipe_id}
    stocks = sorted({p.stock for p in cut_parts} | {t.stock for t in parts.tube_cuts})
    out: list[Block] = [Heading("Cut list", 15),
                        Paragraph("Sizes are length × width of each flat part's bounding box "
                                  "in mm, everywhere (this sheet, cut-list.csv, the DXF files): "
                                  "the length runs along the pipe (along the grain for wood), "
                                  "or is the longer side of a disk or plate; \"2×\" means cut "
                                  "two. Sheet numbers are those of the sheets' DXF files "
                                  "(sheet-NN-material.dxf).", 8.5)]
    for stock in stocks:
        mine = [p for p in cut_parts if p.stock == stock]
        tubes = [t for t in parts.tube_cuts if t.stock == stock]
        material = (mine[0].material if mine else tubes[0].material)
        out += [Spacer(2 * MM), Heading(_stock_line(stock, items.get(stock), inches, material),
                                        11)]
        if mine:
            sheets = [s for s in parts.sheets if s.stock == stock]
            sheet_of = _sheet_names(mine, sheets, stock)
            out += _pivot(mine, sheet_of, inches) or _per_part(mine, sheet_of, inches)
            if sheets:
                out += [Spacer(1.5 * MM), _sheets_table(sheets)]
        if tubes:
            bars = [b for b in parts.stock_lengths if b.stock == stock]
            from_length = {piece: str(b.number) for b in bars for piece in b.pieces}
            out.append(_tubes_table(tubes, tube_notes, inches, from_length))
            fab = resolved.fabrication
            saw = fab.kerf_m if fab.tube_kerf_m is None else fab.tube_kerf_m
            out += _stock_plan(bars, saw * 1000, inches)
    templates = [p for p in parts.parts if p.kind == "template"]
    if templates:
        out += [Spacer(2 * MM), Heading("Paper templates (printed in the Templates section)",
                                        11),
                Table((Column("template", 2.0), Column("for", 1.5),
                       Column("length × width mm", 1.4)),
                      tuple((p.id, p.pipe_id or p.group,
                             "{} × {}".format(*map(mm_of, p.length_by_width)))
                            for p in templates), size=8)]
    if len(out) == 2:
        out.append(Paragraph("Nothing to cut: the parts list is empty.", 9.5))
    return out


def pages(resolved: Resolved, parts: Parts, frame: Frame) -> list[Page]:
    return _flow_pages(SECTION, blocks(resolved, parts), frame, "Cut list")
