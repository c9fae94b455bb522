"""A flute's cutter parts: drilling strips, the duct block's profile and the window template.

They are cut from the flute's jig sheet (``Pipe.jig``: the spec's `jig` stock, else 3 mm
plywood) and nested with every other sheet part, on the same layers (``cut-inner`` openings,
``cut-outer`` outline, ``mark`` lines, ``engrave`` labels). Coordinates in millimetres; along
the tube, y runs from the foot up, top end up, as on the wrap-around template.

- **Drilling strip** (``jig-front``; ``jig-back`` for holes at 180°, such as a thumb hole;
  ``jig-<a>deg`` for other angles): a strip ``END_MM`` longer than the tube at each end and
  ``MARGIN_MM`` wider than it on each side. Laid along the tube on the line of its holes with
  its top mark on the tube's top end, it has a pilot opening (``PILOT_MM`` across, or the
  hole itself if smaller) at every hole's centre, to punch or pilot-drill through before the
  hole is opened to its drill; each hole's full circle, label and drill; the tube's outline
  (both sides and both ends) and the centre line. The front strip also carries the
  embouchure hole (a pilot, its circle, ``emb.`` and its drill) or the window's outline.
  Labels stand ``READABLE_MM`` tall (8 pt printed) where they fit: across the margin,
  else along it.
- **Duct block profile** (duct flutes with a duct height): the block's cross-section, the
  bore's circle less the duct's flat, as a gauge for turning the block and planing the flat.
- **Window template** (duct flutes): a plate as wide as the strip, from the tube's top end to
  ``END_MM`` below the window, with the window (its length along the tube, its width across)
  cut out at its place and the block's face and the labium marked at its upper and lower
  edges: laid on the tube with its top line on the tube's top end, the window is scribed
  through it. The plate is flat and the tube round: the window's width is its chord.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

from compiler.geometry.drafts import READABLE_MM, Draft, label, labels, pipe_error
from compiler.geometry.model import Circle, Entity, Text
from compiler.geometry.paths import bulge_for, closed, line, rect
from compiler.geometry.units import mm
from compiler.ir import Hole, Jig, Pipe

MARGIN_MM = 8.0
END_MM = 10.0
PILOT_MM = 2.0
"""Pilot openings: a centre punch or a small drill goes through, then the hole is opened up."""
TEXT_MM = 3.0


def flute_parts(pipe: Pipe) -> list[Draft]:
    """The cutter parts of a flute (none for a pipe without a jig sheet)."""
    if pipe.jig is None or pipe.outside_diameter_m is None:
        return []
    jig = pipe.jig
    angles = sorted({_angle(h) for h in pipe.holes} | {0.0})
    drafts = [_strip(pipe, jig, a, [h for h in pipe.holes if _angle(h) == a]) for a in angles]
    profile = _block_profile(pipe, jig)
    window = _window_template(pipe, jig)
    return drafts + [d for d in (profile, window) if d is not None]


def _angle(hole: Hole) -> float:
    """A hole's angle round the tube, −180° < a ≤ 180°, rounded to a whole degree."""
    a = (hole.angle_deg + 180.0) % 360.0 - 180.0
    return float(round(180.0 if a == -180.0 else a))


def _strip_name(angle: float) -> str:
    if angle == 0.0:
        return "jig-front"
    if angle == 180.0:
        return "jig-back"
    return f"jig-{angle:+.0f}deg".replace("+", "")


def _pilot(x: float, y: float, diameter: float) -> Circle:
    return Circle("cut-inner", (x, y), min(PILOT_MM, 0.8 * diameter) / 2.0)


def _draft(pipe: Pipe, jig: Jig, name: str, width: float, height: float,
           openings: Sequence[Circle], marks: Sequence[Entity], note: str) -> Draft:
    outline = rect("cut-outer", 0.0, 0.0, width, height)
    return Draft(id=f"{pipe.id}-{name}", pipe_id=pipe.id, group=pipe.group, name=name,
                 material=jig.material, stock=jig.stock, thickness_mm=mm(jig.thickness_m),
                 kind=jig.kind, width_mm=width, height_mm=height, outline=outline,
                 openings=tuple(openings), marks=tuple(marks), source=pipe.source, note=note)


