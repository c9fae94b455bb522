"""Flat patterns of a pipe rolled from sheet metal: body, conical foot, languid, cap.

Body: a rectangle as wide as the neutral-axis circumference plus the seam allowance
(on the right-hand edge) and as tall as the cut length. The front line (the mouth's
centre) sits in the middle of the circumference, half way round from the seam. The
mouth is a notch in the bottom edge, mouth width × cut-up: the bottom edge is the level of
the languid and the lower lip, and the notch's top edge is the upper lip. No tuning slot
is drawn: the tuning allowance is left on the length, to be coned or trimmed.

Foot: the development of a conical frustum (an annular sector) from the toe (small end,
inner arc: its diameter is the toe's) to the languid (large end, outer arc), drawn
symmetric about its front line, with the seam allowance on the right-hand straight edge.

Languid: a disk of the body's inside diameter with the flue chord marked (the front edge is
filed straight to the mouth width). Stopped metal pipes get a cap: a disk of the body's
outside diameter plus a rim on every side, turned down over the body as a skirt.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from compiler.geometry.drafts import Draft, label, labels, pipe_error
from compiler.geometry.model import Circle, Entity, Polyline
from compiler.geometry.paths import bounds, bulge_for, closed, line, moved
from compiler.geometry.units import mm
from compiler.ir import Pipe

TICK_MM = 5.0
"""Length of the short marks on a rolled body (front line, speaking length): ticks rather
than lines, so the pipe's outside is not scored."""

TINY_LABEL_MM = 1.0
"""The note on the languid of the smallest pipes may be engraved this small (a 5 mm disk)."""

CAP_RIM_FRACTION = 0.15
CAP_RIM_MIN_MM = 5.0
"""Cap skirt: 15 % of the body's outside diameter, at least 5 mm (common practice)."""


def neutral_circumference(inside_mm: float, thickness_mm: float) -> float:
    """Blank width of a rolled cylinder, mm: ``π·(D_inside + t)``.

    The neutral axis of thin sheet rolled to a large radius (R/t ≫ 1) lies at mid
    thickness (K = 0.5): standard sheet-metal development of a rolled cylinder (neutral-axis
    blank length).
    """
    return math.pi * (inside_mm + thickness_mm)


@dataclass(frozen=True)
class SectorPattern:
    """Flat pattern of a conical frustum: an annular sector (mm, degrees)."""

    inner_radius: float
    outer_radius: float
    angle_deg: float
    slant: float


def frustum_pattern(small_d: float, large_d: float, height: float) -> SectorPattern:
    """Development of a conical frustum (diameters at mid thickness, axial height; mm).

    ``s = √(H² + ((D2 − D1)/2)²)``, ``R2 = s·D2/(D2 − D1)``, ``R1 = R2 − s``,
    ``θ = 180°·D2/R2`` — standard sheet-metal development geometry of a cone frustum.
    Requires ``large_d > small_d``.
    """
    if large_d <= small_d:
        raise ValueError("a frustum needs its large end larger than its small end")
    slant = math.hypot(height, (large_d - small_d) / 2.0)
    outer = slant * large_d / (large_d - small_d)
    return SectorPattern(outer - slant, outer, 180.0 * large_d / outer, slant)


def _draft(pipe: Pipe, name: str, width: float, height: float, outline: Polyline | Circle,
           marks: tuple[Entity, ...], note: str, along_x: bool | None = None) -> Draft:
    return Draft(id=f"{pipe.id}-{name}", pipe_id=pipe.id, group=pipe.group, name=name,
                 material=pipe.material, stock=pipe.stock, thickness_mm=mm(pipe.wall_m),
                 kind="sheet", width_mm=width, height_mm=height, outline=outline, openings=(),
                 marks=marks, source=pipe.source, note=note, length_along_x=along_x)


