"""Hand-built resolved models and parts for the PDF backend's tests.

Invented instruments with plausible numbers, made without the resolver (which is written
separately): the pitches are 12-TET from A4 = 440 Hz, the lengths follow the closed-form
quarter/half-wave rules with invented end corrections. They only have to look like what
the resolver will produce; nothing here is a check value.
"""

from __future__ import annotations

import math
from collections.abc import Callable

import pytest

from compiler.errors import Position
from compiler.geometry.model import Circle, Part, Parts, Placement, Polyline, Sheet, Text, TubeCut
from compiler.ir import (
    AirReport,
    Block,
    Calibration,
    Curve,
    FabricationReport,
    Fingering,
    Foot,
    Group,
    Head,
    Holder,
    Hole,
    Mouth,
    Note,
    Pipe,
    Residual,
    Resolved,
    StockItem,
    Stopper,
    TuningReport,
)
from compiler.resolve import materials

NAMES = ("C", "C#", "D", "D#", "E", "F", "F#", "G", "G#", "A", "A#", "B")
LOG_C = 1200.0 / math.log(2.0)


def note_name(midi: int) -> str:
    return f"{NAMES[midi % 12]}{midi // 12 - 1}"


def tet(midi: int) -> float:
    return 440.0 * 2.0 ** ((midi - 69) / 12.0)


def room(speed: float = 342.21) -> AirReport:
    return AirReport("room", 18.0, 55.0, 101325.0, 420.0, "cramer-1993", speed, 1.2126,
                     ("pressure", "co2"))


def breath() -> AirReport:
    return AirReport("breath", 30.0, 90.0, 101325.0, 40000.0, "cramer-1993", 349.37, 1.1562,
                     ("temperature", "humidity", "pressure", "co2"))


def fabrication(units: str = "mm", paper: str = "a4") -> FabricationReport:
    return FabricationReport(1.0, 0.5, 0.0002, 0.003, 0.0001, 0.006, "3 %", paper, "r2010",
                             False, units)


STOCK = (
    StockItem("alu-22", "tube", "aluminium", 0.001, 0.022, 0.020, 1.0, None),
    StockItem("alu-25", "tube", "aluminium", 0.0015, 0.025, 0.022, 1.0, None),
    StockItem("birch-6", "sheet", "birch-ply", 0.006, None, None, 0.6, 0.3),
    StockItem("pine-15", "board", "pine", 0.015, None, None, 2.0, 0.2),
    StockItem("spotted-08", "sheet", "spotted-metal", 0.0008, None, None, 1.0, 0.5),
)


def _where(line: int) -> Position:
    return Position("example.yaml", line, 5)


def flue_pipe(group: str, midi: int, ref_d: float, halving: float, error: float,
              speed: float = 342.21) -> Pipe:
    """An open metal flue pipe of a Normalmensur-like scale (invented numbers)."""
    f = tet(midi)
    d = ref_d * 2.0 ** (-(midi - 48) / halving)
    acoustic = speed / (2.0 * f)
    end = 0.6133 * d / 2.0
    width = math.pi * d / 4.0
    mouth = Mouth(width, width / 4.0, 0.0008, 0.25, 0.25, 0.55 * d, 8.0, 0.044 * d, 4.1, -3.9,
                  0.62)
    speaking = acoustic - end - mouth.correction_m
    p = f * 2.0 ** (error / 1200.0)
    return Pipe(
        id=f"{group}-{note_name(midi)}", group=group, family="open-flue",
        construction="rolled-sheet", note=note_name(midi), harmonic=1, stock="spotted-08",
        material="spotted-metal", target_hz=f, predicted_hz=p, error_cents=error,
        harmonics_hz=(p, 2.0 * p * 0.9981, 3.0 * p * 0.9952),
        cents_per_mm=-LOG_C / (acoustic * 1000.0), cents_per_c=LOG_C * 0.5 / 291.15,
        section="round", inside_diameter_m=d, outside_diameter_m=d + 0.0016,
        inside_width_m=None, inside_depth_m=None, wall_m=0.0008, acoustic_length_m=acoustic,
        end_correction_m=end, speaking_length_m=speaking, cut_length_m=speaking * 1.03,
        mouth=mouth, foot=Foot(0.18, d, d / 4.0, d / 8.0), block=None, stopper=None,
        head=None, holes=(), fingerings=(), curves=(), source=_where(30 + midi - 48))


