"""Pages and flowing blocks: the small layout engine under every section of the build sheet.

A section plans its pages first (``Page``: a title and a function that draws the body),
so the whole document's page count is known before anything is drawn; the writer then
draws each page inside a common frame (header, footer with "page N of M").
Text sections are built from blocks (headings, paragraphs, tables) that ``flow`` spreads
over as many pages as they need, splitting tables between rows and repeating the header.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass, field, replace
from functools import lru_cache

from reportlab.lib.colors import Color
from reportlab.lib.utils import simpleSplit
from reportlab.pdfbase.pdfmetrics import stringWidth
from reportlab.pdfgen.canvas import Canvas

from compiler.emit.pdf.style import (
    FAINT,
    FONT,
    FONT_BOLD,
    GREY,
    INK,
    LIGHT,
    MM,
    WARN,
    Frame,
    safe,
)

Draw = Callable[[Canvas, Frame], None]


@dataclass(frozen=True)
class Page:
    """One planned page: the section it belongs to and what draws its body."""

    section: str
    draw: Draw
    bookmark: str = ""
    """Outline (bookmark) entry; empty for none."""
    label: str = ""
    """Extra words on the right of the header (a pipe id, a tile)."""
    key: object = None
    """Everything the body's drawing depends on (frozen values with a stable ``repr``), so
    a rebuild can reuse the drawn body; ``None``: always drawn."""


def fit_text(text: str, font: str, size: float, width: float) -> str:
    """``text`` cut short with an ellipsis so that it fits ``width`` points."""
    text = safe(text)
    if stringWidth(text, font, size) <= width:
        return text
    while text and stringWidth(text + "...", font, size) > width:
        text = text[:-1]
    return text + "..."


def wrap(text: str, font: str, size: float, width: float) -> list[str]:
    """Lines of ``text`` broken at spaces to fit ``width`` points."""
    return list(_wrapped(text, font, size, width))


@lru_cache(maxsize=8192)
def _wrapped(text: str, font: str, size: float, width: float) -> tuple[str, ...]:
    # Tables measure their rows again for every page split; text metrics are pure, so
    # each (text, font, size, width) is measured once.
    return tuple(simpleSplit(safe(text), font, size, width)) or ("",)


class Block:
    """Something that flows down a page: knows its height and draws itself."""

    def height(self, width: float) -> float:
        raise NotImplementedError

    def draw(self, c: Canvas, x: float, y_top: float, width: float) -> None:
        raise NotImplementedError

    def split(self, width: float, available: float) -> tuple[Block, Block] | None:
        """A first part that fits ``available`` and the rest, or None (move it whole)."""
        return None


@dataclass(frozen=True)
class Spacer(Block):
    gap: float

    def height(self, width: float) -> float:
        return self.gap

    def draw(self, c: Canvas, x: float, y_top: float, width: float) -> None:
        return None


@dataclass(frozen=True)
class Heading(Block):
    text: str
    size: float = 13.0
    keep_with: float = 30 * MM
    """Room the heading wants below it, so it is not left alone at the foot of a page."""

    def height(self, width: float) -> float:
        return self.size * (1.7 + 1.2 * (len(wrap(self.text, FONT_BOLD, self.size, width)) - 1))

    def draw(self, c: Canvas, x: float, y_top: float, width: float) -> None:
        c.setFont(FONT_BOLD, self.size)
        c.setFillColor(INK)
        y = y_top - self.size * 1.15
        for line in wrap(self.text, FONT_BOLD, self.size, width):
            c.drawString(x, y, line)
            y -= self.size * 1.2


@dataclass(frozen=True)
class Paragraph(Block):
    text: str
    size: float = 9.5
    bold: bool = False
    colour: Color = INK
    indent: float = 0.0
    bullet: str = ""
    boxed: bool = False
    """A red frame around it: the strongest warnings."""

    def _lines(self, width: float) -> list[str]:
        pad = 3 * MM if self.boxed else 0.0
        return wrap(self.text, FONT_BOLD if self.bold else FONT, self.size,
                    width - self.indent - 2 * pad)

    def height(self, width: float) -> float:
        pad = 3 * MM if self.boxed else 0.0
        return len(self._lines(width)) * self.size * 1.3 + self.size * 0.5 + 2 * pad

    def draw(self, c: Canvas, x: float, y_top: float, width: float) -> None:
        lines = self._lines(width)
        pad = 3 * MM if self.boxed else 0.0
        if self.boxed:
            c.setStrokeColor(WARN)
            c.setLineWidth(1.5)
            c.rect(x, y_top - self.height(width) + self.size * 0.3, width,
                   self.height(width) - self.size * 0.3)
        c.setFillColor(self.colour)
        font = FONT_BOLD if self.bold else FONT
        c.setFont(font, self.size)
        y = y_top - pad - self.size * 1.1
        if self.bullet:
            c.drawString(x + pad + self.indent - 3.2 * MM, y, self.bullet)
        for line in lines:
            c.drawString(x + pad + self.indent, y, line)
            y -= self.size * 1.3
        c.setFillColor(INK)


SUB_LINES = 3
"""Most lines a table cell's second line may wrap onto."""


