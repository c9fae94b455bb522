"""Hand-built resolved models (the IR) for the geometry and DXF tests.

Invented but realistic pipes: dimensions a maker would use, lengths near what the
closed-form pipe formulas give (f = c/2L open, c/4L stopped, c ≈ 342 m/s at 18 °C), so
the parts have true proportions. The geometry stage only reads these numbers; it does not
check their acoustics.
"""

from __future__ import annotations

import math
from dataclasses import replace

from compiler.errors import Position
from compiler.ir import (
    AirReport,
    Block,
    Calibration,
    FabricationReport,
    Foot,
    Group,
    Head,
    Holder,
    Hole,
    Jig,
    Mouth,
    Pipe,
    Resolved,
    StockItem,
    Stopper,
    TuningReport,
)
from compiler.resolve import materials

SPEC = "samples.yaml"

AIR = AirReport("room", 18.0, 55.0, 101325.0, 420.0, "cramer-1993", 342.2, 1.21, ())
CALIBRATION = Calibration(False, "none", 1.0, (), 0.0)

FABRICATION = FabricationReport(
    sheet_length_m=2.0, sheet_width_m=1.0, kerf_m=0.0002, spacing_m=0.005,
    precision_m=0.0001, seam_allowance_m=0.006, tuning_allowance="3 %", paper="a4",
    dxf_version="r2010", part_files=False, units="mm")

STOCK = (
    StockItem("alu-22", "tube", "aluminium", 0.001, 0.022, 0.020, 2.0, None),
    StockItem("alu-25", "tube", "aluminium", 0.001, 0.025, 0.023, 2.0, None),
    StockItem("pine-15", "board", "pine", 0.015, None, None, 2.4, 0.4),
    StockItem("ply-6", "sheet", "birch-ply", 0.006, None, None, 0.6, 0.3),
    StockItem("spotted-08", "sheet", "spotted-metal", 0.0008, None, None, None, None),
)


def _pipe(**fields: object) -> Pipe:
    base: dict[str, object] = {
        "harmonic": 1, "error_cents": 0.0, "harmonics_hz": (), "cents_per_mm": -1.0,
        "cents_per_c": 3.0, "inside_diameter_m": None, "outside_diameter_m": None,
        "inside_width_m": None, "inside_depth_m": None, "end_correction_m": 0.0,
        "mouth": None, "foot": None, "block": None, "stopper": None, "head": None,
        "holes": (), "fingerings": (), "curves": (),
    }
    base.update(fields)
    base.setdefault("predicted_hz", base["target_hz"])
    base.setdefault("acoustic_length_m", base["speaking_length_m"])
    return Pipe(**base)  # type: ignore[arg-type]


def open_metal_pipe() -> Pipe:
    """C3 of a 4 ft principal: 92.5 mm inside, 0.8 mm spotted metal, 180 mm foot, 23 mm toe;
    mouth 1/4 of the circumference, cut-up 1/4 of the mouth."""
    inside = 0.0925
    width = math.pi * inside / 4.0
    return _pipe(
        id="principal-4-C3", group="principal-4", family="open-flue",
        construction="rolled-sheet", note="C3", stock="spotted-08", material="spotted-metal",
        target_hz=130.813, section="round", inside_diameter_m=inside,
        outside_diameter_m=inside + 0.0016, wall_m=0.0008, speaking_length_m=1.22,
        cut_length_m=1.2566,
        mouth=Mouth(width, width / 4.0, 0.0008, 0.25, 0.25, 0.06),
        foot=Foot(0.18, inside, 0.023, 0.023),
        source=Position(SPEC, 30, 5))


def stopped_wood_pipe() -> Pipe:
    """C3 stopped wood, 60 × 75 mm inside, 15 mm pine boards, 80 mm block, 60 mm stopper."""
    return _pipe(
        id="stopped-wood-C3", group="stopped-wood", family="stopped-flue",
        construction="boards", note="C3", stock="pine-15", material="pine",
        target_hz=130.813, section="rect", inside_width_m=0.060, inside_depth_m=0.075,
        wall_m=0.015, speaking_length_m=0.600, cut_length_m=0.758,
        mouth=Mouth(0.060, 0.024, 0.004, 1.0, 0.4, 0.05),
        block=Block(0.080, 0.0012),
        stopper=Stopper(0.600, 0.060, 0.020),
        source=Position(SPEC, 44, 5))


TUBE_NOTES = (("C5", 523.251, 0.1684), ("E5", 659.255, 0.1347), ("G5", 783.991, 0.1140))


def tube_set_pipes() -> list[Pipe]:
    """Three stopped aluminium tubes, 25 × 1 mm, with a 12 mm plug."""
    return [
        _pipe(id=f"tubes-{note}", group="tubes", family="stopped-tube",
              construction="stock-tube", note=note, stock="alu-25", material="aluminium",
              target_hz=hz, section="round", inside_diameter_m=0.023,
              outside_diameter_m=0.025, wall_m=0.001, speaking_length_m=cut - 0.012,
              cut_length_m=cut, stopper=Stopper(cut - 0.012, 0.012, 0.0),
              source=Position(SPEC, 60 + i, 9))
        for i, (note, hz, cut) in enumerate(TUBE_NOTES)
    ]


