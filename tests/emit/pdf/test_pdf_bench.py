"""The build sheet a maker works from: nothing cut short, the lead caution, an embedded font
that shows Polish and Czech names and the foot mark, actual-size printing, only the settings
that apply, no folders of the machine in any output."""

from __future__ import annotations

import dataclasses
import io
import json
import math
from collections.abc import Callable
from pathlib import Path
from typing import Any

from pypdf import PdfReader

from compiler.build import build
from compiler.cache import Cache
from compiler.emit.pdf import render
from compiler.emit.pdf.template_plan import choose
from compiler.geometry.model import Parts
from compiler.ir import Resolved
from compiler.options import BuildOptions, Overrides
from compiler.resolve.resolver import slug

ROOT = Path(__file__).resolve().parents[3]
EXAMPLES = ROOT / "specs_examples"


def _texts(data: bytes) -> list[str]:
    return [page.extract_text() for page in PdfReader(io.BytesIO(data)).pages]


def test_no_cell_is_cut_short_in_any_example(tmp_path: Path) -> None:
    """Every example's build sheet, read back: no "..." anywhere (cells, headers, captions
    and notes wrap instead), and the bench notes that were cut short before are whole."""
    whole = []
    for spec in sorted(EXAMPLES.glob("*.yaml")):
        if spec.name.startswith("practice-organ"):
            continue  # the same kinds of pages as the ranks below, ten times over
        folder = build(spec.read_bytes(), str(spec), tmp_path, Overrides())
        text = "\n".join(_texts((folder / "build-sheet.pdf").read_bytes()))
        assert "..." not in text and "…" not in text, spec.name
        whole.append(" ".join(text.split()))
    wood = next(t for t in whole if "Hollins Mill" in t)
    # cut short as "marks: the block's top (lower lip) and the stopper face or the spe..."
    assert "marks: the block's top (lower lip) and the stopper face or the speaking length" \
        in wood
    assert "glue upright on the stopper's top, across its width" in wood


def test_lead_caution_names_laser_and_plasma_and_the_cold_ways(small_pages: list[str]) -> None:
    text = " ".join(" ".join(t.split()) for t in small_pages if "\nCautions\n" in t)
    assert "NEVER cut it with a laser or a plasma cutter (lead fume): use shears, a knife or a " \
        "waterjet" in text
    assert "Never cut spotted metal, organ metal or any other lead-bearing sheet with a laser " \
        "or a plasma cutter" in text
    # the other cautions stay
    for words in ("Never cut or engrave PVC, vinyl", "Wood and MDF dust",
                  "print at 100 %", "local regulations"):
        assert words.lower() in text.lower(), words


def test_embedded_dejavu_font_and_print_scaling_none(small_pdf: bytes) -> None:
    reader = PdfReader(io.BytesIO(small_pdf))
    # PDF 32000-1:2008, 12.2 table 150: PrintScaling /None asks for actual size
    assert reader.trailer["/Root"]["/ViewerPreferences"]["/PrintScaling"] == "/None"
    fonts = set()
    for page in reader.pages:
        for ref in page["/Resources"]["/Font"].values():
            font = ref.get_object()
            fonts.add(str(font["/BaseFont"]).split("+")[-1])
            # embedded: a TrueType subset's descriptor carries the font program
            assert "/FontFile2" in font["/FontDescriptor"]
    assert fonts == {"DejaVuSans", "DejaVuSans-Bold"}


def test_polish_and_czech_names_and_the_foot_mark_are_shown(
        small: tuple[Resolved, Parts], texts_of: Callable[..., list[str]],
        tmp_path: Path) -> None:
    resolved, parts = small
    name = "Łódź cathedral, Dvořák 8′ and Kraków, Ústí"
    renamed = dataclasses.replace(resolved, instrument=name)
    pages = texts_of(renamed, parts)
    assert pages[0].splitlines()[0] == name
    assert name in pages[0]
    # same bytes every time, also with the page cache: characters outside the fixed
    # repertoire (here none) or inside it keep their codes
    once = render(renamed, parts, BuildOptions())
    assert once == render(renamed, parts, BuildOptions(), Cache(tmp_path))
    assert once == render(renamed, parts, BuildOptions(), Cache(tmp_path))


