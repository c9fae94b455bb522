"""Checks that a part can be cut: a clean outline, and webs between openings.

Minimum web (common practice for laser and CNC cutting: a bridge of material narrower than
the material's thickness warps, burns through or breaks): ``max(1 mm, thickness)``
between two openings and between an opening and the part's edge. Checked on the nominal
geometry, before kerf (kerf only widens webs).
"""

from __future__ import annotations

import math

from shapely.geometry import Point as ShapelyPoint
from shapely.geometry import Polygon

from compiler.errors import Problem
from compiler.geometry.drafts import Contour, Draft
from compiler.geometry.model import Circle
from compiler.geometry.paths import bounds, to_polygon

WEB_MIN_MM = 1.0
_TOL = 1e-6


def min_web_mm(thickness_mm: float) -> float:
    """The narrowest web allowed in material ``thickness_mm`` thick (see module doc)."""
    return max(WEB_MIN_MM, thickness_mm)


def _problem(draft: Draft, message: str, hint: str) -> Problem:
    return Problem(draft.source, f"part `{draft.id}`: {message}", hint, "geometry")


def _edge_gap(outline: Polygon, opening: Contour) -> float:
    """Clear distance from an opening to the outline's edge (negative: it crosses)."""
    if isinstance(opening, Circle):
        centre = ShapelyPoint(opening.center)
        if not outline.contains(centre):
            return -1.0
        return float(outline.exterior.distance(centre)) - opening.radius
    shape = to_polygon(opening)
    if not outline.contains(shape):
        return -1.0
    return float(outline.exterior.distance(shape))


def _gap(a: Contour, b: Contour) -> float:
    """Clear distance between two openings (negative: they overlap)."""
    if isinstance(a, Circle) and isinstance(b, Circle):
        return math.dist(a.center, b.center) - a.radius - b.radius
    pa, pb = to_polygon(a), to_polygon(b)
    if pa.intersects(pb):
        return -1.0
    return float(pa.distance(pb))


def _centre(opening: Contour) -> tuple[float, float]:
    """Where an opening is on its part, for messages: the centre of its box, mm."""
    x0, y0, x1, y1 = bounds(opening)
    return (x0 + x1) / 2, (y0 + y1) / 2


def _at(centre: tuple[float, float]) -> str:
    return f"({centre[0]:.1f}, {centre[1]:.1f}) mm"


def check_draft(draft: Draft) -> list[Problem]:
    """Problems that keep a cut part from being made: an outline that crosses itself, an
    opening outside the part, or webs below :func:`min_web_mm`."""
    if not draft.is_cut:
        return []
    outline = to_polygon(draft.outline)
    if not outline.is_valid or outline.area <= 0:
        return [_problem(draft, "its outline crosses itself",
                         "check the dimensions that shape this part")]
    web = min_web_mm(draft.thickness_mm)
    problems: list[Problem] = []
    for opening in draft.openings:
        gap = _edge_gap(outline, opening)
        if gap < web - _TOL:
            problems.append(_problem(
                draft, f"the opening at {_at(_centre(opening))} leaves {max(gap, 0.0):.1f} mm to "
                f"the edge, less than the {web:.1f} mm web this {draft.thickness_mm:g} mm "
                "material needs", "give a wider margin or smaller openings"))
    boxes = sorted(((bounds(o), i) for i, o in enumerate(draft.openings)),
                   key=lambda item: (item[0][0], item[1]))
    for k, (box, i) in enumerate(boxes):
        for other, j in boxes[k + 1:]:
            if other[0] > box[2] + web:
                break
            gap = _gap(draft.openings[i], draft.openings[j])
            if gap < web - _TOL:
                first, second = sorted((_centre(draft.openings[i]),
                                        _centre(draft.openings[j])))
                problems.append(_problem(
                    draft, f"the openings at {_at(first)} and {_at(second)} are "
                    f"{max(gap, 0.0):.1f} mm apart, less than the {web:.1f} mm web this "
                    f"{draft.thickness_mm:g} mm material needs",
                    "give more spacing between the openings"))
    return problems
