"""The side view of one pipe as a drawing model: what is drawn, in the pipe's millimetres.

x runs across the pipe, centred on its axis; y up from the bottom end (a metal pipe's toe,
a wooden pipe's block, a tube's or flute's foot). The model lists the outlines and filled
areas, the hole marks, the dimension lines (each with the named dimension it shows, see
``dimensions``) and the callouts, each with the numbers it carries: the build sheet
(``compiler/emit/pdf/sideview.py``) fits the view into a box on the page and words it
(millimetres, inches, the letters of a rank's key drawing). Nothing here is text for a
person but the hole labels the spec gives.
"""

from __future__ import annotations

from dataclasses import dataclass

from compiler.geometry import dimensions as D
from compiler.geometry.units import mm
from compiler.ir import Head, Pipe

Point = tuple[float, float]

# What a callout points at (``Callout.kind``).
TOE_HOLE, FLUE, MOUTH, PLUG, STOPPER = "toe hole", "flue", "mouth", "plug", "stopper"
WINDOW, DUCT, REED_END, CLOSED_END = "window", "duct", "reed end", "closed end"
EMBOUCHURE, CORK, HOLE = "embouchure", "cork", "hole"


@dataclass(frozen=True)
class Shape:
    style: str
    """``outline``, ``hidden`` (dashed), ``centre`` (chain line), ``opening`` (dark fill),
    ``solid`` (hatched: block, stopper, plug), ``tint`` (tuning allowance)."""
    points: tuple[Point, ...]
    closed: bool = True


@dataclass(frozen=True)
class HoleMark:
    x: float
    y: float
    radius: float
    hidden: bool
    """On the far side of the tube (drawn dashed)."""


@dataclass(frozen=True)
class VDim:
    """A dimension along the pipe, from ``y0`` to ``y1``."""

    y0: float
    y1: float
    dim: D.Dim


@dataclass(frozen=True)
class HDim:
    """A dimension across the pipe at height ``y``, drawn above or below the view."""

    x0: float
    x1: float
    y: float
    dim: D.Dim
    above: bool


@dataclass(frozen=True)
class Callout:
    """A leader to a feature at (``x``, ``y``) and what to say about it."""

    x: float
    y: float
    kind: str
    """One of ``TOE_HOLE``, ``FLUE``, ``MOUTH``, ... ``HOLE``."""
    values_mm: tuple[float, ...] = ()
    """The feature's sizes in the order it states them (a mouth: width, cut-up; a hole:
    diameter, distance from the top); empty where it states none."""
    keys: tuple[str, ...] = ()
    """The letters of the key dimensions it states: a callout with letters is also shown
    on a rank's key drawing."""
    label: str = ""
    """A hole's label."""
    back: bool = False
    """A hole on the far side of the tube."""


@dataclass(frozen=True)
class View:
    half_width: float
    height: float
    shapes: tuple[Shape, ...]
    holes: tuple[HoleMark, ...]
    vdims: tuple[VDim, ...]
    hdims: tuple[HDim, ...]
    callouts: tuple[Callout, ...]


def _rect(style: str, x0: float, y0: float, x1: float, y1: float) -> Shape:
    return Shape(style, ((x0, y0), (x1, y0), (x1, y1), (x0, y1)))


def _line(style: str, a: Point, b: Point) -> Shape:
    return Shape(style, (a, b), closed=False)


def _keys(dims: dict[str, D.Dim], *names: str) -> tuple[str, ...]:
    return tuple(dims[n].key for n in names if n in dims and dims[n].key)