def metal_rank() -> tuple[Group, tuple[Pipe, ...]]:
    errors = (0.03, -0.05, 0.02)
    pipes = tuple(flue_pipe("principal-4", 48 + i, 0.0925, 16.0, e)
                  for i, e in enumerate(errors))
    group = Group("principal-4", "rank", "open-flue", "rolled-sheet", room(), "unflanged",
                  Calibration(False, "end correction scale", 1.0, (), 0.0), None,
                  tuple(p.id for p in pipes))
    return group, pipes


def wood_pipe() -> tuple[Group, Pipe]:
    f = tet(48)
    acoustic = 342.21 / (4.0 * f)
    mouth = Mouth(0.060, 0.027, 0.004, 1.0, 0.45, 0.0452, 16.0, 0.0072, 6.3, -5.9, 0.41, False)
    speaking = acoustic - mouth.correction_m
    stopper = Stopper(speaking, 0.070, 0.030)
    block = Block(0.060, 0.0012)
    p = f * 2.0 ** (-0.04 / 1200.0)
    pipe = Pipe(
        id="bourdon-8-C3", group="bourdon-8", family="stopped-flue", construction="boards",
        note="C3", harmonic=1, stock="pine-15", material="pine", target_hz=f, predicted_hz=p,
        error_cents=-0.04, harmonics_hz=(p, 3.0 * p * 0.9931, 5.0 * p * 0.9850),
        cents_per_mm=-LOG_C / (acoustic * 1000.0), cents_per_c=2.97, section="rect",
        inside_diameter_m=None, outside_diameter_m=None, inside_width_m=0.060,
        inside_depth_m=0.075, wall_m=0.015, acoustic_length_m=acoustic, end_correction_m=0.0,
        speaking_length_m=speaking, cut_length_m=0.060 + speaking + 0.070 + 0.030,
        mouth=mouth, foot=None, block=block, stopper=stopper, head=None, holes=(),
        fingerings=(), curves=(), source=_where(52))
    group = Group("bourdon-8", "rank", "stopped-flue", "boards", room(), "unflanged",
                  Calibration(True, "mouth correction scale", 1.042,
                              (Residual("A2", 0.81), Residual("C3", -0.63)), 0.72), None,
                  (pipe.id,))
    return group, pipe


def tube_set() -> tuple[Group, tuple[Pipe, ...]]:
    pipes = []
    for midi, error in ((67, 0.01), (69, -0.02), (71, 0.04)):
        f = tet(midi)
        acoustic = 342.21 / (4.0 * f)
        end = 0.6133 * 0.011
        speaking = acoustic - end
        p = f * 2.0 ** (error / 1200.0)
        pipes.append(Pipe(
            id=f"tubes-{note_name(midi)}", group="tubes", family="stopped-tube",
            construction="stock-tube", note=note_name(midi), harmonic=1, stock="alu-25",
            material="aluminium", target_hz=f, predicted_hz=p, error_cents=error,
            harmonics_hz=(p, 3.0 * p * 0.996), cents_per_mm=-LOG_C / (acoustic * 1000.0),
            cents_per_c=2.97, section="round", inside_diameter_m=0.022,
            outside_diameter_m=0.025, inside_width_m=None, inside_depth_m=None, wall_m=0.0015,
            acoustic_length_m=acoustic, end_correction_m=end, speaking_length_m=speaking,
            cut_length_m=speaking + 0.015, mouth=None, foot=None, block=None,
            stopper=Stopper(speaking, 0.015, 0.005), head=None, holes=(), fingerings=(),
            curves=(), source=_where(70 + midi - 67)))
    group = Group("tubes", "tube-set", "stopped-tube", "stock-tube", room(), "unflanged",
                  Calibration(False, "end correction scale", 1.0, (), 0.0),
                  Holder("birch-6", "birch-ply", 0.006, 0.032, 0.015, 0.0005),
                  tuple(p.id for p in pipes))
    return group, tuple(pipes)


FLUTE_FROM_BOTTOM = (0.158, 0.135, 0.110, 0.085, 0.062, 0.040)
FLUTE_DIAMETERS = (0.0070, 0.0075, 0.0060, 0.0075, 0.0080, 0.0065)
FLUTE_OPEN = (  # how many holes from the top are closed, register 1 then 2
    ("D5", 6, 0.02), ("E5", 5, -0.03), ("F#5", 4, 0.05), ("G5", 3, -0.01), ("A5", 2, 0.04),
    ("B5", 1, -0.06), ("C#6", 0, 0.09),
    ("D6", 6, -4.81), ("E6", 5, 3.12), ("F#6", 4, -2.47), ("G6", 3, 6.30), ("A6", 2, -1.05),
    ("B6", 1, 2.88), ("C#7", 0, -7.44),
)


