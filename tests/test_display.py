"""Lengths for inch users: fractions of the spec's precision, everywhere a maker reads them
(build sheet, cut list, messages), and sensitivities per 1/16 in.

References: 1 in = 25.4 mm exactly (international yard and pound agreement, 1959); a rule
graduated in 32nds and 16ths of an inch (common practice in workshops that work in inches).
"""

from __future__ import annotations

import csv
import io
from fractions import Fraction
from pathlib import Path

import pytest
from pypdf import PdfReader

from compiler.build import build
from compiler.cli import main
from compiler.display import Inches, in_inches, inches_for
from compiler.options import Overrides

ROOT = Path(__file__).resolve().parents[1]
INCH = Fraction(254, 10)  # mm, exactly


@pytest.mark.parametrize(("mm", "precision", "shown", "exact_in"), [
    # 136.5 mm = 5.3740... in; in 32nds 171.97 -> 172/32 = 5 3/8 in = 136.525 mm
    (Fraction("136.5"), Fraction(1, 32), "5 3/8", Fraction(43, 8)),
    # 1 ft exactly
    (Fraction("304.8"), Fraction(1, 32), "12", Fraction(12)),
    # 3/16 in = 4.7625 mm, shown as a proper fraction
    (Fraction("4.7625"), Fraction(1, 16), "3/16", Fraction(3, 16)),
    # 3.58 mm = 0.1409 in: nearer 5/32 (3.97 mm) than 1/8 (3.175 mm)? 4.51 32nds -> 5/32
    (Fraction("3.58"), Fraction(1, 32), "5/32", Fraction(5, 32)),
    # a 64th: 25.4 / 64 = 0.396875 mm
    (Fraction("100.0"), Fraction(1, 64), "3 15/16", Fraction(252, 64)),
    (Fraction("-31.75"), Fraction(1, 32), "-1 1/4", Fraction(-5, 4)),
])
def test_fractions_of_the_precision(mm: Fraction, precision: Fraction, shown: str,
                                    exact_in: Fraction) -> None:
    inches = inches_for("in", float(precision * INCH / 1000))
    assert inches == Inches(precision)
    assert inches.text(float(mm / 1000)) == shown
    assert inches.exact(float(mm / 1000)) == exact_in
    # the fraction is within half a step of the length
    assert abs(exact_in * INCH - mm) <= precision * INCH / 2


def test_a_kerf_below_half_a_step_is_not_zero() -> None:
    inches = inches_for("in", 0.0254 / 32)
    assert inches is not None
    assert inches.text(0.00015) == "0.006"  # 0.15 mm = 0.0059 in
    assert inches.text(0.0) == "0"


def test_decimal_and_metric_precisions() -> None:
    assert inches_for("mm", 0.0001) is None
    thou = inches_for("in", 0.0000254)  # 0.001 in
    assert thou is not None and thou.text(0.1365) == "5.374"
    metric = inches_for("ft", 0.0001)  # 0.1 mm in a spec in feet: to 0.001 in
    assert metric is not None and metric.text(0.1365) == "5.374"


def test_sensitivity_per_sixteenth() -> None:
    inches = inches_for("in", 0.0254 / 32)
    assert inches is not None
    # 1/16 in = 1.5875 mm: -6.0 cents per mm is -9.525 cents per 1/16 in
    assert inches.per_step(-6.0) == pytest.approx(-9.525, abs=1e-12)


def test_messages_in_inches() -> None:
    inches = inches_for("in", 0.0254 / 32)
    assert in_inches("the cut-up (28.575 mm) reaches the top", inches) == \
        "the cut-up (1 1/8 in = 28.575 mm) reaches the top"
    assert in_inches("part (12.7 × 25.4 mm with the kerf)", inches) == \
        "part (1/2 × 1 in = 12.7 × 25.4 mm with the kerf)"
    assert in_inches("cents per mm", inches) == "cents per mm"
    assert in_inches("the cut-up (28.575 mm)", None) == "the cut-up (28.575 mm)"


