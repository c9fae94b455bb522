"""Labels a maker drills from: every hole on a full-size template carries its label and
drill (the embouchure hole too), printed at 8 pt at least, clear of the holes.

The checks read what was written, not the code that drew it: resolved.json for where the
embouchure hole is, the DXF files read back with ezdxf, the PDF's text read back with pypdf
(its size as the page shows it: the type size times the scale of the text and graphics
matrices, in PDF points of 1/72 in, ISO 32000-1 §8.3.2.3). 8 pt is the least size of text
a cut depends on (the product's rule for body text in black).
"""

from __future__ import annotations

import io
import json
import math
import re
from pathlib import Path
from typing import Any

import ezdxf
from pypdf import PdfReader
from shapely.geometry import LineString, Point, box

from compiler.build import build
from compiler.emit.pdf import template_plan
from compiler.emit.pdf.style import MM, frame_for
from compiler.options import Overrides

EXAMPLES = Path(__file__).resolve().parents[3] / "specs_examples"
LEAST_PT = 8.0


def _build(tmp: Path, name: str, text: str | None = None) -> Path:
    data = text if text is not None else (EXAMPLES / name).read_text(encoding="utf-8")
    return build(data, name, tmp, Overrides(part_files=True))


def _sizes(page: Any) -> list[tuple[str, float]]:
    """(text, size in pt as printed) of every string drawn on the page, but those that
    start outside a tile's drawing window (clipped away: a label of the part beyond it)."""
    found: list[tuple[str, float]] = []
    frame = frame_for("a4")
    window_w, window_h = template_plan.window_size(frame)
    left, bottom = frame.left, frame.bottom + template_plan.BAR_BAND
    right, top = left + window_w * MM, bottom + window_h * MM

    def seen(text: str, cm: Any, tm: Any, _font: Any, size: float) -> None:
        x = tm[4] * cm[0] + tm[5] * cm[2] + cm[4]
        y = tm[4] * cm[1] + tm[5] * cm[3] + cm[5]
        # the part is drawn scaled to mm; the page's own words (titles, key) are not
        in_part = tuple(cm[:4]) != (1, 0, 0, 1)
        clipped = in_part and not (left <= x <= right and bottom <= y <= top)
        if text.strip() and not clipped:
            # the text's vertical unit through the text matrix, then the graphics matrix
            dx = tm[2] * cm[0] + tm[3] * cm[2]
            dy = tm[2] * cm[1] + tm[3] * cm[3]
            found.append((text.strip().replace("\xa0", " "), size * math.hypot(dx, dy)))

    page.extract_text(visitor_text=seen)
    return found


def _full_size_pages(pdf: Path) -> list[tuple[str, list[tuple[str, float]]]]:
    """(title, drawn strings) of the pages printed at 1:1: tiles and shared pages (the
    assembly maps are not to scale)."""
    reader = PdfReader(io.BytesIO(pdf.read_bytes()))
    out = []
    for page in reader.pages:
        text = page.extract_text()
        if re.search(r"Tile \d+/\d+ of|Small templates at 1:1", text):
            out.append((text, _sizes(page)))
    return out


def _text_box(e: Any) -> Any:
    """A DXF TEXT's box: its height and the width the geometry stage allows (0.62 of the
    height per character, ``paths.TEXT_WIDTH_FACTOR``), centred on its alignment point."""
    x, y = e.dxf.align_point.x, e.dxf.align_point.y
    h, w = e.dxf.height, 0.62 * e.dxf.height * len(e.dxf.text)
    if abs(e.dxf.rotation - 90.0) < 1e-6:
        w, h = h, w
    return box(x - w / 2, y - h / 2, x + w / 2, y + h / 2)


def _crowded() -> str:
    """The side-blown example made crowded: a 14 mm tube (circumference 44 mm), the holes
    fixed 6 to 10 mm apart (no `min_span`, a 1 mm web), two turned off the front line, a thumb
    hole drawn on both side edges, and long labels ('ring-finger-low: 5.0' is as wide as the
    template at the finger labels' usual 3.5 mm)."""
    text = (EXAMPLES / "side-blown-flute-c.yaml").read_text(encoding="utf-8")
    holes = "\n".join(f"      - {{{h}}}" for h in (
        "label: thumb-left, angle: 180 deg, position: 200 mm, diameter: 4 mm",
        "position: 206 mm, diameter: 5 mm",
        "position: 216 mm, diameter: 5 mm, angle: 15 deg",
        "position: 226 mm, diameter: 5 mm",
        "label: ring-finger-low, position: 236 mm, diameter: 5 mm, angle: -10 deg",
        "position: 246 mm, diameter: 5 mm",
        "position: 256 mm, diameter: 6 mm",
        "position: 265 mm, diameter: 6 mm"))
    start = text.index("    holes:\n") + len("    holes:\n")
    text = text[:start] + holes + "\n" + text[text.index("    fingerings:"):]
    for old, new in (("outside_diameter: 22 mm, wall: 0.8 mm",
                      "outside_diameter: 14 mm, wall: 1 mm"),
                     ("diameter: 10 mm, from_top: 40 mm", "diameter: 8 mm, from_top: 30 mm"),
                     ("min_span: 17 mm", "min_span: 0 mm"), ("min_web: 4 mm", "min_web: 1 mm"),
                     ("min_diameter: 4 mm", "min_diameter: 3 mm")):
        assert old in text
        text = text.replace(old, new)
    return text


