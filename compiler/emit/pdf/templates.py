"""Full-size templates: parts drawn at exactly 1:1, tiled over pages with overlap and marks.

What is printed (the maker cuts everything else from the DXF files or measures it), as
``template_plan`` chooses and places it; this module draws it:

- every part of kind ``template`` (drilling strips and other paper templates), whole;
- the outline of each *distinct* sheet or board part that is not a plain rectangle (a
  rectangle is quicker to measure than to trace) and fits on at most ``OUTLINE_TILES``
  tiles, within ``OUTLINE_PAGES`` pages: the one-page outlines first, each kept if the
  shared pages still fit (so small parts fill the last page's room), then tiled ones.
  The build sheet lists, by name, every outline left to the DXF files.

Each template is split into tiles (windows of the part) that overlap their neighbours by
``OVERLAP_MM``; crosshairs sit at the centres of the shared strips so that overlaid tiles
line up. Each tile page carries its label "Tile r/c of R×C — part", and every page of the
section a 100 mm bar and a 4 in bar with the note to print at actual size. A template of
more than one tile gets an assembly map first.

Labels are printed at the height the geometry stage gave them (``Text.height`` is the
capitals' height, the type ``CAP_HEIGHT`` times taller), which is at least 8 pt for hole
labels and drills wherever they fit (``drafts.READABLE_MM``). A label that had to be
smaller is repeated at 8 pt on its page, so the drill is never read from tiny type: in a
key beside the part on a tile (``small_labels``), in the caption on a shared page.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from reportlab.pdfbase.pdfmetrics import stringWidth
from reportlab.pdfgen.canvas import Canvas
from reportlab.pdfgen.pathobject import PDFPathObject
from shapely.geometry import LinearRing, LineString, Polygon, box
from shapely.geometry.base import BaseGeometry

from compiler.display import Inches, in_inches
from compiler.emit.pdf.document import (
    Block,
    Column,
    Heading,
    Page,
    Paragraph,
    Table,
    fit_size,
    flow,
    wrap,
)
from compiler.emit.pdf.style import (
    FAINT,
    FONT,
    FONT_BOLD,
    GREY,
    INK,
    MM,
    Frame,
    inch_pair,
    safe,
)
from compiler.emit.pdf.template_plan import (
    BAR_BAND,
    CAPTION_PT,
    INSET_MM,
    KEY_PT,
    OVERLAP_MM,
    TITLE_BAND,
    Choice,
    Spot,
    Tiling,
    caption_lines,
    choose,
    item_size,
    key_lines,
    share_pages,
    size_text,
    size_words,
    small_labels,
)
from compiler.geometry.model import Circle, Part, Parts, Polyline, Text
from compiler.geometry.paths import flatten, text_centre, text_width, to_polygon

SECTION = "Templates"
BAR_MM = 100.0
BAR_IN_MM = 4 * 25.4
NOTE = "Print at 100 % (actual size); check this bar before cutting"
CAP_HEIGHT = 0.72
"""A label's capitals are this fraction of its type size (DejaVu Sans: 0.729 em)."""
KEY_MIN_MM = 30.0
"""The key of small labels goes beside the part where this much paper is free."""


def pages(parts: Parts, frame: Frame, inches: Inches | None = None) -> list[Page]:
    """Index, shared pages of small templates, then assembly maps and tiles of the large;
    sizes and notes in inches too for a spec in inches (``inches``)."""
    chosen, left_out = choose(parts, frame, inches)
    if not chosen:
        return []
    singles = [ch for ch in chosen if ch.tiles.rows * ch.tiles.cols == 1]
    shared = share_pages(singles, frame, inches)
    where = {spot.choice.part.id: f"small templates, page {k + 1}"
             for k, spots in enumerate(shared) for spot in spots}
    out = _index_pages(chosen, where, left_out, frame, inches)
    for k, spots in enumerate(shared):
        out.append(Page(SECTION, SharedPage(spots, k + 1, len(shared), inches),
                        label=f"small templates {k + 1} of {len(shared)}"))
    for ch in chosen:
        t = ch.tiles
        if t.rows * t.cols == 1:
            continue
        out.append(Page(SECTION, MapPage(ch), label=f"{ch.part.id} map"))
        for r in range(t.rows):
            for c in range(t.cols):
                out.append(Page(SECTION, TilePage(ch, r, c, inches),
                                label=f"{ch.part.id} tile {r + 1}/{c + 1}"))
    return out


