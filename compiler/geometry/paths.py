"""Path arithmetic on the parts model: arcs given by bulges, areas, bounds, transforms.

A :class:`~compiler.geometry.model.Polyline` segment from vertex ``a`` to vertex ``b``
with bulge ``k`` is a circular arc of included angle ``θ = 4·atan(k)``, counter-clockwise
when ``k > 0`` (the DXF convention). Its chord ``c = |b − a|`` gives the radius
``r = c / (2·sin(θ/2))`` and the centre lies ``(c/2)/tan(θ/2)`` to the left of the chord's
midpoint (to the right for a clockwise arc). All lengths in millimetres.
"""

from __future__ import annotations

import math
from collections.abc import Iterator
from dataclasses import dataclass

from shapely.geometry import Polygon

from compiler.geometry.model import Circle, Entity, Placement, Point, Polyline, Text
from compiler.geometry.units import snap, snap_bulge

SAG_MM = 0.01
"""Largest distance between an arc and the chords that stand for it in polygon checks."""

TEXT_WIDTH_FACTOR = 0.62
"""Approximate advance of one character of the standard DXF font, as a fraction of the
text height (common practice for the simplex/txt fonts; used only to keep labels inside
their part)."""

Box = tuple[float, float, float, float]
"""(xmin, ymin, xmax, ymax) in mm."""


@dataclass(frozen=True)
class Arc:
    center: Point
    radius: float
    start_deg: float
    sweep_deg: float
    """Signed: positive counter-clockwise."""


def arc_of(a: Point, b: Point, bulge: float) -> Arc:
    """The arc from ``a`` to ``b`` with DXF ``bulge`` (non-zero): centre, radius, angles."""
    theta = 4.0 * math.atan(bulge)
    dx, dy = b[0] - a[0], b[1] - a[1]
    chord = math.hypot(dx, dy)
    half = chord / 2.0
    h = half / math.tan(theta / 2.0)
    ux, uy = dx / chord, dy / chord
    cx = (a[0] + b[0]) / 2.0 - uy * h
    cy = (a[1] + b[1]) / 2.0 + ux * h
    radius = math.hypot(a[0] - cx, a[1] - cy)
    start = math.degrees(math.atan2(a[1] - cy, a[0] - cx))
    return Arc((cx, cy), radius, start, math.degrees(theta))


def bulge_for(sweep_deg: float) -> float:
    """DXF bulge of an arc with a signed included angle (degrees)."""
    return math.tan(math.radians(sweep_deg) / 4.0)


def segments(poly: Polyline) -> Iterator[tuple[Point, Point, float]]:
    """(start, end, bulge) of each segment, the closing one included for closed paths."""
    pts = poly.points
    n = len(pts)
    last = n if poly.closed else n - 1
    for i in range(last):
        bulge = poly.bulges[i] if i < len(poly.bulges) else 0.0
        yield pts[i], pts[(i + 1) % n], bulge


def signed_area(poly: Polyline) -> float:
    """Enclosed area (mm²) of a closed path, positive when counter-clockwise.

    Shoelace sum over the vertices plus, for each arc, its circular segment
    ``r²/2·(θ − sin θ)`` on the side the bulge points to.
    """
    total = 0.0
    for a, b, k in segments(poly):
        total += a[0] * b[1] - b[0] * a[1]
        if k:
            arc = arc_of(a, b, k)
            theta = abs(math.radians(arc.sweep_deg))
            seg = arc.radius**2 / 2.0 * (theta - math.sin(theta))
            total += 2.0 * math.copysign(seg, k)
    return total / 2.0


def area(entity: Polyline | Circle) -> float:
    """Unsigned enclosed area (mm²) of a closed path or circle."""
    if isinstance(entity, Circle):
        return math.pi * entity.radius**2
    return abs(signed_area(entity))


def arc_points(arc: Arc, sag: float = SAG_MM) -> list[Point]:
    """Points along an arc (both ends included), chords within ``sag`` of the arc."""
    sweep = math.radians(arc.sweep_deg)
    ratio = max(-1.0, min(1.0, 1.0 - sag / arc.radius)) if arc.radius > sag else -1.0
    step = max(2.0 * math.acos(ratio), math.radians(0.5))
    n = min(720, max(2, math.ceil(abs(sweep) / step)))
    start = math.radians(arc.start_deg)
    cx, cy = arc.center
    return [
        (cx + arc.radius * math.cos(start + sweep * i / n),
         cy + arc.radius * math.sin(start + sweep * i / n))
        for i in range(n + 1)
    ]


def flatten(poly: Polyline, sag: float = SAG_MM) -> list[Point]:
    """The path's vertices with arcs replaced by chords (no repeated closing point)."""
    out: list[Point] = []
    for a, b, k in segments(poly):
        if k:
            out.extend(arc_points(arc_of(a, b, k), sag)[:-1])
        else:
            out.append(a)
    if not poly.closed:
        out.append(poly.points[-1])
    return out


def to_polygon(entity: Polyline | Circle, sag: float = SAG_MM) -> Polygon:
    """A shapely polygon standing for a closed path or a circle (for checks only)."""
    if isinstance(entity, Circle):
        ring = arc_points(Arc(entity.center, entity.radius, 0.0, 360.0), sag)[:-1]
        return Polygon(ring)
    return Polygon(flatten(entity, sag))


