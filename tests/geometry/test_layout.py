"""The geometry stage as a whole: which parts each construction gets, closed cut paths,
operations per layer, units, and the stage's import boundaries."""

from __future__ import annotations

import math
import subprocess
import sys
from collections import Counter

import geometry_samples as samples
import pytest

from compiler.geometry.layout import layout
from compiler.geometry.model import OPERATIONS, Circle, Parts, Polyline, Text
from compiler.geometry.paths import bounds_of
from compiler.geometry.units import mm
from compiler.options import BuildOptions


@pytest.fixture(scope="module")
def parts() -> Parts:
    return layout(samples.everything(), BuildOptions())


def test_units_convert_metres_to_millimetres() -> None:
    assert mm(0.0925) == pytest.approx(92.5)
    assert mm(2.375) == pytest.approx(2375.0)


def test_parts_of_each_construction(parts: Parts) -> None:
    assert [p.id for p in parts.parts] == [
        "principal-4-C3-body", "principal-4-C3-foot", "principal-4-C3-languid",
        "stopped-wood-C3-front", "stopped-wood-C3-back", "stopped-wood-C3-side",
        "stopped-wood-C3-block", "stopped-wood-C3-cap", "stopped-wood-C3-stopper",
        "stopped-wood-C3-handle", "whistle-d-template", "whistle-d-jig-front",
        "whistle-d-jig-10deg", "whistle-d-duct-block-profile", "whistle-d-window-template",
        "tubes-holder",
    ]
    assert [c.pipe_id for c in parts.tube_cuts] == ["tubes-C5", "tubes-E5", "tubes-G5",
                                                    "whistle-d"]
    assert len({p.id for p in parts.parts}) == len(parts.parts)


def test_cut_paths_are_closed_and_one_outline_a_part(parts: Parts) -> None:
    for part in parts.parts:
        assert all(e.operation in OPERATIONS for e in part.entities)
        if part.kind not in ("sheet", "board"):
            continue
        outer = [e for e in part.entities if e.operation == "cut-outer"]
        assert len(outer) == 1, part.id
        for e in part.entities:
            if e.operation.startswith("cut"):
                assert isinstance(e, Circle) or (isinstance(e, Polyline) and e.closed)
            if isinstance(e, Polyline):
                assert len(e.bulges) == len(e.points)


@pytest.mark.parametrize(("part_id", "counts"), [
    ("principal-4-C3-body", {"cut-outer": 1, "mark": 4, "engrave": 1}),
    ("principal-4-C3-foot", {"cut-outer": 1, "mark": 3, "engrave": 1}),
    ("principal-4-C3-languid", {"cut-outer": 1, "mark": 1, "engrave": 1}),
    ("stopped-wood-C3-side", {"cut-outer": 1, "mark": 2, "engrave": 1}),
    ("stopped-wood-C3-handle", {"cut-outer": 1, "cut-inner": 1, "engrave": 1}),
    ("tubes-holder", {"cut-outer": 1, "cut-inner": 3, "engrave": 4}),  # 3 notes, its name
])
def test_entities_per_operation(parts: Parts, part_id: str, counts: dict[str, int]) -> None:
    assert Counter(e.operation for e in parts.part(part_id).entities) == counts


def test_template_operations(parts: Parts) -> None:
    template = parts.part("whistle-d-template")
    ops = Counter(e.operation for e in template.entities)
    # Six holes, each a circle and a cross of two lines; a centre line; ticks every 10 mm
    # down both edges of 300 mm; the window.
    assert ops["mark"] == 6 * 3 + 1 + 2 * 31 + 1
    assert ops["cut-outer"] == 1 and "cut-inner" not in ops
    texts = [e.text for e in template.entities if isinstance(e, Text)]
    assert "TOP" in texts and "labium" in texts


def test_parts_sit_at_their_origin(parts: Parts) -> None:
    # The nominal outline spans (0, 0)..(width, height); the cut path lies kerf/2 = 0.1 mm
    # outside it, and a mitred right-angle corner (the foot's, turned obliquely) reaches
    # 0.1·√2 from the nominal corner.
    reach = 0.1 * math.sqrt(2) + 1e-6
    for part in parts.parts:
        box = bounds_of(part.entities)
        assert box[0] >= -reach and box[1] >= -reach, part.id
        assert box[2] <= part.width_mm + reach and box[3] <= part.height_mm + reach, part.id


@pytest.mark.parametrize(("module", "forbidden"), [
    ("compiler.geometry.layout", ("compiler.spec", "compiler.acoustics", "compiler.emit")),
    ("compiler.emit.dxf", ("compiler.spec", "compiler.acoustics")),
])
def test_import_boundaries(module: str, forbidden: tuple[str, ...]) -> None:
    # DESIGN.md: imports follow the pipeline.
    code = (f"import sys, {module}; "
            "print('\\n'.join(m for m in sys.modules if m.startswith('compiler')))")
    loaded = subprocess.run([sys.executable, "-c", code], check=True, capture_output=True,
                            text=True).stdout.split()
    assert not [m for m in loaded if m.startswith(forbidden)]
