"""Fingering pages of a holed pipe: the chart, the tuning error per note and admittance curves.

The chart is a table with a row per fingering, grouped by register: the holes drawn as a
row of circles (hole 1, nearest the head, on the left; filled = closed; a dashed ring is a
hole on the back), then the target and predicted pitch, the error in cents and how far the
open holes' radiation model could move the note (``ir.Fingering.model_band_cents``).
"""

from __future__ import annotations

from dataclasses import dataclass, replace

from reportlab.pdfgen.canvas import Canvas

from compiler.display import Inches, in_inches, model_band
from compiler.emit.pdf.document import (
    Block,
    Heading,
    Page,
    Paragraph,
    Spacer,
    fit_size,
    flow_pages,
)
from compiler.emit.pdf.plots import CurvePlot, ErrorPlot
from compiler.emit.pdf.style import (
    FAINT,
    FONT,
    FONT_BOLD,
    GREY,
    INK,
    LIGHT,
    MM,
    Frame,
    cents,
    hz,
    safe,
    sensitivity,
)
from compiler.ir import Fingering, Hole, Pipe

SECTION = "Fingerings"
ROW = 5.3 * MM
PITCH = 6.0 * MM
"""Distance between hole circles in the chart."""
MIN_PITCH = 3.5 * MM
NOTE_COLUMN = 22 * MM
NUMBER_COLUMN = 15 * MM


@dataclass(frozen=True)
class ChartRow:
    heading: str
    fingering: Fingering | None


def register_words(register: int) -> str:
    names = {1: "first register", 2: "second register (overblown)",
             3: "third register"}
    return f"Register {register}: " + names.get(register, f"register {register}")


