"""Parts that cannot be made are spec errors that name the part and what to change."""

from __future__ import annotations

from dataclasses import replace

import geometry_samples as samples
import pytest

from compiler.errors import GeometryError, Position, SpecError
from compiler.geometry.layout import layout
from compiler.geometry.validation import min_web_mm
from compiler.ir import Hole
from compiler.options import BuildOptions


def _error(model) -> GeometryError:  # type: ignore[no-untyped-def]
    with pytest.raises(GeometryError) as info:
        layout(model, BuildOptions())
    assert isinstance(info.value, SpecError)
    return info.value


def test_minimum_web() -> None:
    # Common practice for laser/CNC cutting: a web at least the material's thickness,
    # never under 1 mm.
    assert min_web_mm(0.8) == 1.0
    assert min_web_mm(6.0) == 6.0


def test_body_larger_than_the_sheet() -> None:
    small = replace(samples.FABRICATION, sheet_length_m=1.0, sheet_width_m=0.5)
    err = _error(replace(samples.metal_model(), fabrication=small))
    (problem,) = err.problems
    assert problem.position == Position(samples.SPEC, 30, 5)
    assert "`principal-4-C3-body`" in problem.message
    assert "1000 × 500 mm sheet" in problem.message
    # 1256.6 mm + kerf + 2 × 5 mm spacing.
    assert "at least 1267 × 310 mm" in problem.hint
    assert str(err).startswith("samples.yaml:30:5: error: part `principal-4-C3-body`")


def test_board_longer_than_its_stock_cannot_turn() -> None:
    # A board 700 mm along the grain and 900 mm across: the 758 mm boards would fit only
    # across the grain. Given as 900 × 700 they fit.
    long = tuple(replace(s, length_m=0.9, width_m=0.7) if s.name == "pine-15" else s
                 for s in samples.STOCK)
    short = tuple(replace(s, length_m=0.7, width_m=0.9) if s.name == "pine-15" else s
                  for s in samples.STOCK)
    layout(replace(samples.wood_model(), stock=long), BuildOptions())
    err = _error(replace(samples.wood_model(), stock=short))
    messages = " ".join(p.message for p in err.problems)
    assert "`stopped-wood-C3-back`" in messages and "grain" in messages


def test_holder_openings_closer_than_the_web() -> None:
    holder = replace(samples.HOLDER, spacing_m=0.003)  # 3 mm in 6 mm ply
    err = _error(samples.tube_set_model(holder))
    assert len(err.problems) == 2  # C5–E5 and E5–G5
    for problem in err.problems:
        assert "`tubes-holder`" in problem.message
        assert "6.0 mm web" in problem.message
        # the plate belongs to the tube set: blamed at the set, not at its first tube
        # (line 60) when the holder carries no position of its own
        assert problem.position == samples.TUBE_SET_AT
    # a holder that knows its line in the spec is blamed there
    at = Position(samples.SPEC, 66, 7)
    err = _error(samples.tube_set_model(replace(holder, source=at)))
    assert {p.position for p in err.problems} == {at}


def test_holder_margin_below_the_web() -> None:
    holder = replace(samples.HOLDER, margin_m=0.002)
    err = _error(samples.tube_set_model(holder))
    assert all("to the edge" in p.message for p in err.problems)


def test_overlapping_holes() -> None:
    pipe = samples.duct_flute()
    clash = Hole(7, "7", 0.118, 0.182, 0.007, 0.0, 0.001, 0.0, False)  # 3 mm from hole 1
    err = _error(replace(samples.flute_model(), pipes=(replace(pipe, holes=(*pipe.holes,
                                                                            clash)),)))
    (problem,) = err.problems
    assert "holes 1 and 7 overlap" in problem.message
    assert problem.position == Position(samples.SPEC, 80, 5)
    # A hole that knows its line in the spec is blamed there, not at the pipe.
    listed = replace(clash, source=Position(samples.SPEC, 97, 9))
    err = _error(replace(samples.flute_model(), pipes=(replace(pipe, holes=(*pipe.holes,
                                                                            listed)),)))
    assert [p.position for p in err.problems] == [Position(samples.SPEC, 97, 9)]


def test_mouth_wider_than_a_wooden_pipe() -> None:
    pipe = samples.stopped_wood_pipe()
    assert pipe.mouth is not None
    wide = replace(pipe, mouth=replace(pipe.mouth, width_m=0.070))
    err = _error(replace(samples.wood_model(), pipes=(wide,)))
    (problem,) = err.problems
    assert "mouth (70.0 mm) is wider than the pipe's inside (60.0 mm)" in problem.message


def test_kerf_wider_than_an_opening() -> None:
    wide_kerf = replace(samples.FABRICATION, kerf_m=0.026)
    err = _error(replace(samples.tube_set_model(), fabrication=wide_kerf))
    assert any("kerf of 26 mm cannot be applied" in p.message for p in err.problems)


def test_every_problem_is_reported_at_once() -> None:
    small = replace(samples.FABRICATION, sheet_length_m=0.5, sheet_width_m=0.25)
    short = tuple(replace(s, length_m=0.5, width_m=0.25) if s.name == "pine-15" else s
                  for s in samples.STOCK)
    err = _error(replace(samples.everything(), fabrication=small, stock=short))
    ids = sorted(p.message.split("`")[1] for p in err.problems)
    # The metal body and the long wooden boards; the foot and the holder still fit.
    assert ids == ["principal-4-C3-body", "stopped-wood-C3-back", "stopped-wood-C3-front",
                   "stopped-wood-C3-side"]


def test_sheet_and_part_problems_together() -> None:
    small = replace(samples.FABRICATION, sheet_length_m=1.0, sheet_width_m=0.5)
    pipe = samples.stopped_wood_pipe()
    assert pipe.mouth is not None
    wide = replace(pipe, mouth=replace(pipe.mouth, width_m=0.070))
    model = replace(samples.everything(), fabrication=small,
                    pipes=tuple(wide if p.id == pipe.id else p
                                for p in samples.everything().pipes))
    messages = [p.message for p in _error(model).problems]
    assert any("principal-4-C3-body" in m for m in messages)
    assert any("mouth (70.0 mm)" in m for m in messages)
