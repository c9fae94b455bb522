"""Stock-tube pipes: cut lengths, wrap-around drilling templates, duct blocks, holders.

Drilling template (kind ``template``, printed full size and wrapped round the tube): as
wide as the tube's outside circumference and as tall as its cut length, top end up. The
front line runs down the middle; a hole at angle a (degrees, positive to the right of the
front line as you look at the front with the top end up) is drawn at
``x = C/2 + a/360·C`` and ``y = cut length − its distance from the top``. A hole that
crosses the template's side edges (a thumb hole at 180°) is drawn on both edges, so it
closes up when wrapped. Ticks every 10 mm (longer every 50 mm) run down both side edges so
the edges meet square; the window and labium (duct flutes), the embouchure hole (labelled
with its drill, as the finger holes are) and the cork line (side-blown flutes) or the mouth
(tube flue pipes) are outlined.

A flute's cutter parts (drilling strips, the duct block's profile, the window template)
are in ``flute_jig``; its duct block is drawn at full size on the build sheet.

Holder (tube sets): a plate with one round opening per tube (outside diameter +
clearance) in a row, ``spacing`` clear between tubes and ``margin`` clear to the edges,
each opening labelled with its note below it. A row longer than the sheet is split into
several plates (``holder-1``, ``holder-2``...).
"""

from __future__ import annotations

import math

from compiler.errors import Position
from compiler.geometry.drafts import LABEL_MIN_MM, READABLE_MM, Draft, label, labels, pipe_error
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


def _holes(pipe: Pipe, circ: float, length: float) -> list[Entity]:
    out: list[Entity] = []
    _check_overlaps(pipe, circ)
    for hole in sorted(pipe.holes, key=lambda h: h.number):
        _check_hole(pipe, hole, length)
        r = mm(hole.diameter_m) / 2.0
        x, y = hole_x(hole.angle_deg, circ), length - mm(hole.position_from_top_m)
        copies = [x]
        if x - r < 0:
            copies.append(x + circ)
        if x + r > circ:
            copies.append(x - circ)
        for cx in copies:
            out += [Circle("mark", (cx, y), r), *_cross(cx, y, r)]
        text = f"{hole.label}: {mm(hole.diameter_m):.1f}"
        tx = x + r + CROSS_MM + 1.0
        if tx + text_width(text, TEMPLATE_TEXT_MM) > circ:
            tx = x - r - CROSS_MM - 1.0 - text_width(text, TEMPLATE_TEXT_MM)
        out.append(Text("engrave", (tx, y + 1.0), TEMPLATE_TEXT_MM, text))
    return out


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


def _head(pipe: Pipe, circ: float, length: float,
          avoid: tuple[Entity, ...] = ()) -> list[Entity]:
    out: list[Entity] = []
    front = circ / 2.0
    head = pipe.head
    if head is not None and head.kind == "duct" and head.labium_from_top_m is not None:
        ww, wl = mm(head.window_width_m or 0.0), mm(head.window_length_m or 0.0)
        y = length - mm(head.labium_from_top_m)
        out.append(rect("mark", front - ww / 2, y, front + ww / 2, y + wl))
        out.append(Text("engrave", (front + ww / 2 + 1.0, y - TEMPLATE_TEXT_MM / 2),
                        TEMPLATE_TEXT_MM, "labium"))
    if head is not None and head.kind == "embouchure" and head.embouchure_from_top_m is not None:
        d = mm(head.embouchure_diameter_m or 0.0)
        r, y = d / 2.0, length - mm(head.embouchure_from_top_m)
        hole = [Circle("mark", (front, y), r), *_cross(front, y, r)]
        out += hole
        if head.cork_m is not None:
            yc = y + mm(head.cork_m)
            out += [line("mark", (0.0, yc), (circ, yc)),
                    Text("engrave", (1.0, yc + 1.0), TEMPLATE_TEXT_MM, "cork")]
        out += labels(_embouchure_label(d, front, y, circ, (*avoid, *out)))
    if pipe.mouth is not None:
        mw, cu = mm(pipe.mouth.width_m), mm(pipe.mouth.cutup_m)
        y0 = mm(pipe.block.length_m) if pipe.block is not None else 0.0
        out.append(rect("mark", front - mw / 2, y0, front + mw / 2, y0 + cu))
    return out


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
    marks: list[Entity] = [line("mark", (front, 0.0), (front, length))]
    marks += _ticks(circ, length) + _holes(pipe, circ, length)
    marks += _head(pipe, circ, length, tuple(marks))
    top = Text("engrave", (front + 1.0, length - TEMPLATE_TEXT_MM - 1.0), TEMPLATE_TEXT_MM,
               "TOP")
    lab = label(f"{pipe.id} {pipe.note} cut {length:.1f} mm, tube {od:.1f} mm; front line, "
                "top end up", (circ * 0.25, length / 2.0), circ * 0.3, length * 0.9,
                TEMPLATE_TEXT_MM, avoid=(*marks, top),
                short=(f"{pipe.note} cut {length:.1f} mm", pipe.note))
    return Draft(id=f"{pipe.id}-template", pipe_id=pipe.id, group=pipe.group, name="template",
                 material="paper", stock=pipe.stock, thickness_mm=0.0, kind="template",
                 width_mm=circ, height_mm=length, outline=rect("cut-outer", 0, 0, circ, length),
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
