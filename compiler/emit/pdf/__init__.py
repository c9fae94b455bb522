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
from pathlib import Path

from reportlab.pdfgen.canvas import Canvas

from compiler.cache import Cache, key_of
from compiler.emit.pdf import cautions, cover, cutlist, pipes, templates
from compiler.emit.pdf.document import Page, draw_chrome
from compiler.emit.pdf.style import frame_for, safe
from compiler.geometry.model import Parts
from compiler.options import BuildOptions
from compiler.resolve.model import Resolved

NAME = "pdf"
FILE_NAME = "build-sheet.pdf"


def paper_of(resolved: Resolved, options: BuildOptions) -> str:
    """The paper: the command line's choice, else the spec's (``a4`` or ``letter``)."""
    return (options.paper or resolved.fabrication.paper or "a4").lower()


def plan(resolved: Resolved, parts: Parts, options: BuildOptions) -> list[Page]:
    """Every page of the build sheet, in order, not yet drawn."""
    frame = frame_for(paper_of(resolved, options))
    sections = [
        ("Cautions", cautions.pages(resolved, parts, frame)),
        ("Cut list", cutlist.pages(resolved, parts, frame)),
        ("Pipes", pipes.pages(resolved, frame)),
        ("Templates", templates.pages(parts, frame)),
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


def render(resolved: Resolved, parts: Parts, options: BuildOptions) -> bytes:
    """The build sheet as PDF bytes (deterministic: reportlab's invariant mode, no dates)."""
    frame = frame_for(paper_of(resolved, options))
    pages = plan(resolved, parts, options)
    buffer = io.BytesIO()
    canvas = Canvas(buffer, pagesize=(frame.width, frame.height), invariant=1,
                    pageCompression=1)
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
        page.draw(canvas, frame)
        canvas.showPage()
    canvas.save()
    return buffer.getvalue()


def write(resolved: Resolved, parts: Parts, options: BuildOptions, out_dir: Path,
          cache: Cache | None = None) -> list[Path]:
    """Write ``out_dir/build-sheet.pdf``; returns [that path]. Every page shows the spec's
    sha256, so the document is cached whole: reused only when nothing it shows changed."""
    path = out_dir / FILE_NAME
    key = key_of("pdf", paper_of(resolved, options), resolved, parts)
    store = cache or Cache(None)
    path.write_bytes(store.data("pdf", key, lambda: render(resolved, parts, options)))
    return [path]