HOLES = (  # (from top m, diameter m, angle deg)
    (0.115, 0.0070, 0.0), (0.140, 0.0075, 0.0), (0.165, 0.0065, 0.0),
    (0.200, 0.0080, 0.0), (0.225, 0.0075, 0.0), (0.250, 0.0060, 10.0),
)


def duct_flute() -> Pipe:
    """A six-hole duct flute in D5 from 22 × 1 mm aluminium tube, 300 mm long."""
    length = 0.300
    holes = tuple(
        Hole(n, str(n), top, length - top, d, angle, 0.001, 0.0, False)
        for n, (top, d, angle) in enumerate(HOLES, start=1))
    return _pipe(
        id="whistle-d", group="whistle-d", family="duct-flute", construction="stock-tube",
        note="D5", stock="alu-22", material="aluminium", target_hz=587.33, section="round",
        inside_diameter_m=0.020, outside_diameter_m=0.022, wall_m=0.001,
        speaking_length_m=0.270, cut_length_m=length,
        head=Head("duct", 0.0045, 0.010, 0.0012, 0.030, None, None, None),
        holes=holes, source=Position(SPEC, 80, 5),
        jig=Jig("jig-ply", "plywood", 0.003, "sheet"))


def _group(gid: str, kind: str, family: str, construction: str, pipes: list[Pipe],
           holder: Holder | None = None, source: Position | None = None) -> Group:
    return Group(gid, kind, family, construction, AIR, "unflanged", CALIBRATION, holder,
                 tuple(p.id for p in pipes), source=source)


def resolved(pipes: list[Pipe], groups: list[Group],
             fabrication: FabricationReport = FABRICATION) -> Resolved:
    return Resolved(
        instrument="Geometry samples", slug="geometry-samples", spec_file=SPEC,
        spec_sha256="3f" * 32, tuning=TuningReport(440.0, "equal", "C"),
        fabrication=fabrication, stock=STOCK, groups=tuple(groups), pipes=tuple(pipes),
        warnings=(), materials=materials.used(STOCK, pipes, groups))


HOLDER = Holder("ply-6", "birch-ply", 0.006, 0.012, 0.015, 0.0005)
TUBE_SET_AT = Position(SPEC, 58, 5)
"""Where the sample tube set is defined (its pipes are on the lines after it)."""


def metal_model() -> Resolved:
    p = open_metal_pipe()
    return resolved([p], [_group("principal-4", "rank", "open-flue", "rolled-sheet", [p])])


def wood_model() -> Resolved:
    p = stopped_wood_pipe()
    return resolved([p], [_group("stopped-wood", "rank", "stopped-flue", "boards", [p])])


def tube_set_model(holder: Holder | None = HOLDER) -> Resolved:
    ps = tube_set_pipes()
    return resolved(ps, [_group("tubes", "tube-set", "stopped-tube", "stock-tube", ps,
                                holder, TUBE_SET_AT)])


def flute_model() -> Resolved:
    p = duct_flute()
    return resolved([p], [_group("whistle-d", "flute", "duct-flute", "stock-tube", [p])])


def everything() -> Resolved:
    """All four sample instruments in one model."""
    metal, wood = open_metal_pipe(), stopped_wood_pipe()
    tubes, flute = tube_set_pipes(), duct_flute()
    groups = [
        _group("principal-4", "rank", "open-flue", "rolled-sheet", [metal]),
        _group("stopped-wood", "rank", "stopped-flue", "boards", [wood]),
        _group("tubes", "tube-set", "stopped-tube", "stock-tube", tubes, HOLDER),
        _group("whistle-d", "flute", "duct-flute", "stock-tube", [flute]),
    ]
    return resolved([metal, wood, *tubes, flute], groups)


def metal_rank(count: int) -> Resolved:
    """A long rank of open metal pipes (a stress case for speed): diameters halving every
    16 semitones from 92.5 mm at C3 (Töpfer's Normalmensur, Töpfer 1855 via Adelung 1991),
    lengths halving each octave (an open pipe's length ∝ 1/f)."""
    base = open_metal_pipe()
    pipes = []
    for i in range(count):
        k = i % 61
        ratio_d = 2.0 ** (-k / 16.0)
        ratio_l = 2.0 ** (-k / 12.0)
        d = 0.0925 * ratio_d
        width = math.pi * d / 4.0
        pipes.append(replace(
            base, id=f"rank-{i // 61}-{k}", group="big", note=f"n{k}",
            inside_diameter_m=d, outside_diameter_m=d + 0.0016,
            speaking_length_m=1.22 * ratio_l, cut_length_m=1.2566 * ratio_l,
            mouth=replace(base.mouth, width_m=width, cutup_m=width / 4.0),
            foot=Foot(0.18, d, d / 4.0, d / 4.0)))
    return resolved(pipes, [_group("big", "rank", "open-flue", "rolled-sheet", pipes)])
