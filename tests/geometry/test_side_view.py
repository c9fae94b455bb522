"""The side view's drawing model: shapes, marks, dimension lines and callouts in the pipe's
millimetres, numbers only; the build sheet words them."""

from __future__ import annotations

import math
from dataclasses import replace

import geometry_samples as samples
import pytest

from compiler.emit.pdf.sideview import callout_text
from compiler.geometry import dimensions as D
from compiler.geometry import side_view as V
from compiler.ir import Hole


def test_a_duct_flute_in_millimetres() -> None:
    pipe = samples.duct_flute()
    view = V.side_view(pipe)
    assert view.height == pytest.approx(300.0)          # the cut length, bottom end at 0
    assert view.half_width == pytest.approx(11.0)       # 22 mm tube
    marks = sorted(view.holes, key=lambda m: -m.y)
    for mark, (top, diameter, _) in zip(marks, samples.HOLES, strict=True):
        assert mark.y == pytest.approx(300.0 - top * 1000)
        assert mark.radius == pytest.approx(diameter * 500)
    holes = [c for c in view.callouts if c.kind == V.HOLE]
    assert [c.label for c in holes] == ["1", "2", "3", "4", "5", "6"]
    assert holes[0].values_mm == pytest.approx((7.0, 115.0))  # diameter, from the top
    # The window: 4.5 mm long, 10 mm wide, its lower edge (the labium) 30 mm from the top.
    (window,) = [c for c in view.callouts if c.kind == V.WINDOW]
    assert window.values_mm == pytest.approx((4.5, 10.0))
    (labium,) = [v for v in view.vdims if v.dim.name == D.LABIUM]
    assert (labium.y0, labium.y1) == pytest.approx((270.0, 300.0))
    # numbers, never text made for a person
    for callout in view.callouts:
        assert all(isinstance(v, float) for v in callout.values_mm)


def test_a_metal_pipe_with_its_foot_and_mouth() -> None:
    pipe = samples.open_metal_pipe()
    view = V.side_view(pipe)
    assert view.height == pytest.approx(180.0 + 1256.6)  # foot below the body
    names = {v.dim.name: (v.y0, v.y1) for v in view.vdims}
    assert names[D.FOOT] == pytest.approx((0.0, 180.0))
    assert names[D.SPEAKING] == pytest.approx((180.0, 180.0 + 1220.0))
    (mouth,) = [c for c in view.callouts if c.kind == V.MOUTH]
    width = math.pi * 92.5 / 4
    assert mouth.values_mm == pytest.approx((width, width / 4))
    letters = {d.name: d.key for d in D.dimensions(pipe)}
    assert mouth.keys == (letters[D.MOUTH_WIDTH], letters[D.CUTUP])
    # the tuning allowance above the speaking length is tinted
    assert any(s.style == "tint" for s in view.shapes)


def test_the_build_sheet_words_the_callouts() -> None:
    pipe = replace(samples.duct_flute(), holes=(
        Hole(1, "1", 0.115, 0.185, 0.007, 0.0, 0.001, 0.0, False),
        Hole(2, "T", 0.150, 0.150, 0.0075, 180.0, 0.001, 0.0, False)))
    texts = [callout_text(c) for c in V.side_view(pipe).callouts]
    assert "window 4.50 × 10.00" in texts
    assert "duct height 1.20" in texts
    assert "hole 1  ø 7.00  at 115.00 from top" in texts
    assert "T  ø 7.50  at 150.00 from top (back)" in texts
    metal = V.side_view(samples.open_metal_pipe())
    (toe,) = [c for c in metal.callouts if c.kind == V.TOE_HOLE]
    assert callout_text(toe) == "toe hole ø 23.00"
    assert callout_text(toe, key=True) == f"toe hole {toe.keys[0]}"
    wood = V.side_view(samples.stopped_wood_pipe())
    assert "stopper face 600.00" in [callout_text(c) for c in wood.callouts]
