"""The named dimensions of a pipe, read from the resolved model, in the order a maker uses them.

One list serves the pipe's dimension table, the dimension lines of its side view
(``side_view``) and the columns of a rank's table (the *key* dimensions, lettered A, B, C...
on the rank's key drawing). A dimension quotes the resolved model's length exactly, in metres
(``value_m``), so every backend rounds the same number the way it shows lengths.
"""

from __future__ import annotations

from dataclasses import dataclass

from compiler.ir import Pipe

INSIDE_DIAMETER = "inside diameter"
OUTSIDE_DIAMETER = "outside diameter"
INSIDE_WIDTH = "inside width"
INSIDE_DEPTH = "inside depth"
WALL = "wall"
SPEAKING = "speaking length"
CUT = "cut length"
MOUTH_WIDTH = "mouth width"
CUTUP = "cut-up"
LIP = "lip thickness"
FOOT = "foot length"
TOE = "toe diameter"
TOE_HOLE = "toe hole"
BLOCK = "block length"
FLUE = "flue (windway)"
STOPPER = "stopper face from lower lip"
STOPPER_LENGTH = "stopper length"
TRAVEL = "stopper travel"
PLUG = "plug face from top"
PLUG_LENGTH = "plug length"
LABIUM = "labium from top"
WINDOW_LENGTH = "window length"
WINDOW_WIDTH = "window width"
DUCT = "duct height"
EMBOUCHURE = "embouchure diameter"
EMBOUCHURE_FROM_TOP = "embouchure from top"
CORK = "cork above embouchure"


@dataclass(frozen=True)
class Dim:
    """One dimension: its name, its value in metres and its letter on a key drawing."""

    name: str
    value_m: float
    key: str = ""


def dimensions(pipe: Pipe) -> tuple[Dim, ...]:
    """Every dimension the resolved pipe carries, key dimensions lettered in order."""
    rows: list[tuple[str, float | None, bool]] = []
    tube = pipe.construction == "stock-tube"
    if pipe.section == "rect":
        rows += [(INSIDE_WIDTH, pipe.inside_width_m, True),
                 (INSIDE_DEPTH, pipe.inside_depth_m, True), (WALL, pipe.wall_m, False)]
    elif tube:
        rows += [(OUTSIDE_DIAMETER, pipe.outside_diameter_m, True),
                 (INSIDE_DIAMETER, pipe.inside_diameter_m, True), (WALL, pipe.wall_m, False)]
    else:
        rows += [(INSIDE_DIAMETER, pipe.inside_diameter_m, True),
                 (OUTSIDE_DIAMETER, pipe.outside_diameter_m, False), (WALL, pipe.wall_m, False)]
    if pipe.block is not None:
        rows += [(BLOCK, pipe.block.length_m, True), (FLUE, pipe.block.flue_m, False)]
    rows.append((SPEAKING, pipe.speaking_length_m, pipe.head is None))
    rows.append((CUT, pipe.cut_length_m, True))
    if pipe.mouth is not None:
        rows += [(MOUTH_WIDTH, pipe.mouth.width_m, True), (CUTUP, pipe.mouth.cutup_m, True),
                 (LIP, pipe.mouth.lip_thickness_m, False)]
    if pipe.foot is not None:
        rows += [(FOOT, pipe.foot.length_m, True), (TOE, pipe.foot.toe_diameter_m, False),
                 (TOE_HOLE, pipe.foot.toe_hole_m, True)]
    if pipe.stopper is not None:
        if tube:
            rows += [(PLUG, pipe.stopper.position_m, True),
                     (PLUG_LENGTH, pipe.stopper.length_m, False)]
        else:
            rows += [(STOPPER, pipe.stopper.position_m, True),
                     (STOPPER_LENGTH, pipe.stopper.length_m, False)]
        rows.append((TRAVEL, pipe.stopper.travel_m, False))
    head = pipe.head
    if head is not None:
        rows += [(LABIUM, head.labium_from_top_m, False),
                 (WINDOW_LENGTH, head.window_length_m, False),
                 (WINDOW_WIDTH, head.window_width_m, False), (DUCT, head.duct_height_m, False),
                 (EMBOUCHURE, head.embouchure_diameter_m, False),
                 (EMBOUCHURE_FROM_TOP, head.embouchure_from_top_m, False),
                 (CORK, head.cork_m, False)]
    out: list[Dim] = []
    letter = 0
    for name, value, key in rows:
        if value is None:
            continue
        out.append(Dim(name, value, chr(ord("A") + letter) if key else ""))
        letter += 1 if key else 0
    return tuple(out)


def by_name(dims: tuple[Dim, ...]) -> dict[str, Dim]:
    return {d.name: d for d in dims}
