"""DXF backend: one drawing per nested sheet, and optionally one per part.

Layers (one per operation; entity colours are BYLAYER):

=============  ===========  =====================================================
layer          ACI colour   what
=============  ===========  =====================================================
``cut-inner``  5 (blue)     openings, cut first (kerf-compensated, closed)
``cut-outer``  1 (red)      part outlines (kerf-compensated, closed)
``mark``       3 (green)    score and centre lines, ticks, templates' features
``engrave``    6 (magenta)  labels (TEXT, centred on their box; upright on the sheet)
``sheet``      8 (grey)     the sheet's outline, for reference only: never cut
=============  ===========  =====================================================

Entities are written layer by layer in the order sheet, engrave, mark, cut-inner, cut-outer
(the usual laser order: nothing moves until the outlines are cut). The header's
``$EXTMIN``/``$EXTMAX`` are the drawing's extents (the sheet, or the part's entities).
Closed paths are LWPOLYLINE with bulges (R2010) or closed POLYLINE with bulges (R12);
circles are CIRCLE.

Reproducible bytes: the drawing's timestamps are fixed (2000-01-01, zero editing time),
its GUIDs derive from the file's own content and name (not from the program's version: the
same drawing keeps its bytes across releases), handles are assigned in creation order, and
coordinates are rounded to 1e-6 mm. ``$INSUNITS`` = 4 (millimetres) in R2010; R12 has no
such header variable (it came with R2000), so R12 files are unitless and the cutter software
must be told millimetres.
"""

from __future__ import annotations

import hashlib
import io
import pathlib
from collections import OrderedDict
from dataclasses import dataclass
from functools import partial

from ezdxf.document import Drawing
from ezdxf.enums import TextEntityAlignment
from ezdxf.lldxf.tagwriter import TagWriter

from compiler.cache import Cache, content_digest, key_of
from compiler.geometry.model import Circle, Entity, Part, Parts, Sheet, Text
from compiler.geometry.paths import Box, bounds_of, placed, rect, text_centre
from compiler.geometry.units import snap, snap_bulge
from compiler.ir import Resolved
from compiler.options import BuildOptions

NAME = "dxf"

SHEET_LAYER = "sheet"
"""The sheet's outline: a reference for the operator, on a layer no cutter should cut."""

LAYER_COLOURS = {"cut-inner": 5, "cut-outer": 1, "mark": 3, "engrave": 6, SHEET_LAYER: 8}
"""AutoCAD Color Index of each operation's layer (8: grey, the sheet outline)."""

WRITE_ORDER = (SHEET_LAYER, "engrave", "mark", "cut-inner", "cut-outer")

VERSIONS = {"r2010": "R2010", "r12": "R12"}

FIXED_JULIAN_DATE = 2451544.5
"""2000-01-01 00:00 as a Julian date: every file carries the same creation time."""

MARKER = "boresmith"


@dataclass(frozen=True)
class DxfFile:
    """Everything one DXF file's bytes depend on, and so its cache key: ``render`` reads
    nothing else."""

    name: str
    """The path inside the output folder (``sheet-01-birch-plywood.dxf``); the GUIDs derive
    from it and the content."""
    version: str
    """``r2010`` or ``r12``."""
    limits: Box
    """The drawing limits (mm): the sheet, or the part."""
    entities: tuple[Entity, ...]


def _guid(seed: str) -> str:
    h = hashlib.sha256(seed.encode("utf-8")).hexdigest().upper()
    return "{" + f"{h[:8]}-{h[8:12]}-{h[12:16]}-{h[16:20]}-{h[20:32]}" + "}"


def _new(version: str) -> Drawing:
    doc = Drawing.new(version)
    # R12 has no $INSUNITS (setting it makes ezdxf log a warning).
    if version != "R12":
        doc.units = 4
        doc.header["$MEASUREMENT"] = 1
    return doc


def _add(doc: Drawing, entity: Entity) -> None:
    msp = doc.modelspace()
    attribs = {"layer": entity.operation}
    if isinstance(entity, Circle):
        msp.add_circle((snap(entity.center[0]), snap(entity.center[1])), snap(entity.radius),
                       dxfattribs=attribs)
    elif isinstance(entity, Text):
        # Centred on the box the geometry stage kept free for it: whatever the cutter
        # software's font, the label stays clear of the part's lines.
        text = msp.add_text(entity.text, height=entity.height,
                            rotation=snap(entity.rotation_deg), dxfattribs=attribs)
        cx, cy = text_centre(entity)
        text.set_placement((snap(cx), snap(cy)), align=TextEntityAlignment.MIDDLE_CENTER)
    else:
        bulges = list(entity.bulges) + [0.0] * (len(entity.points) - len(entity.bulges))
        points = [(snap(x), snap(y), snap_bulge(b)) for (x, y), b in zip(entity.points, bulges,
                                                                   strict=True)]
        if doc.dxfversion == "AC1009":
            msp.add_polyline2d(points, format="xyb", close=entity.closed, dxfattribs=attribs)
        else:
            msp.add_lwpolyline(points, format="xyb", close=entity.closed, dxfattribs=attribs)


