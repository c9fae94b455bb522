"""Nesting: parts of one stock placed on as many sheets as needed.

A deterministic shelf packer. The parts of each stock (material, stock name, thickness)
are taken largest first (by height, then width, then id); each goes on the lowest shelf it
fits (best fit), else opens a new shelf on the first sheet with room, else a new sheet.
Footprints are the parts' bounding boxes including the kerf-compensated outline; the
spacing is kept between footprints and from the sheet's edges.

Rotation: sheet-metal parts may be turned 90° (their longer side goes along the sheet's
length when it fits); board parts never turn, so their grain (drawn along x) stays along
the sheet's length, which is the board's grain.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, field, replace

from compiler.errors import GeometryError, Position, Problem
from compiler.geometry.model import Part, Placement, Sheet
from compiler.geometry.paths import Box, bounds_of


@dataclass(frozen=True)
class SheetSize:
    length_mm: float
    width_mm: float


@dataclass(frozen=True)
class _Item:
    part: Part
    copy: int
    box: Box
    rotated: bool
    w: float
    h: float


@dataclass
class _Shelf:
    y: float
    height: float
    used: float


@dataclass
class _Bin:
    shelves: list[_Shelf] = field(default_factory=list)
    top: float = 0.0
    placements: list[Placement] = field(default_factory=list)
    area: float = 0.0


def slug(text: str) -> str:
    """A file-name-safe form of a material name."""
    return re.sub(r"[^a-z0-9]+", "-", text.lower()).strip("-") or "material"


def _orient(part: Part, box: Box, lx: float, ly: float) -> tuple[bool, float, float] | None:
    w, h = box[2] - box[0], box[3] - box[1]
    options = [(False, w, h)]
    if part.kind == "sheet":
        options.append((True, h, w))
        options.sort(key=lambda o: (o[2] > o[1], o[0]))
    for rotated, ow, oh in options:
        if ow <= lx + 1e-9 and oh <= ly + 1e-9:
            return rotated, ow, oh
    return None


def _too_big(part: Part, box: Box, size: SheetSize, spacing: float,
             source: Position) -> Problem:
    w, h = box[2] - box[0], box[3] - box[1]
    # the part's size as every output names it: length × width
    length, width = ((max(w, h), min(w, h)) if part.length_along_x is None else
                     (w, h) if part.length_along_x else (h, w))
    if part.kind == "sheet":
        turn, need = "", (max(w, h) + 2 * spacing, min(w, h) + 2 * spacing)
    else:
        turn = " (board parts keep their grain along the sheet's length)"
        need = (w + 2 * spacing, h + 2 * spacing)
    return Problem(
        source,
        f"part `{part.id}` ({length:.1f} × {width:.1f} mm with the kerf, length × width) "
        "does not fit the "
        f"{size.length_mm:g} × {size.width_mm:g} mm sheet of `{part.stock}` less "
        f"{spacing:g} mm spacing at its edges{turn}",
        f"it needs a sheet of at least {math.ceil(need[0])} × {math.ceil(need[1])} mm: give "
        f"a larger `fabrication.sheet` or `size` of stock `{part.stock}`, or make the part "
        "smaller",
        "geometry")


def _pack(items: list[_Item], lx: float, ly: float, spacing: float,
          areas: dict[str, float]) -> list[_Bin]:
    bins: list[_Bin] = []
    narrowest = min(i.w for i in items)
    open_shelves: list[tuple[_Bin, _Shelf]] = []
    for item in items:
        best: tuple[_Bin, _Shelf] | None = None
        for b, shelf in open_shelves:
            gap = spacing if shelf.used > 0 else 0.0
            if item.h <= shelf.height + 1e-9 and shelf.used + gap + item.w <= lx + 1e-9:
                if best is None or shelf.height < best[1].height:
                    best = (b, shelf)
        if best is None:
            target = None
            for b in bins:
                gap = spacing if b.shelves else 0.0
                if b.top + gap + item.h <= ly + 1e-9:
                    target = b
                    break
            if target is None:
                target = _Bin()
                bins.append(target)
            gap = spacing if target.shelves else 0.0
            shelf = _Shelf(target.top + gap, item.h, 0.0)
            target.shelves.append(shelf)
            target.top = shelf.y + item.h
            open_shelves.append((target, shelf))
            best = (target, shelf)
        b, shelf = best
        x = shelf.used + (spacing if shelf.used > 0 else 0.0)
        sx, sy = spacing + x, spacing + shelf.y
        box = item.box
        if item.rotated:
            px, py = sx + box[3], sy - box[0]
        else:
            px, py = sx - box[0], sy - box[1]
        b.placements.append(Placement(item.part.id, round(px, 6), round(py, 6), item.rotated))
        b.area += areas[item.part.id]
        shelf.used = x + item.w
        if lx - shelf.used - spacing < narrowest:
            open_shelves = [(ob, os) for ob, os in open_shelves if os is not shelf]
    return bins


def nest(parts: list[Part], areas: dict[str, float], sizes: dict[str, SheetSize],
         spacing_mm: float, sources: dict[str, Position]) -> tuple[Sheet, ...]:
    """Sheets for every ``sheet`` and ``board`` part (each copy of its quantity).

    ``areas``: each part's material area (mm²) for the utilisation; ``sizes``: sheet size
    by stock name; ``sources``: spec positions to name in errors. Raises
    :class:`GeometryError` for parts that fit no sheet in an allowed orientation.
    """
    groups: dict[tuple[str, str, float], list[Part]] = {}
    for part in parts:
        if part.kind in ("sheet", "board"):
            groups.setdefault((part.material, part.stock, part.thickness_mm), []).append(part)
    sheets: list[Sheet] = []
    problems: list[Problem] = []
    for key in sorted(groups):
        material, stock, thickness = key
        size = sizes[stock]
        lx, ly = size.length_mm - 2 * spacing_mm, size.width_mm - 2 * spacing_mm
        items: list[_Item] = []
        for part in groups[key]:
            box = bounds_of(part.entities)
            fit = _orient(part, box, lx, ly)
            if fit is None:
                problems.append(_too_big(part, box, size, spacing_mm, sources[part.id]))
                continue
            for copy in range(part.quantity):
                items.append(_Item(part, copy, box, fit[0], fit[1], fit[2]))
        if not items:
            continue
        items.sort(key=lambda i: (-round(i.h, 6), -round(i.w, 6), i.part.id, i.copy))
        for b in _pack(items, lx, ly, spacing_mm, areas):
            sheets.append(Sheet(
                id=slug(material), stock=stock, material=material,
                thickness_mm=thickness, length_mm=size.length_mm, width_mm=size.width_mm,
                placements=tuple(b.placements),
                utilisation=round(b.area / (size.length_mm * size.width_mm), 6)))
    if problems:
        raise GeometryError(problems)
    # Numbered across all stocks, zero-padded (sheet-01-pine, ..., sheet-12-pine) so that the
    # files sort in order; three digits from a hundred sheets on.
    digits = max(2, len(str(len(sheets))))
    return tuple(replace(sheet, id=f"sheet-{n:0{digits}d}-{sheet.id}")
                 for n, sheet in enumerate(sheets, start=1))
