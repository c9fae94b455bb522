"""Full-size templates: the calibration bars measure true when rendered, tiles overlap as
stated and cover the part, and every template page carries its label, bars and note.

Rendering uses poppler's ``pdftoppm`` (an independent PDF rasteriser); its grey-scale PGM
output is read with numpy.
"""

from __future__ import annotations

import shutil
import subprocess
import tempfile
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from compiler.emit.pdf import template_plan, templates
from compiler.emit.pdf.style import frame_for
from compiler.geometry.model import Parts
from compiler.ir import Resolved

needs_poppler = pytest.mark.skipif(shutil.which("pdftoppm") is None,
                                   reason="poppler's pdftoppm is not installed "
                                          "(.ci/run installs poppler-utils)")


def render_page(data: bytes, number: int, dpi: int) -> np.ndarray:
    """Page ``number`` (1-based) as a grey-scale array, 0 black to 255 white."""
    with tempfile.TemporaryDirectory() as tmp:
        pdf = Path(tmp) / "sheet.pdf"
        pdf.write_bytes(data)
        subprocess.run(["pdftoppm", "-r", str(dpi), "-f", str(number), "-l", str(number),
                        "-gray", "-singlefile", str(pdf), str(Path(tmp) / "page")],
                       check=True, capture_output=True)
        raw = (Path(tmp) / "page.pgm").read_bytes()
    magic, width, height, depth, pixels = raw.split(maxsplit=4)
    assert magic == b"P5" and depth == b"255"
    return np.frombuffer(pixels, dtype=np.uint8).reshape(int(height), int(width))


def page_of(pages: list[str], text: str) -> int:
    return next(i for i, t in enumerate(pages, start=1) if text in t)


def bar_lengths_mm(image: np.ndarray, dpi: int) -> list[float]:
    """Lengths of the solid horizontal bars: a dark run repeated on 15 or more rows."""
    dark = image < 128
    runs: list[tuple[int, int]] = []  # (row, run length) of the longest dark run per row
    for r, row in enumerate(dark):
        edges = np.flatnonzero(np.diff(np.concatenate(([0], row.astype(np.int8), [0]))))
        lengths = edges[1::2] - edges[::2]
        if len(lengths):
            runs.append((r, int(lengths.max())))
    bars: list[float] = []
    block: list[int] = []
    for (r, n), nxt in zip(runs, runs[1:] + [(-1, 0)], strict=True):
        block.append(n)
        if nxt[0] != r + 1 or abs(nxt[1] - n) > 3:
            if len(block) >= 15 and max(block) - min(block) <= 3:
                bars.append(float(np.median(block)) * 25.4 / dpi)
            block = []
    return bars


@needs_poppler
def test_calibration_bars_measure_100_mm_and_4_in(small_pdf: bytes,
                                                  small_pages: list[str]) -> None:
    dpi = 300
    number = page_of(small_pages, "Tile 1/1 of 2×1 — duct-flute-d5-drilling")
    bars = bar_lengths_mm(render_page(small_pdf, number, dpi), dpi)
    # 4 in = 101.6 mm exactly (international yard and pound agreement, 1959).
    assert any(abs(b - 100.0) <= 0.5 for b in bars), bars
    assert any(abs(b - 101.6) <= 0.5 for b in bars), bars


@needs_poppler
def test_neighbouring_tiles_show_the_same_overlap_strip(small_pdf: bytes,
                                                        small_pages: list[str]) -> None:
    """The strip at the right of tile 1/1 is the strip at the left of tile 1/2, pixel for
    pixel (254 dpi puts millimetres on whole pixels), and not a strip shifted by 2 mm."""
    dpi, px = 254, 10  # pixels per millimetre
    frame = frame_for("a4")
    left_mm = frame.left / (72 / 25.4)
    top_mm = 297.0 - (frame.top / (72 / 25.4)) + template_plan.TITLE_BAND / (72 / 25.4)
    window_w, window_h = template_plan.window_size(frame)
    first = render_page(small_pdf, page_of(small_pages, "Tile 1/1 of 1×2 — principal-4-C3-foot"),
                        dpi)
    second = render_page(small_pdf, page_of(small_pages,
                                            "Tile 1/2 of 1×2 — principal-4-C3-foot"), dpi)
    y0, y1 = round((top_mm + 1.5) * px), round((top_mm + window_h - 1.5) * px)
    ov = template_plan.OVERLAP_MM
    a0 = round((left_mm + window_w - ov + 1.5) * px)
    b0 = round((left_mm + 1.5) * px)
    width = round((ov - 3.0) * px)
    strip_a = first[y0:y1, a0:a0 + width].astype(int)
    strip_b = second[y0:y1, b0:b0 + width].astype(int)
    assert (strip_a < 128).sum() > 50, "the strip should cross the part and the crosshairs"
    same = np.abs(strip_a - strip_b).mean()
    shifted = np.abs(first[y0:y1, a0 - 20:a0 - 20 + width].astype(int) - strip_b).mean()
    assert same < 1.0, same
    assert shifted > 3 * max(same, 0.5), (same, shifted)