def admittance(f0: float, labels_hz: tuple[float, ...]) -> tuple[float, ...]:
    """Invented resonance peaks (a sum of damped resonances), only to have a curve to plot."""
    out = []
    for f in labels_hz:
        y = sum(1.0 / abs(complex(1.0, 18.0 / n ** 0.5 * (f / (n * f0) - n * f0 / f)))
                for n in range(1, 7))
        out.append(0.004 * y + 1e-5)
    return tuple(out)


def flute() -> tuple[Group, Pipe]:
    cut = 0.300
    holes = tuple(Hole(i + 1, f"H{i + 1}", cut - b, b, d, 0.0, 0.001, 0.0, False)
                  for i, (b, d) in enumerate(zip(FLUTE_FROM_BOTTOM, FLUTE_DIAMETERS,
                                                 strict=True)))
    fingerings = []
    for k, (name, closed_count, error) in enumerate(FLUTE_OPEN):
        midi = {"C": 0, "C#": 1, "D": 2, "E": 4, "F#": 6, "G": 7, "A": 9, "B": 11}[
            name.rstrip("0123456789")] + 12 * (int(name[-1]) + 1)
        f = tet(midi)
        closed = tuple(i < closed_count for i in range(6))
        if name == "D6":
            closed = (False,) + (True,) * 5  # octave vent: the first hole half open
        fingerings.append(Fingering(name, closed, 1 if k < 7 else 2, f,
                                    f * 2.0 ** (error / 1200.0), error))
    grid = tuple(200.0 + 12.5 * i for i in range(305))
    curves = (Curve("D5 (all closed)", grid, admittance(587.3, grid)),
              Curve("A5", grid, admittance(880.0, grid)))
    f = tet(74)
    pipe = Pipe(
        id="duct-flute-d5", group="duct-flute-d5", family="duct-flute",
        construction="stock-tube", note="D5", harmonic=1, stock="alu-22", material="aluminium",
        target_hz=f, predicted_hz=f * 2.0 ** (0.02 / 1200.0), error_cents=0.02,
        harmonics_hz=(f, 2.0 * f * 0.9962), cents_per_mm=-5.98, cents_per_c=2.86,
        section="round", inside_diameter_m=0.020, outside_diameter_m=0.022,
        inside_width_m=None, inside_depth_m=None, wall_m=0.001, acoustic_length_m=0.2897,
        end_correction_m=0.0061, speaking_length_m=0.255, cut_length_m=cut, mouth=None,
        foot=None, block=None, stopper=None,
        head=Head("duct", 0.005, 0.010, 0.0012, 0.045, None, None, None), holes=holes,
        fingerings=tuple(fingerings), curves=curves, source=_where(90))
    group = Group("duct-flute-d5", "flute", "duct-flute", "stock-tube", breath(),
                  "frequency-dependent",
                  Calibration(False, "end correction scale", 1.0, (), 0.0), None, (pipe.id,))
    return group, pipe


def small_resolved(units: str = "mm", paper: str = "a4") -> Resolved:
    g1, rank = metal_rank()
    g2, wood = wood_pipe()
    g3, tubes = tube_set()
    g4, fl = flute()
    groups, pipes = (g1, g2, g3, g4), rank + (wood,) + tubes + (fl,)
    return Resolved(
        instrument="Hollow Oak workshop: sampler of pipes", slug="hollow-oak-sampler",
        spec_file="hollow-oak.yaml",
        spec_sha256="3f7a1c9e0b5d2468ace13579bdf02468ace13579bdf02468ace13579bdf0246a",
        tuning=TuningReport(440.0, "equal", "C"), fabrication=fabrication(units, paper),
        stock=STOCK, groups=groups, pipes=pipes,
        warnings=(Note(_where(41), "D3: cut-up 0.25 of the mouth width is below the usual "
                       "range for a principal"),),
        materials=materials.used(STOCK, pipes, groups))


def rect(op: str, x0: float, y0: float, x1: float, y1: float) -> Polyline:
    return Polyline(op, ((x0, y0), (x1, y0), (x1, y1), (x0, y1)), True)