@dataclass(frozen=True)
class Chart(Block):
    """The fingering table; splits between rows like a table, repeating its header."""

    holes: tuple[Hole, ...]
    rows: tuple[ChartRow, ...]
    size: float = 9.0

    def _pitch(self, width: float) -> float:
        """Hole spacing in the diagram: narrower when many holes share the row with a
        survey's extra columns (each number column keeps ``NUMBER_COLUMN``)."""
        room = width - NOTE_COLUMN - 4 * MM - len(self._columns()) * NUMBER_COLUMN
        return min(PITCH, max(MIN_PITCH, room / max(len(self.holes), 1)))

    def height(self, width: float) -> float:
        return 8 * MM + len(self.rows) * ROW + 1.0

    def split(self, width: float, available: float) -> tuple[Block, Block] | None:
        n = int((available - 8 * MM - 1.0) // ROW)
        if n < 3 or n >= len(self.rows):
            return None
        return replace(self, rows=self.rows[:n]), replace(self, rows=self.rows[n:])

    def _banded(self) -> bool:
        return any(r.fingering is not None and r.fingering.model_band_cents is not None
                   for r in self.rows)

    def _surveyed(self) -> bool:
        return any(r.fingering is not None and r.fingering.nearest_note is not None
                   for r in self.rows)

    def _columns(self) -> tuple[tuple[str, str], ...]:
        titles: tuple[tuple[str, str], ...] = (("target", "Hz"), ("predicted", "Hz"),
                                               ("error", "cents"))
        if self._banded():
            titles += (("hole model", "± cents"),)
        if self._surveyed():
            titles += (("nearest", "note"), ("from it", "cents"), ("per °C", "cents"))
        return titles

    def draw(self, c: Canvas, x: float, y_top: float, width: float) -> None:
        pitch = self._pitch(width)
        dw = max(len(self.holes), 1) * pitch + 4 * MM
        note_w = NOTE_COLUMN
        titles = self._columns()
        banded, surveyed = self._banded(), self._surveyed()
        num_w = (width - note_w - dw) / len(titles)
        cols = [x + note_w + dw + k * num_w for k in range(len(titles) + 1)]
        c.setFillColor(LIGHT)
        c.rect(x, y_top - 8 * MM, width, 8 * MM, stroke=0, fill=1)
        c.setFillColor(INK)
        c.setFont(FONT_BOLD, self.size)
        base = y_top - 5.5 * MM
        c.drawString(x + 1.5 * MM, base, "note")
        for i, hole in enumerate(self.holes):
            c.setFont(FONT_BOLD, fit_size(hole.label, FONT_BOLD, 7, pitch - 0.5 * MM, 4))
            c.drawCentredString(x + note_w + 2 * MM + (i + 0.5) * pitch, base, safe(hole.label))
        c.setFont(FONT_BOLD, self.size)
        for k, (word, unit) in enumerate(titles):
            if len(titles) == 3:
                c.drawRightString(cols[k + 1] - 1.5 * MM, base, f"{word} {unit}")
            else:  # more columns: the unit under the word, in a smaller type
                room = num_w - 2.5 * MM  # a gap to the column on the left
                c.setFont(FONT_BOLD, fit_size(word, FONT_BOLD, 8, room, 5))
                c.drawRightString(cols[k + 1] - 1.5 * MM, y_top - 3.6 * MM, safe(word))
                c.setFont(FONT_BOLD, fit_size(unit, FONT_BOLD, 8, room, 5))
                c.drawRightString(cols[k + 1] - 1.5 * MM, y_top - 6.8 * MM, unit)
        y = y_top - 8 * MM
        for row in self.rows:
            if row.fingering is None:
                c.setFillColor(FAINT)
                c.rect(x, y - ROW, width, ROW, stroke=0, fill=1)
                c.setFillColor(INK)
                c.setFont(FONT_BOLD, self.size)
                c.drawString(x + 1.5 * MM, y - ROW + 2 * MM, safe(row.heading))
                y -= ROW
                continue
            f = row.fingering
            c.setStrokeColor(LIGHT)
            c.setLineWidth(0.4)
            c.line(x, y - ROW, x + width, y - ROW)
            c.setFillColor(INK)
            c.setFont(FONT_BOLD, self.size + 1)
            c.drawString(x + 1.5 * MM, y - ROW + 2 * MM, safe(f.note))
            for h, hole in enumerate(self.holes):
                closed = f.closed[h] if h < len(f.closed) else False
                _hole(c, x + note_w + 2 * MM + (h + 0.5) * pitch, y - ROW / 2, closed,
                      90.0 < abs(hole.angle_deg) % 360.0 < 270.0, pitch)
            c.setFont(FONT, self.size)
            c.setFillColor(INK)
            for k, text in enumerate(_cells(f, banded, surveyed)):
                c.drawRightString(cols[k + 1] - 1.5 * MM, y - ROW + 2 * MM, text)
            y -= ROW
        c.setStrokeColor(GREY)
        c.line(x, y, x + width, y)


def _cells(f: Fingering, banded: bool, surveyed: bool) -> tuple[str, ...]:
    # A weak or split resonance is no pitch to tune to: say so instead of a number.
    error = cents(f.error_cents) if f.resonance == "clear" else f.resonance
    cells: tuple[str, ...] = (hz(f.target_hz), hz(f.predicted_hz), error)
    if banded:
        cells += (model_band(f.model_band_cents),)
    if not surveyed:
        return cells
    if f.nearest_note is None:
        return cells + ("", "", "")
    return cells + (safe(f.nearest_note),
                    cents(f.nearest_cents) if f.nearest_cents is not None else "",
                    sensitivity(f.cents_per_c) if f.cents_per_c is not None else "")


def _hole(c: Canvas, x: float, y: float, closed: bool, back: bool, pitch: float) -> None:
    c.setStrokeColor(INK)
    c.setLineWidth(0.9)
    c.setDash([1.5, 1.0] if back else [], 0)
    c.setFillColor(INK)
    c.circle(x, y, 2.1 * MM * pitch / PITCH, stroke=1, fill=1 if closed else 0)
    c.setDash([], 0)


def chart_rows(pipe: Pipe) -> tuple[ChartRow, ...]:
    """Fingerings grouped by register (in the resolved order within each register)."""
    rows: list[ChartRow] = []
    for register in sorted({f.register for f in pipe.fingerings}):
        rows.append(ChartRow(register_words(register), None))
        rows += [ChartRow("", f) for f in pipe.fingerings if f.register == register]
    return tuple(rows)


def blocks(pipe: Pipe, inches: Inches | None = None) -> list[Block]:
    """Chart, error plot and admittance plot of one holed pipe."""
    out: list[Block] = [
        Heading(f"Fingering chart: {pipe.id}", 13),
        Paragraph("Filled circle: hole closed. Open circle: hole open. Hole 1 (nearest the "
                  "head) is on the left; a dashed ring is a hole on the back (thumb hole). "
                  "Error: predicted minus target, in cents; 'weak' or 'split' where the model's "
                  "resonance is too faint, or doubled, to tune to." + (
                      " Nearest: the note of the tuning nearest the prediction, and the "
                      "prediction's distance from it; cents/°C: its change in 1 °C warmer air."
                      if any(f.nearest_note is not None for f in pipe.fingerings) else "")
                  + _head_words(pipe, inches) + _band_words(pipe),
                  8.5, colour=GREY),
        Chart(tuple(sorted(pipe.holes, key=lambda h: h.number)), chart_rows(pipe)),
        Spacer(4 * MM),
    ]
    ordered = [f for reg in sorted({f.register for f in pipe.fingerings})
               for f in pipe.fingerings if f.register == reg and f.resonance == "clear"]
    if ordered:
        out.append(ErrorPlot(f"Tuning error per note: {pipe.id}",
                             tuple(f.note for f in ordered),
                             tuple(f.error_cents for f in ordered),
                             tuple(f.register for f in ordered)))
        out.append(Spacer(3 * MM))
    if pipe.curves:
        marks = tuple((f.note, f.predicted_hz) for f in ordered
                      if any(cu.label.split(" ")[0] == f.note for cu in pipe.curves))
        quantity = pipe.curves[0].quantity
        axis = "|Z| (impedance magnitude)" if quantity == "impedance" else (
            "|Y| (admittance magnitude)")
        out.append(CurvePlot(f"Input {quantity} magnitude: {pipe.id}", pipe.curves[:4],
                             axis, marks))
    return out


def _band_words(pipe: Pipe) -> str:
    """The legend of the 'hole model' column (``ir.Fingering.model_band_cents``)."""
    if not any(f.model_band_cents is not None for f in pipe.fingerings):
        return ""
    return (" Hole model ± cents: how far the note could move, in whole cents, if the open "
            "holes radiate as a hole with no flange (0.6133 b) or as one in a flat wall "
            "(0.8216 b) rather than by the design's fit for a hole in a tube (from memory, "
            "not verified), which lies between the two or, for holes wide against the tube, "
            "below both. Make a prototype first: drill the finger holes small and open them "
            "up to pitch (common practice).")


def _head_words(pipe: Pipe, inches: Inches | None) -> str:
    head = pipe.head
    if head is None:
        return ""
    words = []
    if head.cork_m is not None:
        words.append(in_inches(f"Cork {head.cork_m * 1000:.1f} mm above the embouchure "
                               "centre.", inches))
    if head.resonance_hz:
        words.append(f"The head (mouth and the cavity above it) resonates at "
                     f"{hz(head.resonance_hz)} Hz: notes near or above it lose their octave.")
    cutoffs = [f.cutoff_hz for f in pipe.fingerings if f.cutoff_hz is not None]
    if cutoffs:
        words.append(f"The open holes' lattice cutoff lies between {hz(min(cutoffs))} and "
                     f"{hz(max(cutoffs))} Hz depending on the fingering: second-register "
                     "notes above it are weak.")
    return (" " + " ".join(words)) if words else ""


def pages(pipe: Pipe, frame: Frame, inches: Inches | None = None) -> list[Page]:
    """The fingering pages of a pipe (none when it has no fingerings)."""
    if not pipe.fingerings:
        return []
    found = flow_pages(SECTION, blocks(pipe, inches), frame)
    return [replace(p, label=pipe.id) for p in found]
