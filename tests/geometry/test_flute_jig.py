"""A flute's cutter files against its resolved.json: the drilling strips put a pilot at every
hole's centre, at its distance from the tube's top end; the window template cuts the window
where the labium and block face are; everything on the layers of the other cut parts.

The check reads the written files back with ezdxf (a general-purpose DXF library) and compares
them with resolved.json, not with the code that drew them: the tube's top end is the top of
the tube's outline marked on the strip, a hole's place its distance from there.
"""

from __future__ import annotations

import json
import math
from pathlib import Path

import ezdxf
import pytest

from compiler.build import build, compile_text
from compiler.options import Overrides

EXAMPLES = Path(__file__).resolve().parents[2] / "specs_examples"


def _built(name: str, folder: Path) -> tuple[dict, Path]:  # type: ignore[type-arg]
    out = build((EXAMPLES / name).read_bytes(), name, folder, Overrides(part_files=True))
    return json.loads((out / "resolved.json").read_text()), out


def _entities(path: Path) -> list:  # type: ignore[type-arg]
    return list(ezdxf.readfile(path).modelspace())


def _angle(a: float) -> float:
    a = (a + 180.0) % 360.0 - 180.0
    return 180.0 if a == -180.0 else a


def test_drilling_strips_put_each_hole_where_resolved_json_says(tmp_path: Path) -> None:
    resolved, out = _built("side-blown-flute-c.yaml", tmp_path)
    pipe = resolved["pipes"][0]
    kerf = resolved["fabrication"]["kerf_mm"]
    strips = {0.0: "flute-c-jig-front.dxf", 180.0: "flute-c-jig-back.dxf"}
    assert {_angle(h["angle_deg"]) for h in pipe["holes"]} <= set(strips)
    for angle, name in strips.items():
        found = _entities(out / "parts" / name)
        layers = {e.dxf.layer for e in found}
        assert layers <= {"cut-inner", "cut-outer", "mark", "engrave"}
        # the tube's outline: the closed marked rectangle as long as the tube is cut
        (tube,) = [e for e in found if e.dxftype() == "LWPOLYLINE" and e.dxf.layer == "mark"
                   and e.closed]
        ys = [p[1] for p in tube.get_points("xy")]
        xs = [p[0] for p in tube.get_points("xy")]
        assert max(ys) - min(ys) == pytest.approx(pipe["cut_length_mm"], abs=1e-6)
        assert max(xs) - min(xs) == pytest.approx(pipe["outside_diameter_mm"], abs=1e-6)
        top, centre = max(ys), (max(xs) + min(xs)) / 2
        pilots = sorted((c.dxf.center.x, c.dxf.center.y) for c in found
                        if c.dxftype() == "CIRCLE" and c.dxf.layer == "cut-inner")
        want = [(centre, top - h["position_from_top_mm"]) for h in pipe["holes"]
                if _angle(h["angle_deg"]) == angle]
        if angle == 0.0:
            want.append((centre, top - pipe["head"]["embouchure_from_top_mm"]))
        assert len(pilots) == len(want)
        for (x, y), (wx, wy) in zip(pilots, sorted(want), strict=True):
            # resolved.json rounds to 0.01 mm
            assert x == pytest.approx(wx, abs=6e-3) and y == pytest.approx(wy, abs=6e-3)
        # each pilot is a pilot: smaller than its hole, cut kerf/2 inside its 2 mm
        for c in found:
            if c.dxftype() == "CIRCLE" and c.dxf.layer == "cut-inner":
                assert c.dxf.radius <= 1.0 - kerf / 2 + 1e-9
    # and the strips are nested on the jig sheet, with every other sheet part
    sheets = list(out.glob("sheet-*.dxf"))
    assert sheets and all(s.name.endswith("-plywood.dxf") for s in sheets)


def test_window_template_and_block_profile_match_the_head(tmp_path: Path) -> None:
    resolved, out = _built("duct-flute-d.yaml", tmp_path)
    pipe = resolved["pipes"][0]
    head = pipe["head"]
    half_kerf = resolved["fabrication"]["kerf_mm"] / 2
    found = _entities(out / "parts" / "whistle-d-window-template.dxf")
    (plate,) = [e for e in found if e.dxf.layer == "cut-outer"]
    (window,) = [e for e in found if e.dxf.layer == "cut-inner"]
    top = max(p[1] for p in plate.get_points("xy")) - half_kerf  # the tube's top end
    wy = [p[1] for p in window.get_points("xy")]
    wx = [p[0] for p in window.get_points("xy")]
    # the window runs from the block's face down to the labium (kerf/2 inside)
    assert top - min(wy) == pytest.approx(head["labium_from_top_mm"] - half_kerf, abs=6e-3)
    assert max(wy) - min(wy) == pytest.approx(head["window_length_mm"] - 2 * half_kerf,
                                              abs=6e-3)
    assert max(wx) - min(wx) == pytest.approx(head["window_width_mm"] - 2 * half_kerf,
                                              abs=6e-3)
    # the block's profile: a circle of the bore less the duct's flat (plane geometry: the
    # flat's chord is 2·√(r² − (r − h)²))
    (profile,) = [e for e in _entities(out / "parts" / "whistle-d-duct-block-profile.dxf")
                  if e.dxf.layer == "cut-outer"]
    points = list(profile.get_points("xyb"))
    r, h = pipe["inside_diameter_mm"] / 2, head["duct_height_mm"]
    straight = [i for i, p in enumerate(points) if abs(p[2]) < 1e-12]
    a, b = points[straight[0]], points[(straight[0] + 1) % len(points)]
    chord = math.dist(a[:2], b[:2])
    assert chord == pytest.approx(2 * math.sqrt(r * r - (r - h) ** 2), abs=2 * half_kerf)


def test_the_spec_names_the_sheet_the_jig_is_cut_from() -> None:
    text = (EXAMPLES / "duct-flute-d.yaml").read_text()
    text = text.replace("stock:\n", "stock:\n  acrylic-3: {material: acrylic, sheet: {thickness: "
                        "3 mm, size: 600 x 400 mm}}\n", 1)
    text = text.replace("    losses: keefe\n", "    losses: keefe\n    jig: acrylic-3\n")
    parts = compile_text(text, "duct-flute-d.yaml", Overrides()).parts
    cutters = [p for p in parts.parts if p.kind != "template"]
    assert {p.name for p in cutters} == {"jig-front", "duct-block-profile", "window-template"}
    assert {(p.stock, p.material, p.thickness_mm) for p in cutters} == {("acrylic-3", "acrylic",
                                                                         3.0)}
    assert [s.stock for s in parts.sheets] == ["acrylic-3"]
