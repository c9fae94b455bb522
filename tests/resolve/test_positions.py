"""Holes, fingerings and groups in the resolved model keep the spec position they came from
(so later stages can blame the right line), and ``resolved.json`` does not carry them."""

from __future__ import annotations

import dataclasses
from pathlib import Path

from compiler.emit import resolved_json
from compiler.errors import Position
from compiler.ir import Resolved
from compiler.resolve.resolver import resolve
from compiler.spec import load_spec

EXAMPLES = Path(__file__).resolve().parents[2] / "specs_examples"


def _both(name: str):  # type: ignore[no-untyped-def]
    path = EXAMPLES / name
    spec = load_spec(path.read_bytes(), str(path))
    return spec, resolve(spec)


def _line(name: str, position: Position) -> str:
    return (EXAMPLES / name).read_text(encoding="utf-8").splitlines()[position.line - 1]


def test_flute_holes_fingerings_and_group_point_at_their_lines() -> None:
    spec, resolved = _both("side-blown-flute-c.yaml")
    (flute,) = spec.flutes
    (pipe,) = resolved.pipes
    (group,) = resolved.groups
    assert group.source == flute.position == pipe.source
    assert [h.source for h in pipe.holes] == [h.position for h in flute.holes]
    # Every fingering row (first and second register) points at its line of the table.
    lines = {f.position for f in flute.fingerings}
    assert pipe.fingerings and all(f.source in lines for f in pipe.fingerings)
    for fingering in pipe.fingerings:
        assert fingering.source is not None
        assert "note:" in _line("side-blown-flute-c.yaml", fingering.source)


def test_survey_holes_and_fingerings_point_at_their_lines() -> None:
    name = "measured-reed-pipe-and-whistle.yaml"
    spec, resolved = _both(name)
    by_id = {p.id: p for p in resolved.pipes}
    for survey in spec.surveys:
        pipe = by_id[survey.id]
        assert [h.source for h in pipe.holes] == [h.position for h in survey.holes]
        assert all(f.source is not None and f.source.file.endswith(name)
                   for f in pipe.fingerings)
    assert {g.source for g in resolved.groups} == {s.position for s in spec.surveys}


def test_ranks_and_tube_sets_point_at_their_lines() -> None:
    spec, resolved = _both("stopped-wood-gedackt.yaml")
    assert [g.source for g in resolved.groups] == [r.position for r in spec.ranks]
    spec, resolved = _both("blown-stopped-tubes.yaml")
    assert [g.source for g in resolved.groups] == [t.position for t in spec.tube_sets]


def _without_positions(resolved: Resolved) -> Resolved:
    pipes = tuple(dataclasses.replace(
        p, holes=tuple(dataclasses.replace(h, source=None) for h in p.holes),
        fingerings=tuple(dataclasses.replace(f, source=None) for f in p.fingerings))
        for p in resolved.pipes)
    groups = tuple(dataclasses.replace(g, source=None) for g in resolved.groups)
    return dataclasses.replace(resolved, pipes=pipes, groups=groups)


def test_resolved_json_does_not_carry_them() -> None:
    for name in ("duct-flute-d.yaml", "measured-reed-pipe-and-whistle.yaml",
                 "blown-stopped-tubes.yaml"):
        _, resolved = _both(name)
        text = resolved_json.dumps(resolved)
        assert text == resolved_json.dumps(_without_positions(resolved))
        data = resolved_json.to_dict(resolved)
        assert all("source" not in h for p in data["pipes"] for h in p["holes"])
        assert all("source" not in f for p in data["pipes"] for f in p["fingerings"])
        assert all("source" not in g for g in data["groups"])
