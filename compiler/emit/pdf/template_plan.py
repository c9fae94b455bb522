"""Which templates the build sheet prints, and where: tiles of the large, shared pages of the
small (the page planning of ``templates``, which draws them).

A template larger than a page is covered by the fewest tiles (windows of the part) that
overlap their neighbours by ``OVERLAP_MM``; small templates share pages, packed on shelves
kind by kind, each with its caption under it; sheet and board outlines that are not plain
rectangles are printed within a page budget (``OUTLINE_TILES``, ``OUTLINE_PAGES``), the
rest left to the DXF files by name.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from compiler.display import Inches, in_inches
from compiler.emit.pdf.document import NO_BREAK, wrap
from compiler.emit.pdf.style import FONT, FONT_BOLD, MM, Frame, inch_pair, mm_of
from compiler.geometry.drafts import READABLE_MM
from compiler.geometry.model import Circle, Part, Parts, Polyline, Text
from compiler.geometry.paths import bounds

OVERLAP_MM = 10.0
INSET_MM = 4.0
"""Paper left around the part inside the tiled area."""
OUTLINE_TILES = 4
OUTLINE_PAGES = 24
TITLE_BAND = 18 * MM
BAR_BAND = 22 * MM
CAPTION_PT = 8.0
CAPTION_MIN_MM = 50.0
"""Small templates share a page; each has a caption under it at least this wide."""
GAP_MM = 4.0
KEY_PT = 8.0


def small_labels(part: Part, window: tuple[float, float, float, float] | None = None
                 ) -> list[str]:
    """The part's labels printed under 8 pt (lower than ``READABLE_MM``), those reaching
    into ``window`` (x0, y0, x1, y1 mm) if given, in the part's order: the page repeats
    them."""
    out: list[str] = []
    for e in part.entities:
        if isinstance(e, Text) and e.height < READABLE_MM - 1e-9 and e.text not in out:
            x0, y0, x1, y1 = bounds(e)
            if window is None or (x0 <= window[2] and window[0] <= x1 and y0 <= window[3]
                                  and window[1] <= y1):
                out.append(e.text)
    return out


def key_lines(texts: list[str], width: float) -> list[str]:
    """The key repeating small labels, in lines of ``KEY_PT`` no wider than ``width``
    points; a label is never split between lines."""
    words = " · ".join(t.replace(" ", NO_BREAK) for t in texts)
    return wrap(f"Small labels on this page, at 8 pt: {words}", FONT, KEY_PT, width)


def size_text(part: Part) -> str:
    """``length × width`` in mm, the one size order of every output."""
    length, width = part.length_by_width
    return f"{mm_of(length)} × {mm_of(width)}"


def size_words(part: Part, inches: Inches | None) -> str:
    """The size a caption gives: ``38.10 × 31.75 mm``, with ``= 1 1/2 × 1 1/4 in`` after it
    for a spec in inches."""
    return f"{size_text(part)} mm" + (f" = {inch_pair(*part.length_by_width, inches)}"
                                      if inches else "")


@dataclass(frozen=True)
class Tiling:
    """How a part (plus an inset) is covered by overlapping windows; millimetres."""

    rows: int
    cols: int
    window_w: float
    window_h: float
    x_start: float
    y_top: float
    overlap: float

    @property
    def step_x(self) -> float:
        return self.window_w - self.overlap

    @property
    def step_y(self) -> float:
        return self.window_h - self.overlap

    def window(self, row: int, col: int) -> tuple[float, float, float, float]:
        """(x0, y0, x1, y1) of tile (row, col), both from 0; row 0 is the top row."""
        x0 = self.x_start + col * self.step_x
        y1 = self.y_top - row * self.step_y
        return x0, y1 - self.window_h, x0 + self.window_w, y1

    def marks(self) -> tuple[list[float], list[float]]:
        """Crosshair lines: the centres of the strips tiles share (and the outer strips)."""
        xs = [self.x_start + k * self.step_x + self.overlap / 2 for k in range(self.cols + 1)]
        ys = [self.y_top - k * self.step_y - self.overlap / 2 for k in range(self.rows + 1)]
        return xs, ys


def tiling(width_mm: float, height_mm: float, window_w: float, window_h: float,
           overlap: float = OVERLAP_MM, inset: float = INSET_MM) -> Tiling:
    """Fewest tiles of ``window_w`` × ``window_h`` mm, overlapping by ``overlap``, that cover
    the part's box grown by ``inset``; the spare paper is shared equally on both sides."""
    total_w, total_h = width_mm + 2 * inset, height_mm + 2 * inset
    cols = max(1, math.ceil((total_w - overlap) / (window_w - overlap) - 1e-9))
    rows = max(1, math.ceil((total_h - overlap) / (window_h - overlap) - 1e-9))
    span_w = window_w + (cols - 1) * (window_w - overlap)
    span_h = window_h + (rows - 1) * (window_h - overlap)
    x_start = -inset - (span_w - total_w) / 2
    y_top = height_mm + inset + (span_h - total_h) / 2
    return Tiling(rows, cols, window_w, window_h, x_start, y_top, overlap)


