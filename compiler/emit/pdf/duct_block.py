"""A duct flute's block at full size: side view and end view, drawn solid and dimensioned.

The block fills the tube from its top end down to the window's upper edge (the block's face,
where the duct leaves it); the duct is a flat planed along its front, ``duct height`` deep.
Side view: the block as seen from the side, top end up, the front (the duct's side) on the
left, the window below it for reference (dashed). End view: the block seen from its top end,
the bore's circle less the flat. Both at 1:1 with the calibration bars, so the page is the
template: print at 100 %, check the bars, trace or cut.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from reportlab.pdfgen.canvas import Canvas

from compiler.display import Inches
from compiler.emit.pdf.document import Page, wrap
from compiler.emit.pdf.style import FONT, FONT_BOLD, GREY, INK, MM, Frame, fixed, safe
from compiler.emit.pdf.templates import calibration_bars
from compiler.ir import Pipe

SECTION = "Pipes"
GAP_MM = 55.0
"""Room between the two views (for the dimensions between them)."""
TEXT = 8.0
ARROW_MM = 1.6


def pages(pipe: Pipe, frame: Frame, inches: Inches | None = None) -> list[Page]:
    """The duct block page of a duct flute (none without a head, window and duct height);
    its sizes in inches too for a spec in inches."""
    head = pipe.head
    if (head is None or head.kind != "duct" or head.labium_from_top_m is None
            or head.duct_height_m is None or pipe.inside_diameter_m is None
            or head.window_length_m is None):
        return []
    bore = pipe.inside_diameter_m * 1000.0
    length = (head.labium_from_top_m - head.window_length_m) * 1000.0
    flat = head.duct_height_m * 1000.0
    window = head.window_length_m * 1000.0
    if length <= 0 or not 0 < flat < bore / 2:
        return []
    return [Page(SECTION, DuctBlockPage(pipe.id, bore, length, flat, window, inches),
                 label=f"{pipe.id} duct block")]


@dataclass(frozen=True)
class DuctBlockPage:
    """A duct flute's block at full size, side and end view (lengths in mm)."""

    pipe_id: str
    bore: float
    length: float
    flat: float
    window: float
    inches: Inches | None = None

    def draw(self, c: Canvas, frame: Frame) -> None:
        pipe_id, bore, length = self.pipe_id, self.bore, self.length
        flat, window = self.flat, self.window
        c.setFillColor(INK)
        c.setFont(FONT_BOLD, 13)
        c.drawString(frame.left, frame.top - 6 * MM, safe(f"Duct block: {pipe_id}, full size"))
        c.setFont(FONT, 8.5)
        c.setFillColor(GREY)
        y = frame.top - 11 * MM
        for row in wrap("Print at 100 % and check the bars before tracing. The block fills the "
                        "tube from its top end down to the window; the duct is the flat "
                        "planed along its front, the jet's way to the labium.", FONT, 8.5,
                        frame.content_width):
            c.drawString(frame.left, y, row)
            y -= 4.2 * MM
        c.setFillColor(INK)
        # Side view on the left, end view to its right; millimetres from here on.
        x0 = frame.left / MM + 25.0
        y0 = frame.top / MM - 40.0 - length
        _side_view(c, x0, y0, bore, length, flat, window, self.inches)
        _end_view(c, x0 + bore + GAP_MM + bore / 2.0, y0 + length - bore / 2.0, bore, flat,
                  self.inches)
        calibration_bars(c, frame)


def _size(value_mm: float, decimals: int, inches: Inches | None) -> str:
    """A size on the drawing: ``14.0``, or ``14.0 (35/64 in)`` for a spec in inches."""
    return fixed(value_mm, decimals) + (f" ({inches.text_of_mm(value_mm)} in)" if inches
                                        else "")


def _side_view(c: Canvas, x0: float, y0: float, bore: float, length: float, flat: float,
               window: float, inches: Inches | None) -> None:
    top = y0 + length
    c.setStrokeColor(INK)
    c.setLineWidth(0.6)
    c.rect(x0 * MM, y0 * MM, bore * MM, length * MM, stroke=1, fill=0)
    c.setLineWidth(0.4)
    c.line((x0 + flat) * MM, y0 * MM, (x0 + flat) * MM, top * MM)  # the flat's edge
    # The window below the block, for reference.
    c.setStrokeColor(GREY)
    c.setDash([2, 1.5], 0)
    c.rect(x0 * MM, (y0 - window) * MM, bore * MM, window * MM, stroke=1, fill=0)
    c.setDash([], 0)
    c.setFillColor(GREY)
    c.setFont(FONT, 7)
    c.drawCentredString((x0 + bore / 2) * MM, (y0 - window / 2 - 1.2) * MM, "window")
    c.setFillColor(INK)
    _caption(c, x0 + bore / 2, top + 16.0, "SIDE VIEW", ("top end up,", "duct's flat on the left"))
    _hdim(c, x0, x0 + bore, top + 3.5, top, f"{_size(bore, 1, inches)} bore")
    _hdim(c, x0, x0 + flat, y0 - window - 6.0, y0 - window, f"{_size(flat, 2, inches)} duct",
          below=True)
    _vdim(c, x0 + bore + 6.0, x0 + bore, y0, top, f"{_size(length, 1, inches)} long")


