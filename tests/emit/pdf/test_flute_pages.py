"""A flute's own pages: the duct block at full size (both views named and dimensioned with the
resolved head's numbers) and the cover's summary of both registers."""

from __future__ import annotations

import io
from pathlib import Path

from pypdf import PdfReader

from compiler.build import compile_text
from compiler.emit import pdf
from compiler.options import Overrides

EXAMPLES = Path(__file__).resolve().parents[3] / "specs_examples"


def _pages(name: str) -> tuple[list[str], object]:
    spec = EXAMPLES / name
    compiled = compile_text(spec.read_bytes(), str(spec), Overrides())
    data = pdf.render(compiled.resolved, compiled.parts, compiled.options)
    return [p.extract_text() for p in PdfReader(io.BytesIO(data)).pages], compiled.resolved


def test_duct_block_page_names_and_dimensions_both_views() -> None:
    pages, resolved = _pages("duct-flute-d.yaml")
    head = resolved.pipes[0].head  # type: ignore[attr-defined]
    (page,) = [p for p in pages if "Duct block:" in p]
    length = (head.labium_from_top_m - head.window_length_m) * 1000
    bore = resolved.pipes[0].inside_diameter_m * 1000  # type: ignore[attr-defined]
    for words in ("SIDE VIEW", "END VIEW", f"{length:.1f} long", f"{bore:.1f} bore",
                  f"ø {bore:.1f}", f"{head.duct_height_m * 1000:.2f} duct",
                  f"{head.duct_height_m * 1000:.2f} flat", "100 mm", "4 in"):
        assert words in page, words


def test_cover_summary_gives_both_registers_apart() -> None:
    pages, resolved = _pages("side-blown-flute-c.yaml")
    cover = pages[0]
    assert "1st register" in cover and "2nd register" in cover
    fingerings = resolved.pipes[0].fingerings  # type: ignore[attr-defined]
    for register in (1, 2):
        worst = max((f.error_cents for f in fingerings if f.register == register), key=abs)
        assert f"{worst:+.2f}" in cover