def drilling_template(pipe: Pipe) -> Part:
    """The flute's wrap-around drilling strip: π·OD wide, as long as the tube."""
    assert pipe.outside_diameter_m is not None
    w = math.pi * pipe.outside_diameter_m * 1000.0
    h = pipe.cut_length_m * 1000.0
    ents: list[Circle | Polyline | Text] = [rect("cut-outer", 0.0, 0.0, w, h)]
    ents += [Circle("cut-inner", (w / 2.0, hole.position_from_bottom_m * 1000.0),
                    hole.diameter_m * 500.0) for hole in pipe.holes]
    ents.append(Polyline("mark", ((w / 2.0, 0.0), (w / 2.0, h)), False))
    ents.append(Text("engrave", (3.0, h - 12.0), 4.0, "TOP"))
    return Part(f"{pipe.id}-drilling", pipe.id, pipe.group, "drilling template", "paper", "",
                0.0, "template", w, h, tuple(ents), note="wrap around the tube, top to top")


def flue_parts(pipe: Pipe) -> tuple[Part, ...]:
    assert pipe.inside_diameter_m is not None and pipe.foot is not None
    d = pipe.inside_diameter_m * 1000.0
    bw = math.pi * (d + 0.8) + 6.0
    bh = pipe.cut_length_m * 1000.0
    assert pipe.mouth is not None
    mw, mh = pipe.mouth.width_m * 1000.0, pipe.mouth.cutup_m * 1000.0
    body = Part(f"{pipe.id}-body", pipe.id, pipe.group, "body", "spotted-metal", "spotted-08",
                0.8, "sheet", bw, bh,
                (rect("cut-outer", 0.0, 0.0, bw, bh),
                 rect("cut-inner", bw / 2 - mw / 2, 0.0, bw / 2 + mw / 2, mh),
                 Text("engrave", (5.0, bh - 10.0), 5.0, pipe.id)),
                note=f"roll to {d:.2f} mm inside")
    fh, toe = pipe.foot.length_m * 1000.0, pipe.foot.toe_diameter_m * 1000.0
    fw = math.pi * (d + 0.8) + 6.0
    foot = Part(f"{pipe.id}-foot", pipe.id, pipe.group, "foot", "spotted-metal", "spotted-08",
                0.8, "sheet", fw, fh + 20.0,
                (Polyline("cut-outer", ((fw / 2 - math.pi * toe / 2, 0.0),
                                        (fw / 2 + math.pi * toe / 2, 0.0), (fw, fh + 20.0),
                                        (0.0, fh + 20.0)), True, (0.0, 0.05, 0.0, -0.05)),),
                note="roll to a cone")
    r = d / 2.0
    chord = 0.3 * r
    half = math.sqrt(r * r - chord * chord)
    bulge = math.tan((2 * math.pi - 2 * math.acos(chord / r)) / 4.0)
    languid = Part(f"{pipe.id}-languid", pipe.id, pipe.group, "languid", "spotted-metal",
                   "spotted-08", 0.8, "sheet", d, r + chord,
                   (Polyline("cut-outer", ((r - half, r + chord), (r + half, r + chord)), True,
                             (bulge, 0.0)),
                    Text("engrave", (r - 8.0, r / 2), 4.0, pipe.note)))
    return body, foot, languid


def wood_parts(pipe: Pipe) -> tuple[Part, ...]:
    h = pipe.cut_length_m * 1000.0
    parts = []
    for name, w, q in (("front", 90.0, 1), ("back", 90.0, 1), ("side", 75.0, 2),
                       ("block", 60.0, 1), ("stopper", 60.0, 1)):
        hh = h if name in ("front", "back", "side") else (60.0 if name == "block" else 70.0)
        parts.append(Part(f"{pipe.id}-{name}", pipe.id, pipe.group, name, "pine", "pine-15",
                          15.0, "board", w, hh, (rect("cut-outer", 0.0, 0.0, w, hh),),
                          grain_along_x=False, quantity=q))
    return tuple(parts)


def holder(tubes: tuple[Pipe, ...]) -> Part:
    w, h = 15.0 * 2 + 32.0 * (len(tubes) - 1) + 25.0, 55.0
    ents: list[Circle | Polyline | Text] = [rect("cut-outer", 0.0, 0.0, w, h)]
    ents += [Circle("cut-inner", (27.5 + 32.0 * i, 27.5), 12.75) for i in range(len(tubes))]
    return Part("tubes-holder", None, "tubes", "holder plate", "birch-ply", "birch-6", 6.0,
                "sheet", w, h, tuple(ents))


