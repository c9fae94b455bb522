"""Trim advice on the build sheet: for each measured pipe, what to cut off or how far to move
its stopper, cap or plug so it sounds its target in the spec's air (``resolve.trim``)."""

from __future__ import annotations

from compiler.display import in_inches
from compiler.emit.pdf.document import Block, Column, Heading, Paragraph, Spacer, Table
from compiler.emit.pdf.style import MM, celsius, cents, fixed, hz, inches_of, length
from compiler.ir import Resolved


def blocks(resolved: Resolved) -> list[Block]:
    """A heading, a table of the numbers and the advice in words; nothing without trims."""
    trims = [(g, t) for g in resolved.groups for t in g.trims]
    if not trims:
        return []
    inches = inches_of(resolved.fabrication)
    cols = (Column("pipe", 1.6), Column("built", 1.0, "right"),
            Column("measured", 1.5, "right"), Column("in the spec's air", 1.3, "right"),
            Column("target", 1.0, "right"), Column("off cents", 0.8, "right"),
            Column("change", 1.0, "right"))
    rows = tuple((t.pipe_id, length(t.built_length_m, inches),
                  f"{hz(t.measured_hz)} Hz at {celsius(t.measured_temperature_c)}",
                  f"{hz(t.in_spec_air_hz)} Hz", f"{hz(t.target_hz)} Hz", cents(t.off_cents),
                  f"{fixed(t.change_m * 1000, 2, signed=True)} mm"
                  + (f" ({inches.text(t.change_m)} in)" if inches else "")) for _, t in trims)
    out: list[Block] = [Spacer(2 * MM), Heading("Trim advice for the measured pipes", 12),
                        Table(cols, rows, size=8, min_rows=1)]
    for group, t in trims:
        out.append(Paragraph(f"{t.pipe_id} ({group.id}, {t.note}): "
                             f"{in_inches(t.advice, inches)}; to sound "
                             f"{hz(t.target_hz)} Hz at {celsius(group.air.temperature_c)}.", 9))
    return out
