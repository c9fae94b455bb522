"""Look and numbers of the build sheet: page sizes, fonts, colours and the number formatters.

Every number the PDF prints goes through one of the formatters here, rounded exactly as
``compiler/emit/resolved_json.py`` rounds it (``round(value * factor, decimals)``, with
negative zero shown as zero), so a value in ``resolved.json`` appears digit for digit:

- lengths: millimetres to 0.01 mm (:func:`mm`, ``92.50``); inches beside them for specs
  written in ``in`` or ``ft``, in fractions of the spec's precision (``3 5/8``, from
  ``compiler.display``, the one home of lengths shown to a maker);
- frequencies: 0.01 Hz (:func:`hz`);
- cents: 0.01 cent, signed (:func:`cents`, ``+1.25`` sharp, ``-0.40`` flat);
- sensitivities (cents per mm, cents per °C): 0.001, signed (:func:`sensitivity`);
- speed of sound 0.001 m/s, temperature 0.01 °C, angles 0.01° (:func:`fixed`).
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache
from importlib import resources

from reportlab.lib.colors import Color
from reportlab.pdfbase import pdfmetrics
from reportlab.pdfbase.ttfonts import TTFont

from compiler.display import SENSITIVITY_STEP_IN, Inches, inches_for
from compiler.ir import FabricationReport

MM = 72.0 / 25.4
"""Points per millimetre: the one scale between the page (points) and the drawings (mm)."""

PAPER_MM: dict[str, tuple[float, float]] = {"a4": (210.0, 297.0), "letter": (215.9, 279.4)}
"""Portrait page sizes in millimetres (ISO 216 A4; ANSI letter, 8.5 × 11 in)."""

FONT = "DejaVuSans"
FONT_BOLD = "DejaVuSans-Bold"
FONT_FILES = {FONT: "DejaVuSans.ttf", FONT_BOLD: "DejaVuSans-Bold.ttf"}
"""DejaVu Sans, shipped in ``compiler/emit/pdf/fonts/`` with its licence (Bitstream Vera
licence, free to redistribute) and embedded in every build sheet: the build never depends on
the fonts of the machine, and the text covers the foot mark (8′), the degree and diameter
signs and the Latin letters of Polish, Czech, German... names (Łódź, Dvořák, Große)."""

REPERTOIRE = "".join(chr(c) for c in (*range(0xA1, 0x100), *range(0x100, 0x180))) + (
    "′″‘’“”–—…•·×÷−±≈≤≥→←↑↓µΩπθΔ½¼¾⅛⅜⅝⅞⁄€")
"""Characters given fixed codes at the start of every build sheet, in this order: Latin-1,
Latin Extended-A and the signs the sheets use. reportlab numbers a TrueType font's characters
in the order a document first uses them; fixing the order for these keeps a page body's
drawing the same whatever came before it, so a rebuild can replay it (see ``__init__``)."""


@lru_cache(maxsize=1)
def register_fonts() -> tuple[TTFont, ...]:
    """Register the shipped fonts with reportlab (once a process); returns them."""
    folder = resources.files("compiler.emit.pdf") / "fonts"
    fonts = []
    for name, file in FONT_FILES.items():
        with resources.as_file(folder / file) as path:
            font = TTFont(name, str(path))
        pdfmetrics.registerFont(font)
        fonts.append(font)
    return tuple(fonts)


register_fonts()

INK = Color(0, 0, 0)
GREY = Color(0.45, 0.45, 0.45)
LIGHT = Color(0.90, 0.90, 0.90)
FAINT = Color(0.96, 0.96, 0.96)
ACCENT = Color(0.05, 0.30, 0.60)
WARN = Color(0.75, 0.05, 0.05)
SERIES = (Color(0, 0, 0), Color(0.05, 0.35, 0.75), Color(0.85, 0.40, 0.0),
          Color(0.20, 0.55, 0.20))
"""Plot lines: dark enough to read on a monochrome print, told apart by dash pattern too."""
DASHES: tuple[tuple[float, ...], ...] = ((), (4, 2), (1, 2), (6, 2, 1, 2))

MARGIN_MM = 14.0
HEADER_MM = 9.0
FOOTER_MM = 8.0


@dataclass(frozen=True)
class Frame:
    """One page's geometry in points: the paper and the content box inside the margins."""

    paper: str
    width: float
    height: float
    left: float
    right: float
    top: float
    bottom: float

    @property
    def content_width(self) -> float:
        return self.right - self.left

    @property
    def content_height(self) -> float:
        return self.top - self.bottom


