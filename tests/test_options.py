"""The command line's choices are merged with the spec's fabrication settings once, into the
frozen options every stage and backend receives."""

from __future__ import annotations

from dataclasses import replace
from pathlib import Path

import ezdxf
from pypdf import PdfReader

from compiler.build import build, compile_text
from compiler.ir import FabricationReport
from compiler.options import BuildOptions, Overrides

ROOT = Path(__file__).resolve().parents[1]
TUBES = ROOT / "specs_examples" / "blown-stopped-tubes.yaml"
FABRICATION = FabricationReport(1.2, 0.6, 0.0002, 0.005, 0.0001, 0.008, "3 %", "a4", "r2010",
                                False, "mm")


def test_the_command_line_wins_else_the_spec() -> None:
    spec = replace(FABRICATION, paper="letter", dxf_version="r12", part_files=True)
    assert Overrides().settle(spec) == BuildOptions("letter", "r12", True, False)
    assert Overrides("a4", "r2010", False, True).settle(spec) == BuildOptions(
        "a4", "r2010", False, True)
    # the command line's words in any case
    assert Overrides(paper="LETTER", dxf_version="R12").settle(FABRICATION) == \
        BuildOptions("letter", "r12", False, False)


def test_compiling_settles_them_once(tmp_path: Path) -> None:
    text = TUBES.read_text(encoding="utf-8").replace(
        "  precision: 0.1 mm\n", "  precision: 0.1 mm\n  paper: letter\n  dxf_version: r12\n"
        "  part_files: true\n")
    assert "paper: letter" in text
    compiled = compile_text(text, "tubes.yaml", Overrides())
    assert compiled.options == BuildOptions("letter", "r12", True, False)
    assert compile_text(text, "tubes.yaml", Overrides(part_files=False)).options.part_files \
        is False
    # and the backends follow them: R12 sheets and part files, letter pages
    folder = build(text, "tubes.yaml", tmp_path, Overrides(), use_cache=False)
    assert (folder / "parts").is_dir()
    sheet = next(folder.glob("sheet-*.dxf"))
    assert ezdxf.readfile(sheet).dxfversion == "AC1009"  # R12
    box = PdfReader(folder / "build-sheet.pdf").pages[0].mediabox
    assert (float(box.width), float(box.height)) == (612.0, 792.0)  # ANSI letter, 8.5 x 11 in
