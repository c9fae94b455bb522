"""Stock-tube pipes: cut lengths, wrap-around drilling templates, duct blocks, holders.

Drilling template (kind ``template``, printed full size and wrapped round the tube): as
wide as the tube's outside circumference and as tall as its cut length, top end up. The
front line runs down the middle; a hole at angle a (degrees, positive to the right of the
front line as you look at the front with the top end up) is drawn at
``x = C/2 + a/360·C`` and ``y = cut length − its distance from the top``. A hole that
crosses the template's side edges (a thumb hole at 180°) is drawn on both edges, so it
closes up when wrapped. Ticks every 10 mm (longer every 50 mm) run down both side edges so
the edges meet square. Each hole's label and drill (``T: 6.0``) stands beside it, clear of
every mark and label, nearer it than any other hole (``_hole_labels``). The window and
labium (duct flutes), the embouchure hole (labelled with its drill, as the finger holes
are) and the cork line (side-blown flutes) or the mouth (tube flue pipes) are outlined.

A flute's cutter parts (drilling strips, the duct block's profile, the window template)
are in ``flute_jig``; its duct block is drawn at full size on the build sheet.

Holder (tube sets): a plate with one round opening per tube (outside diameter +
clearance) in a row, ``spacing`` clear between tubes and ``margin`` clear to the edges,
each opening labelled with its note below it. A row longer than the sheet is split into
several plates (``holder-1``, ``holder-2``...).
"""

from __future__ import annotations

import math

from shapely.geometry import Point
from shapely.geometry.base import BaseGeometry

from compiler.errors import Position
from compiler.geometry.drafts import (
    LABEL_MIN_MM,
    READABLE_MM,
    Draft,
    Room,
    label,
    labels,
    pipe_error,
    text_box,
)
from compiler.geometry.model import Circle, Entity, Polyline, Text, TubeCut
from compiler.geometry.paths import line, rect, text_width
from compiler.geometry.units import mm
from compiler.ir import Group, Hole, Pipe

TICK_STEP_MM = 10.0
TICK_MM = 3.0
TICK_LONG_MM = 6.0
CROSS_MM = 2.0
"""Centre crosses overshoot a hole's circle by this much (drill-point marks)."""
TEMPLATE_TEXT_MM = 3.5
HOLDER_LABEL_MM = 5.0


def tube_cut(pipe: Pipe) -> TubeCut:
    """The length to cut from stock tube."""
    return TubeCut(pipe.id, pipe.stock, pipe.material, round(mm(pipe.cut_length_m), 6),
                   round(mm(pipe.outside_diameter_m or 0.0), 6))


def _cross(x: float, y: float, r: float) -> list[Entity]:
    a = r + CROSS_MM
    return [line("mark", (x - a, y), (x + a, y)), line("mark", (x, y - a), (x, y + a))]


def hole_x(angle_deg: float, circumference: float) -> float:
    """Template x of a hole at ``angle_deg`` from the front line (front line at C/2)."""
    a = (angle_deg + 180.0) % 360.0 - 180.0
    return circumference / 2.0 + a / 360.0 * circumference


def _hole_marks(pipe: Pipe, circ: float, length: float) -> list[tuple[Hole, list[Circle]]]:
    """Each hole with its circles on the template: one, or two where it crosses a side edge
    (the second on the other edge, so it closes up when wrapped)."""
    _check_overlaps(pipe, circ)
    out: list[tuple[Hole, list[Circle]]] = []
    for hole in sorted(pipe.holes, key=lambda h: h.number):
        _check_hole(pipe, hole, length)
        r = mm(hole.diameter_m) / 2.0
        x, y = hole_x(hole.angle_deg, circ), length - mm(hole.position_from_top_m)
        copies = [x]
        if x - r < 0:
            copies.append(x + circ)
        if x + r > circ:
            copies.append(x - circ)
        out.append((hole, [Circle("mark", (cx, y), r) for cx in copies]))
    return out


HOLE_LABEL_SIZES = (TEMPLATE_TEXT_MM, 3.0, 2.5, READABLE_MM, 1.75, LABEL_MIN_MM)
"""Heights (mm) a hole's label is tried at, largest first: down to ``READABLE_MM`` (8 pt
printed) wherever it fits, smaller only where nothing else does (the page's key repeats
those at 8 pt)."""


