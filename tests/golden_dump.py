"""Readable, normalised dumps of a build's files for the golden tests (tests/test_golden.py).

Each dump is plain text a reviewer can read in a diff: resolved.json and cut-list.csv as
written, one line per DXF entity (layer, type, geometry rounded to 0.001 mm, text), and the
build sheet's text per page as pypdf extracts it, whitespace normalised. A file a build
writes that has no dump here fails the golden test, so a new output is never silently
left out of it.
"""

from __future__ import annotations

import io
import re
from collections.abc import Callable, Iterable
from pathlib import Path
from typing import Any

import ezdxf
from pypdf import PdfReader

# Coordinates and sizes in mm to the micrometre, angles to a thousandth of a degree,
# bulges (tan of a quarter of the arc's angle) to 1e-6: far finer than any cutter, coarse
# enough that the last floating-point bit never shows.
MM_PLACES = 3
BULGE_PLACES = 6


def _num(value: float, places: int = MM_PLACES) -> str:
    text = f"{round(float(value), places):.{places}f}"
    return "0." + "0" * places if text == "-0." + "0" * places else text


def _xy(point: Iterable[float]) -> str:
    x, y = list(point)[:2]
    return f"({_num(x)}, {_num(y)})"


def _text(value: str) -> str:
    return '"' + value.replace("\\", "\\\\").replace('"', '\\"') + '"'


def _vertices(vertices: Any, closed: bool) -> str:
    """One line for a polyline: its shape, count and points, a bulge only where there is one."""
    points = []
    for (x, y), bulge in vertices:
        point = _xy((x, y))
        if round(bulge, BULGE_PLACES) != 0:
            point += f" b={_num(bulge, BULGE_PLACES)}"
        points.append(point)
    shape = "closed" if closed else "open"
    return f"{shape} n={len(points)} " + " ".join(points)


def _lwpolyline(entity: Any) -> str:
    return _vertices((((x, y), b) for x, y, b in entity.get_points("xyb")), entity.closed)


def _polyline(entity: Any) -> str:
    return _vertices((((v.dxf.location[0], v.dxf.location[1]), v.dxf.get("bulge", 0.0))
                      for v in entity.vertices), entity.is_closed)


def _text_entity(entity: Any) -> str:
    where = entity.dxf.align_point if entity.dxf.hasattr("align_point") else entity.dxf.insert
    return (f"at={_xy(where)} h={_num(entity.dxf.height)} "
            f"rot={_num(entity.dxf.get('rotation', 0.0))} "
            f"align={entity.dxf.get('halign', 0)}/{entity.dxf.get('valign', 0)} "
            f"{_text(entity.dxf.text)}")


def _mtext(entity: Any) -> str:
    return (f"at={_xy(entity.dxf.insert)} h={_num(entity.dxf.char_height)} "
            f"rot={_num(entity.dxf.get('rotation', 0.0))} "
            f"attach={entity.dxf.get('attachment_point', 1)} {_text(entity.text)}")


_ENTITY_DUMPS: dict[str, Callable[[Any], str]] = {
    "LINE": lambda e: f"{_xy(e.dxf.start)} -> {_xy(e.dxf.end)}",
    "CIRCLE": lambda e: f"c={_xy(e.dxf.center)} r={_num(e.dxf.radius)}",
    "ARC": lambda e: (f"c={_xy(e.dxf.center)} r={_num(e.dxf.radius)} "
                      f"a={_num(e.dxf.start_angle)}..{_num(e.dxf.end_angle)}"),
    "POINT": lambda e: _xy(e.dxf.location),
    "LWPOLYLINE": _lwpolyline,
    "POLYLINE": _polyline,
    "TEXT": _text_entity,
    "MTEXT": _mtext,
}


def dxf_dump(data: bytes) -> str:
    """The drawing's version, units, layers, then one line per model-space entity in file
    order: ``LAYER TYPE geometry``."""
    doc = ezdxf.read(io.StringIO(data.decode("utf-8")))
    lines = [f"version {doc.dxfversion} units {doc.header.get('$INSUNITS', 0)}"]
    for layer in sorted(doc.layers, key=lambda layer: str(layer.dxf.name)):
        lines.append(f"layer {layer.dxf.name} color={layer.dxf.color} "
                     f"linetype={layer.dxf.linetype}")
    for entity in doc.modelspace():
        kind = entity.dxftype()
        dump = _ENTITY_DUMPS.get(kind)
        if dump is None:
            raise AssertionError(f"golden DXF dump: no dump for entity type {kind}; add one "
                                 "to tests/golden_dump.py")
        lines.append(f"{entity.dxf.layer} {kind} {dump(entity)}")
    return "\n".join(lines) + "\n"


def pdf_dump(data: bytes) -> str:
    """Every page's extracted text (pypdf), each line's whitespace collapsed, blank lines
    dropped, under a ``=== page N`` line; the page size in points beside it."""
    reader = PdfReader(io.BytesIO(data))
    lines: list[str] = []
    for number, page in enumerate(reader.pages, start=1):
        box = page.mediabox
        lines.append(f"=== page {number} ({_num(box.width, 1)} x {_num(box.height, 1)} pt)")
        for line in page.extract_text().splitlines():
            line = re.sub(r"\s+", " ", line).strip()
            if line:
                lines.append(line)
    return "\n".join(lines) + "\n"


def _as_written(data: bytes) -> str:
    return data.decode("utf-8")


# Output file -> (name of its dump, how to make it). manifest.json is left out: it holds
# the sha256 of every other file, so any change anywhere would show there twice.
def dump_name_and_maker(name: str) -> tuple[str, Callable[[bytes], str]] | None:
    if name == "manifest.json":
        return None
    if name in ("resolved.json", "cut-list.csv"):
        return name, _as_written
    if name.endswith(".dxf"):
        return name + ".txt", dxf_dump
    if name.endswith(".pdf"):
        return name + ".txt", pdf_dump
    raise AssertionError(f"golden dumps: the build wrote {name}, which has no dump; add one "
                         "to tests/golden_dump.py")


def dumps_of(folder: Path) -> dict[str, str]:
    """Every output file of a build folder as its normalised dump, by relative dump name."""
    dumps: dict[str, str] = {}
    for path in sorted(p for p in folder.rglob("*") if p.is_file()):
        relative = path.relative_to(folder).as_posix()
        found = dump_name_and_maker(relative)
        if found is not None:
            dump_name, make = found
            dumps[dump_name] = make(path.read_bytes())
    return dumps