@dataclass(frozen=True)
class Column:
    title: str
    width: float
    """Share of the table width (the widths are scaled to fill it)."""
    align: str = "left"
    """``left``, ``right`` or ``centre``."""


@dataclass(frozen=True)
class Table(Block):
    """Rows of text cells under a shaded header; splits between rows, repeating the header.

    A row may carry a second line (``sub``): smaller, grey, e.g. the inches beside
    millimetres, or a note for the bench; a long one wraps onto up to ``SUB_LINES`` lines
    and the row grows to fit.
    """

    columns: tuple[Column, ...]
    rows: tuple[tuple[str, ...], ...]
    sub: tuple[tuple[str, ...], ...] = ()
    size: float = 8.5
    min_rows: int = 3
    title_rows: int = 1
    shade: tuple[int, ...] = field(default=())
    """Indices of rows drawn bold on a light band (totals, register headings)."""

    @property
    def row_height(self) -> float:
        """The height of a row with at most one line under it."""
        return self.size * (2.45 if self.sub else 1.55)

    def _sub_lines(self, i: int, widths: list[float]) -> list[list[str]]:
        if not self.sub or i >= len(self.sub):
            return []
        size = self.size * 0.85
        lines = []
        for k, w in enumerate(widths):
            text = self.sub[i][k] if k < len(self.sub[i]) else ""
            found = wrap(text, FONT, size, w - 2.4 * MM) if text else []
            if len(found) > SUB_LINES:
                found = found[:SUB_LINES - 1] + [fit_text(" ".join(found[SUB_LINES - 1:]),
                                                          FONT, size, w - 2.4 * MM)]
            lines.append(found)
        return lines

    def _row_heights(self, width: float) -> list[float]:
        if not self.sub:
            return [self.size * 1.55] * len(self.rows)
        widths = self._widths(width)
        return [self.size * 1.55 + self.size * 0.9 * max(
            [1] + [len(c) for c in self._sub_lines(i, widths)]) for i in range(len(self.rows))]

    @property
    def header_height(self) -> float:
        return self.size * 1.25 * self.title_rows + self.size * 0.6

    def height(self, width: float) -> float:
        return self.header_height + sum(self._row_heights(width)) + 2.0

    def split(self, width: float, available: float) -> tuple[Block, Block] | None:
        room = available - self.header_height - 2.0
        n = 0
        for h in self._row_heights(width):
            if room < h:
                break
            room -= h
            n += 1
        if n < self.min_rows or n >= len(self.rows):
            return None
        first = replace(self, rows=self.rows[:n], sub=self.sub[:n],
                        shade=tuple(i for i in self.shade if i < n))
        rest = replace(self, rows=self.rows[n:], sub=self.sub[n:],
                       shade=tuple(i - n for i in self.shade if i >= n))
        return first, rest

    def _widths(self, width: float) -> list[float]:
        total = sum(col.width for col in self.columns)
        return [col.width / total * width for col in self.columns]

    def draw(self, c: Canvas, x: float, y_top: float, width: float) -> None:
        widths = self._widths(width)
        pad = 1.2 * MM
        hh = self.header_height
        c.setFillColor(LIGHT)
        c.rect(x, y_top - hh, width, hh, stroke=0, fill=1)
        c.setFillColor(INK)
        c.setFont(FONT_BOLD, self.size)
        cx = x
        for col, w in zip(self.columns, widths, strict=True):
            parts = col.title.split("\n")
            for k, part in enumerate(parts):
                ty = y_top - self.size * 1.15 - k * self.size * 1.25
                fitted = self.size
                while fitted > self.size * 0.75 and \
                        stringWidth(safe(part), FONT_BOLD, fitted) > w - 2 * pad:
                    fitted -= 0.25
                _cell(c, part, col.align, cx, w, pad, ty, FONT_BOLD, fitted)
            cx += w
        y = y_top - hh
        heights = self._row_heights(width)
        for i, row in enumerate(self.rows):
            rh = heights[i]
            if i in self.shade:
                c.setFillColor(LIGHT)
                c.rect(x, y - rh, width, rh, stroke=0, fill=1)
            elif i % 2 == 1:
                c.setFillColor(FAINT)
                c.rect(x, y - rh, width, rh, stroke=0, fill=1)
            c.setFillColor(INK)
            font = FONT_BOLD if i in self.shade else FONT
            cx = x
            for k, (col, w) in enumerate(zip(self.columns, widths, strict=True)):
                text = row[k] if k < len(row) else ""
                _cell(c, text, col.align, cx, w, pad, y - self.size * 1.1, font, self.size)
                lines = self._sub_lines(i, widths)
                if lines and lines[k]:
                    c.setFillColor(GREY)
                    for j, line in enumerate(lines[k]):
                        _cell(c, line, col.align, cx, w, pad,
                              y - self.size * 2.05 - j * self.size * 0.9, FONT, self.size * 0.85)
                    c.setFillColor(INK)
                cx += w
            y -= rh
        c.setStrokeColor(GREY)
        c.setLineWidth(0.4)
        c.line(x, y, x + width, y)