def window_size(frame: Frame) -> tuple[float, float]:
    """The drawing window of a tile page, in millimetres."""
    return frame.content_width / MM, (frame.content_height - TITLE_BAND - BAR_BAND) / MM


def _signature(part: Part) -> tuple[object, ...]:
    def r(v: float) -> float:
        return round(v, 1)

    ents: list[object] = []
    for e in part.entities:
        if isinstance(e, Circle):
            ents.append(("c", e.operation, r(e.center[0]), r(e.center[1]), r(e.radius)))
        elif isinstance(e, Polyline):
            ents.append(("p", e.operation, e.closed, tuple((r(x), r(y)) for x, y in e.points),
                         tuple(round(b, 4) for b in e.bulges)))
    return (part.name, r(part.width_mm), r(part.height_mm), tuple(ents))


def plain_rectangle(part: Part) -> bool:
    cuts = [e for e in part.entities if not isinstance(e, Text) and
            e.operation.startswith("cut")]
    if len(cuts) != 1 or not isinstance(cuts[0], Polyline):
        return False
    line = cuts[0]
    return len(line.points) == 4 and not any(line.bulges) and all(
        a[0] == b[0] or a[1] == b[1]
        for a, b in zip(line.points, line.points[1:] + line.points[:1], strict=True))


def _tile_count(t: Tiling) -> int:
    return t.rows * t.cols


@dataclass(frozen=True)
class Choice:
    part: Part
    tiles: Tiling
    used_by: tuple[str, ...]


def choose(parts: Parts, frame: Frame, inches: Inches | None = None
           ) -> tuple[list[Choice], list[str]]:
    """The templates to print, and the parts whose outlines were left to the DXF files
    (their captions, in inches too for a spec in inches, take room on the shared pages)."""
    ww, wh = window_size(frame)
    chosen: list[Choice] = []
    for part in parts.parts:
        if part.kind == "template":
            chosen.append(Choice(part, tiling(part.width_mm, part.height_mm, ww, wh),
                                 (part.id,)))
    seen: dict[tuple[object, ...], list[str]] = {}
    order: list[tuple[Part, list[str]]] = []
    for part in parts.parts:
        if part.kind not in ("sheet", "board") or plain_rectangle(part):
            continue
        sig = _signature(part)
        if sig not in seen:
            seen[sig] = []
            order.append((part, seen[sig]))
        seen[sig].append(part.id)
    left_out: list[str] = []
    # Parts that fit one page first (languids, small feet, blocks): several share a page,
    # so more of them make it into the page budget than if large tiled outlines came first.
    outlines = sorted((Choice(p, tiling(p.width_mm, p.height_mm, ww, wh), tuple(alike))
                       for p, alike in order), key=lambda ch: _tile_count(ch.tiles))
    small = [ch for ch in outlines if _tile_count(ch.tiles) == 1]
    papers = [_sized(ch, inches) for ch in chosen if _tile_count(ch.tiles) == 1]
    base = len(_pack(papers, frame))
    # Each small outline in turn, kept if the shared pages stay within the budget: one
    # that would need a page of its own is skipped, and the smaller ones after it still
    # fill the room left on the last pages (the shared pages are packed kind by kind, so
    # a prefix of this list would stop at the first part that overflows).
    taken: list[tuple[Choice, tuple[float, float, float]]] = []
    pages = 0
    for ch in small:
        item = _sized(ch, inches)
        trial = _pack(papers + taken + [item], frame)
        if len(trial) - base <= OUTLINE_PAGES:
            taken.append(item)
            pages = len(trial) - base
    kept = {ch.part.id for ch, _ in taken}
    for ch in outlines:
        tiles = _tile_count(ch.tiles)
        if tiles == 1:
            fits = ch.part.id in kept
        else:
            fits = tiles <= OUTLINE_TILES and pages + tiles + 1 <= OUTLINE_PAGES
            pages += tiles + 1 if fits else 0
        if fits:
            chosen.append(ch)
        else:
            left_out += ch.used_by
    return chosen, left_out


