"""Stage 4's entry point: the resolved model in, the parts, sheets and tube cuts out.

``layout`` is pure (no files, no clock): each pipe's construction picks its builder
(rolled sheet, boards, stock tube), every cut part is checked (outline, webs), kerf
compensated and nested on the sheets of its stock. All problems are collected and raised
at once as one :class:`~compiler.errors.GeometryError`, each at the pipe's spec position.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, replace
from functools import partial
from typing import Any

from compiler.display import in_inches, inches_for
from compiler.errors import GeometryError, Position, Problem
from compiler.geometry import stock_plan
from compiler.geometry.boards import board_drafts
from compiler.geometry.drafts import Draft, finish
from compiler.geometry.flute_jig import flute_parts
from compiler.geometry.model import Part, Parts, TubeCut
from compiler.geometry.nesting import SheetSize, nest
from compiler.geometry.rolled import rolled_drafts
from compiler.geometry.tube import holder_drafts, template, tube_cut
from compiler.geometry.units import mm
from compiler.geometry.validation import check_draft
from compiler.ir import Pipe, Resolved, StockItem
from compiler.options import BuildOptions


def sheet_size(resolved: Resolved, stock_name: str) -> SheetSize:
    """The sheet a stock's parts are nested on: the stock's own ``size``, else the
    fabrication sheet (its longer side as the length). A board's size is taken as
    written, length first: its grain runs along its length, and so along x."""
    fab = resolved.fabrication
    for item in resolved.stock:
        if item.name != stock_name or not (item.length_m and item.width_m):
            continue
        if item.kind == "board":
            return SheetSize(mm(item.length_m), mm(item.width_m))
        if item.kind == "sheet":
            return SheetSize(mm(max(item.length_m, item.width_m)),
                             mm(min(item.length_m, item.width_m)))
    return SheetSize(mm(max(fab.sheet_length_m, fab.sheet_width_m)),
                     mm(min(fab.sheet_length_m, fab.sheet_width_m)))


@dataclass(frozen=True)
class PipePartsInputs:
    """Everything one pipe's parts are made from, and so their cache key: ``pipe_parts``
    reads nothing else."""

    pipe: Pipe
    kerf_m: float
    """The cutter's kerf (the parts' cut paths are offset by half of it)."""
    seam_allowance_m: float
    """Rolled pipes: the overlap left at the seam."""
    stock_thickness_m: float | None
    """Pipes of boards: the thickness of the pipe's stock, when the spec lists it (used
    when the pipe gives no wall)."""


def _pipe_drafts(inputs: PipePartsInputs) -> list[Draft]:
    pipe = inputs.pipe
    if pipe.construction == "rolled-sheet":
        return rolled_drafts(pipe, inputs.seam_allowance_m)
    if pipe.construction == "boards":
        return board_drafts(pipe, pipe.wall_m or inputs.stock_thickness_m or 0.0)
    drafts: list[Draft] = []
    if pipe.holes or pipe.head is not None or pipe.mouth is not None:
        drafts.append(template(pipe))
    return drafts + flute_parts(pipe)


def _holders(resolved: Resolved, stock: dict[str, StockItem]) -> list[Draft]:
    by_id = {p.id: p for p in resolved.pipes}
    spacing = mm(resolved.fabrication.spacing_m)
    kerf = mm(resolved.fabrication.kerf_m)
    drafts: list[Draft] = []
    for group in resolved.groups:
        if group.holder is None or not group.pipe_ids:
            continue
        pipes = [by_id[i] for i in group.pipe_ids if i in by_id]
        item = stock.get(group.holder.stock)
        kind = item.kind if item is not None and item.kind == "board" else "sheet"
        room = sheet_size(resolved, group.holder.stock).length_mm - 2.0 * spacing - kerf
        # The plate is the set's: blamed at its `holder:`, else at the set itself.
        source = group.holder.source or group.source or (pipes[0].source if pipes
                                                         else Position("<spec>", 0, 0))
        drafts += holder_drafts(group, pipes, kind, room, source)
    return drafts


Memo = Callable[[Any, Callable[[], Any]], Any]


def _no_memo(_inputs: Any, make: Callable[[], Any]) -> Any:
    return make()


def _finished(drafts: list[Draft], kerf: float) -> tuple[list[Part], list[Problem],
                                                         dict[str, float], dict[str, Position]]:
    """Check and kerf-compensate drafts: the parts, the problems, and each part's true
    area and spec position (for nesting)."""
    parts: list[Part] = []
    problems: list[Problem] = []
    for draft in drafts:
        found = check_draft(draft)
        if found:
            problems += found
            continue
        try:
            parts.append(finish(draft, kerf))
        except GeometryError as err:
            problems += err.problems
    return parts, problems, {d.id: d.area_mm2 for d in drafts}, {d.id: d.source for d in drafts}


def pipe_parts(inputs: PipePartsInputs) -> tuple[list[Part], list[Problem], dict[str, float],
                                                dict[str, Position]]:
    """One pipe's finished parts, the problems found, and each part's true area and spec
    position (for nesting)."""
    try:
        drafts = _pipe_drafts(inputs)
    except GeometryError as err:
        return [], list(err.problems), {}, {}
    return _finished(drafts, mm(inputs.kerf_m))


def layout(resolved: Resolved, options: BuildOptions, memo: Memo = _no_memo) -> Parts:
    """Parts of every pipe and holder, nested on sheets, plus the stock-tube cuts.

    Millimetres throughout (converted from the IR's metres in ``geometry.units``). Parts
    come in the order of the pipes, then the holders; sheets are numbered across stocks
    in the order (material, stock, thickness). ``options`` carries nothing the geometry
    depends on today; it is taken so the stage signature matches the others.
    """
    del options
    stock = {s.name: s for s in resolved.stock}
    fab = resolved.fabrication
    kerf = mm(fab.kerf_m)
    problems: list[Problem] = []
    parts: list[Part] = []
    areas: dict[str, float] = {}
    sources: dict[str, Position] = {}
    cuts: list[TubeCut] = []
    for pipe in resolved.pipes:
        # A pipe's parts are made from its inputs alone: ``memo`` may hand back those of an
        # earlier build with the same inputs.
        item = stock.get(pipe.stock)
        inputs = PipePartsInputs(pipe, fab.kerf_m, fab.seam_allowance_m,
                                 item.thickness_m if item is not None else None)
        made, found, area, source = memo(inputs, partial(pipe_parts, inputs))
        parts += made
        problems += found
        areas.update(area)
        sources.update(source)
        if pipe.construction == "stock-tube":
            cuts.append(tube_cut(pipe))
    try:
        made, found, area, source = _finished(_holders(resolved, stock), kerf)
        parts += made
        problems += found
        areas.update(area)
        sources.update(source)
    except GeometryError as err:
        problems += err.problems
    sizes = {name: sheet_size(resolved, name) for name in sorted({p.stock for p in parts})}
    try:
        sheets = nest(parts, areas, sizes, mm(resolved.fabrication.spacing_m), sources)
    except GeometryError as err:
        problems += err.problems
    saw = mm(fab.kerf_m if fab.tube_kerf_m is None else fab.tube_kerf_m)
    bought, found = stock_plan.plan(cuts, stock, saw,
                                    {p.id: p.source for p in resolved.pipes})
    problems += found
    if problems:
        inches = inches_for(fab.units, fab.precision_m)
        raise GeometryError([replace(p, message=in_inches(p.message, inches),
                                     hint=in_inches(p.hint, inches)) for p in problems])
    return Parts(tuple(parts), sheets, tuple(cuts), bought)
