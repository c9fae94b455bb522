"""Stock-tube parts: drilling templates, duct block, holder plate, cut lengths."""

from __future__ import annotations

import math
from dataclasses import replace

import geometry_samples as samples
import pytest

from compiler.geometry.layout import layout
from compiler.geometry.model import Circle, Part, Polyline, Text
from compiler.geometry.paths import arc_of, segments
from compiler.ir import Head, Hole, StockItem
from compiler.options import BuildOptions

KERF = 0.2


def _template(pipe=None) -> Part:  # type: ignore[no-untyped-def]
    model = samples.flute_model()
    if pipe is not None:
        model = replace(model, pipes=(pipe,))
    return layout(model, BuildOptions()).part("whistle-d-template")


def _circles(part: Part) -> list[Circle]:
    return [e for e in part.entities if isinstance(e, Circle)]


def test_template_is_the_outside_circumference_by_the_cut_length() -> None:
    t = _template()
    assert t.kind == "template"
    # Wrapped round the tube, the paper's width is the outside circumference π·OD.
    assert t.width_mm == pytest.approx(math.pi * 22.0)
    assert t.height_mm == pytest.approx(300.0)
    (outline,) = [e for e in t.entities if e.operation == "cut-outer"]
    assert isinstance(outline, Polyline) and outline.closed
    # Templates are printed: no kerf on them.
    xs = sorted({p[0] for p in outline.points})
    assert xs == pytest.approx([0.0, math.pi * 22.0])


def test_hole_centres_are_at_their_resolved_positions() -> None:
    pipe = samples.duct_flute()
    t = _template()
    circumference = math.pi * 22.0
    circles = _circles(t)
    for hole in pipe.holes:
        # x: the front line in the middle, the angle as a share of the circumference;
        # y: measured down from the top end (y = cut length).
        x = circumference / 2 + hole.angle_deg / 360.0 * circumference
        y = 300.0 - hole.position_from_top_m * 1000
        matches = [c for c in circles
                   if math.dist(c.center, (x, y)) < 1e-6
                   and c.radius == pytest.approx(hole.diameter_m * 500)]
        assert len(matches) == 1, hole.label
    assert len(circles) == len(pipe.holes)


def test_thumb_hole_at_the_back_is_drawn_on_both_edges() -> None:
    pipe = samples.duct_flute()
    thumb = Hole(7, "T", 0.105, 0.195, 0.006, 180.0, 0.001, 0.0, False)
    t = _template(replace(pipe, holes=(*pipe.holes, thumb)))
    back = [c for c in _circles(t) if c.center[1] == pytest.approx(300.0 - 105.0)]
    assert sorted(c.center[0] for c in back) == pytest.approx([0.0, math.pi * 22.0])


def test_window_and_labium() -> None:
    t = _template()
    circumference = math.pi * 22.0
    windows = [e for e in t.entities if isinstance(e, Polyline) and e.closed
               and e.operation == "mark"]
    (window,) = windows
    xs = sorted({p[0] for p in window.points})
    ys = sorted({p[1] for p in window.points})
    # 10 mm wide on the front line; from the labium (30 mm below the top) up 4.5 mm.
    assert xs == pytest.approx([circumference / 2 - 5.0, circumference / 2 + 5.0])
    assert ys == pytest.approx([270.0, 274.5])


def test_centre_line_and_ticks() -> None:
    t = _template()
    circumference = math.pi * 22.0
    lines = [e for e in t.entities if isinstance(e, Polyline) and not e.closed]
    centre = [e for e in lines if e.points[0] == (pytest.approx(circumference / 2), 0.0)
              and e.points[1] == (pytest.approx(circumference / 2), 300.0)]
    assert len(centre) == 1
    left = sorted(e.points[0][1] for e in lines
                  if e.points[0] == (0.0, e.points[0][1]) and e.points[1][1] == e.points[0][1])
    # Every 10 mm from the top down the left edge, 31 ticks on 300 mm.
    assert len(left) == 31
    assert all(b - a == pytest.approx(10.0) for a, b in zip(left, left[1:], strict=False))


def test_side_blown_template_has_the_embouchure_and_cork() -> None:
    pipe = samples.duct_flute()
    head = Head("embouchure", None, None, None, None, 0.010, 0.045, 0.017)
    t = _template(replace(pipe, head=head, family="side-blown-flute"))
    circumference = math.pi * 22.0
    emb = [c for c in _circles(t) if c.radius == pytest.approx(5.0)]
    assert [c.center for c in emb] == [pytest.approx((circumference / 2, 255.0))]
    cork = [e for e in t.entities if isinstance(e, Polyline) and not e.closed
            and e.points == ((0.0, 272.0), (pytest.approx(circumference), 272.0))]
    assert len(cork) == 1


