"""Kerf offsets against exact area/perimeter formulas and against shapely's buffer."""

from __future__ import annotations

import math

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from shapely.geometry import Polygon

from compiler.geometry.kerf import OffsetError, compensate, offset_circle, offset_polyline
from compiler.geometry.model import Circle, Polyline
from compiler.geometry.paths import arc_of, bulge_for, closed, rect, segments, to_polygon


def _notched(w: float, h: float, nw: float, nh: float) -> Polyline:
    """A w × h rectangle with a nw × nh notch in the middle of its bottom edge."""
    x0, x1 = (w - nw) / 2, (w + nw) / 2
    return closed("cut-outer", [(0, 0), (x0, 0), (x0, nh), (x1, nh), (x1, 0), (w, 0),
                                (w, h), (0, h)])


def test_rectangle_grows_by_half_the_kerf_each_side() -> None:
    out = compensate(rect("cut-outer", 0, 0, 300, 120), 0.2)
    assert isinstance(out, Polyline)
    poly = Polygon(out.points)
    # Elementary: (w + k)(h + k) and 2(w + h) + 4k.
    assert poly.area == pytest.approx(300.2 * 120.2, abs=1e-6)
    assert poly.length == pytest.approx(2 * (300 + 120) + 4 * 0.2, abs=1e-6)


def test_opening_shrinks_by_half_the_kerf_each_side() -> None:
    out = compensate(rect("cut-inner", 10, 10, 40, 30), 0.3)
    assert isinstance(out, Polyline)
    # Elementary: (w − k)(h − k) for an opening; a circle's radius moves by k/2, inward for an
    # opening and outward for an outline.
    assert Polygon(out.points).area == pytest.approx(29.7 * 19.7, abs=1e-6)
    hole = compensate(Circle("cut-inner", (5, 5), 4.0), 0.3)
    assert isinstance(hole, Circle) and hole.radius == pytest.approx(3.85)
    grown = compensate(Circle("cut-outer", (5, 5), 4.0), 0.3)
    assert isinstance(grown, Circle) and grown.radius == pytest.approx(4.15)


def test_marks_are_never_offset() -> None:
    mark = rect("mark", 0, 0, 10, 10)
    assert compensate(mark, 0.5) is mark


@settings(max_examples=60, deadline=None)
@given(w=st.floats(50, 2000), h=st.floats(50, 1000), fw=st.floats(0.1, 0.8),
       fh=st.floats(0.05, 0.5), d=st.floats(0.01, 1.0), outward=st.booleans())
def test_rectilinear_offset_follows_steiners_formula(w: float, h: float, fw: float,
                                                     fh: float, d: float,
                                                     outward: bool) -> None:
    # A simple rectilinear polygon offset by d with mitred corners: area A + P·d + 4·d²,
    # perimeter P + 8·d (Steiner's formula for parallel polygons; the net four convex
    # right angles each add a d × d square and 2d of edge). Negative d shrinks the same way.
    path = _notched(w, h, fw * w, fh * h)
    dist = d if outward else -d
    out = offset_polyline(path, dist)
    a0, p0 = Polygon(path.points).area, Polygon(path.points).length
    poly = Polygon(out.points)
    assert poly.is_valid
    # Vertices are rounded to 1e-6 mm: allow that much along the whole perimeter.
    assert poly.area == pytest.approx(a0 + p0 * dist + 4 * dist * dist, abs=p0 * 1e-6)
    assert poly.length == pytest.approx(p0 + 8 * dist, abs=1e-5)
    assert all(k == 0 for k in out.bulges)


def _sector(r1: float, r2: float, angle: float) -> Polyline:
    half = math.radians(angle / 2)
    a, b = math.pi / 2 - half, math.pi / 2 + half
    k = bulge_for(angle)
    return closed("cut-outer", [(r2 * math.cos(a), r2 * math.sin(a)),
                                (r2 * math.cos(b), r2 * math.sin(b)),
                                (r1 * math.cos(b), r1 * math.sin(b)),
                                (r1 * math.cos(a), r1 * math.sin(a))], [k, 0, -k, 0])


@pytest.mark.parametrize(("r1", "r2", "angle", "d"), [
    (62.7, 246.1, 68.3, 0.1), (158.1, 316.2, 113.8, 0.25), (1500.2, 1800.3, 6.0, 0.1),
    (20.0, 60.0, 200.0, -0.15),
])
def test_arc_path_offset_matches_shapely_buffer(r1: float, r2: float, angle: float,
                                                d: float) -> None:
    path = _sector(r1, r2, angle)
    out = offset_polyline(path, d)
    arcs = sorted(arc_of(a, b, k).radius for a, b, k in segments(out) if k)
    # Arcs stay arcs, concentric, their radii moved by exactly d.
    assert arcs == pytest.approx([r1 - d, r2 + d], abs=1e-5)
    # Reference: GEOS's buffer of the same outline (shapely), mitred joins.
    ours = to_polygon(out, 0.0005)
    ref = to_polygon(path, 0.0005).buffer(d, join_style="mitre", mitre_limit=10.0)
    assert ours.is_valid
    assert ours.area == pytest.approx(ref.area, rel=1e-6)
    assert ours.hausdorff_distance(ref) < 0.01


def test_vanishing_arc_falls_back_to_a_buffered_outline() -> None:
    # A slot with 0.1 mm round ends shrunk by 0.15 mm: the end arcs would vanish, so the
    # offset comes from the buffer (arcs as chords) and is still a valid outline.
    r = 0.1
    slot = closed("cut-inner", [(0, -r), (10, -r), (10, r), (0, r)], [0, 1.0, 0, 1.0])
    with pytest.raises(OffsetError):
        offset_polyline(slot, -0.15)
    wide = closed("cut-inner", [(0, -3), (10, -3), (10, 3), (0, 3)], [0, 0.02, 0, 0.02])
    out = offset_polyline(wide, -0.15)
    assert Polygon(out.points).is_valid


def test_circle_smaller_than_the_kerf_is_an_error() -> None:
    with pytest.raises(OffsetError):
        offset_circle(Circle("cut-inner", (0, 0), 0.1), -0.1)
