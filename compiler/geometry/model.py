"""Parts: 2D outlines in millimetres, each path tagged with the operation that makes it.

The geometry stage turns the resolved model into ``Parts``; the DXF and PDF backends
read them (and the resolved model) and nothing else. Coordinates are millimetres, x to
the right, y up, each part's own origin at the lower-left of its bounding box.
"""

from __future__ import annotations

from dataclasses import dataclass

OPERATIONS = ("cut-inner", "cut-outer", "mark", "engrave")
"""``cut-inner``: openings, cut first; ``cut-outer``: the part's outline; ``mark``: score or
centre lines, not through; ``engrave``: labels."""

Point = tuple[float, float]


@dataclass(frozen=True)
class Polyline:
    """A path of straight segments and arcs (a DXF LWPOLYLINE).

    ``bulges[i]`` bends the segment from vertex i to vertex i+1 (DXF convention:
    tan(arc angle / 4), positive counter-clockwise, 0 straight). Cut paths are closed.
    """

    operation: str
    points: tuple[Point, ...]
    closed: bool
    bulges: tuple[float, ...] = ()


@dataclass(frozen=True)
class Circle:
    operation: str
    center: Point
    radius: float


@dataclass(frozen=True)
class Text:
    operation: str
    insert: Point
    height: float
    text: str
    rotation_deg: float = 0.0


Entity = Polyline | Circle | Text


@dataclass(frozen=True)
class Part:
    """One physical part (or a paper template) with its outline and features."""

    id: str
    """Unique and safe as a file name: ``<pipe id>-<name>``."""
    pipe_id: str | None
    group: str
    name: str
    """What it is in the maker's words: ``body``, ``foot``, ``languid``, ``front``, ..."""
    material: str
    stock: str
    thickness_mm: float
    kind: str
    """``sheet`` or ``board`` (nested and cut) or ``template`` (printed, not cut); lengths
    cut from stock tube are ``Parts.tube_cuts``, not parts."""
    width_mm: float
    height_mm: float
    entities: tuple[Entity, ...]
    grain_along_x: bool = False
    """Board parts: the grain runs along x and must stay so when nested."""
    quantity: int = 1
    note: str = ""
    """A line for the cut list (e.g. ``roll to 92.5 mm inside``)."""
    length_along_x: bool | None = None
    """Where the part's *length* runs: along x (a board's grain, a holder's row of
    openings), along y (a rolled body or a template: along the pipe), or None for parts
    with no such direction (disks, the foot's sector), whose longer side is the length."""

    @property
    def length_by_width(self) -> tuple[float, float]:
        """The part's size as every output names it: (length, width) in mm."""
        w, h = self.width_mm, self.height_mm
        if self.length_along_x is None:
            return max(w, h), min(w, h)
        return (w, h) if self.length_along_x else (h, w)


@dataclass(frozen=True)
class Placement:
    part_id: str
    x_mm: float
    y_mm: float
    rotated: bool
    """Turned 90° counter-clockwise about its origin, then moved."""


@dataclass(frozen=True)
class Sheet:
    id: str
    stock: str
    material: str
    thickness_mm: float
    length_mm: float
    width_mm: float
    placements: tuple[Placement, ...]
    utilisation: float
    """Part area over sheet area, 0..1."""


@dataclass(frozen=True)
class TubeCut:
    """A length cut from stock tube, for the cut list."""

    pipe_id: str
    stock: str
    material: str
    length_mm: float
    outside_diameter_mm: float


@dataclass(frozen=True)
class StockLength:
    """One length of stock tube to buy, and the pieces cut from it (``geometry.stock_plan``)."""

    stock: str
    material: str
    number: int
    """1, 2, ... within its stock."""
    length_mm: float
    outside_diameter_mm: float
    pieces: tuple[str, ...]
    """Pipe ids, in the order they are cut off."""
    used_mm: float
    """The pieces and the kerfs between them."""
    offcut_mm: float
    """What is left after the last cut (0 when less than a kerf remains)."""


@dataclass(frozen=True)
class Parts:
    parts: tuple[Part, ...]
    sheets: tuple[Sheet, ...]
    tube_cuts: tuple[TubeCut, ...]
    stock_lengths: tuple[StockLength, ...] = ()
    """Lengths of stock tube to buy and the pieces from each (stocks with a length only)."""

    def part(self, part_id: str) -> Part:
        return next(p for p in self.parts if p.id == part_id)
