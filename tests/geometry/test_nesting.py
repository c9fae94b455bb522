"""Nesting: parts inside their sheets, apart by the spacing, grain kept, utilisation."""

from __future__ import annotations

import time
from dataclasses import replace

import geometry_samples as samples
import pytest
from shapely.geometry import Polygon
from shapely.strtree import STRtree

from compiler.geometry.layout import layout
from compiler.geometry.model import Parts
from compiler.geometry.paths import placed, to_polygon
from compiler.options import BuildOptions

SPACING = 5.0  # mm, the samples' fabrication.spacing


def _outlines(parts: Parts) -> dict[str, list[Polygon]]:
    """Each sheet's placed cut-outer outlines as polygons."""
    by_id = {p.id: p for p in parts.parts}
    out: dict[str, list[Polygon]] = {}
    for sheet in parts.sheets:
        polys = []
        for pl in sheet.placements:
            for e in placed(by_id[pl.part_id].entities, pl):
                if e.operation == "cut-outer":
                    polys.append(to_polygon(e))  # type: ignore[arg-type]
        out[sheet.id] = polys
    return out


def _check_layout(parts: Parts) -> None:
    outlines = _outlines(parts)
    for sheet in parts.sheets:
        polys = outlines[sheet.id]
        inside = Polygon([(SPACING, SPACING), (sheet.length_mm - SPACING, SPACING),
                          (sheet.length_mm - SPACING, sheet.width_mm - SPACING),
                          (SPACING, sheet.width_mm - SPACING)]).buffer(1e-6)
        assert all(inside.contains(p) for p in polys), sheet.id
        tree = STRtree(polys)
        for i, poly in enumerate(polys):
            for j in tree.query(poly.buffer(SPACING - 1e-3)):
                if j != i:
                    assert poly.distance(polys[j]) >= SPACING - 1e-6, sheet.id


def test_sample_sheets_hold_every_part_apart() -> None:
    parts = layout(samples.everything(), BuildOptions())
    _check_layout(parts)
    cut = [p for p in parts.parts if p.kind in ("sheet", "board")]
    placements = [pl for s in parts.sheets for pl in s.placements]
    assert len(placements) == sum(p.quantity for p in cut)
    assert {s.material for s in parts.sheets} == {"birch-ply", "pine", "plywood",
                                                  "spotted-metal"}
    assert [s.id for s in parts.sheets] == ["sheet-01-birch-ply", "sheet-02-pine",
                                            "sheet-03-plywood", "sheet-04-spotted-metal"]


def test_board_sheet_utilisation() -> None:
    parts = layout(samples.wood_model(), BuildOptions())
    (sheet,) = parts.sheets
    assert (sheet.length_mm, sheet.width_mm) == (2400.0, 400.0)  # the stock's own size
    # Nominal areas from the joint scheme (mm): front less its mouth, back, two sides,
    # five block layers, the cap, five stopper layers, the handle less its grip hole.
    handle = next(p for p in parts.parts if p.name == "handle")
    grip = next(e for e in handle.entities if e.operation == "cut-inner")
    grip_r = grip.radius + 0.1  # type: ignore[union-attr]
    area = ((678 * 90 - 60 * 24) + 758 * 90 + 2 * 758 * 75 + 5 * 80 * 60 + 80 * 90
            + 5 * 60 * 59 + (59 * 48 - 3.141592653589793 * grip_r**2))
    assert sheet.utilisation == pytest.approx(area / (2400 * 400), abs=1e-6)


def test_long_rank_takes_many_sheets_quickly() -> None:
    start = time.perf_counter()
    parts = layout(samples.metal_rank(610), BuildOptions())
    elapsed = time.perf_counter() - start
    assert elapsed < 10.0  # a few seconds on a laptop; generous for CI
    assert len(parts.parts) == 3 * 610
    placements = [pl for s in parts.sheets for pl in s.placements]
    assert len(placements) == 3 * 610
    assert len(parts.sheets) > 1
    assert all(0 < s.utilisation <= 1 for s in parts.sheets)
    # Sheet metal may turn: the long bodies lie along the sheet's length.
    assert any(pl.rotated for pl in placements)


def test_long_rank_layout_has_no_overlaps() -> None:
    parts = layout(samples.metal_rank(61), BuildOptions())
    _check_layout(parts)


def test_layout_is_deterministic() -> None:
    model = samples.everything()
    assert layout(model, BuildOptions()) == layout(model, BuildOptions())


def test_rotation_respects_the_sheet() -> None:
    # A sheet just wide enough for the body only when it lies along the length.
    small = replace(samples.FABRICATION, sheet_length_m=1.3, sheet_width_m=0.32)
    model = replace(samples.metal_model(), fabrication=small)
    parts = layout(model, BuildOptions())
    _check_layout(parts)
    body = [pl for s in parts.sheets for pl in s.placements
            if pl.part_id == "principal-4-C3-body"]
    assert len(body) == 1 and body[0].rotated