def _arc_box(arc: Arc) -> Box:
    cx, cy = arc.center
    angles = [arc.start_deg, arc.start_deg + arc.sweep_deg]
    lo, hi = sorted(angles)
    first = math.ceil(lo / 90.0)
    angles += [90.0 * q for q in range(first, math.floor(hi / 90.0) + 1)]
    xs = [cx + arc.radius * math.cos(math.radians(t)) for t in angles]
    ys = [cy + arc.radius * math.sin(math.radians(t)) for t in angles]
    return min(xs), min(ys), max(xs), max(ys)


def text_width(text: str, height: float) -> float:
    """Approximate width (mm) of a single line of text in the standard font."""
    return TEXT_WIDTH_FACTOR * height * len(text)


def bounds(entity: Entity) -> Box:
    """Bounding box of one entity (text: its approximate box, rotations of 0/90/180/270°)."""
    if isinstance(entity, Circle):
        (x, y), r = entity.center, entity.radius
        return x - r, y - r, x + r, y + r
    if isinstance(entity, Text):
        w, h = text_width(entity.text, entity.height), entity.height
        x, y = entity.insert
        corners = [(0.0, 0.0), (w, 0.0), (w, h), (0.0, h)]
        c = math.cos(math.radians(entity.rotation_deg))
        s = math.sin(math.radians(entity.rotation_deg))
        xs = [x + u * c - v * s for u, v in corners]
        ys = [y + u * s + v * c for u, v in corners]
        return min(xs), min(ys), max(xs), max(ys)
    xs = [p[0] for p in entity.points]
    ys = [p[1] for p in entity.points]
    box = (min(xs), min(ys), max(xs), max(ys))
    for a, b, k in segments(entity):
        if k:
            box = union(box, _arc_box(arc_of(a, b, k)))
    return box


def union(a: Box, b: Box) -> Box:
    return min(a[0], b[0]), min(a[1], b[1]), max(a[2], b[2]), max(a[3], b[3])


def bounds_of(entities: tuple[Entity, ...] | list[Entity]) -> Box:
    """Bounding box of several entities."""
    boxes = [bounds(e) for e in entities]
    box = boxes[0]
    for b in boxes[1:]:
        box = union(box, b)
    return box


# --- constructors ---------------------------------------------------------------------


def rect(operation: str, x0: float, y0: float, x1: float, y1: float) -> Polyline:
    """A closed counter-clockwise rectangle."""
    return Polyline(operation, ((x0, y0), (x1, y0), (x1, y1), (x0, y1)), True, (0.0,) * 4)


def line(operation: str, a: Point, b: Point) -> Polyline:
    """An open straight path (marks: score and centre lines, ticks)."""
    return Polyline(operation, (a, b), False, (0.0, 0.0))


def closed(operation: str, points: list[Point], bulges: list[float] | None = None) -> Polyline:
    """A closed path; ``bulges`` default to straight segments."""
    return Polyline(operation, tuple(points), True,
                    tuple(bulges) if bulges is not None else (0.0,) * len(points))


# --- transforms -----------------------------------------------------------------------


def moved(entity: Entity, dx: float, dy: float, rotated: bool = False) -> Entity:
    """``entity`` turned 90° counter-clockwise about the origin (if ``rotated``), then
    moved by (dx, dy); coordinates snapped to 1e-6 mm."""

    def tf(p: Point) -> Point:
        x, y = (-p[1], p[0]) if rotated else p
        return snap(x + dx), snap(y + dy)

    if isinstance(entity, Circle):
        return Circle(entity.operation, tf(entity.center), snap(entity.radius))
    if isinstance(entity, Text):
        angle = (entity.rotation_deg + (90.0 if rotated else 0.0)) % 360.0
        return upright(Text(entity.operation, tf(entity.insert), entity.height, entity.text,
                            angle))
    return Polyline(entity.operation, tuple(tf(p) for p in entity.points), entity.closed,
                    tuple(snap_bulge(k) for k in entity.bulges))


def upright(text: Text) -> Text:
    """``text`` turned half a turn about its centre if it would read upside down: every label
    reads from the bottom or from the right of the sheet (0° to 90°), however its part was
    turned when nested."""
    if 90.0 < text.rotation_deg % 360.0 <= 270.0:
        cx, cy = text_centre(text)
        angle = (text.rotation_deg + 180.0) % 360.0
        w, h = text_width(text.text, text.height), text.height
        c, s = math.cos(math.radians(angle)), math.sin(math.radians(angle))
        corner = (cx - (w * c - h * s) / 2.0, cy - (w * s + h * c) / 2.0)
        return Text(text.operation, (snap(corner[0]), snap(corner[1])), text.height, text.text,
                    angle)
    return text


def placed(entities: tuple[Entity, ...], placement: Placement) -> tuple[Entity, ...]:
    """A part's entities where ``placement`` puts them on a sheet."""
    return tuple(moved(e, placement.x_mm, placement.y_mm, placement.rotated) for e in entities)


def snapped(entity: Entity) -> Entity:
    """``entity`` with its coordinates rounded to 1e-6 mm."""
    return moved(entity, 0.0, 0.0)


def text_centre(text: Text) -> Point:
    """The centre of a label's box (its approximate width × its height, turned with it):
    the point both backends centre the label on, whatever the font's real widths."""
    w, h = text_width(text.text, text.height), text.height
    c = math.cos(math.radians(text.rotation_deg))
    s = math.sin(math.radians(text.rotation_deg))
    x, y = text.insert
    return x + (w * c - h * s) / 2.0, y + (w * s + h * c) / 2.0
