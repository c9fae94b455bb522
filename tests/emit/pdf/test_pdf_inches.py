"""A spec written in inches gets its lengths in inches on every page a maker cuts from:
whole numbers and their fractions kept on one line, the cut list's notes, the side view's
callouts and the templates' captions.

1 in = 25.4 mm exactly (international yard and pound agreement, 1959): the expected
fractions below are the millimetres the pages give, divided by 25.4 and rounded to the
spec's 1/32 in.
"""

from __future__ import annotations

import io
import re
from pathlib import Path

import pytest
from pypdf import PdfReader

from compiler.build import build
from compiler.emit.pdf.document import NO_BREAK, wrap
from compiler.emit.pdf.style import FONT, register_fonts
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
