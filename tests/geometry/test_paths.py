"""Bulge arithmetic, areas, bounds and placement transforms of the parts model."""

from __future__ import annotations

import math

import pytest

from compiler.geometry.kerf import offset_polyline
from compiler.geometry.model import Circle, Placement, Polyline, Text
from compiler.geometry.paths import (
    arc_of,
    bounds,
    bulge_for,
    closed,
    placed,
    rect,
    signed_area,
    to_polygon,
)


def test_bulge_of_a_semicircle() -> None:
    # DXF reference: bulge = tan(θ/4); a half circle has bulge 1, counter-clockwise.
    assert bulge_for(180.0) == pytest.approx(1.0)
    arc = arc_of((1.0, 0.0), (-1.0, 0.0), 1.0)
    assert arc.center == pytest.approx((0.0, 0.0), abs=1e-12)
    assert arc.radius == pytest.approx(1.0)
    assert arc.sweep_deg == pytest.approx(180.0)


def test_signed_area_with_arcs() -> None:
    # A disk of radius 2 as two half-circle bulges: π·r²; clockwise gives the negative.
    disk = closed("cut-outer", [(2.0, 0.0), (-2.0, 0.0)], [1.0, 1.0])
    assert signed_area(disk) == pytest.approx(math.pi * 4.0)
    cw = closed("cut-outer", [(2.0, 0.0), (-2.0, 0.0)], [-1.0, -1.0])
    assert signed_area(cw) == pytest.approx(-math.pi * 4.0)
    # A 10 × 4 rectangle with a half-disk bitten out of its top edge (radius 2).
    bite = closed("cut-outer", [(0, 0), (10, 0), (10, 4), (7, 4), (3, 4), (0, 4)],
                  [0, 0, 0, -1.0, 0, 0])
    assert signed_area(bite) == pytest.approx(40.0 - math.pi * 2.0)
    # Annular sector (standard geometry): θ/2·(R2² − R1²).
    k = bulge_for(60.0)
    c, s = math.cos(math.radians(60)), math.sin(math.radians(60))
    sector = closed("cut-outer", [(5, 0), (5 * c, 5 * s), (2 * c, 2 * s), (2, 0)],
                    [k, 0, -k, 0])
    assert signed_area(sector) == pytest.approx(math.pi / 6 * (25 - 4))


def test_bounds_include_arc_extremes() -> None:
    disk = closed("cut-outer", [(2.0, 0.0), (-2.0, 0.0)], [1.0, 1.0])
    assert bounds(disk) == pytest.approx((-2.0, -2.0, 2.0, 2.0))
    assert bounds(Circle("mark", (1.0, 1.0), 0.5)) == (0.5, 0.5, 1.5, 1.5)


def test_placement_turns_counter_clockwise_then_moves() -> None:
    part = (rect("cut-outer", 0, 0, 30, 10), Circle("cut-inner", (5, 5), 2),
            Text("engrave", (1, 1), 3, "A"))
    out = placed(part, Placement("p", 100.0, 50.0, True))
    box = out[0]
    assert isinstance(box, Polyline)
    # (x, y) -> (−y, x), then + (100, 50): the 30 × 10 part stands 10 wide, 30 tall.
    assert bounds(box) == pytest.approx((90.0, 50.0, 100.0, 80.0))
    assert out[1] == Circle("cut-inner", (95.0, 55.0), 2.0)
    assert isinstance(out[2], Text) and out[2].rotation_deg == 90.0
    assert out[2].insert == (99.0, 51.0)


def test_clockwise_outline_grows_like_a_counter_clockwise_one() -> None:
    ccw = rect("cut-outer", 0, 0, 30, 10)
    cw = Polyline("cut-outer", tuple(reversed(ccw.points)), True, (0.0,) * 4)
    grown_cw, grown_ccw = offset_polyline(cw, 0.5), offset_polyline(ccw, 0.5)
    assert to_polygon(grown_cw).area == pytest.approx(31.0 * 11.0)
    assert to_polygon(grown_ccw).area == pytest.approx(31.0 * 11.0)