def _spots(text: str, hole: Circle, size: float) -> list[Text]:
    """Where a hole's label may stand, best first: right of the hole above its cross's arm
    (where the template has always put it), left of it, level with the centre, below the
    arm, off the hole's upper and lower corners, then turned 90° beside it. Each keeps clear
    of the hole's own cross and lies within ``CROSS_MM + 1`` (3 mm) of its circle, so it
    reads as that hole's."""
    (x, y), r = hole.center, hole.radius
    w = text_width(text, size)
    right, left = x + r + CROSS_MM + 1.0, x - r - CROSS_MM - 1.0 - w
    flat = [(right, y + 1.0), (left, y + 1.0), (right, y - size / 2.0), (left, y - size / 2.0),
            (right, y - 1.0 - size), (left, y - 1.0 - size),
            (x + 1.0, y + r + 1.0), (x - 1.0 - w, y + r + 1.0),
            (x + 1.0, y - r - 1.0 - size), (x - 1.0 - w, y - r - 1.0 - size)]
    spots = [Text("engrave", at, size, text) for at in flat]
    return [*spots, Text("engrave", (right + size, y - w / 2.0), size, text, 90.0),
            Text("engrave", (x - r - CROSS_MM - 1.0, y - w / 2.0), size, text, 90.0)]


def _hole_labels(holes: list[tuple[Hole, list[Circle]]], others: list[Circle], room: Room,
                 circ: float, length: float) -> list[Text]:
    """Each hole's label and drill (``T: 6.0``), through the label-collision search
    (``drafts.Room``): the first spot of ``_spots``, at the largest of
    ``HOLE_LABEL_SIZES``, that lies on the template, keeps clear of every mark, the edges
    and the labels placed before it, and is nearer its own hole than any other (``others``:
    the embouchure hole, say), so it is not read as a neighbour's. If none is anywhere (a
    pathological crowd), the label stands small (the page's key repeats it at 8 pt) where
    it is clear of the marks, else where it is on the template at least."""
    rings = [(k, c) for k, (_, copies) in enumerate(holes) for c in copies]
    rings += [(-1, c) for c in others]
    disks = [(k, Point(c.center).buffer(c.radius)) for k, c in rings]
    out: list[Text] = []
    for k, (hole, copies) in enumerate(holes):
        text = f"{hole.label}: {mm(hole.diameter_m):.1f}"
        smallest = [s for c in copies for s in _spots(text, c, LABEL_MIN_MM)]
        found = next(
            (s for size in HOLE_LABEL_SIZES for c in copies for s in _spots(text, c, size)
             if _on_template(s, circ, length) and room.fits(s) and _nearest(s, k, disks)),
            # a pathological crowd: clear of the marks if nearer another hole, else at least
            # on the paper, else where it always stood
            next((s for s in smallest if _on_template(s, circ, length) and room.fits(s)),
                 next((s for s in smallest if _on_template(s, circ, length)), smallest[0])))
        room.take(found)
        out.append(found)
    return out


def _on_template(t: Text, circ: float, length: float) -> bool:
    x0, y0, x1, y1 = (float(v) for v in text_box(t).bounds)
    return x0 >= 0.0 and y0 >= 0.0 and x1 <= circ and y1 <= length


def _nearest(t: Text, own: int, disks: list[tuple[int, BaseGeometry]]) -> bool:
    """Whether hole ``own`` is strictly the nearest to the label ``t``."""
    box = text_box(t)
    mine = min(d.distance(box) for k, d in disks if k == own)
    return all(d.distance(box) > mine for k, d in disks if k != own)


def _check_hole(pipe: Pipe, hole: Hole, length: float) -> None:
    r = mm(hole.diameter_m) / 2.0
    y = length - mm(hole.position_from_top_m)
    if r <= 0 or y - r < 0 or y + r > length:
        raise pipe_error(pipe, f"hole {hole.label} ({2 * r:.1f} mm at {length - y:.1f} mm from "
                    f"the top) does not lie on the {length:.1f} mm tube",
                    "check the hole's position and diameter", at=hole.source)


def _check_overlaps(pipe: Pipe, circ: float) -> None:
    """Holes that run into each other on the tube's surface (round the tube included)."""
    holes = sorted(pipe.holes, key=lambda h: h.number)
    for i, a in enumerate(holes):
        for b in holes[i + 1:]:
            dx = abs(hole_x(a.angle_deg, circ) - hole_x(b.angle_deg, circ))
            dx = min(dx, circ - dx)
            dy = mm(a.position_from_top_m - b.position_from_top_m)
            if math.hypot(dx, dy) < mm(a.diameter_m + b.diameter_m) / 2.0:
                raise pipe_error(pipe, f"holes {a.label} and {b.label} overlap on the tube",
                            "move the holes apart or make them smaller", at=b.source)


