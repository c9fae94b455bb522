"""Wooden pipe boards: the documented joint scheme glues up to the resolved inside size."""

from __future__ import annotations

import math
from dataclasses import replace

import geometry_samples as samples
import pytest
from shapely.geometry import Polygon

from compiler.geometry.layout import layout
from compiler.geometry.model import Circle, Parts, Polyline
from compiler.options import BuildOptions

KERF = 0.2
T = 15.0  # board thickness, mm
W, D = 60.0, 75.0  # inside width (mouth side) and depth, mm


@pytest.fixture(scope="module")
def parts() -> Parts:
    return layout(samples.wood_model(), BuildOptions())


def test_board_list_and_quantities(parts: Parts) -> None:
    names = {p.name: p.quantity for p in parts.parts}
    assert names == {"front": 1, "back": 1, "side": 2, "block": math.ceil(D / T),
                     "cap": 1, "stopper": math.ceil((D - 1.0) / T), "handle": 1}


def test_boards_glue_up_to_the_inside_size(parts: Parts) -> None:
    pipe = samples.stopped_wood_pipe()
    length = pipe.cut_length_m * 1000
    block = 80.0
    front, back = parts.part("stopped-wood-C3-front"), parts.part("stopped-wood-C3-back")
    side, cap = parts.part("stopped-wood-C3-side"), parts.part("stopped-wood-C3-cap")
    # Sides stand between front and back: the inside depth is the sides' width.
    assert side.height_mm == pytest.approx(D)
    # Front and back cover both sides' edges: inside width = board width − 2 thicknesses.
    assert back.height_mm - 2 * T == pytest.approx(W)
    assert front.height_mm - 2 * T == pytest.approx(W)
    assert cap.height_mm == pytest.approx(back.height_mm)
    # Lengths (along x, the grain): sides and back run full length; the cap (below the
    # mouth) and the front (above the block) together make the same length.
    assert side.width_mm == pytest.approx(length) and back.width_mm == pytest.approx(length)
    assert front.width_mm + cap.width_mm == pytest.approx(length)
    assert cap.width_mm == pytest.approx(block)
    block_layer = parts.part("stopped-wood-C3-block")
    assert (block_layer.width_mm, block_layer.height_mm) == pytest.approx((block, W))
    assert block_layer.quantity * T >= D


def test_front_has_the_mouth_notch(parts: Parts) -> None:
    front = parts.part("stopped-wood-C3-front")
    (outline,) = [e for e in front.entities if e.operation == "cut-outer"]
    assert isinstance(outline, Polyline) and outline.closed
    length, width = front.width_mm, front.height_mm
    mouth_w, cutup = 60.0, 24.0
    # Nominal area less the notch, then the kerf: for a rectilinear outline offset by d
    # with mitred corners the area grows by P·d + 4·d² (Steiner's formula for parallel
    # polygons; the four net convex right angles each add a d × d square).
    area = length * width - mouth_w * cutup
    perimeter = 2 * (length + width) + 2 * cutup
    d = KERF / 2
    assert Polygon(outline.points).area == pytest.approx(area + perimeter * d + 4 * d * d,
                                                         abs=1e-6)
    notch = sorted(p[1] for p in outline.points if 0 < p[0] < cutup)
    assert notch == pytest.approx([T + d, width - T - d], abs=1e-6)


def test_stopper_and_handle(parts: Parts) -> None:
    stopper = parts.part("stopped-wood-C3-stopper")
    assert stopper.width_mm == pytest.approx(60.0)  # the stopper's length
    assert stopper.height_mm == pytest.approx(W - 1.0)  # 1 mm clearance for the leather
    handle = parts.part("stopped-wood-C3-handle")
    (grip,) = [e for e in handle.entities if isinstance(e, Circle)]
    assert grip.operation == "cut-inner"
    nominal = grip.radius + KERF / 2
    # The grip hole keeps a web of at least the board's thickness to every edge.
    x, y = grip.center
    assert min(x - nominal, handle.width_mm - x - nominal, y - nominal,
               handle.height_mm - y - nominal) >= T - 1e-9


def test_side_marks_the_block_and_the_stopper(parts: Parts) -> None:
    side = parts.part("stopped-wood-C3-side")
    marks = sorted(e.points[0][0] for e in side.entities
                   if isinstance(e, Polyline) and e.operation == "mark")
    # Block top (lower lip) at 80 mm; stopper face 600 mm above the lower lip.
    assert marks == pytest.approx([80.0, 680.0])


def test_boards_keep_their_grain_on_the_sheet(parts: Parts) -> None:
    assert all(p.grain_along_x and p.kind == "board" for p in parts.parts)
    placements = [pl for s in parts.sheets for pl in s.placements]
    assert placements and not any(pl.rotated for pl in placements)
    assert sum(p.quantity for p in parts.parts) == len(placements)


def test_open_wooden_pipe_has_no_stopper() -> None:
    pipe = replace(samples.stopped_wood_pipe(), family="open-flue", stopper=None)
    model = replace(samples.wood_model(), pipes=(pipe,))
    names = [p.name for p in layout(model, BuildOptions()).parts]
    assert names == ["front", "back", "side", "block", "cap"]


def test_notes_name_each_dimension_rather_than_a_second_size_order(parts: Parts) -> None:
    # Every size in the cut list is length × width (along the grain first). A cross-section
    # or a mouth written "a × b" in a note would be a second order a maker could misread:
    # the notes name each dimension instead (inside width W = 60 mm, depth D = 75 mm).
    for part in parts.parts:
        assert "×" not in part.note, part.note
    block = parts.part("stopped-wood-C3-block")
    assert f"plane to {W:.1f} mm wide and {D:.1f} mm deep" in block.note
    front = parts.part("stopped-wood-C3-front")
    assert "mm wide, cut up" in front.note
