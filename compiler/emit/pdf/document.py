"""Pages and flowing blocks: the small layout engine under every section of the build sheet.

A section plans its pages first (``Page``: a title and a function that draws the body),
so the whole document's page count is known before anything is drawn; the writer then
draws each page inside a common frame (header, footer with "page N of M").
Text sections are built from blocks (headings, paragraphs, tables) that ``flow`` spreads
over as many pages as they need, splitting tables between rows and repeating the header.
"""

from __future__ import annotations

import re
from collections.abc import Sequence
from dataclasses import dataclass, field, replace
from functools import lru_cache
from typing import Protocol

from reportlab.lib.colors import Color
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


class Body(Protocol):
    """What draws a page's body: a frozen dataclass holding everything its drawing reads
    but the frame (values with a faithful, stable ``repr``). With the frame it is the key
    the drawn body is cached under, so a rebuild can replay it."""

    def draw(self, c: Canvas, frame: Frame) -> None: ...


@dataclass(frozen=True)
class Page:
    """One planned page: the section it belongs to and what draws its body."""

    section: str
    body: Body
    bookmark: str = ""
    """Outline (bookmark) entry; empty for none."""
    label: str = ""
    """Extra words on the right of the header (a pipe id, a tile)."""


def wrap(text: str, font: str, size: float, width: float) -> list[str]:
    """Lines of ``text`` broken at spaces to fit ``width`` points; a word longer than a line
    is broken after a hyphen, else between characters: nothing is cut off."""
    return list(_wrapped(text, font, size, width))


NO_BREAK = "\u00a0"
"""The no-break space: drawn as a space, never a place to end a line."""

_WHOLE_AND_FRACTION = re.compile(r"(?<=\d) (?=\d+/\d+(?!\d))")
"""The space of ``2 1/8`` (a whole number and its fraction: one length on a rule)."""


def unbroken(text: str) -> str:
    """``text`` with a whole number and its fraction joined by a no-break space, so that a
    line never ends between ``2`` and ``1/8``: read alone, either is a wrong length."""
    return _WHOLE_AND_FRACTION.sub(NO_BREAK, text)


def words(text: str) -> list[str]:
    """What lines may be broken between: the pieces of ``text`` between ordinary spaces
    and tabs (``2 1/8`` is one piece)."""
    return [w for w in re.split(r"[ \t]+", unbroken(text)) if w]


@lru_cache(maxsize=8192)
def _wrapped(text: str, font: str, size: float, width: float) -> tuple[str, ...]:
    # Tables measure their rows again for every page split; text metrics are pure, so
    # each (text, font, size, width) is measured once.
    lines: list[str] = []
    for paragraph in safe(text).split("\n"):
        for line in _fill(words(paragraph), font, size, width):
            lines += _break_word(line, font, size, width)
    return tuple(lines) or ("",)


def _fill(pieces: list[str], font: str, size: float, width: float) -> list[str]:
    """Lines of ``pieces`` joined by spaces, each line as full as ``width`` allows (a
    piece wider than a line is a line of its own, broken by ``_break_word``)."""
    space = stringWidth(" ", font, size)
    lines: list[str] = []
    line: list[str] = []
    used = 0.0
    for piece in pieces:
        wide = stringWidth(piece, font, size)
        if line and used + space + wide > width:
            lines.append(" ".join(line))
            line, used = [], 0.0
        used += (space if line else 0.0) + wide
        line.append(piece)
    if line:
        lines.append(" ".join(line))
    return lines


def _break_word(line: str, font: str, size: float, width: float) -> list[str]:
    """``line`` (one over-long word, or a line that fits) in pieces that fit ``width``."""
    out: list[str] = []
    while stringWidth(line, font, size) > width and len(line) > 1:
        cut = len(line) - 1
        while cut > 1 and stringWidth(line[:cut], font, size) > width:
            cut -= 1
        hyphen = line.rfind("-", 0, cut)
        if hyphen > 0:
            cut = hyphen + 1
        out.append(line[:cut])
        line = line[cut:]
    return out + [line]


