"""Tube stock planning: first-fit decreasing with the saw kerf between pieces.

Checked against a plan worked by hand, against an exhaustive search for the fewest lengths
on small random cases (a numerical model of our own: first-fit decreasing uses at most
11/9·OPT + 6/9 lengths, G. Dósa 2007, "The tight bound of first fit decreasing bin-packing
algorithm is FFD(I) ≤ 11/9 OPT(I) + 6/9", ESCAPE 2007, LNCS 4614; from memory), and for the
bookkeeping every plan must keep: each piece once, no length overfilled.
"""

from __future__ import annotations

import csv
import io
from dataclasses import replace
from pathlib import Path

import geometry_samples as samples
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from compiler.emit.cutlist_csv import render
from compiler.errors import GeometryError, Position
from compiler.geometry.layout import layout
from compiler.geometry.model import TubeCut
from compiler.geometry.stock_plan import plan
from compiler.ir import StockItem
from compiler.options import BuildOptions, Overrides

ROOT = Path(__file__).resolve().parents[2]


def _cuts(lengths: list[float], stock: str = "alu") -> list[TubeCut]:
    return [TubeCut(f"p{i}", stock, "aluminium", length, 22.0) for i, length in enumerate(lengths)]


def _stock(length_mm: float | None) -> dict[str, StockItem]:
    length = None if length_mm is None else length_mm / 1000
    return {"alu": StockItem("alu", "tube", "aluminium", 0.001, 0.022, 0.020, length, None)}


def test_a_plan_worked_by_hand() -> None:
    # 1000 mm lengths, 2 mm kerf. Longest first: 600 opens length 1; 400 needs 600+2+400 =
    # 1002 > 1000, opens length 2; 398 fits length 1 exactly (600+2+398 = 1000); 300 goes
    # to length 2 (702); the second 300 needs 1004 there, opens length 3.
    bars, problems = plan(_cuts([300, 600, 398, 400, 300]), _stock(1000), 2.0, {})
    assert problems == []
    assert [(b.number, b.pieces) for b in bars] == [(1, ("p1", "p2")), (2, ("p3", "p0")),
                                                    (3, ("p4",))]
    assert [b.used_mm for b in bars] == [1000.0, 702.0, 300.0]
    # what is left after the last saw cut; nothing when less than a kerf remains
    assert [b.offcut_mm for b in bars] == [0.0, 296.0, 698.0]


def test_no_stock_length_no_plan_and_too_long_pieces() -> None:
    assert plan(_cuts([300]), _stock(None), 2.0, {}) == ((), [])
    where = Position("bench.yaml", 12, 5)
    bars, problems = plan(_cuts([1200.5, 500]), _stock(1000), 2.0, {"p0": where})
    assert [b.pieces for b in bars] == [("p1",)]
    [problem] = problems
    assert problem.position == where and problem.hint
    assert "1200.5 mm long, but stock `alu` comes in lengths of 1000.0 mm" in problem.message


def _fewest(pieces: list[float], bar: float, kerf: float) -> int:
    """The fewest lengths that hold the pieces, by trying every assignment."""
    best = len(pieces)

    def place(i: int, loads: list[float]) -> None:
        nonlocal best
        if len(loads) >= best:
            return
        if i == len(pieces):
            best = len(loads)
            return
        p = pieces[i]
        for k, used in enumerate(loads):
            if used + kerf + p <= bar + 1e-9:
                loads[k] += kerf + p
                place(i + 1, loads)
                loads[k] -= kerf + p
        loads.append(p)
        place(i + 1, loads)
        loads.pop()

    place(0, [])
    return best


@settings(max_examples=60, deadline=None)
@given(st.lists(st.integers(50, 1000), min_size=1, max_size=8), st.sampled_from([0.0, 1.0, 3.0]))
def test_first_fit_decreasing_keeps_its_bound(lengths: list[int], kerf: float) -> None:
    pieces = [float(x) for x in lengths]
    bars, problems = plan(_cuts(pieces), _stock(1000), kerf, {})
    assert problems == []
    placed = sorted(p for b in bars for p in b.pieces)
    assert placed == sorted(f"p{i}" for i in range(len(pieces)))  # each piece exactly once
    for b in bars:
        total = sum(pieces[int(p[1:])] for p in b.pieces) + kerf * (len(b.pieces) - 1)
        assert total <= 1000 + 1e-9 and b.used_mm == pytest.approx(total)
        assert b.offcut_mm == pytest.approx(max(1000 - total - kerf, 0.0))
    assert len(bars) <= 11 / 9 * _fewest(sorted(pieces, reverse=True), 1000, kerf) + 6 / 9


def test_layout_plans_and_the_cut_list_shows_it() -> None:
    # Three tubes of the sample set from 400 mm lengths (sample kerf 0.2 mm).
    stock = tuple(replace(s, length_m=0.4) if s.name == "alu-25" else s for s in samples.STOCK)
    model = replace(samples.tube_set_model(holder=None), stock=stock)
    parts = layout(model, BuildOptions())
    cut = {c.pipe_id: c.length_mm for c in parts.tube_cuts}
    assert sum(len(b.pieces) for b in parts.stock_lengths) == len(cut)
    for b in parts.stock_lengths:
        assert sum(cut[p] for p in b.pieces) + 0.2 * (len(b.pieces) - 1) <= 400 + 1e-9
    rows = list(csv.DictReader(io.StringIO(render(parts))))
    buy = [r for r in rows if r["what"] == "stock length to buy"]
    assert len(buy) == len(parts.stock_lengths) and buy[0]["length_mm"] == "400.00"
    tubes = [r for r in rows if r["what"] == "tube"]
    assert all(r["source"].startswith("stock length ") for r in tubes)


def test_a_tube_longer_than_its_stock_is_a_positioned_error() -> None:
    stock = tuple(replace(s, length_m=0.15) if s.name == "alu-25" else s for s in samples.STOCK)
    model = replace(samples.tube_set_model(holder=None), stock=stock)
    with pytest.raises(GeometryError) as caught:
        layout(model, BuildOptions())
    sources = {p.id: p.source for p in model.pipes}
    assert all(problem.position in sources.values() for problem in caught.value.problems)
    assert "comes in lengths of 150.0 mm" in caught.value.problems[0].message


def test_the_example_plans_with_its_saw_kerf() -> None:
    from compiler.build import compile_text
    from compiler.emit.resolved_json import to_dict

    spec = ROOT / "specs_examples" / "blown-stopped-tubes.yaml"
    compiled = compile_text(spec.read_bytes(), spec.name, Overrides())
    assert to_dict(compiled.resolved)["fabrication"]["tube_kerf_mm"] == 1.0  # `tube_kerf: 1 mm`
    cut = {c.pipe_id: c.length_mm for c in compiled.parts.tube_cuts}
    for b in compiled.parts.stock_lengths:
        assert b.used_mm == pytest.approx(sum(cut[p] for p in b.pieces) + 1.0 * (len(b.pieces) - 1))
    assert {b.stock for b in compiled.parts.stock_lengths} == {"alu-16", "alu-20", "alu-25"}