def _embouchure_label(d: float, x: float, y: float, circ: float,
                      avoid: tuple[Entity, ...]) -> Text | None:
    """The embouchure hole's label and drill, as the finger holes have theirs: beside the
    hole on the right (else the left), level with it, clear of every mark and label; in the
    room short of the edges' ticks, else reaching to the edge, at 8 pt if at all possible."""
    gap = d / 2.0 + CROSS_MM + 1.0
    text = f"emb.: {d:.1f}"
    for smallest in (READABLE_MM, LABEL_MIN_MM):
        for room in (circ / 2.0 - gap - TICK_LONG_MM - 1.0, circ / 2.0 - gap - 0.5):
            for side in (1.0, -1.0):
                found = label(text, (x + side * (gap + room / 2.0), y), room,
                              4.0 * TEMPLATE_TEXT_MM, TEMPLATE_TEXT_MM, avoid=avoid,
                              smallest=smallest)
                if found is not None:
                    return found
    return None


def _window(pipe: Pipe, circ: float, length: float) -> list[Entity]:
    """A duct flute's window, outlined, with the labium named."""
    head = pipe.head
    if head is None or head.kind != "duct" or head.labium_from_top_m is None:
        return []
    front = circ / 2.0
    ww, wl = mm(head.window_width_m or 0.0), mm(head.window_length_m or 0.0)
    y = length - mm(head.labium_from_top_m)
    return [rect("mark", front - ww / 2, y, front + ww / 2, y + wl),
            Text("engrave", (front + ww / 2 + 1.0, y - TEMPLATE_TEXT_MM / 2),
                 TEMPLATE_TEXT_MM, "labium")]


def _embouchure(pipe: Pipe, circ: float, length: float) -> tuple[list[Entity], Circle | None]:
    """A side-blown flute's embouchure hole with its cross, and the cork line; the hole."""
    head = pipe.head
    if head is None or head.kind != "embouchure" or head.embouchure_from_top_m is None:
        return [], None
    front = circ / 2.0
    r, y = mm(head.embouchure_diameter_m or 0.0) / 2.0, length - mm(head.embouchure_from_top_m)
    hole = Circle("mark", (front, y), r)
    out: list[Entity] = [hole, *_cross(front, y, r)]
    if head.cork_m is not None:
        yc = y + mm(head.cork_m)
        out += [line("mark", (0.0, yc), (circ, yc)),
                Text("engrave", (1.0, yc + 1.0), TEMPLATE_TEXT_MM, "cork")]
    return out, hole


def _mouth(pipe: Pipe, circ: float) -> list[Entity]:
    """A tube flue pipe's mouth, outlined."""
    if pipe.mouth is None:
        return []
    front = circ / 2.0
    mw, cu = mm(pipe.mouth.width_m), mm(pipe.mouth.cutup_m)
    y0 = mm(pipe.block.length_m) if pipe.block is not None else 0.0
    return [rect("mark", front - mw / 2, y0, front + mw / 2, y0 + cu)]


def _ticks(circ: float, length: float) -> list[Entity]:
    out: list[Entity] = []
    steps = int(math.floor(length / TICK_STEP_MM + 1e-9))
    for i in range(steps + 1):
        y = length - i * TICK_STEP_MM
        a = TICK_LONG_MM if i % 5 == 0 else TICK_MM
        out += [line("mark", (0.0, y), (a, y)), line("mark", (circ - a, y), (circ, y))]
    return out


