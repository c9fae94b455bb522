"""Parts of a square wooden flue pipe glued up from boards.

Joint scheme (inside width W across the mouth, inside depth D, board thickness t, cut
length L, block length B; every board's grain runs along the pipe, drawn along x with the
pipe's bottom end at x = 0):

- two **sides**, D wide × L long, run the full length between front and back;
- the **back**, W + 2t wide × L, is glued over the sides' back edges;
- the **front**, W + 2t wide × (L − B), is glued over the sides' front edges from the top
  of the block upwards; the mouth is a notch in its bottom edge, mouth width × cut-up,
  centred: the notch's top edge is the upper lip;
- the **block** fills the inside, W × D × B, at the bottom (glued up from layers of
  W × B cut from the board and planed to D); its top face is the lower lip's level;
- the **cap**, W + 2t wide × B, covers the block's front and the sides' front edges below
  the mouth; the windway (flue) is routed into its inside face, mouth width wide;
- stopped pipes: a **stopper**, (W − c) × (D − c) × its length, glued up from layers and
  faced with leather or felt (c: 1 mm clearance, 0.5 mm a side), and a **handle** glued
  upright on it with a grip hole where the board leaves room.

So the pipe's outside is (W + 2t) × (D + 2t) and its inside exactly W × D.
"""

from __future__ import annotations

import math

from compiler.geometry.drafts import Draft, label, labels, pipe_error
from compiler.geometry.model import Circle, Entity, Polyline
from compiler.geometry.paths import closed, line, rect
from compiler.geometry.units import mm
from compiler.ir import Pipe

STOPPER_CLEARANCE_MM = 1.0
"""Total clearance of the stopper in the bore, for its leather or felt facing (common
practice: about 0.5 mm a side; plane to a snug fit)."""

HANDLE_MIN_MM = 40.0
HANDLE_MAX_MM = 80.0
GRIP_MAX_MM = 25.0
GRIP_MIN_MM = 10.0


def _board(pipe: Pipe, name: str, t: float, length: float, width: float,
           outline: Polyline | Circle, openings: tuple[Circle, ...] = (),
           marks: tuple[Entity, ...] = (), quantity: int = 1, note: str = "") -> Draft:
    text = f"{pipe.id} {name}"
    avoid = (outline, *openings, *marks)
    short = (f"{pipe.note} {name}", pipe.note)
    lab = label(text, (length / 2.0, width / 2.0), 0.8 * length, 0.6 * width, avoid=avoid,
                short=short)
    if openings:
        lab = label(text, (length / 2.0, width * 0.15), 0.8 * length, 0.2 * width,
                    avoid=avoid, short=short)
    return Draft(id=f"{pipe.id}-{name}", pipe_id=pipe.id, group=pipe.group, name=name,
                 material=pipe.material, stock=pipe.stock, thickness_mm=t, kind="board",
                 width_mm=length, height_mm=width, outline=outline, openings=openings,
                 marks=(*marks, *labels(lab)), source=pipe.source, grain_along_x=True,
                 quantity=quantity, note=note)


def _front(pipe: Pipe, t: float, length: float, width: float) -> Draft:
    if pipe.mouth is None:
        return _board(pipe, "front", t, length, width, rect("cut-outer", 0, 0, length, width))
    mw, cu = mm(pipe.mouth.width_m), mm(pipe.mouth.cutup_m)
    inside = width - 2.0 * t
    if mw > inside + 1e-6:
        raise pipe_error(pipe, f"the mouth ({mw:.1f} mm) is wider than the pipe's inside "
                    f"({inside:.1f} mm)", "give a mouth width of at most the full width")
    if cu >= length:
        raise pipe_error(pipe, f"the cut-up ({cu:.1f} mm) is longer than the front board",
                    "give a smaller cut-up")
    lo, hi = width / 2.0 - mw / 2.0, width / 2.0 + mw / 2.0
    pts = [(0.0, 0.0), (length, 0.0), (length, width), (0.0, width),
           (0.0, hi), (cu, hi), (cu, lo), (0.0, lo)]
    return _board(pipe, "front", t, length, width, closed("cut-outer", pts),
                  note=f"mouth {mw:.1f} mm wide, cut up {cu:.1f} mm, at the bottom edge; "
                       "bevel the upper lip")