def body(pipe: Pipe, seam_allowance_m: float) -> Draft:
    """The body's development with the mouth notch, the seam line and front ticks."""
    assert pipe.inside_diameter_m is not None
    t = mm(pipe.wall_m)
    circ = neutral_circumference(mm(pipe.inside_diameter_m), t)
    seam = mm(seam_allowance_m)
    width, height = circ + seam, mm(pipe.cut_length_m)
    front = circ / 2.0
    pts = [(0.0, 0.0)]
    if pipe.mouth is not None:
        mw, cu = mm(pipe.mouth.width_m), mm(pipe.mouth.cutup_m)
        if mw >= circ / 2.0:
            raise pipe_error(pipe, f"the mouth ({mw:.1f} mm) takes half or more of the body's "
                        f"circumference ({circ:.1f} mm)", "give a smaller mouth width")
        if cu >= height - TICK_MM:
            raise pipe_error(pipe, f"the cut-up ({cu:.1f} mm) reaches the top of the body",
                        "give a smaller cut-up")
        pts += [(front - mw / 2, 0.0), (front - mw / 2, cu), (front + mw / 2, cu),
                (front + mw / 2, 0.0)]
    pts += [(width, 0.0), (width, height), (0.0, height)]
    marks: list[Entity] = [
        line("mark", (circ, 0.0), (circ, height)),
        line("mark", (front, height), (front, height - TICK_MM)),
    ]
    speaking = mm(pipe.speaking_length_m)
    if 0.0 < speaking < height:
        marks += [line("mark", (0.0, speaking), (TICK_MM, speaking)),
                  line("mark", (circ - TICK_MM, speaking), (circ, speaking))]
    band = circ / 2.0 - TICK_MM
    outline = closed("cut-outer", pts)
    lab = label(f"{pipe.id} body", (0.75 * circ, height / 2.0), band, 0.8 * height,
                avoid=(outline, *marks), short=(f"{pipe.note} body", pipe.note)) or label(
        pipe.note, (circ / 2.0, height / 2.0), 0.9 * circ, 0.5 * height,
        avoid=(outline, *marks), smallest=TINY_LABEL_MM)  # the smallest pipes
    return _draft(pipe, "body", width, height, outline,
                  (*marks, *labels(lab)),
                  f"roll to {mm(pipe.inside_diameter_m):.1f} mm inside; "
                       f"seam strip {seam:.1f} mm on the right-hand edge", along_x=False)


def _sector(pattern: SectorPattern, seam: float) -> tuple[Polyline, float]:
    """The sector with its seam strip, apex at the origin, symmetric about +y."""
    half = math.radians(pattern.angle_deg / 2.0)
    r1, r2 = pattern.inner_radius, pattern.outer_radius
    right, left = math.pi / 2 - half, math.pi / 2 + half

    def at(r: float, a: float) -> tuple[float, float]:
        return r * math.cos(a), r * math.sin(a)

    nx, ny = math.sin(right), -math.cos(right)
    p1r, p2r = at(r1, right), at(r2, right)
    bulge = bulge_for(pattern.angle_deg)
    pts = [p2r, at(r2, left), at(r1, left), p1r,
           (p1r[0] + seam * nx, p1r[1] + seam * ny), (p2r[0] + seam * nx, p2r[1] + seam * ny)]
    return closed("cut-outer", pts, [bulge, 0.0, -bulge, 0.0, 0.0, 0.0]), math.degrees(half)


