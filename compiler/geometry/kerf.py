"""Kerf compensation: outlines grow by half the kerf, openings shrink by it.

The cutter removes a strip ``kerf`` wide centred on its path, so a path offset by
``kerf/2`` away from the material leaves the part at its nominal size. Outer contours
(``cut-outer``) are offset outwards, openings (``cut-inner``) inwards; marks, labels and
paper templates are never offset.

Circles stay circles (radius ± kerf/2). Paths of lines and arcs are offset exactly: each
line moves parallel to itself, each arc keeps its centre and changes its radius, and
neighbouring offset pieces are joined at their intersection (a sharp "mitre" corner),
so arcs stay arcs (bulges) in the DXF. When that construction fails (an arc or a segment
would vanish, a corner turns back on itself) the path is offset by shapely's buffer with
mitred joins instead, and its arcs come out as chords within 0.01 mm.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from shapely.geometry import Polygon

from compiler.geometry.model import Circle, Point, Polyline
from compiler.geometry.paths import arc_of, signed_area, to_polygon
from compiler.geometry.units import snap, snap_bulge

_EPS = 1e-9


class OffsetError(ValueError):
    """The offset leaves nothing (an opening smaller than the kerf) or breaks the path."""


@dataclass(frozen=True)
class _Piece:
    """One offset segment: a line (``center`` None) or an arc on a circle."""

    start: Point
    end: Point
    direction: Point
    center: Point | None
    radius: float
    sweep: float
    """Original included angle (radians, signed); 0 for lines."""


def _unit(dx: float, dy: float) -> Point:
    n = math.hypot(dx, dy)
    return dx / n, dy / n


def _piece(a: Point, b: Point, bulge: float, d: float, sign: float) -> _Piece:
    if not bulge:
        ux, uy = _unit(b[0] - a[0], b[1] - a[1])
        nx, ny = sign * uy * d, -sign * ux * d
        return _Piece((a[0] + nx, a[1] + ny), (b[0] + nx, b[1] + ny), (ux, uy), None, 0.0, 0.0)
    arc = arc_of(a, b, bulge)
    cx, cy = arc.center
    rx, ry = (a[0] - cx) / arc.radius, (a[1] - cy) / arc.radius
    # Tangent at the start of the arc, then the outward normal of a path with this
    # orientation; its projection on the radius says whether the arc grows or shrinks.
    tx, ty = (-ry, rx) if bulge > 0 else (ry, -rx)
    nx, ny = sign * ty, -sign * tx
    radius = arc.radius + d * (nx * rx + ny * ry)
    if radius <= _EPS:
        raise OffsetError("an arc vanishes")
    k = radius / arc.radius
    start = (cx + (a[0] - cx) * k, cy + (a[1] - cy) * k)
    end = (cx + (b[0] - cx) * k, cy + (b[1] - cy) * k)
    return _Piece(start, end, (0.0, 0.0), (cx, cy), radius, math.radians(arc.sweep_deg))


def _line_line(p: _Piece, q: _Piece) -> list[Point]:
    (ux, uy), (vx, vy) = p.direction, q.direction
    cross = ux * vy - uy * vx
    if abs(cross) < _EPS:
        return []
    wx, wy = q.start[0] - p.start[0], q.start[1] - p.start[1]
    t = (wx * vy - wy * vx) / cross
    return [(p.start[0] + t * ux, p.start[1] + t * uy)]


def _line_circle(line: _Piece, circle: _Piece) -> list[Point]:
    assert circle.center is not None
    (ux, uy), (px, py) = line.direction, line.start
    cx, cy = circle.center
    fx, fy = px - cx, py - cy
    b = ux * fx + uy * fy
    disc = b * b - (fx * fx + fy * fy - circle.radius**2)
    if disc < 0:
        return []
    root = math.sqrt(disc)
    return [(px + t * ux, py + t * uy) for t in (-b - root, -b + root)]


def _circle_circle(p: _Piece, q: _Piece) -> list[Point]:
    assert p.center is not None and q.center is not None
    (x0, y0), (x1, y1) = p.center, q.center
    dist = math.hypot(x1 - x0, y1 - y0)
    if dist < _EPS or dist > p.radius + q.radius or dist < abs(p.radius - q.radius):
        return []
    a = (p.radius**2 - q.radius**2 + dist**2) / (2 * dist)
    h = math.sqrt(max(p.radius**2 - a * a, 0.0))
    mx, my = x0 + a * (x1 - x0) / dist, y0 + a * (y1 - y0) / dist
    ox, oy = -(y1 - y0) / dist * h, (x1 - x0) / dist * h
    return [(mx + ox, my + oy), (mx - ox, my - oy)]


def _join(p: _Piece, q: _Piece, vertex: Point) -> Point:
    if math.dist(p.end, q.start) < 1e-9:
        return p.end
    if p.center is None and q.center is None:
        found = _line_line(p, q)
    elif p.center is None:
        found = _line_circle(p, q)
    elif q.center is None:
        found = _line_circle(q, p)
    else:
        found = _circle_circle(p, q)
    if not found:
        raise OffsetError("a corner cannot be joined")
    return min(found, key=lambda c: math.dist(c, vertex))


def _exact(poly: Polyline, d: float) -> Polyline:
    pts = list(poly.points)
    bulges = [poly.bulges[i] if i < len(poly.bulges) else 0.0 for i in range(len(pts))]
    sign = 1.0 if signed_area(poly) > 0 else -1.0
    n = len(pts)
    pieces = [_piece(pts[i], pts[(i + 1) % n], bulges[i], d, sign) for i in range(n)]
    corners = [_join(pieces[i - 1], pieces[i], pts[i]) for i in range(n)]
    new_bulges: list[float] = []
    for i, piece in enumerate(pieces):
        a, b = corners[i], corners[(i + 1) % n]
        if piece.center is None:
            ox, oy = pts[(i + 1) % n][0] - pts[i][0], pts[(i + 1) % n][1] - pts[i][1]
            if (b[0] - a[0]) * ox + (b[1] - a[1]) * oy <= _EPS:
                raise OffsetError("a segment vanishes")
            new_bulges.append(0.0)
            continue
        cx, cy = piece.center
        turn = math.atan2(b[1] - cy, b[0] - cx) - math.atan2(a[1] - cy, a[0] - cx)
        # The new sweep is the one nearest the original (an offset moves ends slightly).
        turn = piece.sweep + (turn - piece.sweep + math.pi) % (2 * math.pi) - math.pi
        if turn * piece.sweep <= 0 or abs(turn) < 1e-9:
            raise OffsetError("an arc vanishes")
        new_bulges.append(math.tan(turn / 4.0))
    out = Polyline(poly.operation, tuple((snap(x), snap(y)) for x, y in corners), True,
                   tuple(snap_bulge(k) for k in new_bulges))
    if not to_polygon(out).is_valid:
        raise OffsetError("the offset path crosses itself")
    return out


def _buffered(poly: Polyline, d: float) -> Polyline:
    shape = to_polygon(poly).buffer(d, join_style="mitre", mitre_limit=10.0)
    if not isinstance(shape, Polygon) or shape.is_empty or shape.interiors:
        raise OffsetError("the kerf offset splits or removes the outline")
    ring = list(shape.exterior.coords)[:-1]
    return Polyline(poly.operation, tuple((snap(x), snap(y)) for x, y in ring), True,
                    (0.0,) * len(ring))


def offset_polyline(poly: Polyline, distance: float) -> Polyline:
    """``poly`` (closed) offset so the area it encloses grows by ``distance`` mm on every
    side (shrinks when negative). Arcs stay arcs unless the exact construction fails."""
    if not distance:
        return poly
    try:
        return _exact(poly, distance)
    except OffsetError:
        return _buffered(poly, distance)


def offset_circle(circle: Circle, distance: float) -> Circle:
    """A circle grown by ``distance`` mm (shrunk when negative)."""
    radius = circle.radius + distance
    if radius <= 0:
        raise OffsetError("the opening is smaller than the kerf")
    return Circle(circle.operation, circle.center, snap(radius))


def compensate(entity: Polyline | Circle, kerf_mm: float) -> Polyline | Circle:
    """The cutter's path for a nominal contour: ``cut-outer`` grows by kerf/2,
    ``cut-inner`` shrinks by kerf/2 (the standard half-kerf tool-path offset)."""
    if entity.operation == "cut-outer":
        d = kerf_mm / 2.0
    elif entity.operation == "cut-inner":
        d = -kerf_mm / 2.0
    else:
        return entity
    if isinstance(entity, Circle):
        return offset_circle(entity, d)
    return offset_polyline(entity, d)
