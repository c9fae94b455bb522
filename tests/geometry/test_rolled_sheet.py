"""Flat patterns of rolled pipes against the sheet-metal formulas they come from."""

from __future__ import annotations

import math
from dataclasses import replace

import geometry_samples as samples
import numpy as np
import pytest
from shapely.geometry import Polygon

from compiler.geometry.layout import layout
from compiler.geometry.model import Circle, Part, Polyline
from compiler.geometry.paths import arc_of, segments
from compiler.geometry.rolled import frustum_pattern, neutral_circumference
from compiler.options import BuildOptions

KERF = 0.2  # mm, the samples' fabrication.kerf


def _parts(model=None):  # type: ignore[no-untyped-def]
    return layout(model or samples.metal_model(), BuildOptions())


def _outer(part: Part) -> Polyline | Circle:
    (outline,) = [e for e in part.entities if e.operation == "cut-outer"]
    assert isinstance(outline, Polyline | Circle)
    return outline


def _dense(path: Polyline) -> list[tuple[float, float]]:
    """The path with each arc as 20000 chords (sag below 1e-7 mm at these radii)."""
    out: list[tuple[float, float]] = []
    for a, b, k in segments(path):
        if not k:
            out.append(a)
            continue
        arc = arc_of(a, b, k)
        t = np.radians(arc.start_deg + arc.sweep_deg * np.linspace(0.0, 1.0, 20001)[:-1])
        out += list(zip(arc.center[0] + arc.radius * np.cos(t),
                        arc.center[1] + arc.radius * np.sin(t), strict=True))
    return out


def test_neutral_circumference_check_value() -> None:
    # Neutral-axis (mid-thickness) circumference π·(D_i + 2Kt) with K = 0.5 for R/t ≫ 1
    # (standard sheet-metal practice; handbook K-factor tables, values from memory). Check value
    # computed from it: D_i = 54.98 mm, t = 0.8 mm -> blank width π·55.78 = 175.24 mm.
    assert neutral_circumference(54.98, 0.8) == pytest.approx(175.24, abs=0.005)


@pytest.mark.parametrize(("d1", "d2", "h", "slant", "r1", "r2", "angle"), [
    # Check values computed from the frustum development of a right circular cone (handbook
    # geometry): s = sqrt(H² + ((D2 − D1)/2)²), R2 = s·D2/(D2 − D1), R1 = R2 − s,
    # θ = 180°·D2/R2.
    (100.0, 200.0, 150.0, 158.114, 158.114, 316.228, 113.842),
    (50.0, 60.0, 300.0, 300.042, 1500.21, 1800.25, 5.9992),
])
def test_frustum_check_values(d1: float, d2: float, h: float, slant: float, r1: float,
                              r2: float, angle: float) -> None:
    p = frustum_pattern(d1, d2, h)
    assert p.slant == pytest.approx(slant, abs=1e-3)
    assert p.inner_radius == pytest.approx(r1, abs=1e-2)
    assert p.outer_radius == pytest.approx(r2, abs=1e-2)
    assert p.angle_deg == pytest.approx(angle, abs=1e-3)


@pytest.mark.parametrize(("d1", "d2", "h"), [(23.8, 93.3, 180.0), (5.0, 40.0, 60.0),
                                             (60.0, 61.0, 400.0)])
def test_frustum_rolls_back_into_the_cone(d1: float, d2: float, h: float) -> None:
    # Independent of the pattern formula: rolled up, each arc becomes its end's
    # circumference (arc = R·θ = π·D) and the straight edges are the cone's slant height
    # √(H² + ((D2 − D1)/2)²) (Pythagoras on the cone's side).
    p = frustum_pattern(d1, d2, h)
    theta = math.radians(p.angle_deg)
    assert p.outer_radius * theta == pytest.approx(math.pi * d2, rel=1e-12)
    assert p.inner_radius * theta == pytest.approx(math.pi * d1, rel=1e-12)
    assert p.outer_radius - p.inner_radius == pytest.approx(math.hypot(h, (d2 - d1) / 2))


def test_body_development_width_and_height() -> None:
    pipe = samples.open_metal_pipe()
    body = _parts().part("principal-4-C3-body")
    # Neutral-axis circumference π·(D + t) (standard sheet-metal practice, K = 0.5) plus the
    # samples' 6 mm seam allowance; the body is as tall as the pipe's cut length.
    circumference = math.pi * (92.5 + 0.8)
    assert body.width_mm == pytest.approx(circumference + 6.0, abs=1e-6)
    assert body.height_mm == pytest.approx(pipe.cut_length_m * 1000.0, abs=1e-6)
    outline = _outer(body)
    assert isinstance(outline, Polyline) and outline.closed
    xs = [p[0] for p in outline.points]
    ys = [p[1] for p in outline.points]
    # The cut path lies kerf/2 outside the nominal outline on every side (kerf compensation:
    # the beam's centre runs half a kerf off the part, common CNC practice).
    assert min(xs) == pytest.approx(-KERF / 2) and max(xs) == pytest.approx(
        circumference + 6.0 + KERF / 2, abs=1e-5)
    assert min(ys) == pytest.approx(-KERF / 2) and max(ys) == pytest.approx(
        1256.6 + KERF / 2, abs=1e-5)