def hole_centre(pipe: Pipe, hole: Hole) -> tuple[float, float]:
    """Where a hole's centre lies on its drilling strip (mm, the strip's own origin)."""
    od, length = mm(pipe.outside_diameter_m or 0.0), mm(pipe.cut_length_m)
    return MARGIN_MM + od / 2.0, END_MM + length - mm(hole.position_from_top_m)


def _strip(pipe: Pipe, jig: Jig, angle: float, holes: list[Hole]) -> Draft:
    od, length = mm(pipe.outside_diameter_m or 0.0), mm(pipe.cut_length_m)
    width, height = od + 2.0 * MARGIN_MM, length + 2.0 * END_MM
    cx, top = width / 2.0, END_MM + length
    openings: list[Circle] = []
    marks: list[Entity] = [
        rect("mark", MARGIN_MM, END_MM, MARGIN_MM + od, top),  # the tube's outline
        line("mark", (cx, 0.0), (cx, height)),
    ]
    spots: list[tuple[str, float]] = []
    for hole in holes:
        x, y = hole_centre(pipe, hole)
        d = mm(hole.diameter_m)
        openings.append(_pilot(x, y, d))
        marks.append(Circle("mark", (x, y), d / 2.0))
        spots.append((f"{hole.label} {d:.1f}", y))
    head = pipe.head
    if angle == 0.0 and head is not None:
        if head.kind == "embouchure" and head.embouchure_from_top_m is not None:
            d = mm(head.embouchure_diameter_m or 0.0)
            y = top - mm(head.embouchure_from_top_m)
            openings.append(_pilot(cx, y, d))
            marks.append(Circle("mark", (cx, y), d / 2.0))
            spots.append((f"emb. {d:.1f}", y))
        if head.kind == "duct" and head.labium_from_top_m is not None:
            ww, wl = mm(head.window_width_m or 0.0), mm(head.window_length_m or 0.0)
            y = top - mm(head.labium_from_top_m)
            marks.append(rect("mark", cx - ww / 2.0, y, cx + ww / 2.0, y + wl))
    side = {0.0: "front", 180.0: "back"}.get(angle, f"{angle:g} deg")
    # Labels in the margins beside the tube's outline, clear of every line: each hole's
    # label and drill on the right, the strip's name on the left, TOP above the tube's end.
    avoid = (*openings, *marks, rect("cut-outer", 0.0, 0.0, width, height))
    texts = _hole_labels(spots, MARGIN_MM + od + MARGIN_MM / 2.0, avoid)
    texts.append(label("TOP", (width / 2.0, top + END_MM / 2.0), width - 1.0, END_MM - 1.0,
                       2.5, avoid=avoid, clear=0.3))
    texts.append(label(f"{pipe.id} {side}", (MARGIN_MM / 2.0, END_MM + length / 2.0),
                       MARGIN_MM - 1.0, length * 0.6, TEXT_MM, avoid=avoid, clear=0.3))
    return _draft(pipe, jig, _strip_name(angle), width, height, openings,
                  [*marks, *labels(*texts)],
                  f"drilling strip, {side}: lay it on the tube along the line of its holes, "
                  "TOP line on the tube's top end; punch or pilot-drill through each opening, "
                  "then open each hole to its drill")


def _hole_labels(spots: list[tuple[str, float]], x: float,
                 avoid: tuple[Entity, ...]) -> list[Text | None]:
    """Each hole's label and drill in the margin at ``x``, level with the hole, at least
    ``READABLE_MM`` tall where it fits: across the margin if it is short enough, else
    along it (its box reaches towards the nearest other hole, 8 to 16 mm long), clear of
    the labels already placed; smaller only where neither fits (the build sheet then
    repeats it in a key)."""
    out: list[Text | None] = []
    for text, y in spots:
        nearest = min((abs(y - other) for _, other in spots if other != y), default=16.0)
        tag = label(text, (x, y), MARGIN_MM - 0.6, max(8.0, min(16.0, nearest)),
                    READABLE_MM, avoid=(*avoid, *labels(*out)), smallest=1.2, clear=0.2)
        out.append(tag)
    return out


