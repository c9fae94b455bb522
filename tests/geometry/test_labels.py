"""Labels on parts: every part of every example carries one (at least the pipe's note), and
no label touches a line of its part (outline, openings, marks) or another label."""

from __future__ import annotations

from pathlib import Path

import pytest
from shapely.geometry import LinearRing, LineString
from shapely.geometry import box as shapely_box

from compiler.build import compile_text
from compiler.geometry.model import Circle, Part, Polyline, Text
from compiler.geometry.paths import flatten, text_width, to_polygon
from compiler.options import Overrides

EXAMPLES = Path(__file__).resolve().parents[2] / "specs_examples"
SPECS = ["house-organ-principal.yaml", "stopped-wood-gedackt.yaml", "duct-flute-d.yaml",
         "blown-stopped-tubes.yaml",
         "side-blown-flute-c.yaml"]


def _label_box(t: Text):  # type: ignore[no-untyped-def]
    w = text_width(t.text, t.height)
    x, y = t.insert
    if t.rotation_deg == 90.0:
        return shapely_box(x - t.height, y, x, y + w)
    return shapely_box(x, y, x + w, y + t.height)


def _lines(part: Part):  # type: ignore[no-untyped-def]
    for e in part.entities:
        if isinstance(e, Circle):
            yield to_polygon(e).exterior
        elif isinstance(e, Polyline):
            points = flatten(e)
            yield LinearRing(points) if e.closed and len(points) >= 3 else LineString(points)


@pytest.mark.parametrize("name", SPECS)
def test_every_part_is_labelled_clear_of_its_lines(name: str) -> None:
    spec = EXAMPLES / name
    parts = compile_text(spec.read_bytes(), str(spec), Overrides()).parts
    notes = {}
    for part in parts.parts:
        labels = [e for e in part.entities if isinstance(e, Text)]
        assert labels, part.id
        notes[part.id] = labels
        if part.kind == "template":
            continue  # drilling strips: hole labels sit beside their holes by design
        lines = list(_lines(part))
        for t in labels:
            box = _label_box(t)
            assert not any(box.intersects(line) for line in lines), (part.id, t.text)
            assert t.rotation_deg in (0.0, 90.0)
    assert len(notes) == len(parts.parts)


def test_the_tiniest_parts_still_get_their_note() -> None:
    """The 610-pipe example's top pipes (4-5 mm languids, bodies a few mm round): the note,
    engraved small, where the pipe id and part name do not fit."""
    spec = EXAMPLES / "practice-organ-610.yaml"
    compiled = compile_text(spec.read_bytes(), str(spec), Overrides())
    parts = compiled.parts
    bare = [p.id for p in parts.parts if not any(isinstance(e, Text) for e in p.entities)]
    assert bare == []
    note = {p.id: p.note for p in compiled.resolved.pipes}
    tiny = next(p for p in parts.parts if p.id.endswith("-languid") and p.width_mm < 5.0)
    (text,) = [e for e in tiny.entities if isinstance(e, Text)]
    assert tiny.pipe_id is not None and text.text == note[tiny.pipe_id]
    assert text.height < 3.0  # too small for the long label (LABEL_LONG_MIN_MM)
