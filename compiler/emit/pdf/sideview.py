"""Dimensioned side view of one pipe: its outline, mouth or head, holes, and dimension lines.

The view itself (what is drawn, in the pipe's own millimetres) is the geometry stage's
(``compiler.geometry.side_view``); here it is fitted into a box on the page and worded:
lengths along the pipe get dimension lines on the right (stacked so labels never overlap),
widths get dimension lines above or below, and features (mouth, toe hole, stopper, holes)
get leader callouts on the left. In *key* mode the labels are the dimensions' letters, for
the drawing at the head of a rank's table.
"""

from __future__ import annotations

from collections.abc import Callable

from reportlab.pdfbase.pdfmetrics import stringWidth
from reportlab.pdfgen.canvas import Canvas

from compiler.display import Inches
from compiler.emit.pdf.document import wrap
from compiler.emit.pdf.style import (
    ACCENT,
    FAINT,
    FONT,
    FONT_BOLD,
    GREY,
    INK,
    LIGHT,
    MM,
    mm,
    mm_of,
)
from compiler.geometry import dimensions as D
from compiler.geometry import side_view as V
from compiler.geometry.side_view import Callout, Point, Shape, VDim, View

ToPage = Callable[[float, float], Point]
"""Maps the pipe's millimetres to page points."""


LEVEL = 6.0 * MM
MIN_WIDTH = 10.0 * MM
CALLOUT_MIN = 36.0 * MM
"""The narrowest column the callouts wrap in, however wide the view."""

SHORT = {
    D.INSIDE_DIAMETER: "ø", D.OUTSIDE_DIAMETER: "ø", D.INSIDE_WIDTH: "width",
    D.SPEAKING: "speaking", D.CUT: "cut", D.FOOT: "foot", D.TOE: "toe ø", D.BLOCK: "block",
    D.LABIUM: "labium", D.EMBOUCHURE_FROM_TOP: "embouchure",
}
"""Words beside a value on a drawing's dimension line."""

CALLOUT_WORDS = {
    V.TOE_HOLE: ("toe hole ø {}", "toe hole {}"),
    V.FLUE: ("flue {}", ""),
    V.MOUTH: ("mouth {} × {}", "mouth {}"),
    V.PLUG: ("plug face {} from the top", "plug face {} from the top"),
    V.STOPPER: ("stopper face {}", "stopper face {}"),
    V.DUCT: ("duct height {}", ""),
    V.REED_END: ("closed end (reed)", ""),
    V.CLOSED_END: ("closed end", ""),
    V.EMBOUCHURE: ("embouchure ø {}", ""),
    V.CORK: ("cork {} above the embouchure", ""),
}
"""A callout's words with its sizes in mm, and with its letters on a key drawing."""


def callout_text(callout: Callout, key: bool = False, inches: Inches | None = None) -> str:
    """What a callout says: its sizes in mm (and in inches, for a spec in inches: ``ø 7.14
    (9/32 in)``), or the letters of its key dimensions."""
    if key:
        return CALLOUT_WORDS[callout.kind][1].format(" × ".join(callout.keys))
    sizes = [mm_of(v) + (f" ({inches.text_of_mm(v)} in)" if inches else "")
             for v in callout.values_mm]
    if callout.kind == V.HOLE:
        name = f"hole {callout.label}" if callout.label.isdigit() else callout.label
        return (f"{name}  ø {sizes[0]}  at {sizes[1]} from top"
                + (" (back)" if callout.back else ""))
    if callout.kind == V.WINDOW:
        return "window" + (f" {sizes[0]} × {sizes[1]}" if sizes else "")
    return CALLOUT_WORDS[callout.kind][0].format(*sizes)


def _dim_label(dim: D.Dim, inches: Inches | None, key: bool) -> str:
    if key:
        return dim.key
    text = f"{SHORT.get(dim.name, dim.name)} {mm(dim.value_m)}"
    return text + (f" ({inches.text(dim.value_m)} in)" if inches else "")


TEXT_PT = 8.0
"""Dimension labels and callouts: at least 8 pt and black, since the cuts depend on them."""