def caption_lines(part: Part, alike: int, width_mm: float, inches: Inches | None
             ) -> list[tuple[str, str]]:
    """Caption lines under a small template: (font, text)."""
    head = f"{part.id} ({part.name})"
    size = f"{size_words(part, inches)} at 1:1" + (f", also for {alike} more alike"
                                                   if alike else "")
    out = [(FONT_BOLD, line) for line in wrap(head, FONT_BOLD, CAPTION_PT, width_mm * MM)]
    out += [(FONT, line) for line in wrap(size, FONT, CAPTION_PT, width_mm * MM)]
    if part.note:
        out += [(FONT, line) for line in wrap(in_inches(part.note, inches), FONT, CAPTION_PT,
                                              width_mm * MM)]
    small = small_labels(part)
    if small:
        out += [(FONT, line) for line in key_lines(small, width_mm * MM)]
    return out


def item_size(part: Part, alike: int, inches: Inches | None) -> tuple[float, float, float]:
    """A small template's room on a shared page (mm): width, height, caption height."""
    width = max(part.width_mm + 2 * INSET_MM, CAPTION_MIN_MM)
    caption = len(caption_lines(part, alike, width, inches)) * CAPTION_PT * 1.2 / MM + 1.0
    return width, part.height_mm + 2 * INSET_MM + caption, caption


@dataclass(frozen=True)
class Spot:
    """A small template's place on a shared page: its room's lower-left corner (mm, in the
    drawing window)."""

    choice: Choice
    x: float
    y: float


def share_pages(singles: list[Choice], frame: Frame, inches: Inches | None = None
                ) -> list[tuple[Spot, ...]]:
    """Small templates packed several to a page: shelves from the top, kind by kind (all
    handles together: a change to one kind of part leaves the other kinds' pages as they
    were), tallest first."""
    return _pack([_sized(ch, inches) for ch in singles], frame)


def _sized(choice: Choice, inches: Inches | None) -> tuple[Choice, tuple[float, float, float]]:
    """A small template with its room on a shared page (``_item_size``), worked out once."""
    return choice, item_size(choice.part, len(choice.used_by) - 1, inches)


def _pack(singles: list[tuple[Choice, tuple[float, float, float]]],
          frame: Frame) -> list[tuple[Spot, ...]]:
    """``share_pages`` of templates already sized."""
    ww, wh = window_size(frame)
    items = sorted(singles, key=lambda item: (item[0].part.kind != "template",
                                              item[0].part.name, -item[1][1],
                                              item[0].part.id))
    pages: list[list[Spot]] = []
    shelf_top = shelf_h = x = 0.0
    for ch, (w, h, _) in items:
        if pages and x + w <= ww + 1e-6 and h <= shelf_h + 1e-6:
            pass
        elif pages and shelf_top + shelf_h + GAP_MM + h <= wh + 1e-6:
            shelf_top += shelf_h + GAP_MM
            shelf_h, x = h, 0.0
        else:
            pages.append([])
            shelf_top, shelf_h, x = 0.0, h, 0.0
        pages[-1].append(Spot(ch, x, wh - shelf_top - h))
        x += w + GAP_MM
    return [tuple(p) for p in pages]