def tile_label(part: Part, tiles: Tiling, row: int, col: int) -> str:
    return (f"Tile {row + 1}/{col + 1} of {tiles.rows}×{tiles.cols} — {part.id} "
            f"({part.name})")


def _index_pages(chosen: list[Choice], where: dict[str, str], left_out: list[str],
                 frame: Frame, inches: Inches | None) -> list[Page]:
    """The section's first pages: how to print and join, what is printed and what not."""
    blocks: list[Block] = [
        Heading("Full-size templates", 14),
        Paragraph("Each template is printed at 1:1. Print every page at 100 % (actual size, "
                  "no 'fit to page') and measure the bars at the foot of the page first. "
                  "Small templates share a page, each with its caption under it. A large "
                  f"template is printed on several pages (tiles) that share a {OVERLAP_MM:.0f} "
                  "mm strip (shaded): trim one tile at the edge of its drawing window, lay it "
                  "over its neighbour so that the crosshairs coincide, and tape it; its "
                  "assembly map shows where each tile goes.", 9.5),
        Table((Column("template", 3.0), Column("length × width mm", 1.6),
               Column("printed on", 1.6)),
              tuple((f"{ch.part.id} ({ch.part.name})"
                     + (f", also for {len(ch.used_by) - 1} alike" if len(ch.used_by) > 1
                        else ""),
                     size_text(ch.part),
                     where.get(ch.part.id, f"{ch.tiles.rows}×{ch.tiles.cols} tiles"))
                    for ch in chosen),
              tuple(("", inch_pair(*ch.part.length_by_width, inches), "") for ch in chosen)
              if inches else (), size=9, min_rows=1),
        Paragraph("Parts that are plain rectangles are not printed: measure them from the "
                  "cut list.", 8.5),
    ]
    if left_out:
        blocks += [Heading(f"Not printed here ({len(left_out)} parts)", 11),
                   Paragraph("These outlines are too large or too many to print: cut them "
                             "from the DXF files, or print those files at 1:1: "
                             + ", ".join(left_out) + ".", 8.5)]
    width = frame.content_width
    found = flow(blocks, width, frame.content_height - BAR_BAND - 4 * MM)
    return [Page(SECTION, IndexPage(tuple(content)), "Templates" if k == 0 else "")
            for k, content in enumerate(found)]


@dataclass(frozen=True)
class IndexPage:
    """The first pages of the templates: blocks of text above the calibration bars."""

    blocks: tuple[Block, ...]

    def draw(self, c: Canvas, frame: Frame) -> None:
        blocks = self.blocks
        y = frame.top
        for block in blocks:
            block.draw(c, frame.left, y, frame.content_width)
            y -= block.height(frame.content_width)
        calibration_bars(c, frame)