def frame_for(paper: str) -> Frame:
    """The page frame of a paper name (``a4`` or ``letter``)."""
    if paper not in PAPER_MM:
        raise ValueError(f"unknown paper {paper!r}: use one of {', '.join(sorted(PAPER_MM))}")
    w_mm, h_mm = PAPER_MM[paper]
    return Frame(paper, w_mm * MM, h_mm * MM, MARGIN_MM * MM, (w_mm - MARGIN_MM) * MM,
                 (h_mm - MARGIN_MM - HEADER_MM) * MM, (MARGIN_MM + FOOTER_MM) * MM)


def fixed(value: float, decimals: int, signed: bool = False) -> str:
    """``value`` rounded as ``resolved.json`` rounds it, shown with ``decimals`` places."""
    rounded = round(value, decimals)
    if rounded == 0:
        rounded = 0.0
    return f"{rounded:+.{decimals}f}" if signed else f"{rounded:.{decimals}f}"


def mm(length_m: float) -> str:
    """A length in metres as millimetres to 0.01 mm, the resolution of ``resolved.json``."""
    return fixed(length_m * 1000.0, 2)


def mm_of(value_mm: float) -> str:
    """A length already in millimetres (Parts), to 0.01 mm."""
    return fixed(value_mm, 2)


def inches_of(fab: FabricationReport) -> Inches | None:
    """How the build shows inches: None for a metric spec, else fractions (or decimals) of
    the spec's precision."""
    return inches_for(fab.units, fab.precision_m)


def length(length_m: float, inches: Inches | None, unit: bool = True) -> str:
    """``92.50 mm``, or ``92.50 mm (3 5/8 in)`` for a spec written in inches."""
    text = mm(length_m) + (" mm" if unit else "")
    if inches is not None:
        text += f" ({inches.text(length_m)} in)"
    return text


def inch_pair(length_mm: float, width_mm: float, inches: Inches) -> str:
    """A part's ``length × width`` in inches: ``1 1/2 × 1 1/4 in``."""
    return f"{inches.text_of_mm(length_mm)} × {inches.text_of_mm(width_mm)} in"


def per_step_words() -> str:
    """The inch sensitivity's unit, as a column or row says it."""
    return f"1/{SENSITIVITY_STEP_IN.denominator} in"


def hz(frequency_hz: float) -> str:
    """A frequency to 0.01 Hz."""
    return fixed(frequency_hz, 2)


def cents(value: float) -> str:
    """Cents to 0.01, signed (``+1.25`` sharp, ``-0.40`` flat)."""
    return fixed(value, 2, signed=True)


def sensitivity(value: float) -> str:
    """Cents per mm or per °C, to 0.001, signed."""
    return fixed(value, 3, signed=True)


def percent(fraction: float) -> str:
    """A 0..1 fraction as a percentage to 0.1 %."""
    return f"{fraction * 100.0:.1f} %"


def celsius(value_c: float) -> str:
    return f"{fixed(value_c, 2)} °C"


def speed(value_m_s: float) -> str:
    return f"{fixed(value_m_s, 3)} m/s"


def safe(text: str) -> str:
    """Text the embedded font can show; a character it has no glyph for becomes ``?``."""
    glyphs = _glyphs()
    return "".join(ch if ord(ch) in glyphs or ch in "\n\t" else "?" for ch in text)


def unprintable(text: str) -> str:
    """The characters of ``text`` the embedded font has no glyph for (each once, in order of
    appearance): :func:`safe` prints them as ``?``."""
    glyphs = _glyphs()
    return "".join(dict.fromkeys(ch for ch in text if ord(ch) not in glyphs and ch not in "\n\t"))


@lru_cache(maxsize=1)
def _glyphs() -> frozenset[int]:
    regular, bold = register_fonts()
    return frozenset(regular.face.charToGlyph) & frozenset(bold.face.charToGlyph)


def strip_prefix(pipe_id: str, group: str) -> str:
    """A pipe id without its group's name in front (``principal-4-C3`` → ``C3``)."""
    prefix = group + "-"
    return pipe_id[len(prefix):] if pipe_id.startswith(prefix) and len(pipe_id) > len(prefix) \
        else pipe_id
