"""The build sheet shows each pipe's numbers exactly as ``resolved.json`` writes them.

The reference is the JSON backend's own output (``compiler.emit.resolved_json.to_dict``),
and the PDF is read back with pypdf, so the check runs from the files a maker gets.
"""

from __future__ import annotations

import dataclasses
import re
from collections.abc import Callable
from typing import Any

from compiler.emit.resolved_json import to_dict
from compiler.geometry.model import Parts
from compiler.ir import Group, Head, Resolved

NUMBER = re.compile(r"[-+]?\d+\.\d+")
SKIP = {"curves", "harmonics_hz", "holes", "fingerings", "source", "harmonic", "number",
        "closed"}


def numbers(text: str) -> set[float]:
    return {float(m) for m in NUMBER.findall(text)}


def leaves(data: dict[str, Any], prefix: str = "") -> list[tuple[str, float]]:
    """Every measured number of a pipe in the JSON (nested objects included)."""
    out: list[tuple[str, float]] = []
    for key, value in sorted(data.items()):
        if key in SKIP or value is None or isinstance(value, bool | str):
            continue
        if isinstance(value, dict):
            out += leaves(value, f"{prefix}{key}.")
        elif isinstance(value, float | int):
            out.append((prefix + key, float(value)))
    return out


def section_line(text: str) -> str:
    return next((line for line in text.splitlines()
                 if line.startswith(("Pipes — ", "Fingerings — "))), "")


def test_each_pipe_page_carries_the_json_numbers(small: tuple[Resolved, Parts],
                                                 small_pages: list[str]) -> None:
    resolved, _ = small
    for pipe in to_dict(resolved)["pipes"]:
        pages = [t for t in small_pages if section_line(t) == f"Pipes — {pipe['id']}"]
        assert len(pages) == 1, pipe["id"]
        found = numbers(pages[0])
        missing = [(k, v) for k, v in leaves(pipe) if v not in found]
        assert not missing, (pipe["id"], missing)
        for f in pipe["harmonics_hz"][:4]:
            assert f in found, (pipe["id"], "harmonic", f)
        for hole in pipe["holes"]:
            for key in ("position_from_top_mm", "position_from_bottom_mm", "diameter_mm",
                        "chimney_mm", "undercut_mm", "angle_deg"):
                assert hole[key] in found, (pipe["id"], hole["label"], key)


def test_fingerings_show_target_predicted_and_error_per_note(
        small: tuple[Resolved, Parts], small_pages: list[str]) -> None:
    resolved, _ = small
    flute = next(p for p in to_dict(resolved)["pipes"] if p["fingerings"])
    lines = [line.strip() for t in small_pages
             if section_line(t) == f"Fingerings — {flute['id']}" for line in t.splitlines()]
    assert lines, "no fingering page"
    for f in flute["fingerings"]:
        rows = [i for i, line in enumerate(lines) if line == f["note"]]
        assert any(
            [float(x) for x in lines[i + 1:i + 4] if NUMBER.fullmatch(x)]
            == [f["target_hz"], f["predicted_hz"], f["error_cents"]] for i in rows
        ), f["note"]


def test_rank_tables_carry_each_pipes_row(large: tuple[Resolved, Parts],
                                          large_pages: list[str]) -> None:
    """In a 610-pipe model, each pipe's row reads note, target, predicted, error, the key
    lengths, cut included, and the two sensitivities, in that order."""
    resolved, _ = large
    lines = [line.strip() for t in large_pages if section_line(t).startswith("Pipes — ")
             for line in t.splitlines()]
    index: dict[str, list[int]] = {}
    for i, line in enumerate(lines):
        index.setdefault(line, []).append(i)
    for pipe in to_dict(resolved)["pipes"]:
        expected = [pipe["target_hz"], pipe["predicted_hz"], pipe["error_cents"],
                    pipe["inside_diameter_mm"], pipe["speaking_length_mm"],
                    pipe["cut_length_mm"], pipe["mouth"]["width_mm"], pipe["mouth"]["cutup_mm"],
                    pipe["foot"]["length_mm"], pipe["foot"]["toe_hole_mm"],
                    pipe["cents_per_mm"], pipe["cents_per_c"]]
        rows = [[float(x) for x in lines[i + 1:i + 1 + len(expected)]]
                for i in index.get(pipe["note"], [])
                if all(NUMBER.fullmatch(x) for x in lines[i + 1:i + 1 + len(expected)])]
        assert expected in rows, pipe["id"]


def test_inches_beside_millimetres_for_a_spec_in_inches(
        small: tuple[Resolved, Parts], texts_of: Callable[..., list[str]]) -> None:
    resolved, parts = small
    in_inches = dataclasses.replace(
        resolved, fabrication=dataclasses.replace(resolved.fabrication, units="in"))
    pages = texts_of(in_inches, parts)
    pipe = resolved.pipes[0]
    page = next(t for t in pages if section_line(t) == f"Pipes — {pipe.id}")
    # 1 in = 25.4 mm exactly (international yard and pound agreement, 1959).
    for value in (pipe.cut_length_m, pipe.speaking_length_m, pipe.inside_diameter_m):
        assert value is not None
        assert f"{value * 1000 / 25.4:.3f}" in page
    assert f"{pipe.cut_length_m * 1000:.2f}" in page


def side_blown(resolved: Resolved) -> Resolved:
    """The duct flute turned into a side-blown flute whose last hole is a thumb hole."""
    flute = next(p for p in resolved.pipes if p.holes)
    holes = flute.holes[:-1] + (dataclasses.replace(flute.holes[-1], angle_deg=180.0,
                                                    label="T"),)
    pipe = dataclasses.replace(
        flute, id="fife-d5", group="fife-d5", family="side-blown-flute",
        head=Head("embouchure", None, None, None, None, 0.0095, 0.030, 0.017), holes=holes)
    group = Group("fife-d5", "flute", "side-blown-flute", "stock-tube",
                  resolved.groups[-1].air, "unflanged", resolved.groups[-1].calibration, None,
                  (pipe.id,))
    tube = next(p for p in resolved.pipes if p.family == "stopped-tube")
    open_tube = dataclasses.replace(tube, id="bell-A4", group="bells", family="open-tube",
                                    stopper=None)
    bells = Group("bells", "tube-set", "open-tube", "stock-tube", resolved.groups[0].air,
                  "unflanged", resolved.groups[0].calibration, None, (open_tube.id,))
    return dataclasses.replace(resolved, groups=(group, bells), pipes=(pipe, open_tube))


def test_side_blown_flute_and_open_tube(small: tuple[Resolved, Parts],
                                        texts_of: Callable[..., list[str]]) -> None:
    resolved = side_blown(small[0])
    pages = texts_of(resolved, Parts((), (), ()))
    for pipe in to_dict(resolved)["pipes"]:
        page = next(t for t in pages if section_line(t) == f"Pipes — {pipe['id']}")
        found = numbers(page)
        assert not [(k, v) for k, v in leaves(pipe) if v not in found], pipe["id"]
    fife = next(t for t in pages if section_line(t) == "Pipes — fife-d5")
    assert "embouchure" in fife and "(back)" in fife
    assert any(section_line(t) == "Fingerings — fife-d5" for t in pages)
    # No parts: no templates section, and the cut list says so.
    assert not any(t.splitlines()[1].startswith("Templates") for t in pages)
    assert any("Nothing to cut" in t for t in pages)