@dataclass(frozen=True)
class SharedPage:
    """A page of small templates side by side, each with its caption."""

    spots: tuple[Spot, ...]
    number: int
    total: int
    inches: Inches | None = None

    def draw(self, c: Canvas, frame: Frame) -> None:
        spots, number, total, inches = self.spots, self.number, self.total, self.inches
        c.setFont(FONT_BOLD, 12)
        c.setFillColor(INK)
        c.drawString(frame.left, frame.top - 5.5 * MM,
                     f"Small templates at 1:1 (page {number} of {total})")
        c.setFont(FONT, 8)
        c.drawString(frame.left, frame.top - 10 * MM,
                     "Cut each out along its outline; its caption names it. Holes and marks "
                     "are drawn where they go on the part.")
        wx, wy = frame.left, frame.bottom + BAR_BAND
        for spot in spots:
            part = spot.choice.part
            alike = len(spot.choice.used_by) - 1
            w, _, caption = item_size(part, alike, inches)
            c.saveState()
            c.translate(wx + (spot.x + (w - part.width_mm) / 2) * MM,
                        wy + (spot.y + caption + INSET_MM) * MM)
            c.scale(MM, MM)
            _entities(c, part)
            c.restoreState()
            y = wy + (spot.y + caption) * MM - CAPTION_PT
            for font, line in caption_lines(part, alike, w, inches):
                c.setFont(font, CAPTION_PT)
                c.setFillColor(INK)
                c.drawString(wx + spot.x * MM, y, line)
                y -= CAPTION_PT * 1.2
        calibration_bars(c, frame)


def calibration_bars(c: Canvas, frame: Frame) -> None:
    """A 100 mm bar and a 4 in bar, solid black, with the note to print at actual size."""
    x = frame.left
    y = frame.bottom + 1.5 * MM
    for length, label, step in ((BAR_IN_MM, "4 in", 25.4), (BAR_MM, "100 mm", 10.0)):
        c.setFillColor(INK)
        c.rect(x, y, length * MM, 2.2 * MM, stroke=0, fill=1)
        c.setStrokeColor(INK)
        c.setLineWidth(0.4)
        k = 1
        while k * step < length - 1e-6:
            tx = x + k * step * MM
            c.line(tx, y + 2.2 * MM, tx, y + 3.6 * MM)
            k += 1
        c.setFont(FONT_BOLD, 8.5)
        c.drawString(x + length * MM + 2.5 * MM, y + 0.3 * MM, label)
        y += 7 * MM
    c.setFont(FONT_BOLD, 9)
    c.drawString(x, y + 1.2 * MM, NOTE + ".")


def _entities(c: Canvas, part: Part) -> None:
    """The part's paths in its own millimetres (the canvas is already scaled to mm)."""
    for e in part.entities:
        if isinstance(e, Text):
            continue
        c.setDash([], 0)
        c.setStrokeColor(INK)
        c.setLineWidth(0.3)
        if e.operation == "mark":
            c.setStrokeColor(GREY)
            c.setLineWidth(0.2)
            c.setDash([3, 1.5], 0)
        if isinstance(e, Circle):
            cx, cy = e.center
            c.circle(cx, cy, e.radius, stroke=1, fill=0)
            if e.operation != "cut-outer":  # a hole: its centre for the drill point
                arm = min(e.radius * 0.6, 3.0)
                c.setLineWidth(0.15)
                c.line(cx - arm, cy, cx + arm, cy)
                c.line(cx, cy - arm, cx, cy + arm)
            continue
        c.drawPath(polyline_path(c, e), stroke=1, fill=0)
    c.setDash([], 0)
    # Labels in black: hole labels carry the drill size. Drawn centred on the box the
    # geometry stage kept free for them, as in the DXF files, and no wider than that box:
    # the printed font's letters are wider than the box allows for (digits about 0.87 of
    # the cap height against 0.62), so a label is condensed to its box rather than run
    # over the marks beside it; its height stays.
    c.setFillColor(INK)
    for e in part.entities:
        if isinstance(e, Text):
            c.saveState()
            c.translate(*text_centre(e))
            c.rotate(e.rotation_deg)
            size = e.height / CAP_HEIGHT
            text = safe(e.text)
            wide = stringWidth(text, FONT, size)
            room = text_width(e.text, e.height)
            if wide > room > 0:
                c.scale(room / wide, 1.0)
            c.setFont(FONT, size)
            c.drawCentredString(0, -size * 0.36, text)
            c.restoreState()


