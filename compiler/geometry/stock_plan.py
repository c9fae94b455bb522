"""Tube stock planning: how many lengths of each stock tube to buy, and which pieces come
from which length.

A one-dimensional cutting plan by first-fit decreasing (D. S. Johnson 1973, "Near-optimal
bin packing algorithms", PhD thesis, MIT: at most 11/9 of the fewest lengths plus a few;
from memory), not an optimal plan:
the pieces of a stock, longest first (ties in the order of the pipes), each go into the
first length that still holds it, else into a new one. Deterministic. Every piece but the
last on a length is followed by a saw cut of the kerf; the factory end is taken as square.
A piece longer than the stock's length cannot be cut from it: a spec error at the pipe.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence

from compiler.errors import Position, Problem
from compiler.geometry.model import StockLength, TubeCut
from compiler.geometry.units import mm
from compiler.ir import StockItem

TOLERANCE_MM = 1e-6


def _fits(used: float, piece: float, kerf: float, length: float) -> bool:
    return used + (kerf if used > 0 else 0.0) + piece <= length + TOLERANCE_MM


def plan(cuts: Sequence[TubeCut], stock: Mapping[str, StockItem], kerf_mm: float,
         sources: Mapping[str, Position]) -> tuple[tuple[StockLength, ...], list[Problem]]:
    """The lengths to buy for every stock tube with a ``length``, in the order of the stock
    names; and a problem (at the pipe, from ``sources``) for each piece longer than its
    stock. Stocks without a length are not planned."""
    lengths: list[StockLength] = []
    problems: list[Problem] = []
    for name in sorted({c.stock for c in cuts}):
        item = stock.get(name)
        if item is None or item.length_m is None:
            continue
        bar = mm(item.length_m)
        mine = [c for c in cuts if c.stock == name]
        too_long = [c for c in mine if c.length_mm > bar + TOLERANCE_MM]
        for c in too_long:
            problems.append(Problem(
                sources.get(c.pipe_id, Position("<spec>", 0, 0)),
                f"{c.pipe_id}: the tube is {c.length_mm:.1f} mm long, but stock `{name}` "
                f"comes in lengths of {bar:.1f} mm",
                "give the stock its real `length`, choose a longer stock, or a higher note",
                "geometry"))
        order = sorted((c for c in mine if c not in too_long),
                       key=lambda c: -c.length_mm)  # a stable sort: ties keep pipe order
        filled: list[tuple[list[str], float]] = []
        for c in order:
            home = next((i for i, (_, used) in enumerate(filled)
                         if _fits(used, c.length_mm, kerf_mm, bar)), None)
            if home is None:
                filled.append(([c.pipe_id], c.length_mm))
            else:
                pieces, used = filled[home]
                filled[home] = (pieces + [c.pipe_id], used + kerf_mm + c.length_mm)
        od = mine[0].outside_diameter_mm
        for number, (pieces, used) in enumerate(filled, start=1):
            lengths.append(StockLength(name, item.material, number, bar, od, tuple(pieces),
                                       round(used, 6), round(max(bar - used - kerf_mm, 0.0), 6)))
    return tuple(lengths), problems