def fit_size(text: str, font: str, size: float, width: float, smallest: float) -> float:
    """The largest size from ``size`` down to ``smallest`` at which ``text`` fits ``width``
    (``smallest`` if none does: the caller wraps then)."""
    while size > smallest and stringWidth(safe(text), font, size) > width:
        size = max(smallest, size - 0.25)
    return size


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


SUB_MIN_SIZE = 8.0
"""Smallest size of a table's second lines: they carry inches and bench notes, which a cut
depends on."""

HEADER_MIN_SIZE = 8.0
"""Smallest size of a table's header: a column is made wide enough for its title's longest
word at this size, and a title wraps at its spaces rather than shrink below it."""


def header_size(size: float) -> float:
    """The smallest size a table of body text ``size`` draws its header at."""
    return min(size, HEADER_MIN_SIZE)


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

    Nothing is cut short: a cell's text wraps at spaces onto as many lines as it needs and
    the row grows to fit. A row may carry a second line (``sub``, e.g. the inches beside
    millimetres, or a note for the bench), which wraps the same way under the first.
    """

    columns: tuple[Column, ...]
    rows: tuple[tuple[str, ...], ...]
    sub: tuple[tuple[str, ...], ...] = ()
    size: float = 8.5
    min_rows: int = 3
    title_rows: int = 1
    """Lines the header has at least (titles with ``\\n`` or long words may need more)."""
    shade: tuple[int, ...] = field(default=())
    """Indices of rows drawn bold on a light band (totals, register headings)."""

    PAD = 1.0 * MM

    @property
    def sub_size(self) -> float:
        return max(SUB_MIN_SIZE, self.size * 0.85)

    def _widths(self, width: float) -> list[float]:
        return list(_column_widths(self, width))

    def _cells(self, i: int, widths: list[float]) -> tuple[list[list[str]], list[list[str]]]:
        """The wrapped lines of row ``i``: first lines and second lines, per column."""
        font = FONT_BOLD if i in self.shade else FONT
        row = self.rows[i]
        subs = self.sub[i] if self.sub and i < len(self.sub) else ()
        main, under = [], []
        for k, w in enumerate(widths):
            text = row[k] if k < len(row) else ""
            main.append(wrap(text, font, self.size, w - 2 * self.PAD) if text else [])
            extra = subs[k] if k < len(subs) else ""
            under.append(wrap(extra, FONT, self.sub_size, w - 2 * self.PAD) if extra else [])
        return main, under

    def _row_height(self, i: int, widths: list[float]) -> float:
        main, under = self._cells(i, widths)
        return max(self._cell_height(len(first), len(second))
                   for first, second in zip(main, under, strict=True))

    def _cell_height(self, lines: int, subs: int) -> float:
        """A cell's height: its first lines, then its second lines right under them."""
        return self.size * (1.55 + 1.2 * (max(lines, 1) - 1)) + self.sub_size * 1.12 * subs

    def _row_heights(self, width: float) -> list[float]:
        widths = self._widths(width)
        return [self._row_height(i, widths) for i in range(len(self.rows))]

    def _title_size(self, title: str, width: float) -> float:
        """The header's size in a column: made smaller (down to ``HEADER_MIN_SIZE``) so its
        longest word fits."""
        longest = max(title.replace("\n", " ").split(" "), key=len, default="")
        return fit_size(longest, FONT_BOLD, self.size, width - 2 * self.PAD,
                        header_size(self.size))

    def _titles(self, widths: list[float]) -> list[list[str]]:
        return [[line for part in col.title.split("\n")
                 for line in wrap(part, FONT_BOLD, self._title_size(col.title, w),
                                  w - 2 * self.PAD)]
                for col, w in zip(self.columns, widths, strict=True)]

    def _header_height(self, width: float) -> float:
        lines = max([self.title_rows] + [len(t) for t in self._titles(self._widths(width))])
        return self.size * 1.25 * lines + self.size * 0.6

    def height(self, width: float) -> float:
        return self._header_height(width) + sum(self._row_heights(width)) + 2.0

    def split(self, width: float, available: float) -> tuple[Block, Block] | None:
        room = available - self._header_height(width) - 2.0
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

    def draw(self, c: Canvas, x: float, y_top: float, width: float) -> None:
        widths = self._widths(width)
        pad = self.PAD
        hh = self._header_height(width)
        c.setFillColor(LIGHT)
        c.rect(x, y_top - hh, width, hh, stroke=0, fill=1)
        c.setFillColor(INK)
        cx = x
        for col, w, titles in zip(self.columns, widths, self._titles(widths), strict=True):
            size = self._title_size(col.title, w)
            for k, line in enumerate(titles):
                _cell(c, line, col.align, cx, w, pad, y_top - self.size * (1.15 + 1.25 * k),
                      FONT_BOLD, size)
            cx += w
        y = y_top - hh
        for i in range(len(self.rows)):
            rh = self._row_height(i, widths)
            if i in self.shade:
                c.setFillColor(LIGHT)
                c.rect(x, y - rh, width, rh, stroke=0, fill=1)
            elif i % 2 == 1:
                c.setFillColor(FAINT)
                c.rect(x, y - rh, width, rh, stroke=0, fill=1)
            c.setFillColor(INK)
            font = FONT_BOLD if i in self.shade else FONT
            main, under = self._cells(i, widths)
            cx = x
            for col, w, first, second in zip(self.columns, widths, main, under, strict=True):
                for k, line in enumerate(first):
                    _cell(c, line, col.align, cx, w, pad, y - self.size * (1.1 + 1.2 * k),
                          font, self.size)
                below = y - self.size * (1.1 + 1.2 * (max(len(first), 1) - 1))
                for j, line in enumerate(second):
                    _cell(c, line, col.align, cx, w, pad,
                          below - self.sub_size * 1.12 * (j + 1), FONT, self.sub_size)
                cx += w
            y -= rh
        c.setStrokeColor(GREY)
        c.setLineWidth(0.4)
        c.line(x, y, x + width, y)