def _serialise(doc: Drawing, seed: str) -> bytes:
    """``doc`` as DXF bytes with fixed times and seeded GUIDs (``Drawing.write`` would
    stamp the current time and random GUIDs into the header and ezdxf's metadata)."""
    doc.commit_pending_changes()
    doc.update_all()
    for var in ("$TDCREATE", "$TDUCREATE", "$TDUPDATE", "$TDUUPDATE"):
        doc.header[var] = FIXED_JULIAN_DATE
    doc.header["$TDINDWG"] = 0.0
    doc.header["$TDUSRTIMER"] = 0.0
    if doc.dxfversion != "AC1009":
        doc.header["$FINGERPRINTGUID"] = _guid("fingerprint:" + seed)
        doc.header["$VERSIONGUID"] = _guid("version:" + seed)
    meta = doc.ezdxf_metadata()
    meta["CREATED_BY_EZDXF"] = MARKER
    meta["WRITTEN_BY_EZDXF"] = MARKER
    # ezdxf registers the CLASS entries of the entity types in use from a set, whose order
    # changes with Python's string hashing from run to run: put them in a fixed order.
    doc.classes.classes = OrderedDict(sorted(doc.classes.classes.items()))
    stream = io.StringIO()
    handles = doc.dxfversion != "AC1009" or bool(doc.header.get("$HANDLING", 0))
    doc.export_sections(TagWriter(stream, write_handles=handles, dxfversion=doc.dxfversion))
    return doc.encode(stream.getvalue())


def render(drawing: DxfFile) -> bytes:
    """One DXF drawing of ``drawing.entities`` (mm) as bytes."""
    entities, version, limits = drawing.entities, drawing.version, drawing.limits
    doc = _new(VERSIONS[version])
    for name, colour in LAYER_COLOURS.items():
        doc.layers.add(name, color=colour)
    # The drawing limits (the sheet, or the part); ezdxf copies them into the header.
    msp = doc.modelspace()
    msp.dxf.limmin = (snap(limits[0]), snap(limits[1]))
    msp.dxf.limmax = (snap(limits[2]), snap(limits[3]))
    # The extents: what a viewer zooms to. Labels count with their approximate box.
    low_x, low_y, high_x, high_y = bounds_of(entities)
    # (ezdxf copies the layout's extents into the header when it writes, but not a zero
    # corner: the header is set as well)
    msp.dxf.extmin = doc.header["$EXTMIN"] = (snap(low_x), snap(low_y), 0.0)
    msp.dxf.extmax = doc.header["$EXTMAX"] = (snap(high_x), snap(high_y), 0.0)
    for operation in WRITE_ORDER:
        for entity in entities:
            if entity.operation == operation:
                _add(doc, entity)
    return _serialise(doc, content_digest(drawing))


def sheet_entities(sheet: Sheet, parts: dict[str, Part]) -> tuple[Entity, ...]:
    """The sheet's outline (``sheet`` layer) and every placed part's entities, moved (and
    turned) to their place on the sheet."""
    out: list[Entity] = [rect(SHEET_LAYER, 0.0, 0.0, sheet.length_mm, sheet.width_mm)]
    for placement in sheet.placements:
        out += placed(parts[placement.part_id].entities, placement)
    return tuple(out)


def write(resolved: Resolved, parts: Parts, options: BuildOptions,
          out_dir: pathlib.Path, cache: Cache | None = None) -> list[pathlib.Path]:
    """Write ``sheet-<nn>-<material>.dxf`` for every nested sheet into ``out_dir``, and
    ``parts/<part id>.dxf`` for every part when ``options.part_files`` is on. Returns the
    paths written, sorted.

    Each file's GUIDs derive from its own content and name, so an unchanged sheet gives the
    same bytes (and comes from ``cache``) whatever else changed in the spec."""
    version = options.dxf_version
    if version not in VERSIONS:
        raise ValueError(f"unknown DXF version {version!r}; use one of {sorted(VERSIONS)}")
    store = cache or Cache(None)
    by_id = {p.id: p for p in parts.parts}
    out_dir.mkdir(parents=True, exist_ok=True)
    jobs: list[DxfFile] = []
    for sheet in parts.sheets:
        jobs.append(DxfFile(f"{sheet.id}.dxf", version, (0.0, 0.0, sheet.length_mm,
                                                         sheet.width_mm),
                            sheet_entities(sheet, by_id)))
    if options.part_files:
        (out_dir / "parts").mkdir(exist_ok=True)
        for part in parts.parts:
            jobs.append(DxfFile(f"parts/{part.id}.dxf", version, bounds_of(part.entities),
                                part.entities))
    written: list[pathlib.Path] = []
    for job in jobs:
        path = out_dir / job.name
        path.write_bytes(store.data("dxf", key_of(job), partial(render, job)))
        written.append(path)
    return sorted(written)
