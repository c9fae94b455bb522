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

import shapely
from shapely.geometry import LinearRing, LineString, Polygon
from shapely.geometry import box as shapely_box
from shapely.geometry.base import BaseGeometry

from compiler.errors import GeometryError, Position, Problem
from compiler.geometry.kerf import OffsetError, compensate
from compiler.geometry.model import Circle, Entity, Part, Point, Polyline, Text
from compiler.geometry.paths import area, flatten, snapped, text_width, to_polygon
from compiler.ir import Pipe

LABEL_MAX_MM = 5.0
LABEL_MIN_MM = 1.5
READABLE_MM = 2.05
"""The least height (mm, of the capitals) of a label a maker reads a cut or a drill off:
the build sheet prints a label of height h in type h/0.72 mm tall (DejaVu Sans's capitals
are 0.73 of its size, ``emit/pdf/templates.py``), so 2.05 mm prints at 8.07 pt, the least
size of text a cut depends on. Where a label cannot stand this tall, the template page
repeats it in a key at 8 pt."""

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


def pipe_error(pipe: Pipe, message: str, hint: str,
               at: Position | None = None) -> GeometryError:
    """A geometry error naming the pipe, at ``at`` (a hole's spec position, say), else at the
    pipe's."""
    return GeometryError(Problem(at or pipe.source, f"pipe `{pipe.id}`: {message}", hint,
                                 "geometry"))


LABEL_LONG_MIN_MM = 3.0
"""The long label (pipe id and part) only where it can be this tall; else the short one."""
LABEL_CLEAR_MM = 0.5
"""Room kept between a label and any line of its part."""


def _candidates(center: Point, box_w: float, box_h: float) -> list[Point]:
    """Where a label may go inside its free box: the given centre first, then points ever
    further from it (fixed order: the same spec gives the same labels)."""
    cx, cy = center
    out = [center]
    for step in (0.15, 0.3, 0.45):
        for dx, dy in ((0.0, -1.0), (0.0, 1.0), (-1.0, 0.0), (1.0, 0.0), (-1.0, -1.0),
                       (1.0, -1.0), (-1.0, 1.0), (1.0, 1.0)):
            out.append((cx + dx * step * box_w, cy + dy * step * box_h))
    return out


def _text_at(text: str, center: Point, height: float, upright: bool) -> Text:
    w = text_width(text, height)
    cx, cy = center
    if upright:
        return Text("engrave", (cx + height / 2.0, cy - w / 2.0), round(height, 3), text, 90.0)
    return Text("engrave", (cx - w / 2.0, cy - height / 2.0), round(height, 3), text, 0.0)


def _extent(t: Text) -> tuple[float, float, float, float]:
    """(x0, y0, x1, y1) of a label's box (horizontal or turned 90°)."""
    w = text_width(t.text, t.height)
    x, y = t.insert
    if t.rotation_deg == 90.0:
        return x - t.height, y, x, y + w
    return x, y, x + w, y + t.height


def text_box(t: Text, grow: float = 0.0) -> Polygon:
    """A label's box (the width ``paths.text_width`` allows it, horizontal or turned 90°),
    grown by ``grow`` mm on every side."""
    x0, y0, x1, y1 = _extent(t)
    return shapely_box(x0 - grow, y0 - grow, x1 + grow, y1 + grow)


OBSTACLE_SAG_MM = 0.1
"""Arcs become chords within this much when labels are kept clear of them (well inside the
clearance)."""


def _obstacles(avoid: tuple[Entity, ...]) -> list[BaseGeometry]:
    shapes: list[BaseGeometry] = []
    for e in avoid:
        if isinstance(e, Text):
            shapes.append(text_box(e))
        elif isinstance(e, Circle):
            # finer on a small disk: its chords would eat into the room for the label
            shapes.append(to_polygon(e, min(OBSTACLE_SAG_MM, 0.02 * e.radius)).exterior)
        elif len(e.points) >= 2:
            points = flatten(e, OBSTACLE_SAG_MM)
            shapes.append(LinearRing(points) if e.closed and len(points) >= 3
                          else LineString(points))
    return shapes


class Room:
    """The room a part leaves for its labels: clear of every line and label in ``avoid``
    (marks, the outline, openings) by ``clear`` mm, and of each label placed since
    (:meth:`take`). The one collision test of :func:`label` and of the labels set beside a
    mark (``tube.hole_label``)."""

    def __init__(self, avoid: tuple[Entity, ...], clear: float = LABEL_CLEAR_MM) -> None:
        self.clear = clear
        self._shapes = _obstacles(avoid)

    def fits(self, t: Text) -> bool:
        """Whether the label ``t`` keeps clear of everything in the room."""
        return not shapely.intersects(self._shapes, text_box(t, self.clear)).any()

    def take(self, t: Text) -> None:
        """Place ``t``: labels placed after it keep clear of it."""
        self._shapes.append(text_box(t))


def label(text: str, center: Point, box_w: float, box_h: float,
          max_height: float = LABEL_MAX_MM, avoid: tuple[Entity, ...] = (),
          short: tuple[str, ...] = (), smallest: float = LABEL_MIN_MM,
          clear: float = LABEL_CLEAR_MM) -> Text | None:
    """An ``engrave`` label inside a free box ``box_w × box_h`` mm around ``center``: as tall
    as fits (up to ``max_height``), horizontal where it fits as well as turned 90° along the
    box, and clear of every line and label in ``avoid`` (marks, the outline, openings),
    moving away from the centre if need be. ``short`` are shorter texts to fall back on
    (the note of the pipe, say): the long text only where it can stand ``LABEL_LONG_MIN_MM``
    tall; ``clear`` mm from every line. None if nothing fits at ``smallest`` (mm)."""
    room = Room(avoid, clear)
    fx0, fy0 = center[0] - box_w / 2.0 - 1e-9, center[1] - box_h / 2.0 - 1e-9
    fx1, fy1 = center[0] + box_w / 2.0 + 1e-9, center[1] + box_h / 2.0 + 1e-9
    texts = [text, *short]
    for k, words in enumerate(texts):
        chars = max(len(words), 1)
        flat = min(max_height, 0.8 * box_h, 0.9 * box_w / (0.62 * chars))
        upright = min(max_height, 0.8 * box_w, 0.9 * box_h / (0.62 * chars))
        least = LABEL_LONG_MIN_MM if k < len(texts) - 1 else smallest
        options = sorted(((flat, False), (upright, True)), key=lambda o: -o[0])
        for height, turned in options:
            size = height
            while size >= least - 1e-9:
                for spot in _candidates(center, box_w, box_h):
                    found = _text_at(words, spot, size, turned)
                    x0, y0, x1, y1 = _extent(found)
                    if not (fx0 <= x0 and fy0 <= y0 and x1 <= fx1 and y1 <= fy1):
                        continue  # outside the free box
                    if room.fits(found):
                        return found
                size *= 0.8
    return None


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
