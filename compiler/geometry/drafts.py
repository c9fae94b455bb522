"""Drafts: a part at its nominal (finished) size, before kerf; labels placed inside it.

Builders (rolled sheet, boards, stock tube) describe each part as a :class:`Draft`: the
nominal outline, the openings, the marks and labels, and where in the spec it came from.
:func:`finish` turns a draft into the model's :class:`~compiler.geometry.model.Part` with
kerf-compensated cut paths. A part's own origin is the lower-left corner of its nominal
outline's bounding box, so features sit at their true dimensions; the compensated outline
reaches kerf/2 beyond that box.
"""

from __future__ import annotations

from dataclasses import dataclass

from compiler.errors import GeometryError, Position, Problem
from compiler.geometry.kerf import OffsetError, compensate
from compiler.geometry.model import Circle, Entity, Part, Point, Polyline, Text
from compiler.geometry.paths import area, snapped, text_width
from compiler.resolve.model import Pipe

LABEL_MAX_MM = 5.0
LABEL_MIN_MM = 1.5

Contour = Polyline | Circle


@dataclass(frozen=True)
class Draft:
    """A part at nominal size, with the spec position to blame when it cannot be made."""

    id: str
    pipe_id: str | None
    group: str
    name: str
    material: str
    stock: str
    thickness_mm: float
    kind: str
    """``sheet``, ``board`` (cut and nested) or ``template`` (printed)."""
    width_mm: float
    height_mm: float
    outline: Contour
    openings: tuple[Contour, ...]
    marks: tuple[Entity, ...]
    """``mark`` lines and ``engrave`` labels, never kerf-compensated."""
    source: Position
    grain_along_x: bool = False
    quantity: int = 1
    note: str = ""
    length_along_x: bool | None = None
    """See :attr:`compiler.geometry.model.Part.length_along_x`; boards default to their
    grain's direction."""

    @property
    def is_cut(self) -> bool:
        return self.kind in ("sheet", "board")

    @property
    def area_mm2(self) -> float:
        """Material area of one piece: the outline less its openings."""
        return area(self.outline) - sum(area(o) for o in self.openings)


def pipe_error(pipe: Pipe, message: str, hint: str) -> GeometryError:
    """A geometry error at the pipe's spec position, naming the pipe."""
    return GeometryError(Problem(pipe.source, f"pipe `{pipe.id}`: {message}", hint, "geometry"))


def label(text: str, center: Point, box_w: float, box_h: float,
          max_height: float = LABEL_MAX_MM) -> Text | None:
    """An ``engrave`` label centred at ``center`` inside a free box ``box_w × box_h`` mm:
    horizontal if it fits at a readable height, else turned 90° along the box, else none."""
    best: Text | None = None
    chars = max(len(text), 1)
    flat = min(max_height, 0.8 * box_h, 0.9 * box_w / (0.62 * chars))
    upright = min(max_height, 0.8 * box_w, 0.9 * box_h / (0.62 * chars))
    cx, cy = center
    if flat >= LABEL_MIN_MM and flat >= upright:
        w = text_width(text, flat)
        best = Text("engrave", (cx - w / 2.0, cy - flat / 2.0), round(flat, 3), text, 0.0)
    elif upright >= LABEL_MIN_MM:
        w = text_width(text, upright)
        best = Text("engrave", (cx + upright / 2.0, cy - w / 2.0), round(upright, 3), text, 90.0)
    return best


def labels(*items: Text | None) -> tuple[Text, ...]:
    """The labels that found room."""
    return tuple(t for t in items if t is not None)


def finish(draft: Draft, kerf_mm: float) -> Part:
    """The part as the cutter sees it: openings first (``cut-inner``, shrunk by kerf/2),
    then the outline (``cut-outer``, grown by kerf/2), then marks and labels. Templates are
    printed, so their paths keep their nominal size."""
    cut_kerf = kerf_mm if draft.is_cut else 0.0
    try:
        openings = tuple(compensate(o, cut_kerf) for o in draft.openings)
        outline = compensate(draft.outline, cut_kerf)
    except OffsetError as err:
        raise GeometryError(Problem(
            draft.source,
            f"part `{draft.id}`: the kerf of {kerf_mm:g} mm cannot be applied ({err})",
            "make the opening or the part larger, or give a smaller `fabrication.kerf`",
            "geometry")) from err
    entities: tuple[Entity, ...] = (*openings, outline, *draft.marks)
    return Part(
        id=draft.id,
        pipe_id=draft.pipe_id,
        group=draft.group,
        name=draft.name,
        material=draft.material,
        stock=draft.stock,
        thickness_mm=draft.thickness_mm,
        kind=draft.kind,
        width_mm=round(draft.width_mm, 6),
        height_mm=round(draft.height_mm, 6),
        entities=tuple(snapped(e) for e in entities),
        grain_along_x=draft.grain_along_x,
        quantity=draft.quantity,
        note=draft.note,
        length_along_x=(draft.length_along_x if draft.length_along_x is not None
                        else (True if draft.grain_along_x else None)),
    )