def _font(key: bool) -> tuple[str, float]:
    return (FONT_BOLD, 10.0) if key else (FONT, TEXT_PT)


def draw_view(c: Canvas, view: View, x: float, y: float, w: float, h: float,
              inches: Inches | None, key: bool = False) -> str:
    """Draw ``view`` fitted into the box (points); returns the scale note shown under it."""
    font, size = _font(key)
    vdims = [v for v in view.vdims if v.dim.key or not key]
    hdims = [d for d in view.hdims if d.dim.key or not key]
    calls = [co for co in view.callouts if co.keys or not key]
    labels = [_dim_label(v.dim, inches, key) for v in vdims]
    texts = [callout_text(co, key, inches) for co in calls]
    wanted = min(max((stringWidth(t, FONT, TEXT_PT) for t in texts), default=0.0) + 9 * MM,
                 w * 0.7) if texts else 4 * MM
    top_res = 3 * MM + LEVEL * sum(1 for d in hdims if d.above)
    bottom_res = 3 * MM + LEVEL * sum(1 for d in hdims if not d.above)
    levels = len(vdims)
    for _ in range(2):
        right = 5 * MM + LEVEL * max(levels, 1)
        by_height = min((h - top_res - bottom_res) / view.height, MM)
        # The callouts take the room the view leaves at the scale its height allows; longer
        # ones wrap (in a column at least CALLOUT_MIN wide) rather than shrink the view.
        room = w - right - max(2.0 * view.half_width * by_height, MIN_WIDTH)
        left = max(min(wanted, room), min(wanted, CALLOUT_MIN))
        sy = min(by_height, (w - left - right) / (2.0 * view.half_width))
        assigned = _levels(vdims, labels, sy, font, size, view.height)
        levels = max(assigned, default=-1) + 1
    sx = sy
    note = f"drawn at 1:{1.0 / (sy / MM):.1f}" if sy < MM * 0.999 else "drawn at 1:1"
    if 2.0 * view.half_width * sx < MIN_WIDTH:
        sx = min(MIN_WIDTH, w - left - right) / (2.0 * view.half_width)
        note = "lengths " + note[6:] + "; widths exaggerated"
    drawn_h = view.height * sy
    cx = x + left + view.half_width * sx
    by = y + bottom_res + (h - top_res - bottom_res - drawn_h) / 2.0

    def at(px: float, py: float) -> Point:
        return cx + px * sx, by + py * sy

    for shape in view.shapes:
        _shape(c, shape, at)
    for hole in view.holes:
        hx, hy = at(hole.x, hole.y)
        c.setLineWidth(0.8)
        c.setStrokeColor(INK)
        c.setFillColor(LIGHT if hole.hidden else FAINT)
        c.setDash([2, 1.5] if hole.hidden else [], 0)
        c.ellipse(hx - hole.radius * sx, hy - hole.radius * sy, hx + hole.radius * sx,
                  hy + hole.radius * sy, stroke=1, fill=1)
        c.setDash()
    c.setStrokeColor(ACCENT)
    c.setFillColor(ACCENT)
    right_x = cx + view.half_width * sx
    for v, label, level in zip(vdims, labels, assigned, strict=True):
        lx = right_x + 5 * MM + level * LEVEL
        _vdim(c, lx, right_x + 1.0, at(0, v.y0)[1], at(0, v.y1)[1], label, font, size,
              _below(v, view.height))
    up = down = 0
    for d in hdims:
        x0, fy = at(d.x0, d.y)
        x1, _ = at(d.x1, d.y)
        if d.above:
            ly = by + drawn_h + 4 * MM + up * LEVEL
            up += 1
        else:
            ly = by - 4 * MM - down * LEVEL
            down += 1
        _hdim(c, x0, x1, fy, ly, _dim_label(d.dim, inches, key), font, size, x + w)
    _callouts(c, calls, texts, at, x, cx - view.half_width * sx - 4 * MM, y, y + h)
    c.setStrokeColor(INK)
    c.setFillColor(INK)
    return note