READ_AS_ITS_MM = 6.0
"""A hole's label on the wrap-around template is read as that hole's if its box comes within
this of the hole's circle (under three 8 pt label heights, 2.05 mm; common practice for a
callout without a leader, from memory) and nearer to it than to any other hole."""


def test_hole_labels_on_the_wrap_keep_clear_of_every_mark_and_by_their_holes(
        tmp_path: Path) -> None:
    # Each template is read back from its DXF file; where each hole is comes from
    # resolved.json (from the top end, and round the tube: x = C/2 + angle/360 * C, the
    # arc length from the front line, drawn on both side edges where it crosses one).
    for name, text in (("side-blown-flute-c.yaml", None), ("duct-flute-d.yaml", None),
                       ("crowded-flute.yaml", _crowded())):
        out = _build(tmp_path / name, name, text)
        pipe = json.loads((out / "resolved.json").read_text())["pipes"][0]
        circ, length = math.pi * pipe["outside_diameter_mm"], pipe["cut_length_mm"]
        ents = list(ezdxf.readfile(out / "parts" / f"{pipe['id']}-template.dxf").modelspace())
        holes: dict[str, list[Any]] = {}  # label text -> its hole's circles (copies)
        for h in pipe["holes"]:
            x = circ / 2 + ((h["angle_deg"] + 180) % 360 - 180) / 360 * circ
            y, r = length - h["position_from_top_mm"], h["diameter_mm"] / 2
            at = [Point(cx, y).buffer(r) for cx in (x, x + circ, x - circ)
                  if -r < cx < circ + r]
            holes[f"{h['label']}: {h['diameter_mm']:.1f}"] = at
        head = pipe["head"]
        if head["embouchure_diameter_mm"] is not None:
            d = head["embouchure_diameter_mm"]
            holes[f"emb.: {d:.1f}"] = [Point(circ / 2, length - head["embouchure_from_top_mm"])
                                      .buffer(d / 2)]
        circles = [Point(e.dxf.center.x, e.dxf.center.y).buffer(e.dxf.radius)
                   for e in ents if e.dxftype() == "CIRCLE"]
        assert len(circles) >= len(holes)
        lines = [LineString([p[:2] for p in e.get_points()]) for e in ents
                 if e.dxftype() == "LWPOLYLINE" and e.dxf.layer == "mark"]
        # the centre line, the ticks down both edges, the crosses (and the cork line)
        assert any(abs(ln.length - length) < 1e-6 for ln in lines)
        assert sum(ln.length in (3.0, 6.0) for ln in lines) >= 2 * int(length // 10)
        texts = {e.dxf.text: _text_box(e) for e in ents if e.dxftype() == "TEXT"}
        heights = {e.dxf.text: e.dxf.height for e in ents if e.dxftype() == "TEXT"}
        assert set(holes) <= set(texts), sorted(set(holes) - set(texts))
        sheet = box(0, 0, circ, length)
        for label, own in holes.items():
            t = texts[label]
            where = (name, label)
            assert sheet.contains(t), where
            assert not any(t.intersects(c) for c in circles), where
            assert not any(t.intersects(ln) for ln in lines), where
            assert not any(t.intersects(o) for k, o in texts.items() if k != label), where
            mine = min(c.distance(t) for c in own)
            assert mine <= READ_AS_ITS_MM, where
            others = [c for k, cs in holes.items() if k != label for c in cs]
            assert all(c.distance(t) > mine for c in others), where
            assert heights[label] >= 2.05 - 1e-9, where  # 8 pt printed: all fit here


def test_the_embouchure_hole_is_labelled_beside_it_on_the_wrap_and_the_strip(
        tmp_path: Path) -> None:
    out = _build(tmp_path, "side-blown-flute-c.yaml")
    pipe = json.loads((out / "resolved.json").read_text())["pipes"][0]
    head = pipe["head"]
    d, from_top = head["embouchure_diameter_mm"], head["embouchure_from_top_mm"]
    assert (d, from_top) == (10.0, 40.0)
    circ = math.pi * pipe["outside_diameter_mm"]
    # the wrap-around template: the hole on the front line (the middle), from the top end
    wrap = list(ezdxf.readfile(out / "parts" / "flute-c-template.dxf").modelspace())
    hole = Point(circ / 2, pipe["cut_length_mm"] - from_top)
    (emb,) = [e for e in wrap if e.dxftype() == "TEXT" and e.dxf.text.startswith("emb")]
    assert emb.dxf.text == "emb.: 10.0" and emb.dxf.layer == "engrave"
    assert emb.dxf.height >= 2.05  # prints at 8 pt (capitals 0.72 of the type size)
    centre = _text_box(emb).centroid
    assert abs(centre.y - hole.y) <= 2.0  # level with the hole
    assert 0 < centre.x - hole.x <= d / 2 + 20.0  # just to its right
    assert not _text_box(emb).intersects(hole.buffer(d / 2))
    # the same style as the finger holes' labels: label, colon, drill in mm
    finger = {e.dxf.text for e in wrap if e.dxftype() == "TEXT"}
    assert {f"{h['label']}: {h['diameter_mm']:.1f}" for h in pipe["holes"]} <= finger
    # the drilling strip cut from the jig sheet: the hole's pilot on the centre line
    strip = list(ezdxf.readfile(out / "parts" / "flute-c-jig-front.dxf").modelspace())
    (emb,) = [e for e in strip if e.dxftype() == "TEXT" and e.dxf.text.startswith("emb")]
    assert emb.dxf.text == "emb. 10.0" and emb.dxf.layer == "engrave"
    (pilot,) = [e for e in strip if e.dxftype() == "CIRCLE" and e.dxf.layer == "mark"
                and abs(e.dxf.radius - d / 2) < 1e-6]
    centre = _text_box(emb).centroid
    assert abs(centre.y - pilot.dxf.center.y) <= 2.0
    assert not _text_box(emb).intersects(Point(pilot.dxf.center.x,
                                               pilot.dxf.center.y).buffer(d / 2))


def test_labels_keep_clear_of_every_hole_and_of_each_other(tmp_path: Path) -> None:
    checked = 0
    for name in ("side-blown-flute-c.yaml", "duct-flute-d.yaml"):
        out = _build(tmp_path / name, name)
        for path in sorted((out / "parts").glob("*.dxf")):
            ents = list(ezdxf.readfile(path).modelspace())
            holes = [Point(e.dxf.center.x, e.dxf.center.y).buffer(e.dxf.radius)
                     for e in ents if e.dxftype() == "CIRCLE"]
            texts = [_text_box(e) for e in ents if e.dxftype() == "TEXT"]
            for k, t in enumerate(texts):
                assert not any(t.intersects(h) for h in holes), path.name
                assert not any(t.intersects(o) for o in texts[k + 1:]), path.name
                checked += 1
    assert checked > 30


def test_hole_labels_on_full_size_pages_print_at_8_pt(tmp_path: Path) -> None:
    expect = {
        # flute: every finger hole (wrap: "label: drill"; strip: "label drill") and the
        # embouchure hole, from its resolved.json
        "side-blown-flute-c.yaml": {"emb.: 10.0", "emb. 10.0", "T: 6.0", "T 6.0"},
        "duct-flute-d.yaml": {"1: 8.0", "1 8.0", "labium"},
    }
    for name, wanted in expect.items():
        out = _build(tmp_path / name, name)
        pipe = json.loads((out / "resolved.json").read_text())["pipes"][0]
        holes = {f"{h['label']}{sep} {h['diameter_mm']:.1f}" for h in pipe["holes"]
                 for sep in ("", ":")}
        printed: dict[str, float] = {}
        for _, drawn in _full_size_pages(out / "build-sheet.pdf"):
            for text, size in drawn:
                if text in holes | wanted:
                    printed[text] = min(size, printed.get(text, size))
        assert holes | wanted <= set(printed), sorted(holes | wanted - set(printed))
        small = {t: round(s, 2) for t, s in printed.items() if s < LEAST_PT - 1e-6}
        assert small == {}, (name, small)


def test_a_label_too_long_to_print_at_8_pt_is_repeated_in_a_key(tmp_path: Path) -> None:
    # A 16-character hole label (the schema's longest) with its drill cannot stand 8 pt
    # tall in the 8 mm margin of the drilling strip, across or along it: it is drawn
    # smaller there and repeated at 8 pt on the same page.
    text = (EXAMPLES / "side-blown-flute-c.yaml").read_text(encoding="utf-8")
    text = text.replace("{label: T, angle: 180 deg}", "{label: left-thumb-hole, angle: 180 deg}")
    assert "left-thumb-hole" in text
    out = _build(tmp_path, "side-blown-flute-c.yaml", text)
    label = "left-thumb-hole 6.0"
    pages = [(title, drawn) for title, drawn in _full_size_pages(out / "build-sheet.pdf")
             if any(t == label for t, _ in drawn)]
    assert pages
    for title, drawn in pages:
        sizes = sorted(s for t, s in drawn if label in t)
        assert sizes[0] < LEAST_PT - 0.5  # small on the strip
        assert len(sizes) == 2 and sizes[1] >= LEAST_PT - 1e-6, (title, sizes)  # the key
        assert any(t.startswith("Small labels on this page, at 8 pt") for t, _ in drawn)