def test_a_character_outside_the_fixed_codes_is_not_replayed(
        small: tuple[Resolved, Parts], tmp_path: Path) -> None:
    """A name with a character that gets its code on first use (here a Greek letter and a
    Cyrillic one): pages are drawn, not replayed, and the bytes stay those of a cold render."""
    resolved, parts = small
    odd = dataclasses.replace(resolved, instrument="Φ-Orgel Ж")
    cold = render(odd, parts, BuildOptions())
    assert cold == render(odd, parts, BuildOptions(), Cache(tmp_path))
    assert not list(tmp_path.glob("pdf-page-*"))
    assert "Φ-Orgel Ж" in _texts(cold)[0]


def test_slug_transliterates() -> None:
    assert slug("Große Orgel, Łódź") == "grosse-orgel-lodz"
    assert slug("Dvořák, Kraków, Ústí nad Labem") == "dvorak-krakow-usti-nad-labem"
    assert slug("Ærø Œuvre") == "aero-oeuvre"
    # Cyrillic after ICAO Doc 9303 Part 3 (from memory: Щ SHCH, Й I, Ё E, Х KH, Ґ G) and
    # Greek after ELOT 743 (from memory: Ψ PS, Η I, Θ TH, Χ CH).
    assert slug("Орган Щука, Йошкар-Ола") == "organ-shchuka-ioshkar-ola"
    assert slug("Ёлка Хор Ґанок") == "elka-khor-ganok"
    assert slug("Ψάλτης Θεσσαλονίκη Χορός") == "psaltis-thessaloniki-choros"


def test_slug_of_a_script_it_cannot_spell_is_still_unique() -> None:
    # Two names in a script the table has no letters for must not share a folder (a build
    # into the other's folder would replace its files); the same name always gives the same.
    first, second = slug("竹笛"), slug("洞簫")
    assert first != second and first == slug("竹笛")
    assert first.startswith("instrument-") and len(first) == len("instrument-") + 8
    assert slug("竹笛 8′").startswith("8-")


def test_flute_cover_shows_no_sheet_or_seam_settings(tmp_path: Path) -> None:
    spec = EXAMPLES / "duct-flute-d.yaml"
    folder = build(spec.read_bytes(), str(spec), tmp_path, Overrides())
    cover = _texts((folder / "build-sheet.pdf").read_bytes())[0]
    assert "seam allowance" not in cover
    assert "tuning allowance" not in cover  # flutes are cut to their solved length
    assert "kerf, spacing" in cover  # the tube is sawn, its jig nested on a sheet
    assert "sheet size" in cover
    # An instrument as measured is not cut to a length: no tuning allowance.
    survey = EXAMPLES / "measured-reed-pipe-and-whistle.yaml"
    folder = build(survey.read_bytes(), str(survey), tmp_path, Overrides())
    cover = _texts((folder / "build-sheet.pdf").read_bytes())[0]
    assert "tuning allowance" not in cover and "seam allowance" not in cover
    organ = EXAMPLES / "house-organ-principal.yaml"
    folder = build(organ.read_bytes(), str(organ), tmp_path, Overrides())
    cover = _texts((folder / "build-sheet.pdf").read_bytes())[0]
    for words in ("sheet size", "seam allowance", "tuning allowance"):
        assert words in cover


