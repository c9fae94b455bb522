"""PDF backend: ``build-sheet.pdf``, the pages the maker works from at the bench.

Reads the resolved model and the parts only; every number shown comes from them, rounded
by the formatters in ``style``. The document is planned page by page first (so the cover
can list where each section starts and every footer can say "page N of M"), then drawn
with reportlab's canvas in invariant mode: the same inputs give the same bytes.

Pages, in order: cover; cautions; cut list; pipes (drawings and tables, fingering charts
and plots for holed pipes); full-size templates.
"""

from __future__ import annotations

import io
from dataclasses import dataclass
from pathlib import Path

from reportlab.pdfgen.canvas import Canvas

from compiler.cache import Cache, key_of
from compiler.emit.pdf import cautions, cover, cutlist, pipes, templates
from compiler.emit.pdf.document import Page, draw_chrome
from compiler.emit.pdf.style import (
    FONT,
    REPERTOIRE,
    Frame,
    frame_for,
    inches_of,
    register_fonts,
    safe,
)
from compiler.geometry.model import Parts
from compiler.ir import Resolved
from compiler.options import BuildOptions

NAME = "pdf"
FILE_NAME = "build-sheet.pdf"


@dataclass(frozen=True)
class BuildSheet:
    """Everything the build sheet's bytes depend on, and so its cache key: ``draw_sheet``
    reads nothing else."""

    resolved: Resolved
    parts: Parts
    paper: str
    """``a4`` or ``letter``."""

    @staticmethod
    def of(resolved: Resolved, parts: Parts, options: BuildOptions) -> BuildSheet:
        return BuildSheet(resolved, parts, options.paper)


def plan(sheet: BuildSheet) -> list[Page]:
    """Every page of the build sheet, in order, not yet drawn."""
    resolved, parts = sheet.resolved, sheet.parts
    frame = frame_for(sheet.paper)
    sections = [
        ("Cautions", cautions.pages(resolved, frame)),
        ("Cut list", cutlist.pages(resolved, parts, frame)),
        ("Pipes", pipes.pages(resolved, frame)),
        ("Templates", templates.pages(parts, frame, inches_of(resolved.fabrication))),
    ]
    count = 1
    for _ in range(4):
        contents, start = [], count + 1
        for title, found in sections:
            if found:
                contents.append((title, start))
                start += len(found)
        front = cover.pages(resolved, frame, contents)
        if len(front) == count:
            break
        count = len(front)
    return front + [page for _, found in sections for page in found]


def _seed_fonts(canvas: Canvas) -> int | None:
    """Give the characters of ``REPERTOIRE`` their codes in a fixed order, before anything is
    drawn; returns how many characters the fonts have codes for then (None: not possible with
    this reportlab, and no page body may be replayed)."""
    doc = getattr(canvas, "_doc", None)
    if doc is None:
        return None
    for font in register_fonts():
        font.splitString(REPERTOIRE, doc)
    return _codes(canvas)


def _codes(canvas: Canvas) -> int | None:
    try:
        return sum(len(font.state[canvas._doc].assignments) for font in register_fonts())
    except (AttributeError, KeyError, TypeError):
        return None


def page_key(frame: Frame, page: Page) -> str:
    """The cache key of a page's drawn body: its body and the frame, all its drawing reads."""
    return key_of(frame, page.body)


def _draw_body(canvas: Canvas, frame: Frame, page: Page, store: Cache,
               seeded: int | None) -> None:
    """Draw a page's body, or replay its drawing from an earlier build.

    A body's drawing is a run of PDF content operators. It depends only on ``page.body`` and
    the frame (``page_key``), and starts from the state the header leaves (fonts registered
    in the same order in every build), so the operators recorded for the same key can stand
    in for drawing it again. The embedded fonts number their characters in the order of
    first use: a body is recorded only while every character used so far in the document is
    one of the ``REPERTOIRE``, whose codes are fixed before the first page (``seeded``
    codes), so its operators mean the same in any build. reportlab keeps a page's operators
    in ``Canvas._code``; where that is missing (another reportlab), every body is drawn."""
    code = getattr(canvas, "_code", None)
    if store.folder is None or not isinstance(code, list) or seeded is None:
        page.body.draw(canvas, frame)
        return

    drawn = []

    def make() -> bytes:
        start = len(code)
        page.body.draw(canvas, frame)
        drawn.append(True)
        return "\n".join(code[start:]).encode("utf-8")

    key = page_key(frame, page)
    if _codes(canvas) != seeded:
        page.body.draw(canvas, frame)
        return
    recorded = store.data("pdf-page", key, make)
    if drawn and _codes(canvas) != seeded:
        store.forget("pdf-page", key)  # it used a character outside the fixed codes
    if not drawn and recorded:
        # The page's operators are joined with newlines when it is written, so one joined
        # entry gives the same bytes as the entries it was made from.
        code.append(recorded.decode("utf-8"))


def render(resolved: Resolved, parts: Parts, options: BuildOptions,
           cache: Cache | None = None) -> bytes:
    """The build sheet of ``resolved`` and ``parts`` as PDF bytes (``draw_sheet``)."""
    return draw_sheet(BuildSheet.of(resolved, parts, options), cache)


def draw_sheet(sheet: BuildSheet, cache: Cache | None = None) -> bytes:
    """The build sheet as PDF bytes (deterministic: reportlab's invariant mode, no dates).

    With a ``cache``, page bodies whose inputs did not change are replayed, not redrawn."""
    store = cache or Cache(None)
    resolved = sheet.resolved
    frame = frame_for(sheet.paper)
    pages = plan(sheet)
    buffer = io.BytesIO()
    canvas = Canvas(buffer, pagesize=(frame.width, frame.height), invariant=1,
                    pageCompression=1, initialFontName=FONT)
    seeded = _seed_fonts(canvas)
    # Templates are full size: ask the viewer not to fit the page to the printer's margins.
    canvas.setViewerPreference("PrintScaling", "None")
    canvas.setTitle(safe(resolved.instrument))
    canvas.setAuthor("boresmith")
    canvas.setCreator("boresmith")
    canvas.setSubject(f"Build sheet for {safe(resolved.spec_file)}")
    footer = f"{FILE_NAME} · {resolved.spec_file} · sha256 {resolved.spec_sha256[:12]}"
    for number, page in enumerate(pages, start=1):
        if page.bookmark:
            key = f"p{number}"
            canvas.bookmarkPage(key)
            canvas.addOutlineEntry(safe(page.bookmark), key, level=0)
        draw_chrome(canvas, frame, resolved.instrument, page, number, len(pages), footer)
        _draw_body(canvas, frame, page, store, seeded)
        canvas.showPage()
    canvas.save()
    return buffer.getvalue()


def write(resolved: Resolved, parts: Parts, options: BuildOptions, out_dir: Path,
          cache: Cache | None = None) -> list[Path]:
    """Write ``out_dir/build-sheet.pdf``; returns [that path]. The document is reused whole
    when nothing it shows changed; otherwise unchanged page bodies are replayed."""
    path = out_dir / FILE_NAME
    sheet = BuildSheet.of(resolved, parts, options)
    store = cache or Cache(None)
    path.write_bytes(store.data("pdf", key_of(sheet), lambda: draw_sheet(sheet, store)))
    return [path]