@settings(max_examples=200, deadline=None)
@given(st.floats(1.0, 1500.0), st.floats(1.0, 1500.0), st.sampled_from(["a4", "letter"]))
def test_tiles_overlap_by_the_stated_margin_and_cover_the_part(w: float, h: float,
                                                               paper: str) -> None:
    ww, wh = template_plan.window_size(frame_for(paper))
    t = template_plan.tiling(w, h, ww, wh)
    ov = template_plan.OVERLAP_MM
    for r in range(t.rows):
        for c in range(t.cols):
            x0, y0, x1, y1 = t.window(r, c)
            assert abs((x1 - x0) - ww) < 1e-9 and abs((y1 - y0) - wh) < 1e-9
            if c + 1 < t.cols:
                assert abs(x1 - t.window(r, c + 1)[0] - ov) < 1e-9
            if r + 1 < t.rows:
                assert abs(t.window(r + 1, c)[3] - y0 - ov) < 1e-9
    x0, _, _, y1 = t.window(0, 0)
    _, y0, x1, _ = t.window(t.rows - 1, t.cols - 1)
    inset = template_plan.INSET_MM
    assert x0 <= -inset + 1e-9 and x1 >= w + inset - 1e-9
    assert y0 <= -inset + 1e-9 and y1 >= h + inset - 1e-9
    # Fewest tiles: one column (or row) fewer would not reach across.
    assert ww + (t.cols - 2) * (ww - ov) < w + 2 * inset or t.cols == 1
    assert wh + (t.rows - 2) * (wh - ov) < h + 2 * inset or t.rows == 1


def test_every_template_page_has_label_bars_and_note(small: tuple[Resolved, Parts],
                                                     small_pages: list[str]) -> None:
    _, parts = small
    pages = [t for t in small_pages if t.splitlines()[1].startswith("Templates")]
    assert pages
    for text in pages:
        assert "100 mm" in text and "4 in" in text
        assert "Print at 100 % (actual size); check this bar before cutting" in text
    chosen, _ = template_plan.choose(parts, frame_for("a4"))
    drilling = next(c for c in chosen if c.part.kind == "template")
    for r in range(drilling.tiles.rows):
        for c in range(drilling.tiles.cols):
            label = (f"Tile {r + 1}/{c + 1} of {drilling.tiles.rows}×{drilling.tiles.cols} — "
                     f"{drilling.part.id}")
            assert sum(label in t for t in pages) == 1, label
    if drilling.tiles.rows * drilling.tiles.cols > 1:
        assert any(f"Assembly map — {drilling.part.id}" in t for t in pages)


def test_template_choice(small: tuple[Resolved, Parts]) -> None:
    """Every drilling template; shaped outlines (not plain rectangles) up to the tile
    limit; the long body patterns left to the DXF files."""
    _, parts = small
    chosen, left_out = template_plan.choose(parts, frame_for("a4"))
    ids = {c.part.id for c in chosen}
    assert "duct-flute-d5-drilling" in ids
    assert {"principal-4-C3-languid", "principal-4-C3-foot", "tubes-holder"} <= ids
    assert not any(i.endswith(("-body", "-front", "-back", "-side", "-block")) for i in ids)
    # the three rolled bodies need more than OUTLINE_TILES tiles
    assert sorted(left_out) == [f"principal-4-{n}-body" for n in ("C#3", "C3", "D3")]