def _cell(c: Canvas, text: str, align: str, x: float, w: float, pad: float, y: float,
          font: str, size: float) -> None:
    text = fit_text(text, font, size, w - 2 * pad)
    c.setFont(font, size)
    if align == "right":
        c.drawRightString(x + w - pad, y, text)
    elif align == "centre":
        c.drawCentredString(x + w / 2, y, text)
    else:
        c.drawString(x + pad, y, text)


@dataclass(frozen=True)
class KeyValues(Block):
    """Label: value lines in two columns of text, labels in grey."""

    items: tuple[tuple[str, str], ...]
    size: float = 9.5
    label_share: float = 0.3

    def height(self, width: float) -> float:
        return len(self.items) * self.size * 1.45 + self.size * 0.4

    def draw(self, c: Canvas, x: float, y_top: float, width: float) -> None:
        y = y_top - self.size * 1.1
        lw = width * self.label_share
        for label, value in self.items:
            c.setFont(FONT, self.size)
            c.setFillColor(GREY)
            c.drawString(x, y, fit_text(label, FONT, self.size, lw - 2 * MM))
            c.setFillColor(INK)
            c.drawString(x + lw, y, fit_text(value, FONT, self.size, width - lw))
            y -= self.size * 1.45


def flow(blocks: Sequence[Block], width: float, height: float) -> list[list[Block]]:
    """Spread blocks over pages of the given content size, splitting tables between rows."""
    pages: list[list[Block]] = [[]]
    used = 0.0
    queue = list(blocks)
    while queue:
        block = queue.pop(0)
        h = block.height(width)
        want = h + (block.keep_with if isinstance(block, Heading) else 0.0)
        if isinstance(block, Spacer) and not pages[-1]:
            continue
        if used + want <= height:
            pages[-1].append(block)
            used += h
            continue
        parts = block.split(width, height - used)
        if parts is not None:
            pages[-1].append(parts[0])
            queue.insert(0, parts[1])
        elif not pages[-1]:
            pages[-1].append(block)  # taller than a page and cannot split: it overflows
        else:
            queue.insert(0, block)
        pages.append([])
        used = 0.0
    return [page for page in pages if page]


def flow_pages(section: str, blocks: Sequence[Block], frame: Frame, bookmark: str = "",
               top_gap: float = 0.0) -> list[Page]:
    """Pages for a section made of flowing blocks; the first page carries the bookmark."""
    width, height = frame.content_width, frame.content_height - top_gap
    pages = []
    for i, content in enumerate(flow(blocks, width, height)):
        pages.append(Page(section, _draw_blocks(tuple(content), top_gap),
                          bookmark if i == 0 else "", key=("blocks", tuple(content), top_gap)))
    return pages


def _draw_blocks(blocks: tuple[Block, ...], top_gap: float) -> Draw:
    def draw(c: Canvas, frame: Frame) -> None:
        y = frame.top - top_gap
        for block in blocks:
            block.draw(c, frame.left, y, frame.content_width)
            y -= block.height(frame.content_width)

    return draw


def draw_chrome(c: Canvas, frame: Frame, instrument: str, page: Page, number: int,
                total: int, footer: str) -> None:
    """Header (instrument, section) and footer (file, page N of M) around a page."""
    y = frame.top + 3.5 * MM
    c.setFillColor(INK)
    c.setFont(FONT_BOLD, 9)
    right = page.section + (f" — {page.label}" if page.label else "")
    right_w = min(stringWidth(safe(right), FONT, 9), frame.content_width * 0.55)
    c.drawString(frame.left, y, fit_text(instrument, FONT_BOLD, 9,
                                         frame.content_width - right_w - 6 * MM))
    c.setFont(FONT, 9)
    c.drawRightString(frame.right, y, fit_text(right, FONT, 9, frame.content_width * 0.55))
    c.setStrokeColor(GREY)
    c.setLineWidth(0.5)
    c.line(frame.left, y - 2 * MM, frame.right, y - 2 * MM)
    fy = frame.bottom - FOOTER_GAP
    c.line(frame.left, fy + 3.5 * MM, frame.right, fy + 3.5 * MM)
    c.setFont(FONT, 7.5)
    c.setFillColor(GREY)
    c.drawString(frame.left, fy, fit_text(footer, FONT, 7.5, frame.content_width * 0.7))
    c.drawRightString(frame.right, fy, f"page {number} of {total}")
    c.setFillColor(INK)


FOOTER_GAP = 6 * MM