def side_view(pipe: Pipe) -> View:
    """The side view of a resolved pipe, in its own millimetres."""
    dims = D.by_name(D.dimensions(pipe))
    shapes: list[Shape] = []
    holes: list[HoleMark] = []
    vdims: list[VDim] = []
    hdims: list[HDim] = []
    calls: list[Callout] = []

    def size(name: str) -> float:
        return mm(dims[name].value_m)

    cut = mm(pipe.cut_length_m)
    speaking = mm(pipe.speaking_length_m)
    if pipe.section == "rect":
        inner = mm(pipe.inside_width_m or 0.0) / 2.0
    else:
        inner = mm(pipe.inside_diameter_m or 0.0) / 2.0
    outer = inner + mm(pipe.wall_m)
    if pipe.construction == "stock-tube" and pipe.outside_diameter_m:
        outer = mm(pipe.outside_diameter_m) / 2.0
    base = 0.0  # the lower lip (flue pipes), or the bottom end
    if pipe.foot is not None:
        base = mm(pipe.foot.length_m)
        toe = mm(pipe.foot.toe_diameter_m) / 2.0
        shapes.append(Shape("outline", ((-toe, 0.0), (toe, 0.0), (inner, base), (-inner, base))))
        vdims.append(VDim(0.0, base, dims[D.FOOT]))
        hdims.append(HDim(-toe, toe, 0.0, dims[D.TOE], above=False))
        calls.append(Callout(0.0, 0.0, TOE_HOLE, (size(D.TOE_HOLE),),
                             _keys(dims, D.TOE_HOLE)))
    elif pipe.block is not None:
        base = mm(pipe.block.length_m)
    top = base + cut if pipe.foot is not None else cut
    shapes.append(_rect("outline", -outer if pipe.foot is None else -inner, base
                        if pipe.foot is not None else 0.0, outer if pipe.foot is None else inner,
                        top))
    if pipe.bore:
        # A surveyed bore: its measured profile, from the top end down, as hidden lines.
        profile = [(mm(s.diameter_m) / 2.0, top - mm(s.from_top_m)) for s in pipe.bore]
        if profile[0][1] < top:
            profile.insert(0, (profile[0][0], top))
        if profile[-1][1] > 0.0:
            profile.append((profile[-1][0], 0.0))
        for side in (-1.0, 1.0):
            shapes.append(Shape("hidden", tuple((side * r, y) for r, y in profile), False))
    elif pipe.foot is None and outer > inner:
        shapes += [_line("hidden", (-inner, 0.0), (-inner, top)),
                   _line("hidden", (inner, 0.0), (inner, top))]
    shapes.append(_line("centre", (0.0, -3.0), (0.0, top + 3.0)))
    width_name = D.INSIDE_WIDTH if pipe.section == "rect" else (
        D.OUTSIDE_DIAMETER if pipe.construction == "stock-tube" and D.OUTSIDE_DIAMETER in dims
        else D.INSIDE_DIAMETER)
    wv = outer if width_name == D.OUTSIDE_DIAMETER else inner
    hdims.append(HDim(-wv, wv, top, dims[width_name], above=True))

    if pipe.block is not None:
        shapes.append(_rect("solid", -inner, 0.0, inner, base))
        vdims.append(VDim(0.0, base, dims[D.BLOCK]))
        calls.append(Callout(-inner * 0.6, base - 1.0, FLUE, (size(D.FLUE),)))
    if pipe.mouth is not None:
        w, h = mm(pipe.mouth.width_m) / 2.0, mm(pipe.mouth.cutup_m)
        shapes.append(_rect("opening", -w, base, w, base + h))
        calls.append(Callout(-w * 0.5, base + h * 0.5, MOUTH,
                             (size(D.MOUTH_WIDTH), size(D.CUTUP)),
                             _keys(dims, D.MOUTH_WIDTH, D.CUTUP)))
    if pipe.head is None:
        if pipe.family in ("open-flue", "open-tube") and speaking < top - base - 0.01:
            shapes.append(_rect("tint", -inner, base + speaking, inner, top))
            shapes.append(_line("hidden", (-outer, base + speaking), (outer, base + speaking)))
        if pipe.stopper is None or pipe.construction != "stock-tube":
            vdims.append(VDim(base, base + speaking, dims[D.SPEAKING]))
    vdims.append(VDim(0.0 if pipe.foot is None else base, top, dims[D.CUT]))

    stop = pipe.stopper
    if stop is not None and pipe.construction == "stock-tube":
        face = top - mm(stop.position_m)
        shapes.append(_rect("solid", -inner, max(0.0, face - mm(stop.length_m)), inner, face))
        vdims.append(VDim(face, top, dims[D.SPEAKING]))
        calls.append(Callout(0.0, face, PLUG, (size(D.PLUG),), _keys(dims, D.PLUG)))
    elif stop is not None:
        face = base + mm(stop.position_m)
        end = min(top, face + mm(stop.length_m))
        shapes.append(_rect("solid", -inner, face, inner, end))
        if end < top:
            shapes.append(_rect("tint", -inner, end, inner, top))
        calls.append(Callout(0.0, face, STOPPER, (size(D.STOPPER),), _keys(dims, D.STOPPER)))

    head = pipe.head
    if head is not None:
        _head(head, top, inner, dims, shapes, holes, vdims, calls)
    for hole in pipe.holes:
        y = mm(hole.position_from_bottom_m)
        hidden = 90.0 < abs(hole.angle_deg) % 360.0 < 270.0
        holes.append(HoleMark(0.0, y, mm(hole.diameter_m) / 2.0, hidden))
        calls.append(Callout(0.0, y, HOLE, (mm(hole.diameter_m), mm(hole.position_from_top_m)),
                             label=hole.label, back=hidden))
    return View(max(outer, inner), top, tuple(shapes), tuple(holes), tuple(vdims),
                tuple(hdims), tuple(calls))


def _head(head: Head, top: float, inner: float, dims: dict[str, D.Dim],
          shapes: list[Shape], holes: list[HoleMark], vdims: list[VDim],
          calls: list[Callout]) -> None:
    if head.kind == "duct" and head.labium_from_top_m is not None:
        lab = top - mm(head.labium_from_top_m)
        wl = mm(head.window_length_m or 0.0)
        ww = mm(head.window_width_m) / 2.0 if head.window_width_m else inner
        shapes.append(_rect("solid", -inner, lab + wl, inner, top))
        shapes.append(_rect("opening", -ww, lab, ww, lab + wl))
        vdims.append(VDim(lab, top, dims[D.LABIUM]))
        window: tuple[float, ...] = ()
        if D.WINDOW_LENGTH in dims and D.WINDOW_WIDTH in dims:
            window = (mm(dims[D.WINDOW_LENGTH].value_m), mm(dims[D.WINDOW_WIDTH].value_m))
        calls.append(Callout(-ww * 0.5, lab + wl * 0.5, WINDOW, window))
        if D.DUCT in dims:
            calls.append(Callout(0.0, lab + wl + 4.0, DUCT, (mm(dims[D.DUCT].value_m),)))
    elif head.kind in ("reed", "closed"):
        shapes.append(_rect("solid", -inner, top - 2.0, inner, top))
        calls.append(Callout(0.0, top - 1.0, REED_END if head.kind == "reed" else CLOSED_END))
    elif head.embouchure_from_top_m is not None:
        y = top - mm(head.embouchure_from_top_m)
        diameter = mm(head.embouchure_diameter_m or 0.0)
        holes.append(HoleMark(0.0, y, diameter / 2.0, False))
        vdims.append(VDim(y, top, dims[D.EMBOUCHURE_FROM_TOP]))
        calls.append(Callout(0.0, y, EMBOUCHURE, (diameter,)))
        if head.cork_m is not None:
            cy = y + mm(head.cork_m)
            shapes.append(_rect("solid", -inner, cy, inner, min(top, cy + 4.0)))
            calls.append(Callout(0.0, cy, CORK, (mm(head.cork_m),)))