def test_tube_cover_shows_the_saw_kerf_of_its_stock_plan(tmp_path: Path) -> None:
    """Tubes cut from stock lengths: the cover gives the saw's kerf the stock plan counts
    between pieces (``tube_kerf``, 1 mm in the example), not only the laser's 0.15 mm."""
    spec = EXAMPLES / "blown-stopped-tubes.yaml"
    folder = build(spec.read_bytes(), str(spec), tmp_path, Overrides())
    lines = _texts((folder / "build-sheet.pdf").read_bytes())[0].splitlines()
    assert lines[lines.index("tube saw kerf") + 1] == "1.00 mm"
    assert lines[lines.index("kerf, spacing") + 1] == "0.15 mm, 5.00 mm"
    # Without the holder nothing is nested: no sheet, no laser kerf; the saw's kerf stays.
    bare = spec.read_text(encoding="utf-8").replace(
        "    holder: {stock: ply-6, spacing: 10 mm, margin: 15 mm, clearance: 0.4 mm}\n", "")
    folder = build(bare.encode(), str(spec), tmp_path / "bare", Overrides())
    cover = _texts((folder / "build-sheet.pdf").read_bytes())[0]
    lines = cover.splitlines()
    assert lines[lines.index("tube saw kerf") + 1] == "1.00 mm"
    assert "sheet size" not in cover and "kerf, spacing" not in cover and "0.15 mm" not in cover


def test_no_absolute_path_in_any_output(tmp_path: Path) -> None:
    """The spec given by its absolute path: resolved.json, the manifest, the PDF's text and
    the CSV name the file only."""
    for name in ("house-organ-principal.yaml", "duct-flute-d.yaml"):
        spec = EXAMPLES / name
        folder = build(spec.read_bytes(), str(spec.resolve()), tmp_path / "out",
                       Overrides())
        for path in folder.rglob("*"):
            if path.suffix in (".json", ".csv", ".dxf"):
                assert str(ROOT) not in path.read_text(encoding="utf-8"), path.name
        resolved = json.loads((folder / "resolved.json").read_text())
        assert resolved["pipes"][0]["source"].startswith(f"{name}:")
        pdf = "\n".join(_texts((folder / "build-sheet.pdf").read_bytes()))
        assert str(ROOT) not in pdf
    assert f"spec {name}:" in pdf  # the flute's pipe page names its line in the spec


def test_left_out_templates_are_listed_by_name(large: tuple[Resolved, Parts],
                                               large_pages: list[str]) -> None:
    from compiler.emit.pdf.style import frame_for

    _, parts = large
    chosen, left_out = choose(parts, frame_for("a4"))
    assert left_out, "a 610-pipe model leaves outlines to the DXF files"
    text = " ".join(" ".join(t.split()) for t in large_pages if "\nTemplates" in t)
    assert f"Not printed here ({len(left_out)} parts)" in text
    for part_id in left_out:
        assert part_id in text.replace(" ", "")


def _bold_sizes(page: Any) -> list[tuple[str, float]]:
    """Each bold text drawn on a page and its size in points (font size × text scale)."""
    found: list[tuple[str, float]] = []

    def seen(text: str, _cm: Any, tm: Any, font: Any, size: float) -> None:
        if text.strip() and font is not None and "Bold" in str(font.get("/BaseFont", "")):
            found.append((text.strip(), size * math.hypot(tm[0], tm[1])))

    page.extract_text(visitor_text=seen)
    return found


def test_table_headers_wrap_instead_of_shrinking_below_8_pt(tmp_path: Path) -> None:
    # "predicted Hz" on a rank's table page printed at 6.25 pt and "temperature" on the
    # cover at 6.75 pt: a header is body text, at least 8 pt (as every text a cut depends on)
    spec = EXAMPLES / "house-organ-principal.yaml"
    folder = build(spec.read_bytes(), str(spec), tmp_path, Overrides())
    reader = PdfReader(io.BytesIO((folder / "build-sheet.pdf").read_bytes()))
    cover, table = reader.pages[0], next(p for p in reader.pages
                                         if "principal-4 (1 of 2)" in p.extract_text())
    sizes = dict(_bold_sizes(cover)) | dict(_bold_sizes(table))
    assert sizes["temperature"] == 8.0 and sizes["predicted"] == 8.0 and sizes["Hz"] == 8.0
    small = [(text, size) for page in reader.pages for text, size in _bold_sizes(page)
             if size < 8.0 - 1e-6]
    assert small == []