def _below(v: VDim, height: float) -> bool:
    """A label that does not fit between the arrows goes outside, away from the nearer end."""
    return v.y0 + v.y1 > height


def _levels(vdims: list[VDim], labels: list[str], sy: float, font: str, size: float,
            height: float) -> list[int]:
    """Stack the length dimensions in columns so that no two labels overlap."""
    spans: list[tuple[float, float]] = []
    for v, label in zip(vdims, labels, strict=True):
        length = abs(v.y1 - v.y0) * sy
        need = stringWidth(label, font, size) + 4 * MM
        lo, hi = min(v.y0, v.y1) * sy, max(v.y0, v.y1) * sy
        if length >= need:
            spans.append((lo, hi))
        else:
            spans.append((lo - need, hi) if _below(v, height) else (lo, hi + need))
    order = sorted(range(len(vdims)), key=lambda i: (spans[i][1] - spans[i][0], i))
    taken: list[list[tuple[float, float]]] = []
    out = [0] * len(vdims)
    for i in order:
        lo, hi = spans[i]
        for level, used in enumerate(taken):
            if all(hi + MM < a or lo - MM > b for a, b in used):
                used.append((lo, hi))
                out[i] = level
                break
        else:
            taken.append([(lo, hi)])
            out[i] = len(taken) - 1
    return out


def _shape(c: Canvas, shape: Shape, at: ToPage) -> None:
    pts = [at(px, py) for px, py in shape.points]
    path = c.beginPath()
    path.moveTo(*pts[0])
    for p in pts[1:]:
        path.lineTo(*p)
    if shape.closed:
        path.close()
    c.setDash()
    c.setStrokeColor(INK)
    c.setLineWidth(1.0)
    style = shape.style
    if style == "outline":
        c.drawPath(path, stroke=1, fill=0)
    elif style == "hidden":
        c.setLineWidth(0.4)
        c.setDash(3, 2)
        c.drawPath(path, stroke=1, fill=0)
    elif style == "centre":
        c.setLineWidth(0.3)
        c.setStrokeColor(GREY)
        c.setDash([8, 2, 1.5, 2], 0)
        c.drawPath(path, stroke=1, fill=0)
    elif style == "opening":
        c.setFillColor(GREY)
        c.drawPath(path, stroke=1, fill=1)
    elif style == "tint":
        c.setFillColor(FAINT)
        c.drawPath(path, stroke=0, fill=1)
    elif style == "solid":
        c.setFillColor(LIGHT)
        c.setLineWidth(0.6)
        c.drawPath(path, stroke=1, fill=1)
    c.setDash()
    c.setFillColor(INK)


def _arrow(c: Canvas, x: float, y: float, dx: float, dy: float) -> None:
    """A filled arrowhead with its tip at (x, y) pointing along (dx, dy) (a unit vector)."""
    length, half = 2.0 * MM, 0.6 * MM
    bx, by = x - dx * length, y - dy * length
    path = c.beginPath()
    path.moveTo(x, y)
    path.lineTo(bx - dy * half, by + dx * half)
    path.lineTo(bx + dy * half, by - dx * half)
    path.close()
    c.drawPath(path, stroke=0, fill=1)


def _vdim(c: Canvas, lx: float, ext_from: float, y0: float, y1: float, label: str,
          font: str, size: float, below: bool) -> None:
    lo, hi = min(y0, y1), max(y0, y1)
    c.setLineWidth(0.35)
    c.line(ext_from, lo, lx + 1.5 * MM, lo)
    c.line(ext_from, hi, lx + 1.5 * MM, hi)
    tw = stringWidth(label, font, size)
    c.saveState()
    if hi - lo >= tw + 4 * MM:
        c.line(lx, lo, lx, hi)
        _arrow(c, lx, lo, 0.0, -1.0)
        _arrow(c, lx, hi, 0.0, 1.0)
        mid = (lo + hi) / 2.0
    elif below:
        c.line(lx, lo - tw - 3 * MM, lx, hi + 3 * MM)
        _arrow(c, lx, lo, 0.0, 1.0)
        _arrow(c, lx, hi, 0.0, -1.0)
        mid = lo - 2.5 * MM - tw / 2.0
    else:
        c.line(lx, lo - 3 * MM, lx, hi + tw + 3 * MM)
        _arrow(c, lx, lo, 0.0, 1.0)
        _arrow(c, lx, hi, 0.0, -1.0)
        mid = hi + 2.5 * MM + tw / 2.0
    c.translate(lx - 0.8 * MM, mid)
    c.rotate(90)
    c.setFont(font, size)
    c.setFillColor(INK)
    c.drawCentredString(0, 0, label)
    c.restoreState()