def polyline_path(c: Canvas, line: Polyline) -> PDFPathObject:
    """A canvas path of a polyline with DXF bulges (arcs) between its vertices."""
    pts = list(line.points)
    path = c.beginPath()
    path.moveTo(*pts[0])
    n = len(pts) if line.closed else len(pts) - 1
    for i in range(n):
        a, b = pts[i], pts[(i + 1) % len(pts)]
        bulge = line.bulges[i] if i < len(line.bulges) else 0.0
        if abs(bulge) < 1e-12:
            path.lineTo(*b)
            continue
        theta = 4.0 * math.atan(bulge)
        chord = math.hypot(b[0] - a[0], b[1] - a[1])
        radius = chord / (2.0 * math.sin(abs(theta) / 2.0))
        mx, my = (a[0] + b[0]) / 2.0, (a[1] + b[1]) / 2.0
        sag = radius * math.cos(theta / 2.0)
        ux, uy = -(b[1] - a[1]) / chord, (b[0] - a[0]) / chord
        side = 1.0 if bulge > 0 else -1.0
        cx, cy = mx + side * ux * sag, my + side * uy * sag
        start = math.degrees(math.atan2(a[1] - cy, a[0] - cx))
        path.arcTo(cx - radius, cy - radius, cx + radius, cy + radius, start,
                   math.degrees(theta))
    if line.closed:
        path.close()
    return path


INFO_LINES = 3
"""Lines of 8 pt the title band of a tile page has room for under the title."""


def tile_info(choice: Choice, inches: Inches | None, width: float) -> list[str]:
    """The lines under a tile's title: its size, how tiles join, the parts alike and its
    note, in at most ``INFO_LINES``. A long note first drops the words on joining (the map
    and the index say them), then is left to the cut list, which gives every part's note:
    nothing is cut off in the middle."""
    part = choice.part
    joining = (f" · shaded strips overlap the next tile by {OVERLAP_MM:.0f} mm: match the "
               "crosshairs")
    alike = (f" · also for {len(choice.used_by) - 1} more part(s) alike"
             if len(choice.used_by) > 1 else "")
    note = f" · {in_inches(part.note, inches)}" if part.note else ""
    head = f"{size_words(part, inches)} (length × width) at 1:1"
    tries = [head + joining + alike + note, head + alike + note]
    if note:
        tries.append(head + alike + " · its note: see the cut list")
    for info in tries:
        lines = wrap(info, FONT, 8, width)
        if len(lines) <= INFO_LINES:
            break
    return lines


@dataclass(frozen=True)
class TilePage:
    """One tile of a template too large for a page."""

    choice: Choice
    row: int
    col: int
    inches: Inches | None = None

    def draw(self, c: Canvas, frame: Frame) -> None:
        ch, row, col = self.choice, self.row, self.col
        part, t = ch.part, ch.tiles
        title = tile_label(part, t, row, col)
        c.setFont(FONT_BOLD, fit_size(title, FONT_BOLD, 12, frame.content_width, 8))
        c.drawString(frame.left, frame.top - 5.5 * MM, safe(title))
        c.setFont(FONT, 8)
        c.setFillColor(INK)
        for k, line in enumerate(tile_info(ch, self.inches, frame.content_width)):
            c.drawString(frame.left, frame.top - (10 + 3.4 * k) * MM, line)
        x0, y0, x1, y1 = t.window(row, col)
        wx, wy = frame.left, frame.bottom + BAR_BAND
        c.saveState()
        clip = c.beginPath()
        clip.rect(wx, wy, t.window_w * MM, t.window_h * MM)
        c.clipPath(clip, stroke=0, fill=0)
        c.translate(wx - x0 * MM, wy - y0 * MM)
        c.scale(MM, MM)
        c.setFillColor(FAINT)
        ov = t.overlap
        if col > 0:
            c.rect(x0, y0, ov, y1 - y0, stroke=0, fill=1)
        if col < t.cols - 1:
            c.rect(x1 - ov, y0, ov, y1 - y0, stroke=0, fill=1)
        if row > 0:
            c.rect(x0, y1 - ov, x1 - x0, ov, stroke=0, fill=1)
        if row < t.rows - 1:
            c.rect(x0, y0, x1 - x0, ov, stroke=0, fill=1)
        _entities(c, part)
        if t.rows * t.cols > 1:
            xs, ys = t.marks()
            for mx in xs:
                for my in ys:
                    if x0 <= mx <= x1 and y0 <= my <= y1:
                        _crosshair(c, mx, my)
        c.restoreState()
        c.setStrokeColor(GREY)
        c.setLineWidth(0.5)
        c.rect(wx, wy, t.window_w * MM, t.window_h * MM, stroke=1, fill=0)
        _neighbours(c, frame, t, row, col, wx, wy)
        small = small_labels(part, (x0, y0, x1, y1))
        if small:
            _key(c, frame, part, t, (x0, y0, x1, y1), small)
        calibration_bars(c, frame)


