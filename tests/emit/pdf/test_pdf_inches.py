"""A spec written in inches gets its lengths in inches on every page a maker cuts from:
whole numbers and their fractions kept on one line, the cut list's notes, the side view's
callouts and the templates' captions.

1 in = 25.4 mm exactly (international yard and pound agreement, 1959): the expected
fractions below are the millimetres the pages give, divided by 25.4 and rounded to the
spec's 1/32 in.
"""

from __future__ import annotations

import io
import json
import re
from dataclasses import replace
from fractions import Fraction
from pathlib import Path
from typing import Any

import pytest
from pypdf import PdfReader
from reportlab.pdfbase.pdfmetrics import stringWidth

from compiler.build import build
from compiler.emit.pdf.document import NO_BREAK, wrap
from compiler.emit.pdf.pipes import VIEW_WIDTH
from compiler.emit.pdf.style import FONT, frame_for, register_fonts
from compiler.emit.pdf.template_plan import Choice, tiling
from compiler.emit.pdf.templates import INFO_LINES, tile_info
from compiler.geometry.model import Part
from compiler.options import Overrides

ROOT = Path(__file__).resolve().parents[3]
ORGAN_INCH = ROOT / "tests" / "cases" / "organ-ranks-inch" / "spec.yaml"


def _pages(folder: Path) -> list[str]:
    data = (folder / "build-sheet.pdf").read_bytes()
    return [" ".join(page.extract_text().split())
            for page in PdfReader(io.BytesIO(data)).pages]


@pytest.fixture(scope="module")
def organ_pages(tmp_path_factory: pytest.TempPathFactory) -> list[str]:
    out = tmp_path_factory.mktemp("organ-inch")
    return _pages(build(ORGAN_INCH.read_bytes(), str(ORGAN_INCH), out, Overrides()))


def test_a_whole_number_and_its_fraction_stay_on_one_line() -> None:
    register_fonts()
    text = "its face sits 10 27/32 in = 275.4 mm above the lower lip, 1 1/2 in deep"
    ended_between = 0
    for width in range(40, 400, 2):
        lines = wrap(text, FONT, 8.0, float(width))
        assert " ".join(lines).replace(NO_BREAK, " ") == text  # nothing lost
        for first, second in zip(lines, lines[1:], strict=False):
            # a line ending in a whole number and the next opening with a fraction would
            # read as two lengths: "10" and "27/32"
            ended_between += bool(re.search(r"\d$", first) and re.match(r"\d+/\d+", second))
    assert ended_between == 0
    # where "sits 10" would fit a line and "sits 10 27/32" would not, both numbers move on
    lines = wrap("sits 10 27/32 in", FONT, 8.0, 36.0)
    assert lines[0] == "sits" and lines[1].startswith(f"10{NO_BREAK}27/32")


def test_cut_list_notes_of_a_spec_in_inches_give_inches(organ_pages: list[str]) -> None:
    cut_list = " ".join(t for t in organ_pages if "Cut list" in t.split(" page ")[0])
    # the block of stopped-wood-C4: 31.8 mm = 1 1/4 in, 38.1 mm = 1 1/2 in; its stopper's
    # face 275.4 mm = 10 27/32 in above the lower lip (10.843 in)
    assert "plane to 1 1/4 in = 31.8 mm wide and 1 1/2 in = 38.1 mm deep" in cut_list
    assert "its face sits 10 27/32 in = 275.4 mm above the lower lip" in cut_list
    # the rolled body's note and the shared note under the table
    assert "roll to 1 1/4 in = 31.8 mm inside" in cut_list
    assert "rout the windway 1/32 in = 0.79 mm deep" in cut_list
    # no note length left in millimetres only
    assert re.findall(r"(?<!= )\b\d+\.\d mm", cut_list) == []