def small_parts(resolved: Resolved) -> Parts:
    by_id = {p.id: p for p in resolved.pipes}
    parts: list[Part] = []
    for pid in ("principal-4-C3", "principal-4-C#3", "principal-4-D3"):
        parts += flue_parts(by_id[pid])
    parts += wood_parts(by_id["bourdon-8-C3"])
    tubes = tuple(p for p in resolved.pipes if p.group == "tubes")
    parts.append(holder(tubes))
    parts.append(drilling_template(by_id["duct-flute-d5"]))
    metal = [p for p in parts if p.stock == "spotted-08"]
    sheets = (
        Sheet("spotted-08-1", "spotted-08", "spotted-metal", 0.8, 1000.0, 500.0,
              tuple(Placement(p.id, 0.0, 0.0, True) for p in metal[:4]), 0.71),
        Sheet("spotted-08-2", "spotted-08", "spotted-metal", 0.8, 1000.0, 500.0,
              tuple(Placement(p.id, 0.0, 0.0, False) for p in metal[4:]), 0.48),
        Sheet("pine-15-1", "pine-15", "pine", 15.0, 2000.0, 200.0,
              tuple(Placement(p.id, 0.0, 0.0, False) for p in parts if p.stock == "pine-15"),
              0.64),
        Sheet("birch-6-1", "birch-6", "birch-ply", 6.0, 600.0, 300.0,
              (Placement("tubes-holder", 0.0, 0.0, False),), 0.09),
    )
    cuts = tuple(TubeCut(p.id, p.stock, p.material, p.cut_length_m * 1000.0,
                         (p.outside_diameter_m or 0.0) * 1000.0)
                 for p in resolved.pipes if p.construction == "stock-tube")
    return Parts(tuple(parts), sheets, cuts)


def large_resolved() -> Resolved:
    """Ten open metal ranks of 61 pipes each (C2 to C7): 610 pipes."""
    groups, pipes = [], []
    for r in range(10):
        gid = f"rank-{r + 1:02d}"
        rank = tuple(flue_pipe(gid, 36 + i, 0.155 / (1 + r * 0.08), 16.0 + r % 3,
                               ((i * 37 + r * 11) % 41 - 20) / 100.0) for i in range(61))
        pipes += rank
        groups.append(Group(gid, "rank", "open-flue", "rolled-sheet", room(), "unflanged",
                            Calibration(False, "end correction scale", 1.0, (), 0.0), None,
                            tuple(p.id for p in rank)))
    return Resolved("Great Hall organ, ten ranks", "great-hall", "great-hall.yaml",
                    "0" * 64, TuningReport(440.0, "equal", "C"), fabrication(),
                    STOCK, tuple(groups), tuple(pipes), (),
                    materials.used(STOCK, pipes, groups))


def large_parts(resolved: Resolved) -> Parts:
    parts = [part for pipe in resolved.pipes for part in flue_parts(pipe)]
    sheets = tuple(
        Sheet(f"spotted-08-{k + 1}", "spotted-08", "spotted-metal", 0.8, 1000.0, 500.0,
              tuple(Placement(p.id, 0.0, 0.0, False) for p in parts[k * 12:(k + 1) * 12]),
              0.6 + (k % 7) / 30.0)
        for k in range((len(parts) + 11) // 12))
    return Parts(tuple(parts), sheets, ())


@pytest.fixture(scope="session")
def small() -> tuple[Resolved, Parts]:
    resolved = small_resolved()
    return resolved, small_parts(resolved)


@pytest.fixture(scope="session")
def large() -> tuple[Resolved, Parts]:
    resolved = large_resolved()
    return resolved, large_parts(resolved)


def render_pdf(resolved: Resolved, parts: Parts, paper: str | None = None) -> bytes:
    from compiler.emit.pdf import render
    from compiler.options import Overrides

    return render(resolved, parts, Overrides(paper=paper).settle(resolved.fabrication))


def page_texts(data: bytes) -> list[str]:
    import io

    from pypdf import PdfReader

    return [page.extract_text() for page in PdfReader(io.BytesIO(data)).pages]


@pytest.fixture(scope="session")
def small_pdf(small: tuple[Resolved, Parts]) -> bytes:
    return render_pdf(*small)


@pytest.fixture(scope="session")
def small_pages(small_pdf: bytes) -> list[str]:
    return page_texts(small_pdf)


@pytest.fixture(scope="session")
def large_pdf(large: tuple[Resolved, Parts]) -> bytes:
    return render_pdf(*large)


@pytest.fixture(scope="session")
def large_pages(large_pdf: bytes) -> list[str]:
    return page_texts(large_pdf)


@pytest.fixture(scope="session")
def texts_of() -> Callable[..., list[str]]:
    """Render a model and return the text of each page."""
    def texts(resolved: Resolved, parts: Parts, paper: str | None = None) -> list[str]:
        return page_texts(render_pdf(resolved, parts, paper))

    return texts