def _key(c: Canvas, frame: Frame, part: Part, t: Tiling,
         window: tuple[float, float, float, float], small: list[str]) -> None:
    """The small labels of a tile repeated at 8 pt: beside the part, in the wider band of
    free paper between it and the overlap strips (at least ``KEY_MIN_MM``), at its top;
    else beside the calibration bars."""
    x0, y0, x1, y1 = window
    ov, leading = t.overlap, KEY_PT * 1.2
    inner = (x0 + ov + 2.0, y0 + ov + 2.0, x1 - ov - 2.0, y1 - ov - 2.0)
    bands = [(inner[0], min(inner[2], -2.0)),
             (max(inner[0], part.width_mm + 2.0), inner[2])]
    a, b = max(bands, key=lambda band: band[1] - band[0])
    wx, wy = frame.left, frame.bottom + BAR_BAND
    lines = key_lines(small, (b - a) * MM)
    if b - a >= KEY_MIN_MM and len(lines) * leading <= (inner[3] - inner[1]) * MM:
        x, top = wx + (a - x0) * MM, wy + (inner[3] - y0) * MM
    else:
        x = frame.left + (BAR_IN_MM + 25.0) * MM
        lines = key_lines(small, frame.right - x)
        top = wy - 5.0 * MM
    c.setFont(FONT, KEY_PT)
    c.setFillColor(INK)
    for k, line in enumerate(lines):
        c.drawString(x, top - KEY_PT - k * leading, line)


def _crosshair(c: Canvas, x: float, y: float) -> None:
    c.setDash([], 0)
    c.setStrokeColor(INK)
    c.setLineWidth(0.2)
    c.circle(x, y, 2.5, stroke=1, fill=0)
    c.line(x - 4.5, y, x + 4.5, y)
    c.line(x, y - 4.5, x, y + 4.5)


def _neighbours(c: Canvas, frame: Frame, t: Tiling, row: int, col: int, wx: float,
                wy: float) -> None:
    """Words outside the window naming the tile that continues on each side."""
    c.setFont(FONT, 7.5)
    c.setFillColor(GREY)
    top = wy + t.window_h * MM
    if row > 0:
        c.drawRightString(frame.right, top + 1.2 * MM, f"above: tile {row}/{col + 1}")
    if row < t.rows - 1:
        c.drawRightString(frame.right, wy - 3.2 * MM, f"below: tile {row + 2}/{col + 1}")
    for side, other, x in ((col > 0, col, wx - 2 * MM),
                           (col < t.cols - 1, col + 2, wx + t.window_w * MM + 4.5 * MM)):
        if side:
            c.saveState()
            c.translate(x, wy + t.window_h * MM / 2)
            c.rotate(90)
            c.drawCentredString(0, 0, f"{'left' if other == col else 'right'}: tile "
                                f"{row + 1}/{other}")
            c.restoreState()
    c.setFillColor(INK)