def template(pipe: Pipe) -> Draft:
    """The wrap-around drilling and marking template of one tube."""
    od = mm(pipe.outside_diameter_m or 0.0)
    if od <= 0:
        raise pipe_error(pipe, "a stock tube needs an outside diameter", "check the tube stock")
    circ, length = math.pi * od, mm(pipe.cut_length_m)
    front = circ / 2.0
    outline = rect("cut-outer", 0, 0, circ, length)
    ruled: list[Entity] = [line("mark", (front, 0.0), (front, length)), *_ticks(circ, length)]
    holes = _hole_marks(pipe, circ, length)
    drawn = [[m for c in copies for m in (c, *_cross(*c.center, c.radius))]
             for _, copies in holes]
    window, (emb, emb_hole), mouth = (_window(pipe, circ, length),
                                      _embouchure(pipe, circ, length), _mouth(pipe, circ))
    top = Text("engrave", (front + 1.0, length - TEMPLATE_TEXT_MM - 1.0), TEMPLATE_TEXT_MM,
               "TOP")
    # every mark first, then the labels, each clear of the marks and of those before it
    room = Room((outline, *ruled, *(m for d in drawn for m in d), *window, *emb, *mouth, top))
    texts = _hole_labels(holes, [emb_hole] if emb_hole else [], room, circ, length)
    marks = [*ruled, *(m for d, t in zip(drawn, texts, strict=True) for m in (*d, t)), *window]
    if emb_hole is not None:
        marks += emb
        marks += labels(_embouchure_label(2.0 * emb_hole.radius, *emb_hole.center, circ,
                                          (*marks, top)))
    marks += mouth
    lab = label(f"{pipe.id} {pipe.note} cut {length:.1f} mm, tube {od:.1f} mm; front line, "
                "top end up", (circ * 0.25, length / 2.0), circ * 0.3, length * 0.9,
                TEMPLATE_TEXT_MM, avoid=(*marks, top),
                short=(f"{pipe.note} cut {length:.1f} mm", pipe.note))
    return Draft(id=f"{pipe.id}-template", pipe_id=pipe.id, group=pipe.group, name="template",
                 material="paper", stock=pipe.stock, thickness_mm=0.0, kind="template",
                 width_mm=circ, height_mm=length, outline=outline,
                 openings=(), marks=(*marks, *labels(lab), top), source=pipe.source,
                 note=f"wrap round the {od:.1f} mm tube, front line to the front, top end up",
                 length_along_x=False)


def holder_drafts(group: Group, pipes: list[Pipe], kind: str, max_length_mm: float,
                  source: Position) -> list[Draft]:
    """Holder plates for a tube set: one opening per tube, in rows that fit the sheet."""
    assert group.holder is not None
    h = group.holder
    spacing, margin, clearance = mm(h.spacing_m), mm(h.margin_m), mm(h.clearance_m)
    sizes = [(p, mm(p.outside_diameter_m or 0.0) + clearance) for p in pipes]
    rows: list[list[tuple[Pipe, float]]] = [[]]
    run = 2.0 * margin
    for item in sizes:
        extra = item[1] + (spacing if rows[-1] else 0.0)
        if rows[-1] and run + extra > max_length_mm:
            rows.append([])
            run, extra = 2.0 * margin, item[1]
        rows[-1].append(item)
        run += extra
    drafts = []
    for n, row in enumerate(rows, start=1):
        name = "holder" if len(rows) == 1 else f"holder-{n}"
        drafts.append(_plate(group, row, name, kind, spacing, margin, source))
    return drafts


def _plate(group: Group, row: list[tuple[Pipe, float]], name: str, kind: str,
           spacing: float, margin: float, source: Position) -> Draft:
    assert group.holder is not None
    biggest = max(d for _, d in row)
    text_h = min(HOLDER_LABEL_MM, max(2.5, 0.5 * margin))
    band = max(0.0, text_h + 2.0 - margin)
    y = margin + band + biggest / 2.0
    x = margin
    openings: list[Circle] = []
    texts: list[Entity] = []
    for pipe, d in row:
        cx = x + d / 2.0
        openings.append(Circle("cut-inner", (cx, y), d / 2.0))
        w = text_width(pipe.note, text_h)
        texts.append(Text("engrave", (cx - w / 2.0, (margin + band - text_h) / 2.0), text_h,
                          pipe.note))
        x += d + spacing
    width = x - spacing + margin
    height = biggest + 2.0 * margin + band
    outline: Polyline = rect("cut-outer", 0.0, 0.0, width, height)
    # The plate's own name in the margin above its openings (as every part carries one):
    # the tube set's id, else just `holder`, so that it is known on a shared sheet.
    texts += labels(label(f"{group.id} {name}", (width / 2.0, height - margin / 2.0),
                          width - 2.0 * spacing, margin, max_height=HOLDER_LABEL_MM,
                          avoid=(outline, *openings, *texts), short=(name,)))
    return Draft(id=f"{group.id}-{name}", pipe_id=None, group=group.id, name=name,
                 material=group.holder.material, stock=group.holder.stock,
                 thickness_mm=mm(group.holder.thickness_m), kind=kind, width_mm=width,
                 height_mm=height, outline=outline, openings=tuple(openings),
                 marks=tuple(texts), source=source, grain_along_x=kind == "board",
                 length_along_x=True,
                 note=f"{len(row)} openings: " + ", ".join(p.note for p, _ in row))