FLUTE = ROOT / "specs_examples" / "side-blown-flute-c.yaml"
IN_INCHES = (  # the example flute written in inches, its sizes the nearest rule readings
    ("units: mm", "units: in"),
    ("outside_diameter: 22 mm, wall: 0.8 mm, length: 1000 mm",
     "outside_diameter: 7/8 in, wall: 1/32 in, length: 40 in"),
    ("from: 3 mm, to: 12 mm, step: 0.5 mm", "from: 1/8 in, to: 1/2 in, step: 1/64 in"),
    ("precision: 0.1 mm", "precision: 1/32 in"),
    ("diameter: 10 mm, from_top: 40 mm", "diameter: 3/8 in, from_top: 1 5/8 in"),
    ("min_diameter: 4 mm", "min_diameter: 5/32 in"),
    ("max_diameter: 12 mm", "max_diameter: 1/2 in"),
    ("min_web: 4 mm", "min_web: 5/32 in"),
    ("max_span: 40 mm", "max_span: 1 5/8 in"),
)
INCH = r"(\d+(?: \d+/\d+)?|\d+/\d+) in"
"""A rule reading: ``5 15/32 in``, ``3/8 in``, ``12 in``."""


def _rule(text: str) -> float:
    """A rule reading in millimetres (1 in = 25.4 mm)."""
    return float(sum(Fraction(piece) for piece in text.split())) * 25.4


def _reads(reading: str, mm: float) -> bool:
    """``reading`` is ``mm`` rounded to the nearest 1/32 in (half a step, 0.397 mm, plus the
    0.01 mm the pages round millimetres to)."""
    return abs(_rule(reading) - mm) <= 25.4 / 64 + 0.01


@pytest.fixture(scope="module")
def flute_folder(tmp_path_factory: pytest.TempPathFactory) -> Path:
    """The build of the example flute written in inches."""
    text = FLUTE.read_text(encoding="utf-8")
    for metric, inch in IN_INCHES:
        assert metric in text
        text = text.replace(metric, inch)
    spec = tmp_path_factory.mktemp("flute-inch") / "flute-in.yaml"
    spec.write_text(text, encoding="utf-8")
    return build(text.encode(), str(spec), spec.parent / "out", Overrides())


@pytest.fixture(scope="module")
def flute_build(flute_folder: Path) -> tuple[list[str], dict[str, Any]]:
    pipe = json.loads((flute_folder / "resolved.json").read_text(encoding="utf-8"))["pipes"][0]
    return _pages(flute_folder), pipe


def test_side_view_callouts_of_a_flute_in_inches(
        flute_build: tuple[list[str], dict[str, Any]]) -> None:
    pages, pipe = flute_build
    page = next(t for t in pages if "Pipes — flute-c" in t)
    for hole in pipe["holes"]:
        name = f"hole {hole['label']}" if hole["label"].isdigit() else hole["label"]
        size, at = f"{hole['diameter_mm']:.2f}", f"{hole['position_from_top_mm']:.2f}"
        found = re.search(rf"{name} ø {size} \({INCH}\) at {at} \({INCH}\) from top", page)
        assert found, name
        assert _reads(found[1], hole["diameter_mm"]) and \
            _reads(found[2], hole["position_from_top_mm"]), found[0]
    head = pipe["head"]
    cork = re.search(rf"cork {head['cork_mm']:.2f} \({INCH}\) above the embouchure", page)
    mouth = re.search(rf"embouchure ø {head['embouchure_diameter_mm']:.2f} \({INCH}\)", page)
    assert cork and _reads(cork[1], head["cork_mm"])
    # the spec's 3/8 in embouchure, shown as it was given
    assert mouth and mouth[1] == "3/8"
    # the fingering page's note on the cork too
    chart = next(t for t in pages if "Fingerings — flute-c" in t)
    assert re.search(rf"Cork {INCH} = {head['cork_mm']:.1f} mm above", chart)


def test_side_view_labels_stay_in_the_views_box(flute_folder: Path) -> None:
    # The flute's outside diameter, too long for the room between its arrows, was written
    # to the right of them and ran under the page's tables ("ø 22.23 (7/8 i").
    reader = PdfReader(io.BytesIO((flute_folder / "build-sheet.pdf").read_bytes()))
    page = next(p for p in reader.pages if "Pipes — flute-c" in p.extract_text())
    register_fonts()
    placed: list[tuple[str, float]] = []

    def seen(text: str, cm: Any, tm: Any, _font: Any, size: float) -> None:
        if text.strip():  # where the text ends on the page, in points
            placed.append((text.strip(),
                           cm[4] + tm[4] + stringWidth(text.strip(), FONT, size * tm[0])))

    page.extract_text(visitor_text=seen)
    right = frame_for("a4").left + VIEW_WIDTH
    (label,) = [(t, end) for t, end in placed if t.startswith("ø 22.23")]
    assert label[0] == "ø 22.23 (7/8 in)" and label[1] <= right, label