def test_body_mouth_notch_is_centred_on_the_front_line() -> None:
    pipe = samples.open_metal_pipe()
    assert pipe.mouth is not None
    width, cutup = pipe.mouth.width_m * 1000, pipe.mouth.cutup_m * 1000
    outline = _outer(_parts().part("principal-4-C3-body"))
    assert isinstance(outline, Polyline)
    circumference = math.pi * (92.5 + 0.8)
    notch = sorted(p[0] for p in outline.points if 0 < p[0] < circumference and p[1] < 1)
    # Kerf narrows the notch by kerf/2 each side; its top (the upper lip) drops by kerf/2.
    assert notch[0] == pytest.approx(circumference / 2 - width / 2 + KERF / 2, abs=1e-5)
    assert notch[-1] == pytest.approx(circumference / 2 + width / 2 - KERF / 2, abs=1e-5)
    lip = max(p[1] for p in outline.points if p[1] < 100)
    assert lip == pytest.approx(cutup - KERF / 2, abs=1e-5)


def test_foot_pattern_on_the_part_has_the_formula_radii() -> None:
    no_kerf = replace(samples.FABRICATION, kerf_m=0.0)
    model = replace(samples.metal_model(), fabrication=no_kerf)
    foot = layout(model, BuildOptions()).part("principal-4-C3-foot")
    outline = _outer(foot)
    assert isinstance(outline, Polyline)
    arcs = [arc_of(a, b, k) for a, b, k in segments(outline) if k]
    assert len(arcs) == 2
    # Mid-thickness diameters: toe 23 + 0.8, top 92.5 + 0.8 (frustum development, handbook
    # geometry: lay out thick sheet on the neutral diameters). Rolled up, the arcs are the two
    # ends' circumferences (arc = R·θ = π·D) and the edges the slant height (Pythagoras).
    outer, inner = sorted(arcs, key=lambda a: -a.radius)
    assert abs(math.radians(outer.sweep_deg)) * outer.radius == pytest.approx(
        math.pi * 93.3, rel=1e-6)
    assert abs(math.radians(inner.sweep_deg)) * inner.radius == pytest.approx(
        math.pi * 23.8, rel=1e-6)
    # Coordinates are rounded to 1e-6 mm, so radii agree to about that.
    assert outer.radius - inner.radius == pytest.approx(math.hypot(180.0, (93.3 - 23.8) / 2),
                                                        abs=1e-5)
    assert outer.center == pytest.approx(inner.center, abs=1e-5)
    # The seam strip: the part's area is the annular sector plus a 6 mm strip along one
    # slant edge (sector area θ/2·(R2² − R1²), standard geometry).
    theta = math.radians(abs(outer.sweep_deg))
    sector = theta / 2 * (outer.radius**2 - inner.radius**2)
    strip = 6.0 * (outer.radius - inner.radius)
    assert Polygon(_dense(outline)).area == pytest.approx(sector + strip, rel=1e-7)


def test_foot_arcs_move_by_half_the_kerf() -> None:
    foot = _parts().part("principal-4-C3-foot")
    # Kerf compensation (common CNC practice): the inner arc moves in, the outer arc out, by half
    # the kerf.
    pattern = frustum_pattern(23.8, 93.3, 180.0)
    outline = _outer(foot)
    assert isinstance(outline, Polyline)
    radii = sorted(arc_of(a, b, k).radius for a, b, k in segments(outline) if k)
    assert radii == pytest.approx([pattern.inner_radius - KERF / 2,
                                   pattern.outer_radius + KERF / 2], abs=1e-5)


def test_languid_is_the_inside_diameter() -> None:
    # The languid closes the body's bore at the mouth, so it is a disc of the inside diameter
    # (organ-pipe construction, common practice) plus half the kerf.
    languid = _outer(_parts().part("principal-4-C3-languid"))
    assert isinstance(languid, Circle)
    assert languid.radius == pytest.approx(92.5 / 2 + KERF / 2)


def test_stopped_metal_pipe_gets_a_cap() -> None:
    pipe = replace(samples.open_metal_pipe(), family="stopped-flue")
    model = replace(samples.metal_model(), pipes=(pipe,))
    parts = layout(model, BuildOptions())
    cap = parts.part("principal-4-C3-cap")
    outline = _outer(cap)
    assert isinstance(outline, Circle)
    outside = 92.5 + 2 * 0.8
    rim = max(5.0, 0.15 * outside)  # the documented skirt rule (common practice)
    assert outline.radius == pytest.approx(outside / 2 + rim + KERF / 2)
    (fold,) = [e for e in cap.entities if isinstance(e, Circle) and e.operation == "mark"]
    assert fold.radius == pytest.approx(outside / 2)


def test_toe_hole_other_than_the_toe_is_noted() -> None:
    pipe = samples.open_metal_pipe()
    assert pipe.foot is not None
    pipe = replace(pipe, foot=replace(pipe.foot, toe_hole_m=0.018))
    model = replace(samples.metal_model(), pipes=(pipe,))
    foot = layout(model, BuildOptions()).part("principal-4-C3-foot")
    assert "close the toe hole down to 18.0 mm" in foot.note


def test_rolled_parts_are_sheet_metal_of_the_pipe_stock() -> None:
    parts = _parts().parts
    assert [p.name for p in parts] == ["body", "foot", "languid"]
    for part in parts:
        assert part.kind == "sheet" and part.material == "spotted-metal"
        assert part.stock == "spotted-08" and part.thickness_mm == pytest.approx(0.8)
        assert not part.grain_along_x