def foot(pipe: Pipe, seam_allowance_m: float) -> Draft:
    """The conical foot's development, from the toe (inner arc) to the languid."""
    assert pipe.foot is not None
    t = mm(pipe.wall_m)
    small = mm(pipe.foot.toe_diameter_m) + t
    large = mm(pipe.foot.top_diameter_m) + t
    length = mm(pipe.foot.length_m)
    seam = mm(seam_allowance_m)
    if length <= 0 or small <= t:
        raise pipe_error(pipe, "the foot needs a length and a toe diameter",
                    "check the foot's length and toe")
    if large <= small:
        raise pipe_error(pipe, f"the toe ({small - t:.1f} mm) is not smaller than the foot's top "
                    f"({large - t:.1f} mm)", "give a smaller `foot.toe` fraction")
    pattern = frustum_pattern(small, large, length)
    if pattern.angle_deg >= 330.0:
        raise pipe_error(pipe, f"the foot is too flat to roll from one sheet "
                    f"(its pattern spans {pattern.angle_deg:.0f}°)", "give a longer foot")
    outline, half = _sector(pattern, seam)
    mid = math.radians(90.0)
    seam_line = outline.points[3], outline.points[0]
    marks: list[Entity] = [
        line("mark", *seam_line),
        line("mark", (0.0, pattern.outer_radius), (0.0, pattern.outer_radius - TICK_MM)),
        line("mark", (0.0, pattern.inner_radius), (0.0, pattern.inner_radius + TICK_MM)),
    ]
    r_mid = (pattern.inner_radius + pattern.outer_radius) / 2.0
    chord = 2.0 * r_mid * math.sin(math.radians(min(half, 60.0))) * 0.8
    lab = label(f"{pipe.id} foot", (r_mid * math.cos(mid), r_mid * math.sin(mid)),
                chord, 0.5 * pattern.slant, avoid=(outline, *marks),
                short=(f"{pipe.note} foot", pipe.note))
    box = bounds(outline)
    shifted = [moved(e, -box[0], -box[1]) for e in (outline, *marks, *labels(lab))]
    toe_hole = mm(pipe.foot.toe_hole_m)
    note = (f"cone from {mm(pipe.foot.toe_diameter_m):.1f} mm (toe) to "
            f"{mm(pipe.foot.top_diameter_m):.1f} mm inside; pattern radii "
            f"{pattern.inner_radius:.1f} mm and {pattern.outer_radius:.1f} mm, "
            f"{pattern.angle_deg:.2f}°")
    toe = mm(pipe.foot.toe_diameter_m)
    if abs(toe_hole - toe) > 0.05:
        verb = "close the toe hole down" if toe_hole < toe else "open the toe hole"
        note += f"; {verb} to {toe_hole:.1f} mm"
    first = shifted[0]
    assert isinstance(first, Polyline)
    return _draft(pipe, "foot", box[2] - box[0], box[3] - box[1], first, tuple(shifted[1:]),
                  note, along_x=False)


def languid(pipe: Pipe) -> Draft:
    """A disk of the body's inside diameter; the flue chord (mouth width) is marked."""
    assert pipe.inside_diameter_m is not None
    r = mm(pipe.inside_diameter_m) / 2.0
    marks: list[Entity] = []
    if pipe.mouth is not None and mm(pipe.mouth.width_m) < 2.0 * r:
        half = mm(pipe.mouth.width_m) / 2.0
        y = r + math.sqrt(r * r - half * half)
        marks.append(line("mark", (r - half, y), (r + half, y)))
    disk = Circle("cut-outer", (r, r), r)
    # below the centre, clear of the flue's chord near the front edge
    lab = label(f"{pipe.id} languid", (r, 0.75 * r), 1.3 * r, 0.5 * r, avoid=(disk, *marks),
                short=(f"{pipe.note} languid", pipe.note)) or label(
        pipe.note, (r, 0.8 * r), 1.6 * r, 1.0 * r, avoid=(disk, *marks),
        smallest=TINY_LABEL_MM, clear=0.05)
    return _draft(pipe, "languid", 2 * r, 2 * r, Circle("cut-outer", (r, r), r),
                  (*marks, *labels(lab)), "file the marked front edge straight to form the flue")


def cap(pipe: Pipe) -> Draft:
    """Cap of a stopped metal pipe: the body's outside diameter plus a skirt."""
    assert pipe.inside_diameter_m is not None
    outside = mm(pipe.inside_diameter_m) + 2.0 * mm(pipe.wall_m)
    rim = max(CAP_RIM_MIN_MM, CAP_RIM_FRACTION * outside)
    r = outside / 2.0 + rim
    fold = Circle("mark", (r, r), outside / 2.0)
    lab = label(f"{pipe.id} cap", (r, r), 1.2 * outside / 2.0, 0.4 * outside / 2.0,
                avoid=(fold,), short=(f"{pipe.note} cap", pipe.note))
    return _draft(pipe, "cap", 2 * r, 2 * r, Circle("cut-outer", (r, r), r),
                  (fold, *labels(lab)),
                  f"turn the {rim:.1f} mm rim down over the body at the marked circle")


def rolled_drafts(pipe: Pipe, seam_allowance_m: float) -> list[Draft]:
    """All sheet parts of one rolled pipe, in a fixed order."""
    if pipe.inside_diameter_m is None:
        raise pipe_error(pipe, "a rolled pipe needs an inside diameter", "give a round scale")
    drafts = [body(pipe, seam_allowance_m)]
    if pipe.foot is not None:
        drafts.append(foot(pipe, seam_allowance_m))
    if pipe.mouth is not None:
        drafts.append(languid(pipe))
    if pipe.family.startswith("stopped"):
        drafts.append(cap(pipe))
    return drafts