def _stopper_parts(pipe: Pipe, t: float, inside_w: float, inside_d: float) -> list[Draft]:
    assert pipe.stopper is not None
    w, d = inside_w - STOPPER_CLEARANCE_MM, inside_d - STOPPER_CLEARANCE_MM
    length = mm(pipe.stopper.length_m)
    if length <= 0 or w <= 0 or d <= 0:
        raise pipe_error(pipe, "the stopper has no size", "check the stopper length and the scale")
    layers = max(1, math.ceil(d / t - 1e-9))
    stopper = _board(pipe, "stopper", t, length, w, rect("cut-outer", 0, 0, length, w),
                     quantity=layers,
                     note=f"glue {layers} layers, plane to {w:.1f} mm wide and {d:.1f} mm "
                          "deep, face with "
                          f"leather; its face sits {mm(pipe.stopper.position_m):.1f} mm "
                          "above the lower lip")
    height = min(HANDLE_MAX_MM, max(HANDLE_MIN_MM, 0.8 * inside_w))
    web = max(1.0, t)
    grip = min(GRIP_MAX_MM, w - 2.0 * web, height - 2.0 * web)
    holes: tuple[Circle, ...] = ()
    if grip >= GRIP_MIN_MM:
        holes = (Circle("cut-inner", (w / 2.0, height - web - grip / 2.0), grip / 2.0),)
    handle = _board(pipe, "handle", t, w, height, rect("cut-outer", 0, 0, w, height),
                    openings=holes, note="glue upright on the stopper's top, across its width")
    return [stopper, handle]


def board_drafts(pipe: Pipe, thickness_m: float) -> list[Draft]:
    """All board parts of one wooden pipe, in a fixed order (front, back, sides, block,
    cap, stopper, handle)."""
    if pipe.inside_width_m is None or pipe.inside_depth_m is None:
        raise pipe_error(pipe, "a wooden pipe needs an inside width and depth",
                    "give a rectangular scale (width and depth)")
    t = mm(thickness_m)
    w, d, length = mm(pipe.inside_width_m), mm(pipe.inside_depth_m), mm(pipe.cut_length_m)
    block = mm(pipe.block.length_m) if pipe.block is not None else 0.0
    if t <= 0 or w <= 0 or d <= 0:
        raise pipe_error(pipe, "the boards or the pipe have no size", "check the stock and scale")
    if block >= length:
        raise pipe_error(pipe, f"the block ({block:.1f} mm) is as long as the pipe "
                    f"({length:.1f} mm)", "give a shorter block")
    outer = w + 2.0 * t
    side_marks: list[Entity] = []
    if block > 0:
        side_marks.append(line("mark", (block, 0.0), (block, d)))
    top = None
    if pipe.stopper is not None:
        top = block + mm(pipe.stopper.position_m)
    elif 0 < mm(pipe.speaking_length_m) < length - block:
        top = block + mm(pipe.speaking_length_m)
    if top is not None and 0 < top < length:
        side_marks.append(line("mark", (top, 0.0), (top, d)))
    drafts = [
        _front(pipe, t, length - block, outer),
        _board(pipe, "back", t, length, outer, rect("cut-outer", 0, 0, length, outer)),
        _board(pipe, "side", t, length, d, rect("cut-outer", 0, 0, length, d),
               marks=tuple(side_marks), quantity=2,
               note="marks: the block's top (lower lip) and the stopper face or the "
                    "speaking length"),
    ]
    if pipe.block is not None:
        layers = max(1, math.ceil(d / t - 1e-9))
        drafts.append(_board(pipe, "block", t, block, w, rect("cut-outer", 0, 0, block, w),
                             quantity=layers,
                             note=f"glue {layers} layers, plane to {w:.1f} mm wide and {d:.1f} mm "
                                  "deep"))
        mw = mm(pipe.mouth.width_m) if pipe.mouth is not None else w
        lo, hi = outer / 2.0 - mw / 2.0, outer / 2.0 + mw / 2.0
        drafts.append(_board(
            pipe, "cap", t, block, outer, rect("cut-outer", 0, 0, block, outer),
            marks=(line("mark", (0.0, lo), (block, lo)), line("mark", (0.0, hi), (block, hi))),
            note=f"rout the windway {mm(pipe.block.flue_m):.2f} mm deep between the marks "
                 "on the inside face"))
    if pipe.stopper is not None and pipe.family.startswith("stopped"):
        drafts += _stopper_parts(pipe, t, w, d)
    return drafts