def _block_profile(pipe: Pipe, jig: Jig) -> Draft | None:
    head = pipe.head
    if (head is None or head.kind != "duct" or head.duct_height_m is None
            or pipe.inside_diameter_m is None):
        return None
    bore, flat = mm(pipe.inside_diameter_m), mm(head.duct_height_m)
    if not 0 < flat < bore / 2:
        raise pipe_error(pipe, f"the duct block's profile cannot be drawn (bore {bore:.1f} mm, "
                         f"duct {flat:.2f} mm)", "check the duct height")
    r = bore / 2.0
    half = math.sqrt(r * r - (r - flat) ** 2)
    yf = 2.0 * r - flat
    # Clockwise from the flat's right end, round the bottom, to its left end.
    sweep = -(360.0 - 2.0 * math.degrees(math.asin(half / r)))
    outline = closed("cut-outer", [(r + half, yf), (r - half, yf)], [bulge_for(sweep), 0.0])
    tag = label("duct", (r, yf - 2.0), 2.0 * half, 3.0, READABLE_MM)
    name = label(pipe.id, (r, r - 2.0), 1.4 * r, r, 2.5, short=(pipe.note,), smallest=1.2)
    return Draft(id=f"{pipe.id}-duct-block-profile", pipe_id=pipe.id, group=pipe.group,
                 name="duct-block-profile", material=jig.material, stock=jig.stock,
                 thickness_mm=mm(jig.thickness_m), kind=jig.kind, width_mm=bore,
                 height_mm=yf, outline=outline, openings=(), marks=labels(tag, name),
                 source=pipe.source,
                 note=f"gauge of the block's end: {bore:.1f} mm round, the duct's flat "
                      f"{flat:.2f} mm deep (at the top)")


def _window_template(pipe: Pipe, jig: Jig) -> Draft | None:
    head = pipe.head
    if head is None or head.kind != "duct" or head.labium_from_top_m is None:
        return None
    od = mm(pipe.outside_diameter_m or 0.0)
    labium, wl = mm(head.labium_from_top_m), mm(head.window_length_m or 0.0)
    ww = min(mm(head.window_width_m or 0.0), od)
    width, height = od + 2.0 * MARGIN_MM, labium + END_MM
    cx = width / 2.0
    top = height  # the tube's top end
    window = rect("cut-inner", cx - ww / 2.0, top - labium, cx + ww / 2.0, top - labium + wl)
    marks: list[Entity] = [
        line("mark", (0.0, top - labium), (width, top - labium)),  # the labium's edge
        line("mark", (0.0, top - labium + wl), (width, top - labium + wl)),  # the block face
        line("mark", (MARGIN_MM, 0.0), (MARGIN_MM, top)),
        line("mark", (MARGIN_MM + od, 0.0), (MARGIN_MM + od, top)),
    ]
    avoid = (window, *marks)
    texts = labels(label("labium", (cx, top - labium - 2.5), width - 2.0, 3.5, READABLE_MM,
                         avoid=avoid, clear=0.2),
                   label("TOP", (cx, top - 2.5), width - 2.0, 3.5, 2.5, avoid=avoid,
                         clear=0.2),
                   label(f"{pipe.id} window", (cx, (top - labium) / 2.0), width - 2.0,
                         max(top - labium - 6.0, 3.0), 2.5, avoid=avoid,
                         short=(pipe.note,), smallest=1.2, clear=0.2))
    return Draft(id=f"{pipe.id}-window-template", pipe_id=pipe.id, group=pipe.group,
                 name="window-template", material=jig.material, stock=jig.stock,
                 thickness_mm=mm(jig.thickness_m), kind=jig.kind, width_mm=width,
                 height_mm=height, outline=rect("cut-outer", 0.0, 0.0, width, height),
                 openings=(window,), marks=(*marks, *texts), source=pipe.source,
                 note=f"window template: top edge on the tube's top end, the window "
                      f"{wl:.1f} × {ww:.1f} mm scribed through, labium {labium:.1f} mm "
                      "from the top")