@dataclass(frozen=True)
class MapPage:
    """The assembly map of a tiled template: where each tile goes."""

    choice: Choice

    def draw(self, c: Canvas, frame: Frame) -> None:
        ch = self.choice
        part, t = ch.part, ch.tiles
        title = f"Assembly map — {part.id} ({part.name}): {t.rows}×{t.cols} tiles"
        c.setFont(FONT_BOLD, fit_size(title, FONT_BOLD, 12, frame.content_width, 8))
        c.drawString(frame.left, frame.top - 5.5 * MM, safe(title))
        c.setFont(FONT, 8)
        c.setFillColor(GREY)
        c.drawString(frame.left, frame.top - 10 * MM,
                     f"Not to scale. Tiles overlap by {OVERLAP_MM:.0f} mm; row 1 is at the "
                     "top, column 1 on the left.")
        c.setFillColor(INK)
        x0, _, _, y1 = t.window(0, 0)
        _, y0, x1, _ = t.window(t.rows - 1, t.cols - 1)
        box_w = frame.content_width
        box_h = frame.content_height - TITLE_BAND - BAR_BAND - 4 * MM
        s = min(box_w / (x1 - x0), box_h / (y1 - y0))
        ox = frame.left + (box_w - (x1 - x0) * s) / 2 - x0 * s
        oy = frame.bottom + BAR_BAND + (box_h - (y1 - y0) * s) / 2 - y0 * s
        c.saveState()
        c.translate(ox, oy)
        c.scale(s, s)
        _entities(c, part)
        c.restoreState()
        obstacles = _lines_of(part)
        for r in range(t.rows):
            for k in range(t.cols):
                a, b, cc, d = t.window(r, k)
                c.setStrokeColor(GREY)
                c.setLineWidth(0.6)
                c.setDash([4, 2], 0)
                c.rect(ox + a * s, oy + b * s, (cc - a) * s, (d - b) * s, stroke=1, fill=0)
                c.setDash([], 0)
                c.setFont(FONT_BOLD, 14)
                c.setFillColor(GREY)
                words = f"{r + 1}/{k + 1}"
                spot = _clear_spot((a, b, cc, d), stringWidth(words, FONT_BOLD, 14) / s,
                                   10.0 / s, 4.0 / s, obstacles)
                obstacles.append(spot)
                x, y = spot.centroid.x, spot.centroid.y
                c.drawCentredString(ox + x * s, oy + y * s - 5, words)
        c.setFillColor(INK)
        calibration_bars(c, frame)


def _lines_of(part: Part) -> list[BaseGeometry]:
    """The part's lines and labels as shapes, in its millimetres, for keeping clear of."""
    shapes: list[BaseGeometry] = []
    for e in part.entities:
        if isinstance(e, Circle):
            shapes.append(to_polygon(e).exterior)
        elif isinstance(e, Polyline):
            points = flatten(e)
            shapes.append(LinearRing(points) if e.closed and len(points) >= 3
                          else LineString(points))
        else:
            (cx, cy), w = text_centre(e), text_width(e.text, e.height)
            bw, bh = (w, e.height) if e.rotation_deg != 90.0 else (e.height, w)
            shapes.append(box(cx - bw / 2, cy - bh / 2, cx + bw / 2, cy + bh / 2))
    return shapes


def _clear_spot(window: tuple[float, float, float, float], w: float, h: float, gap: float,
                obstacles: list[BaseGeometry]) -> Polygon:
    """Where a tile's number goes on the assembly map (a w × h box, in the part's mm): the
    tile's centre, else the first of its corners (then the middles of its edges) where it
    touches none of the part's lines and labels nor another tile's number; the centre if
    none is clear."""
    a, b, cc, d = window
    xs = (a + gap + w / 2, cc - gap - w / 2, (a + cc) / 2)
    ys = (d - gap - h / 2, b + gap + h / 2, (b + d) / 2)
    spots = [((a + cc) / 2, (b + d) / 2)] + [(x, y) for y in ys[:2] for x in xs[:2]] + [
        (xs[2], ys[0]), (xs[2], ys[1]), (xs[0], ys[2]), (xs[1], ys[2])]
    found = [box(x - w / 2, y - h / 2, x + w / 2, y + h / 2) for x, y in spots]
    for candidate in found:
        if not any(candidate.intersects(o) for o in obstacles):
            return candidate
    return found[0]