@lru_cache(maxsize=256)
def _column_widths(table: Table, width: float) -> tuple[float, ...]:
    """Column widths (points) filling ``width``: each column at least as wide as its widest
    word (numbers are never broken), the rest of the room shared by the columns' shares."""
    shares = [col.width for col in table.columns]
    need = []
    for k, col in enumerate(table.columns):
        titles = [w for part in col.title.split("\n") for w in words(part)]
        widest = max((stringWidth(safe(w), FONT_BOLD, header_size(table.size))
                      for w in titles), default=0.0)
        for i, row in enumerate(table.rows):
            font = FONT_BOLD if i in table.shade else FONT
            if k < len(row):
                for word in words(row[k]):
                    widest = max(widest, stringWidth(safe(word), font, table.size))
            if table.sub and i < len(table.sub) and k < len(table.sub[i]):
                for word in words(table.sub[i][k]):
                    widest = max(widest, stringWidth(safe(word), FONT, table.sub_size))
        need.append(widest + 2 * Table.PAD + 0.5)
    spare = width - sum(need)
    if spare < 0:  # too many columns for the page: words may break, but the table fits
        return tuple(n * width / sum(need) for n in need)
    # share the room so that each column gets closest to its share of the width
    target = [sh / sum(shares) * width for sh in shares]
    extra = [max(0.0, t - n) for t, n in zip(target, need, strict=True)]
    scale = spare / sum(extra) if sum(extra) > 0 else 0.0
    widths = [n + e * scale for n, e in zip(need, extra, strict=True)]
    if sum(extra) == 0:
        widths = [n + spare / len(need) for n in need]
    return tuple(widths)


def _cell(c: Canvas, text: str, align: str, x: float, w: float, pad: float, y: float,
          font: str, size: float) -> None:
    text = safe(text)
    c.setFont(font, size)
    if align == "right":
        c.drawRightString(x + w - pad, y, text)
    elif align == "centre":
        c.drawCentredString(x + w / 2, y, text)
    else:
        c.drawString(x + pad, y, text)