def test_printed_labels_keep_to_the_box_kept_free_for_them() -> None:
    # The geometry stage keeps each label's box (its estimated width × its height) clear of
    # the part's lines. The printed font's real advance widths (reportlab's metrics of the
    # embedded TrueType font, an independent measure) are wider than that estimate for
    # digits and capitals; printed wider, a label runs over the marks beside it. Every label
    # of the example whistle's and flute's templates and jigs, as drawn, fits its box.
    from reportlab.pdfbase.pdfmetrics import stringWidth
    from reportlab.pdfgen.pathobject import PDFPathObject

    from compiler.build import compile_text
    from compiler.emit.pdf.style import FONT
    from compiler.geometry.model import Text
    from compiler.geometry.paths import text_width
    from compiler.options import Overrides

    class Recorder:
        """The canvas calls the template drawing makes; text widths as drawn."""

        def __init__(self) -> None:
            self.scale_x, self.size, self.widths = 1.0, 0.0, []

        def saveState(self) -> None:  # noqa: N802 (reportlab's names)
            self.scale_x = 1.0

        def scale(self, x: float, y: float) -> None:
            self.scale_x *= x

        def setFont(self, name: str, size: float) -> None:  # noqa: N802
            self.size = size

        def drawCentredString(self, x: float, y: float, text: str) -> None:  # noqa: N802
            self.widths.append(stringWidth(text, FONT, self.size) * self.scale_x)

        def beginPath(self):  # type: ignore[no-untyped-def]  # noqa: N802
            return PDFPathObject()

        def __getattr__(self, name: str):  # type: ignore[no-untyped-def]
            return lambda *args, **kwargs: None

    root = Path(__file__).resolve().parents[3] / "specs_examples"
    checked = 0
    for name in ("duct-flute-d.yaml", "side-blown-flute-c.yaml"):
        compiled = compile_text((root / name).read_text(encoding="utf-8"), name,
                                Overrides())
        for part in compiled.parts.parts:
            if part.kind not in ("template", "sheet", "board"):
                continue
            rec = Recorder()
            templates._entities(rec, part)  # type: ignore[arg-type]
            labels = [e for e in part.entities if isinstance(e, Text)]
            assert len(rec.widths) == len(labels)
            for e, width in zip(labels, rec.widths, strict=True):
                assert width <= text_width(e.text, e.height) + 1e-6, (part.id, e.text)
                checked += 1
    assert checked > 20


def test_small_templates_fill_the_last_page_before_parts_are_left_out() -> None:
    """The house-organ rank has more shaped outlines than the template pages hold. Its
    small languids (F5 to C6, about 20-26 mm across) fit on the last shared page beside the
    others; a part is left to the DXF files only when it would need a page beyond the
    budget, and the list of left-out parts is exactly the shaped parts not printed."""
    from compiler.build import compile_text
    from compiler.options import Overrides

    name = "house-organ-principal.yaml"
    spec = Path(__file__).resolve().parents[3] / "specs_examples" / name
    parts = compile_text(spec.read_bytes(), name, Overrides()).parts
    frame = frame_for("a4")
    chosen, left_out = template_plan.choose(parts, frame)
    printed = [i for ch in chosen for i in ch.used_by]
    high = ("F5", "Fs5", "G5", "Gs5", "A5", "Bb5", "B5", "C6")
    assert {f"principal-4-{n}-languid" for n in high} <= set(printed)
    singles = [ch for ch in chosen if ch.tiles.rows * ch.tiles.cols == 1]
    shared = template_plan.share_pages(singles, frame)
    assert len(shared) <= template_plan.OUTLINE_PAGES
    # every shaped (not plain rectangular) sheet part is printed or listed, once
    shaped = [p.id for p in parts.parts if p.kind in ("sheet", "board")
              and not template_plan.plain_rectangle(p)]
    assert sorted(printed + left_out) == sorted(shaped)
    # nothing left out would have fitted: each one-page outline not printed needs a page
    # more than the budget
    window_w, window_h = template_plan.window_size(frame)
    left = set(left_out)
    for part in parts.parts:
        tiles = template_plan.tiling(part.width_mm, part.height_mm, window_w, window_h)
        if part.id in left and tiles.rows * tiles.cols == 1:
            extra = template_plan.Choice(part, tiles, (part.id,))
            assert len(template_plan.share_pages([*singles, extra], frame)) > \
                template_plan.OUTLINE_PAGES, part.id


def test_tile_numbers_on_an_assembly_map_keep_clear_of_the_part() -> None:
    """The holder plate of the tube-set example spans three tiles; its row of openings runs
    through every tile's centre, where the numbers used to be printed over the openings.
    Each number (as large as the map prints it) now sits clear of every line and label of
    the part and of the other numbers, inside its own tile."""
    from shapely.geometry import box

    from compiler.build import compile_text
    from compiler.options import Overrides

    spec = Path(__file__).resolve().parents[3] / "specs_examples" / "blown-stopped-tubes.yaml"
    parts = compile_text(spec.read_bytes(), str(spec), Overrides()).parts
    chosen, _ = template_plan.choose(parts, frame_for("a4"))
    (holder,) = [ch for ch in chosen if ch.part.name == "holder"]
    t = holder.tiles
    assert t.rows * t.cols == 3
    lines = templates._lines_of(holder.part)
    scale = 1.0  # one point per mm: numbers 10 mm tall, as on an A4 map of this plate
    placed = []
    for r in range(t.rows):
        for k in range(t.cols):
            a, b, c, d = t.window(r, k)
            centre = box((a + c) / 2 - 10, (b + d) / 2 - 5, (a + c) / 2 + 10, (b + d) / 2 + 5)
            assert any(centre.intersects(line) for line in lines)  # the old place
            spot = templates._clear_spot((a, b, c, d), 20.0 / scale, 10.0 / scale,
                                         4.0 / scale, lines + placed)
            assert not any(spot.intersects(o) for o in lines + placed)
            assert box(a, b, c, d).contains(spot)
            placed.append(spot)
