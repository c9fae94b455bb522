"""What the cover, the cut list and the cautions say, and byte-for-byte reproducibility."""

from __future__ import annotations

import dataclasses
import hashlib
import io
import os
import subprocess
import sys
import time
from collections.abc import Callable
from pathlib import Path

from pypdf import PdfReader

from compiler.emit import pdf
from compiler.geometry.model import Parts
from compiler.ir import Resolved, StockItem
from compiler.options import BuildOptions
from compiler.resolve import materials


def test_two_builds_give_the_same_bytes(small: tuple[Resolved, Parts], small_pdf: bytes,
                                        tmp_path: Path) -> None:
    first = pdf.write(*small, BuildOptions(), tmp_path)
    assert [p.name for p in first] == ["build-sheet.pdf"]
    assert first[0].read_bytes() == small_pdf
    assert pdf.render(*small, BuildOptions()) == small_pdf
    # No clock in the file: reportlab's invariant mode writes a fixed date.
    assert f"D:{time.strftime('%Y')}".encode() not in small_pdf
    info = PdfReader(io.BytesIO(small_pdf)).metadata
    assert info is not None and info.title == small[0].instrument


def test_cover_names_spec_environment_tuning_and_calibration(small: tuple[Resolved, Parts],
                                                             small_pages: list[str]) -> None:
    resolved, _ = small
    cover = small_pages[0]
    for text in (resolved.instrument, resolved.spec_file, resolved.spec_sha256,
                 resolved.tuning.temperament, "cramer-1993", "342.210 m/s", "349.370 m/s",
                 "calibrated", "not calibrated", "mouth correction scale", "1.0420",
                 "A2 +0.81", "C3 -0.63"):
        assert text in cover, text
    for group in resolved.groups:
        assert group.id in cover
    for note in resolved.warnings:
        assert note.message in cover.replace("\n", " ")


def test_cut_list_by_stock_with_sheets_and_utilisation(small: tuple[Resolved, Parts],
                                                       small_pages: list[str]) -> None:
    _, parts = small
    text = "\n".join(t for t in small_pages if t.splitlines()[1] == "Cut list")
    for sheet in parts.sheets:
        assert sheet.id in text
        assert f"{sheet.utilisation * 100:.1f} %" in text
    for cut in parts.tube_cuts:
        assert cut.pipe_id in text and f"{cut.length_mm:.2f}" in text
    for part in parts.parts:
        if part.kind in ("sheet", "board"):
            # length × width, as everywhere; these hand-made parts name no length
            # direction, so the longer side comes first
            length, width = max(part.width_mm, part.height_mm), min(part.width_mm,
                                                                   part.height_mm)
            assert f"{length:.2f} × {width:.2f}" in text.replace("\n", " "), part.id
    assert "2× 768.81 × 75.00" in text.replace("\n", " ")  # the wooden pipe's two sides


def cautions(pages: list[str]) -> str:
    return " ".join(t for t in pages if t.splitlines()[1] == "Cautions").replace("\n", " ")


def test_cautions_cover_the_listed_hazards(small_pages: list[str]) -> None:
    text = cautions(small_pages)
    for words in ("PVC", "vinyl", "laser", "chlorine", "lead", "MDF", "dust", "flux",
                  "fumes", "safety glasses", "hearing protection", "calibration",
                  "100 mm", "local", "rules of the shop"):
        assert words in text, words
    # The build uses spotted metal: its own boxed warning names it.
    assert "This build uses spotted-metal" in text
    assert "This build uses pvc" not in text


def test_pvc_in_the_stock_gets_the_strong_warning(small: tuple[Resolved, Parts],
                                                  texts_of: Callable[..., list[str]]) -> None:
    resolved, parts = small
    pvc = StockItem("pvc-40", "tube", "PVC", 0.002, 0.040, 0.036, 2.0, None)
    stock = resolved.stock + (pvc,)
    text = cautions(texts_of(dataclasses.replace(
        resolved, stock=stock, materials=materials.used(stock, resolved.pipes,
                                                        resolved.groups)), parts))
    assert "This build uses pvc. NEVER cut or engrave it with a laser" in text


def test_same_bytes_whatever_the_hash_seed(small_pdf: bytes) -> None:
    """Set and dict order must not leak into the file: render in fresh interpreters with
    different hash seeds."""
    script = ("import hashlib, sys; sys.path[:0] = [sys.argv[1], sys.argv[2]]; "
              "import conftest as c; r = c.small_resolved(); "
              "print(hashlib.sha256(c.render_pdf(r, c.small_parts(r))).hexdigest())")
    here = Path(__file__).resolve().parent
    root = here.parents[2]
    digests = set()
    for seed in ("1", "2"):
        env = {**os.environ, "PYTHONHASHSEED": seed}
        done = subprocess.run([sys.executable, "-c", script, str(here), str(root)], env=env,
                              capture_output=True, text=True, check=True)
        digests.add(done.stdout.strip())
    assert digests == {hashlib.sha256(small_pdf).hexdigest()}