def test_duct_block_profile() -> None:
    # The block's cross-section, cut from the jig sheet: the bore's circle less the duct's
    # flat. The chord of a flat h deep on a circle of radius r is 2·√(r² − (r − h)²) (plane
    # geometry); the cut path lies kerf/2 outside the nominal outline.
    block = layout(samples.flute_model(), BuildOptions()).part("whistle-d-duct-block-profile")
    assert block.kind == "sheet" and block.material == "plywood"
    (end,) = [e for e in block.entities if isinstance(e, Polyline) and e.closed]
    assert end.operation == "cut-outer"
    (arc,) = [arc_of(a, b, k) for a, b, k in segments(end) if k]
    assert arc.radius == pytest.approx(10.0 + KERF / 2)
    chord = [math.dist(a, b) for a, b, k in segments(end) if not k]
    assert chord == [pytest.approx(2 * math.sqrt(10.0**2 - (10.0 - 1.2) ** 2), abs=KERF)]


def test_holder_plate() -> None:
    parts = layout(samples.tube_set_model(), BuildOptions())
    holder = parts.part("tubes-holder")
    assert holder.kind == "sheet" and holder.material == "birch-ply"
    openings = sorted((e for e in holder.entities if e.operation == "cut-inner"),
                      key=lambda c: c.center[0])  # type: ignore[union-attr]
    assert len(openings) == 3
    d = 25.0 + 0.5  # outside diameter + clearance
    for c in openings:
        assert isinstance(c, Circle) and c.radius == pytest.approx(d / 2 - KERF / 2)
    centres = [c.center[0] for c in openings]  # type: ignore[union-attr]
    # 15 mm margin to the first opening, 12 mm clear between openings.
    assert centres[0] - d / 2 == pytest.approx(15.0)
    assert [b - a for a, b in zip(centres, centres[1:], strict=False)] == pytest.approx(
        [d + 12.0] * 2)
    assert holder.width_mm == pytest.approx(3 * d + 2 * 12.0 + 2 * 15.0)
    labels = [e for e in holder.entities if isinstance(e, Text)]
    assert [t.text for t in labels] == ["C5", "E5", "G5", "tubes holder"]
    for text, x in zip(labels, centres, strict=False):
        assert text.operation == "engrave"
        assert text.insert[0] < x < text.insert[0] + 3 * text.height
    # The plate's own name, upright in the 15 mm margin above the openings (kerf aside).
    name = labels[-1]
    top = max(c.center[1] + c.radius for c in openings)  # type: ignore[union-attr]
    assert name.rotation_deg == 0.0 and top < name.insert[1]
    assert name.insert[1] + name.height < holder.height_mm


def test_holder_row_splits_to_fit_a_small_sheet() -> None:
    small = tuple(replace(s, length_m=0.12, width_m=0.08) if s.name == "ply-6" else s
                  for s in samples.STOCK)
    model = replace(samples.tube_set_model(), stock=small)
    parts = layout(model, BuildOptions())
    holders = [p for p in parts.parts if p.name.startswith("holder")]
    assert [p.id for p in holders] == ["tubes-holder-1", "tubes-holder-2"]
    assert sum(1 for p in holders for e in p.entities if e.operation == "cut-inner") == 3
    # Two openings take 2·15 + 2·25.5 + 12 = 93 mm of the 120 − 2·5 mm the sheet allows.
    assert [p.width_mm for p in holders] == pytest.approx([93.0, 55.5])


def test_tube_cuts_and_no_template_without_holes() -> None:
    parts = layout(samples.tube_set_model(holder=None), BuildOptions())
    assert parts.parts == () and parts.sheets == ()
    assert [(c.pipe_id, c.length_mm) for c in parts.tube_cuts] == [
        (f"tubes-{note}", pytest.approx(cut * 1000)) for note, _, cut in samples.TUBE_NOTES]
    assert all(c.outside_diameter_mm == pytest.approx(25.0) for c in parts.tube_cuts)


def test_holder_on_board_stock_keeps_the_grain() -> None:
    stock = (*samples.STOCK, StockItem("oak-10", "board", "oak", 0.010, None, None, 1.0, 0.2))
    holder = replace(samples.HOLDER, stock="oak-10", material="oak", thickness_m=0.010)
    model = samples.tube_set_model(holder)
    model = replace(model, stock=stock)
    parts = layout(model, BuildOptions())
    plate = parts.part("tubes-holder")
    assert plate.kind == "board" and plate.grain_along_x
    assert not any(pl.rotated for s in parts.sheets for pl in s.placements)