def _end_view(c: Canvas, cx: float, cy: float, bore: float, flat: float,
              inches: Inches | None) -> None:
    r = bore / 2.0
    yf = cy + r - flat
    half = math.sqrt(r * r - (r - flat) ** 2)
    angle = math.degrees(math.atan2(yf - cy, half))  # the flat's right end, from the centre
    path = c.beginPath()
    path.moveTo((cx - half) * MM, yf * MM)
    path.lineTo((cx + half) * MM, yf * MM)
    path.arcTo((cx - r) * MM, (cy - r) * MM, (cx + r) * MM, (cy + r) * MM, angle,
               -(360.0 - (180.0 - 2.0 * angle)))
    path.close()
    c.setStrokeColor(INK)
    c.setLineWidth(0.6)
    c.drawPath(path, stroke=1, fill=0)
    _caption(c, cx, cy + r + 16.0, "END VIEW", ("seen from the top end,", "duct's flat on top"))
    _hdim(c, cx - r, cx + r, cy - r - 6.0, cy - r, f"ø {_size(bore, 1, inches)}", below=True)
    _vdim(c, cx + r + 6.0, cx + half, yf, cy + r, f"{_size(flat, 2, inches)} flat")


def _caption(c: Canvas, x: float, y: float, title: str, lines: tuple[str, ...]) -> None:
    """A view's name in capitals over two short lines, centred at x (mm), from y down."""
    c.setFillColor(INK)
    c.setFont(FONT_BOLD, TEXT)
    c.drawCentredString(x * MM, y * MM, title)
    c.setFont(FONT, 7)
    for k, text in enumerate(lines, start=1):
        c.drawCentredString(x * MM, (y - 3.2 * k) * MM, text)


def _arrow(c: Canvas, x: float, y: float, dx: float, dy: float) -> None:
    """A filled arrowhead at (x, y) mm pointing along (dx, dy)."""
    n = math.hypot(dx, dy) or 1.0
    ux, uy = dx / n, dy / n
    a, w = ARROW_MM, ARROW_MM * 0.35
    path = c.beginPath()
    path.moveTo(x * MM, y * MM)
    path.lineTo((x - a * ux - w * uy) * MM, (y - a * uy + w * ux) * MM)
    path.lineTo((x - a * ux + w * uy) * MM, (y - a * uy - w * ux) * MM)
    path.close()
    c.drawPath(path, stroke=0, fill=1)


def _hdim(c: Canvas, x0: float, x1: float, y: float, y_from: float, text: str,
          below: bool = False) -> None:
    """A horizontal dimension from x0 to x1 (mm) at height y, with extension lines from
    y_from; the value above the line (below it with ``below``)."""
    c.setStrokeColor(INK)
    c.setFillColor(INK)
    c.setLineWidth(0.25)
    for x in (x0, x1):
        c.line(x * MM, y_from * MM, x * MM, (y + (-1.0 if below else 1.0)) * MM)
    c.line(x0 * MM, y * MM, x1 * MM, y * MM)
    _arrow(c, x0, y, -1.0, 0.0)
    _arrow(c, x1, y, 1.0, 0.0)
    c.setFont(FONT, TEXT)
    c.drawCentredString((x0 + x1) / 2 * MM, (y + (-3.6 if below else 1.0)) * MM, safe(text))


def _vdim(c: Canvas, x: float, x_from: float, y0: float, y1: float, text: str) -> None:
    """A vertical dimension from y0 to y1 (mm) at x, extension lines from x_from; the value
    to its right."""
    c.setStrokeColor(INK)
    c.setFillColor(INK)
    c.setLineWidth(0.25)
    for y in (y0, y1):
        c.line(x_from * MM, y * MM, (x + 1.0) * MM, y * MM)
    c.line(x * MM, y0 * MM, x * MM, y1 * MM)
    _arrow(c, x, y0, 0.0, -1.0)
    _arrow(c, x, y1, 0.0, 1.0)
    c.setFont(FONT, TEXT)
    c.drawString((x + 1.5) * MM, ((y0 + y1) / 2 - 1.0) * MM, safe(text))