def _hdim(c: Canvas, x0: float, x1: float, fy: float, ly: float, label: str, font: str,
          size: float, right_edge: float) -> None:
    """A width's dimension line at height ``ly``; a label too long for the room between the
    arrows goes beside them, on the right unless it would pass ``right_edge`` (the box's
    edge, where the page's tables begin)."""
    lo, hi = min(x0, x1), max(x0, x1)
    c.setLineWidth(0.35)
    sign = 1.0 if ly > fy else -1.0
    c.line(lo, fy + sign * 1.0, lo, ly + sign * 1.5 * MM)
    c.line(hi, fy + sign * 1.0, hi, ly + sign * 1.5 * MM)
    c.setFont(font, size)
    c.setFillColor(INK)
    tw = stringWidth(label, font, size)
    if hi - lo >= 6 * MM:
        c.line(lo, ly, hi, ly)
        _arrow(c, lo, ly, -1.0, 0.0)
        _arrow(c, hi, ly, 1.0, 0.0)
    else:
        c.line(lo - 3 * MM, ly, hi + 3 * MM, ly)
        _arrow(c, lo, ly, 1.0, 0.0)
        _arrow(c, hi, ly, -1.0, 0.0)
    if tw + 2 * MM <= hi - lo:
        c.drawCentredString((lo + hi) / 2.0, ly + 0.8 * MM, label)
    elif hi + 3.5 * MM + tw <= right_edge:
        c.drawString(hi + 3.5 * MM, ly - size * 0.35, label)
    else:
        c.drawRightString(lo - 3.5 * MM, ly - size * 0.35, label)
    c.setFillColor(ACCENT)


def _callouts(c: Canvas, calls: list[Callout], texts: list[str], at: ToPage, x_min: float,
              text_right: float, y_min: float, y_max: float) -> None:
    """Leader callouts on the left, spread apart so that no two labels touch; a label
    wider than the room wraps onto more lines (never cut short)."""
    if not calls:
        return
    size = TEXT_PT
    step = size * 1.15
    gap = size * 0.35
    lines = [wrap(t, FONT, size, max(text_right - x_min, 20 * MM)) for t in texts]
    targets = [at(co.x, co.y) for co in calls]
    order = sorted(range(len(calls)), key=lambda i: (-targets[i][1], i))
    ys: dict[int, float] = {}  # the first line's baseline
    last = y_max - size
    for i in order:
        ys[i] = min(targets[i][1] - size * 0.35, last)
        last = ys[i] - (len(lines[i]) - 1) * step - step - gap
    low = y_min + size * 0.5
    for i in reversed(order):
        bottom = ys[i] - (len(lines[i]) - 1) * step
        if bottom < low:
            ys[i] += low - bottom
        low = ys[i] + step + gap
    c.setFont(FONT, size)
    for i in order:
        tx, ty = targets[i]
        ly = ys[i]
        c.setFillColor(INK)
        for k, line in enumerate(lines[i]):
            c.drawRightString(text_right, ly - k * step, line)
        c.setStrokeColor(GREY)
        c.setLineWidth(0.35)
        c.line(text_right + 1.0 * MM, ly + size * 0.35, tx, ty)
        c.setFillColor(ACCENT)
        c.circle(tx, ty, 0.5 * MM, stroke=0, fill=1)
    c.setStrokeColor(ACCENT)
    c.setFillColor(ACCENT)
