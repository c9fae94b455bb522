"""``cut-list.csv``: every part and tube length, by stock, for the saw and the laser."""

from __future__ import annotations

import csv
import io
from pathlib import Path

from compiler.cache import Cache
from compiler.display import Inches, in_inches, inches_for
from compiler.geometry.model import Parts
from compiler.ir import Resolved
from compiler.options import BuildOptions

NAME = "csv"
COLUMNS = ("stock", "material", "thickness_mm", "part", "pipe", "what", "quantity",
           "length_mm", "width_mm", "source", "note")


INCH_COLUMNS = ("length_in", "width_in")
"""After ``width_mm`` for a spec written in inches: the same sizes in inches, in fractions of
the spec's precision (``5 3/8``; ``compiler.display``)."""


def render(parts: Parts, inches: Inches | None = None) -> str:
    """CSV text, by stock, then in the order of the pipes (as in the spec: low to high);
    sheet parts name the sheet they are nested on, tube pieces the stock length they are
    cut from; each stock's lengths to buy (``geometry.stock_plan``) close its rows.
    ``length_mm`` × ``width_mm`` is the size order of every output
    (``Part.length_by_width``)."""
    placed = {pl.part_id: sheet.id for sheet in parts.sheets for pl in sheet.placements}
    order: dict[str, int] = {}
    for p in parts.parts:
        order.setdefault(p.pipe_id or p.id, len(order))
    for cut in parts.tube_cuts:
        order.setdefault(cut.pipe_id, len(order))
    rows = []
    for p in parts.parts:
        if p.kind == "template":
            continue
        length, width = p.length_by_width
        rows.append((p.stock, p.material, f"{p.thickness_mm:.2f}", p.id, p.pipe_id or "",
                     p.name, str(p.quantity), f"{length:.2f}", f"{width:.2f}",
                     placed.get(p.id, ""), p.note))
    from_length = {piece: f"stock length {bar.number}" for bar in parts.stock_lengths
                   for piece in bar.pieces}
    for cut in parts.tube_cuts:
        rows.append((cut.stock, cut.material, "", f"{cut.pipe_id}-tube", cut.pipe_id,
                     "tube", "1", f"{cut.length_mm:.2f}", f"{cut.outside_diameter_mm:.2f}",
                     from_length.get(cut.pipe_id, "stock tube"),
                     "width column: outside diameter"))
    rows.sort(key=lambda r: (r[0], order.get(r[4] or r[3], len(order)), r[3]))
    # The lengths to buy follow their stock's pieces: what each one is cut into, in order.
    for bar in parts.stock_lengths:
        rows.append((bar.stock, bar.material, "", f"{bar.stock}-length-{bar.number}", "",
                     "stock length to buy", "1", f"{bar.length_mm:.2f}",
                     f"{bar.outside_diameter_mm:.2f}", "",
                     f"cut in this order: {', '.join(bar.pieces)}; pieces and kerfs "
                     f"{bar.used_mm:.2f} mm, offcut {bar.offcut_mm:.2f} mm"))
    rows.sort(key=lambda r: r[0])  # stable: each stock's rows stay in the order above
    header: tuple[str, ...] = COLUMNS
    if inches is not None:
        at = COLUMNS.index("width_mm") + 1
        header = COLUMNS[:at] + INCH_COLUMNS + COLUMNS[at:]
        shown: list[tuple[str, ...]] = [
            row[:at] + (inches.text_of_mm(float(row[at - 2])),
                         inches.text_of_mm(float(row[at - 1]))) + row[at:-1]
            + (in_inches(row[-1], inches),) for row in rows]
    else:
        shown = list(rows)
    out = io.StringIO()
    writer = csv.writer(out, lineterminator="\n")
    writer.writerow(header)
    writer.writerows(shown)
    return out.getvalue()


def write(resolved: Resolved, parts: Parts, options: BuildOptions, out_dir: Path,
          cache: Cache | None = None) -> list[Path]:
    path = out_dir / "cut-list.csv"
    inches = inches_for(resolved.fabrication.units, resolved.fabrication.precision_m)
    path.write_text(render(parts, inches), encoding="utf-8")
    return [path]
