"""Plots drawn with reportlab's canvas: the tuning error per note and admittance curves.

Small on purpose: linear and logarithmic axes with round-number ticks, a grid, lines and
markers. Plots are blocks, so they flow on pages like tables.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

from reportlab.pdfbase.pdfmetrics import stringWidth
from reportlab.pdfgen.canvas import Canvas

from compiler.emit.pdf.document import Block, fit_size
from compiler.emit.pdf.style import DASHES, FONT, FONT_BOLD, GREY, INK, LIGHT, MM, SERIES, safe
from compiler.ir import Curve


def nice_ticks(lo: float, hi: float, count: int = 6) -> list[float]:
    """Round-number ticks (1, 2 or 5 times a power of ten) covering ``lo`` to ``hi``."""
    if not hi > lo:
        hi = lo + 1.0
    raw = (hi - lo) / max(count - 1, 1)
    power = 10.0 ** math.floor(math.log10(raw))
    step = next(m * power for m in (1.0, 2.0, 5.0, 10.0) if m * power >= raw)
    first = math.ceil(lo / step - 1e-9)
    last = math.floor(hi / step + 1e-9)
    return [k * step for k in range(first, last + 1)]


def log_ticks(lo: float, hi: float) -> list[float]:
    """Decades (and 2, 5 between them when the range is under three decades)."""
    out = []
    for e in range(math.floor(math.log10(lo)), math.ceil(math.log10(hi)) + 1):
        for m in (1.0, 2.0, 5.0) if math.log10(hi / lo) < 3 else (1.0,):
            v = m * 10.0 ** e
            if lo * (1 - 1e-9) <= v <= hi * (1 + 1e-9):
                out.append(v)
    return out


def tick_text(value: float) -> str:
    if value != 0 and (abs(value) >= 1e5 or abs(value) < 1e-2):
        return f"{value:.0e}".replace("e-0", "e-").replace("e+0", "e")
    return f"{value:g}"


@dataclass(frozen=True)
class Axes:
    """A plot area in points with its data ranges; maps data to the page."""

    x: float
    y: float
    w: float
    h: float
    x_lo: float
    x_hi: float
    y_lo: float
    y_hi: float
    y_log: bool = False

    def px(self, v: float) -> float:
        return self.x + (v - self.x_lo) / (self.x_hi - self.x_lo) * self.w

    def py(self, v: float) -> float:
        if self.y_log:
            t = (math.log10(v) - math.log10(self.y_lo)) / math.log10(self.y_hi / self.y_lo)
        else:
            t = (v - self.y_lo) / (self.y_hi - self.y_lo)
        return self.y + t * self.h


def _frame(c: Canvas, ax: Axes, y_ticks: Sequence[float], y_label: str, x_label: str) -> None:
    c.setStrokeColor(LIGHT)
    c.setLineWidth(0.4)
    c.setFont(FONT, 7.5)
    c.setFillColor(INK)
    for t in y_ticks:
        yy = ax.py(t)
        c.line(ax.x, yy, ax.x + ax.w, yy)
        c.drawRightString(ax.x - 1.5 * MM, yy - 2.5, tick_text(t))
    c.setStrokeColor(INK)
    c.setLineWidth(0.7)
    c.rect(ax.x, ax.y, ax.w, ax.h, stroke=1, fill=0)
    c.saveState()
    c.translate(ax.x - 12 * MM, ax.y + ax.h / 2)
    c.rotate(90)
    c.setFont(FONT, 8)
    c.drawCentredString(0, 0, y_label)
    c.restoreState()
    c.setFont(FONT, 8)
    c.drawCentredString(ax.x + ax.w / 2, ax.y - 9 * MM, x_label)


def _title(c: Canvas, x: float, y: float, title: str, width: float) -> None:
    c.setFont(FONT_BOLD, fit_size(title, FONT_BOLD, 10, width, 6.5))
    c.setFillColor(INK)
    c.drawString(x, y - 4 * MM, title)


@dataclass(frozen=True)
class ErrorPlot(Block):
    """Predicted minus target, in cents, for each note (markers by register)."""

    title: str
    notes: tuple[str, ...]
    errors: tuple[float, ...]
    registers: tuple[int, ...]
    tall: float = 52 * MM

    def height(self, width: float) -> float:
        return self.tall

    def draw(self, c: Canvas, x: float, y_top: float, width: float) -> None:
        _title(c, x, y_top, self.title, width)
        biggest = max((abs(e) for e in self.errors), default=0.0)
        limit = next((v for v in (0.5, 1, 2, 5, 10, 20, 50, 100, 200, 500, 1200)
                      if v >= biggest * 1.1), 1200.0)
        n = len(self.notes)
        ax = Axes(x + 16 * MM, y_top - self.tall + 14 * MM, width - 18 * MM,
                  self.tall - 22 * MM, -0.5, n - 0.5, -limit, limit)
        ticks = nice_ticks(-limit, limit, 5)
        _frame(c, ax, ticks, "error (cents)", "")
        c.setStrokeColor(INK)
        c.setLineWidth(0.6)
        c.line(ax.x, ax.py(0.0), ax.x + ax.w, ax.py(0.0))
        c.setFont(FONT, 7)
        step = max(1, math.ceil(n / max(ax.w / (9 * MM), 1)))
        regs = sorted(set(self.registers))
        for i, (note, err, reg) in enumerate(zip(self.notes, self.errors, self.registers,
                                                 strict=True)):
            xx, yy = ax.px(i), ax.py(err)
            c.setStrokeColor(GREY)
            c.setLineWidth(0.6)
            c.line(xx, ax.py(0.0), xx, yy)
            _marker(c, xx, yy, regs.index(reg))
            if i % step == 0:
                c.setFillColor(INK)
                c.drawCentredString(xx, ax.y - 4 * MM, safe(note))
        lx = ax.x + ax.w
        for k, reg in reversed(list(enumerate(regs))):
            text = f"register {reg}"
            lx -= stringWidth(text, FONT, 7.5) + 8 * MM
            _marker(c, lx + 2 * MM, y_top - 3 * MM, k)
            c.setFillColor(INK)
            c.setFont(FONT, 7.5)
            c.drawString(lx + 4.5 * MM, y_top - 3 * MM - 2.5, text)


def _marker(c: Canvas, x: float, y: float, kind: int) -> None:
    r = 1.3 * MM
    c.setStrokeColor(SERIES[kind % len(SERIES)])
    c.setFillColor(SERIES[kind % len(SERIES)])
    c.setLineWidth(0.9)
    if kind % 2 == 0:
        c.circle(x, y, r, stroke=1, fill=1)
    else:
        c.setFillColor(LIGHT)
        c.rect(x - r, y - r, 2 * r, 2 * r, stroke=1, fill=1)
    c.setFillColor(INK)


@dataclass(frozen=True)
class CurvePlot(Block):
    """Curves against frequency (input admittance magnitude), logarithmic y when positive."""

    title: str
    curves: tuple[Curve, ...]
    y_label: str
    marks: tuple[tuple[str, float], ...] = ()
    """Vertical marks (label, Hz): the predicted pitches of the plotted fingerings."""
    tall: float = 62 * MM

    def height(self, width: float) -> float:
        return self.tall

    def draw(self, c: Canvas, x: float, y_top: float, width: float) -> None:
        _title(c, x, y_top, self.title, width)
        xs = [f for cu in self.curves for f in cu.frequencies_hz]
        ys = [v for cu in self.curves for v in cu.values]
        if not xs:
            return
        log = min(ys) > 0 and max(ys) / min(ys) > 20
        if log:
            lo = 10.0 ** math.floor(math.log10(min(ys)))
            hi = 10.0 ** math.ceil(math.log10(max(ys)))
            y_ticks = log_ticks(lo, hi)
        else:
            y_ticks = nice_ticks(min(ys), max(ys))
            lo, hi = min(y_ticks[0], min(ys)), max(y_ticks[-1], max(ys))
        x_ticks = nice_ticks(min(xs), max(xs), 8)
        x_lo, x_hi = min(x_ticks[0], min(xs)), max(x_ticks[-1], max(xs))
        ax = Axes(x + 18 * MM, y_top - self.tall + 16 * MM, width - 20 * MM,
                  self.tall - 24 * MM, x_lo, x_hi, lo, hi, log)
        _frame(c, ax, y_ticks, self.y_label, "frequency (Hz)")
        c.setFont(FONT, 7.5)
        c.setStrokeColor(LIGHT)
        c.setLineWidth(0.4)
        for t in x_ticks:
            c.line(ax.px(t), ax.y, ax.px(t), ax.y + ax.h)
            c.setFillColor(INK)
            c.drawCentredString(ax.px(t), ax.y - 4 * MM, tick_text(t))
        for label, f in self.marks:
            if x_lo <= f <= x_hi:
                c.setStrokeColor(GREY)
                c.setDash(1, 1.5)
                c.line(ax.px(f), ax.y, ax.px(f), ax.y + ax.h)
                c.setDash()
                c.setFillColor(GREY)
                c.setFont(FONT, 6.5)
                c.drawString(ax.px(f) + 1, ax.y + ax.h - 3 * MM, safe(label))
        c.saveState()
        path = c.beginPath()
        path.rect(ax.x, ax.y, ax.w, ax.h)
        c.clipPath(path, stroke=0, fill=0)
        for k, cu in enumerate(self.curves):
            pts = [(ax.px(f), ax.py(v)) for f, v in zip(cu.frequencies_hz, cu.values,
                                                        strict=True) if v > 0 or not log]
            if len(pts) < 2:
                continue
            line = c.beginPath()
            line.moveTo(*pts[0])
            for p in pts[1:]:
                line.lineTo(*p)
            c.setStrokeColor(SERIES[k % len(SERIES)])
            c.setDash(list(DASHES[k % len(DASHES)]), 0)
            c.setLineWidth(1.0)
            c.drawPath(line, stroke=1, fill=0)
        c.restoreState()
        c.setDash()
        lx = ax.x + ax.w
        c.setFont(FONT, 7.5)
        for k, cu in reversed(list(enumerate(self.curves))):
            text = cu.label
            lx -= stringWidth(text, FONT, 7.5) + 12 * MM
            c.setStrokeColor(SERIES[k % len(SERIES)])
            c.setLineWidth(1.0)
            c.setDash(list(DASHES[k % len(DASHES)]), 0)
            c.line(lx, y_top - 3 * MM, lx + 8 * MM, y_top - 3 * MM)
            c.setDash()
            c.setFillColor(INK)
            c.drawString(lx + 9.5 * MM, y_top - 3 * MM - 2.5, text)