@dataclass(frozen=True)
class KeyValues(Block):
    """Label: value lines in two columns of text, labels in grey; long values wrap."""

    items: tuple[tuple[str, str], ...]
    size: float = 9.5
    label_share: float = 0.3

    def _lines(self, width: float) -> list[tuple[list[str], list[str]]]:
        lw = width * self.label_share
        return [(wrap(label, FONT, self.size, lw - 2 * MM), wrap(value, FONT, self.size,
                                                               width - lw))
                for label, value in self.items]

    def height(self, width: float) -> float:
        rows = sum(max(len(a), len(b)) for a, b in self._lines(width))
        return rows * self.size * 1.45 + self.size * 0.4

    def draw(self, c: Canvas, x: float, y_top: float, width: float) -> None:
        y = y_top - self.size * 1.1
        lw = width * self.label_share
        c.setFont(FONT, self.size)
        for labels, values in self._lines(width):
            for k in range(max(len(labels), len(values))):
                if k < len(labels):
                    c.setFillColor(GREY)
                    c.drawString(x, y, labels[k])
                if k < len(values):
                    c.setFillColor(INK)
                    c.drawString(x + lw, y, values[k])
                y -= self.size * 1.45
        c.setFillColor(INK)


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
        pages.append(Page(section, Blocks(tuple(content), top_gap),
                          bookmark if i == 0 else ""))
    return pages


@dataclass(frozen=True)
class Blocks:
    """A page of flowing blocks, from ``top_gap`` below the frame's top."""

    blocks: tuple[Block, ...]
    top_gap: float

    def draw(self, c: Canvas, frame: Frame) -> None:
        blocks, top_gap = self.blocks, self.top_gap
        y = frame.top - top_gap
        for block in blocks:
            block.draw(c, frame.left, y, frame.content_width)
            y -= block.height(frame.content_width)


def _fitted(c: Canvas, text: str, font: str, size: float, x: float, y: float, width: float,
            right: bool = False, upward: bool = True) -> None:
    """``text`` at ``size`` or smaller (down to 6.5 pt) to fit ``width``; if even that does
    not fit, on two or more lines (stacked upwards from ``y``, or downwards)."""
    size = fit_size(text, font, size, width, 6.5)
    lines = wrap(text, font, size, width)
    c.setFont(font, size)
    order = list(reversed(lines)) if upward else lines
    for k, line in enumerate(order):
        ly = y + k * size * 1.1 if upward else y - k * size * 1.1
        if right:
            c.drawRightString(x + width, ly, line)
        else:
            c.drawString(x, ly, line)


def draw_chrome(c: Canvas, frame: Frame, instrument: str, page: Page, number: int,
                total: int, footer: str) -> None:
    """Header (instrument, section) and footer (file, page N of M) around a page."""
    y = frame.top + 3.5 * MM
    c.setFillColor(INK)
    right = page.section + (f" — {page.label}" if page.label else "")
    right_w = min(stringWidth(safe(right), FONT, 9) + 1.0, frame.content_width * 0.45)
    left_w = frame.content_width - right_w - 6 * MM
    _fitted(c, instrument, FONT_BOLD, 9, frame.left, y, left_w)
    _fitted(c, right, FONT, 9, frame.right - right_w, y, right_w, right=True)
    c.setStrokeColor(GREY)
    c.setLineWidth(0.5)
    c.line(frame.left, y - 2 * MM, frame.right, y - 2 * MM)
    fy = frame.bottom - FOOTER_GAP
    c.line(frame.left, fy + 3.5 * MM, frame.right, fy + 3.5 * MM)
    c.setFillColor(GREY)
    _fitted(c, footer, FONT, 7.5, frame.left, fy, frame.content_width * 0.75, upward=False)
    c.setFont(FONT, 7.5)
    c.drawRightString(frame.right, fy, f"page {number} of {total}")
    c.setFillColor(INK)


FOOTER_GAP = 6 * MM
