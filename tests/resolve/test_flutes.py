"""Flutes through the resolver: holes solved to targets, drills respected, datums explicit,
impossible requests reported at the spec's position."""

from __future__ import annotations

from pathlib import Path

import pytest

from compiler.errors import PhysicsError
from compiler.resolve.resolver import resolve
from compiler.spec import load_spec

EXAMPLES = Path(__file__).resolve().parents[2] / "specs_examples"


def _resolve(path: Path):  # type: ignore[no-untyped-def]
    return resolve(load_spec(path.read_text(), str(path)))


@pytest.mark.parametrize("name", ["duct-flute-d", "side-blown-flute-c"])
def test_first_register_in_tune_after_drill_snapping(name: str) -> None:
    r = _resolve(EXAMPLES / f"{name}.yaml")
    pipe = r.pipes[0]
    first = [f for f in pipe.fingerings if f.register == 1]
    assert first and all(abs(f.error_cents) < 1.0 for f in first)
    # drill set from the spec: 0.5 mm steps (every diameter a whole number of half mm)
    for hole in pipe.holes:
        assert (hole.diameter_m * 2000) == pytest.approx(round(hole.diameter_m * 2000), abs=1e-6)
        assert hole.position_from_top_m + hole.position_from_bottom_m == pytest.approx(
            pipe.cut_length_m)
    positions = [h.position_from_top_m for h in pipe.holes]
    assert positions == sorted(positions)
    # second register reported for every fingering
    assert len([f for f in pipe.fingerings if f.register == 2]) == len(first)


def test_thumb_hole_keeps_its_angle_and_label() -> None:
    pipe = _resolve(EXAMPLES / "side-blown-flute-c.yaml").pipes[0]
    assert pipe.holes[0].label == "T" and pipe.holes[0].angle_deg == 180.0


def test_breath_defaults_for_flutes() -> None:
    group = _resolve(EXAMPLES / "side-blown-flute-c.yaml").groups[0]
    assert group.air.preset == "breath"
    assert "humidity" in group.air.defaults and "co2" in group.air.defaults
    assert group.air.humidity_percent == pytest.approx(90.0)


def test_fixed_holes_are_only_predicted(tmp_path: Path) -> None:
    # Analysis: every hole fixed as the solver placed it, and the tube length too;
    # the prediction must reproduce the design's pitches.
    designed = _resolve(EXAMPLES / "duct-flute-d.yaml").pipes[0]
    text = (EXAMPLES / "duct-flute-d.yaml").read_text()
    holes = "".join(f"      - {{position: {h.position_from_top_m * 1000!r} mm, "
                    f"diameter: {h.diameter_m * 1000!r} mm}}\n" for h in designed.holes)
    text = text.replace("    holes: 6                          # let boresmith place and size "
                        "all six\n", f"    length: {designed.cut_length_m * 1000!r} mm\n"
                        f"    holes:\n{holes}")
    spec = tmp_path / "fixed.yaml"
    spec.write_text(text)
    pipe = _resolve(spec).pipes[0]
    assert all(h.fixed for h in pipe.holes)
    for a, b in zip(pipe.fingerings, designed.fingerings, strict=True):
        assert a.predicted_hz == pytest.approx(b.predicted_hz, abs=0.02)


def test_note_beyond_reach_points_at_the_fingering(tmp_path: Path) -> None:
    text = (EXAMPLES / "duct-flute-d.yaml").read_text().replace(
        "{note: C#6, closed: ooo ooo}", "{note: C#7, closed: ooo ooo}")
    spec = tmp_path / "reach.yaml"
    spec.write_text(text)
    with pytest.raises(PhysicsError) as info:
        _resolve(spec)
    problem = info.value.problems[0]
    line = next(i for i, ln in enumerate(text.splitlines(), 1) if "C#7" in ln)
    assert problem.position.line == line
    assert "C#7" in problem.message