def _inch_spec(tmp_path: Path) -> Path:
    spec = tmp_path / "inch.yaml"
    spec.write_text((ROOT / "specs_examples" / "blown-stopped-tubes.yaml").read_text()
                    .replace("units: mm", "units: in").replace("precision: 0.1 mm", ""))
    return spec


def test_build_sheet_and_cut_list_in_fractions(tmp_path: Path) -> None:
    spec = _inch_spec(tmp_path)
    folder = build(spec.read_bytes(), str(spec), tmp_path / "out", Overrides())
    rows = list(csv.DictReader(io.StringIO((folder / "cut-list.csv").read_text())))
    tube = next(r for r in rows if r["what"] == "tube")
    length = Fraction(tube["length_mm"]) / INCH
    whole, _, part = tube["length_in"].partition(" ")
    shown = Fraction(whole) + (Fraction(part) if part else 0)
    assert 32 % shown.denominator == 0  # 32nds, the default precision of an inch spec
    # the resolver cut the tube to a 32nd: the mm value is that fraction to 0.01 mm
    assert float(shown) == pytest.approx(float(length), abs=0.006 / 25.4)
    text = " ".join(" ".join(p.extract_text().split())
                    for p in PdfReader(folder / "build-sheet.pdf").pages)
    assert "inches beside them to the nearest 1/32 in" in text
    assert f"{tube['length_in']} in" in text
    assert "cents per 1/16 in longer" in text or "(/ 1/16 in)" in text


def test_an_inch_specs_error_names_inches(tmp_path: Path,
                                          capsys: pytest.CaptureFixture[str]) -> None:
    """A holder plate taller than its sheet (a geometry error): the sizes in inches too."""
    spec = _inch_spec(tmp_path)
    text = spec.read_text()
    assert "margin: 15 mm" in text
    spec.write_text(text.replace("margin: 15 mm", "margin: 200 mm"))
    code = main(["build", str(spec), "-o", str(tmp_path / "out")])
    err = capsys.readouterr().err
    assert code == 1, err
    assert " in = " in err and " mm" in err


def test_every_length_in_an_inch_ranks_cut_list_notes_is_in_inches(tmp_path: Path) -> None:
    # Rolled metal pipes in inches: the body's roll diameter and seam strip, the foot's toe,
    # top and pattern radii, the cap's rim. In cut-list.csv each length in mm in a note has
    # its fraction of an inch before it ("2 1/8 in = 54.0 mm").
    import re

    spec = tmp_path / "rank.yaml"
    spec.write_text((ROOT / "tests" / "cases" / "organ-ranks-inch" / "spec.yaml").read_text())
    folder = build(spec.read_bytes(), str(spec), tmp_path / "out", Overrides())
    rows = list(csv.DictReader(io.StringIO((folder / "cut-list.csv").read_text())))
    notes = [r["note"] for r in rows if r["what"] in ("body", "foot", "cap")]
    assert any("pattern radii" in n for n in notes)
    for note in notes:
        for match in re.finditer(r"(\d+(?:\.\d+)?) mm", note):
            assert note[:match.start()].endswith(" in = "), note


def test_trim_advice_of_an_inch_spec_is_in_inches() -> None:
    # A measured pipe of a rank written in inches: the advice the maker follows at the bench
    # ("cut ... off the top", "push the stopper ... in") gives the fraction of an inch, in
    # the resolve table and on the build sheet, beside the millimetres.
    from compiler.emit.pdf import trims
    from compiler.emit.pdf.document import Paragraph
    from compiler.emit.table import render
    from compiler.resolve.resolver import resolve
    from compiler.spec import load_spec

    spec = ROOT / "tests" / "cases" / "organ-ranks-inch" / "spec.yaml"
    resolved = resolve(load_spec(spec.read_bytes(), "spec.yaml"))
    advice = [t.advice for g in resolved.groups for t in g.trims]
    assert advice and all(" mm" in a for a in advice)
    table = render(resolved).split("trim advice", 1)[1]
    assert "change in" in table
    assert all(in_inches(a, inches_for("in", 0.0254 / 32)) in table for a in advice)
    words = [b.text for b in trims.blocks(resolved) if isinstance(b, Paragraph)]
    assert words and all(" in = " in w for w in words)