def test_template_captions_of_a_spec_in_inches_give_inches(organ_pages: list[str]) -> None:
    templates = " ".join(t for t in organ_pages if "Templates" in t.split(" page ")[0])
    # the index: the C5 foot's outline 124.39 × 106.32 mm = 4 29/32 × 4 3/16 in
    # (4.897 × 4.186 in)
    assert "open-metal-C5-foot (foot) 124.39 × 106.32 4 29/32 × 4 3/16 in" in templates
    # a small template's caption: its size and its note
    assert "stopped-wood-C4-block (block) 38.10 × 31.75 mm = 1 1/2 × 1 1/4 in at 1:1 glue 4 " \
        "layers, plane to 1 1/4 in = 31.8 mm wide and 1 1/2 in = 38.1 mm deep" in templates
    # a tile's line under its title: the body of C5, 280.19 × 108.24 mm (11.031 × 4.261 in)
    assert "280.19 × 108.24 mm = 11 1/32 × 4 1/4 in (length × width) at 1:1" in templates
    assert "roll to 1 1/4 in = 31.8 mm inside; seam strip 1/4 in = 6.0 mm" in templates


def test_a_tiles_lines_fit_its_band_and_keep_the_note_whole() -> None:
    register_fonts()
    part = Part("flute-jig-front", "flute", "flute", "drilling strip", "paper", "", 0.0,
                "template", 69.12, 326.23, ())
    choice = Choice(part, tiling(69.12, 326.23, 180.0, 200.0), ("flute-jig-front",))
    short = tile_info(replace(choice, part=replace(part, note="wrap around the tube")), None,
                      300.0)
    assert short[0].startswith("326.23 × 69.12 mm (length × width) at 1:1 · shaded strips")
    for words in (10, 40, 80):
        note = " ".join(["open hole 3 to 7.5 mm"] * words)
        lines = tile_info(replace(choice, part=replace(part, note=note)), None, 510.0)
        text = " ".join(lines)
        assert len(lines) <= INFO_LINES
        # the note whole, or sent to the cut list: never cut off in the middle
        assert text.endswith(note) or text.endswith("its note: see the cut list"), text


def test_duct_block_page_of_a_spec_in_inches(tmp_path: Path) -> None:
    # the example whistle with its lengths shown in inches, to 1/64 in
    text = (ROOT / "specs_examples" / "duct-flute-d.yaml").read_text(encoding="utf-8")
    for metric, inch in (("units: mm", "units: in"), ("precision: 0.1 mm", "precision: 1/64 in")):
        assert metric in text
        text = text.replace(metric, inch)
    folder = build(text.encode(), str(tmp_path / "whistle.yaml"), tmp_path / "out", Overrides())
    page = next(t for t in _pages(folder) if "Duct block:" in t)
    pipe = json.loads((folder / "resolved.json").read_text(encoding="utf-8"))["pipes"][0]
    bore, head = pipe["inside_diameter_mm"], pipe["head"]
    length = head["labium_from_top_mm"] - head["window_length_mm"]
    for value, decimals, words in ((bore, 1, "bore"), (length, 1, "long"),
                                   (head["duct_height_mm"], 2, "duct"),
                                   (head["duct_height_mm"], 2, "flat")):
        found = re.search(rf"{value:.{decimals}f} \({INCH}\) {words}", page)
        # within half a 1/64 in step of the millimetres shown (which round to 0.05 mm)
        assert found and abs(_rule(found[1]) - value) <= 25.4 / 128 + 0.05, words
    assert re.search(rf"ø {bore:.1f} \({INCH}\)", page)


def test_a_pipe_page_gives_the_cut_up_sensitivity_per_sixteenth_inch(
        organ_pages: list[str]) -> None:
    # Each flue pipe's page: cents per 1/16 in more cut-up beside cents per mm, 1.5875 times
    # it (1 in = 25.4 mm exactly, international yard and pound agreement, 1959).
    found = [(float(a), float(b)) for page in organ_pages for a, b in re.findall(
        r"cents per mm more cut-up ([+-]\d+\.\d+) cents per 1/16 in more cut-up "
        r"([+-]\d+\.\d+)", page)]
    assert found
    for per_mm, per_step in found:
        assert per_step == pytest.approx(per_mm * 1.5875, abs=0.0011)
