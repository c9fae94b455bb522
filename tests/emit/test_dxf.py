"""The DXF backend: files, layers, closed cut paths, coordinates read back (ezdxf and
GDAL's independent DXF reader), R12, and byte-for-byte reproducibility."""

from __future__ import annotations

import hashlib
import importlib.util
import json
import math
import os
import pathlib
import shutil
import subprocess
import sys
import time
from collections import Counter
from dataclasses import replace
from types import ModuleType

import ezdxf
import pytest

from compiler.emit import dxf
from compiler.geometry.layout import layout
from compiler.geometry.model import Circle, Parts, Polyline, Text
from compiler.geometry.paths import placed, text_centre
from compiler.ir import Resolved
from compiler.options import BuildOptions

ROOT = pathlib.Path(__file__).resolve().parents[2]


def _samples() -> ModuleType:
    name = "geometry_samples"
    if name not in sys.modules:
        spec = importlib.util.spec_from_file_location(
            name, ROOT / "tests" / "geometry" / "geometry_samples.py")
        assert spec is not None and spec.loader is not None
        module = importlib.util.module_from_spec(spec)
        sys.modules[name] = module
        spec.loader.exec_module(module)
    return sys.modules[name]


samples = _samples()


@pytest.fixture(scope="module")
def model() -> Resolved:
    return samples.everything()  # type: ignore[no-any-return]


@pytest.fixture(scope="module")
def parts(model: Resolved) -> Parts:
    return layout(model, BuildOptions())


def _placed_counts(parts: Parts, sheet_id: str) -> Counter[str]:
    by_id = {p.id: p for p in parts.parts}
    sheet = next(s for s in parts.sheets if s.id == sheet_id)
    return Counter(e.operation for pl in sheet.placements
                   for e in by_id[pl.part_id].entities) + Counter({dxf.SHEET_LAYER: 1})


def test_files_written(model: Resolved, parts: Parts, tmp_path: pathlib.Path) -> None:
    paths = dxf.write(model, parts, BuildOptions(), tmp_path)
    assert [p.name for p in paths] == ["sheet-01-birch-ply.dxf", "sheet-02-pine.dxf",
                                       "sheet-03-plywood.dxf", "sheet-04-spotted-metal.dxf"]
    assert paths == sorted(paths) and not (tmp_path / "parts").exists()


def test_part_files_on_request(model: Resolved, parts: Parts, tmp_path: pathlib.Path) -> None:
    paths = dxf.write(model, parts, BuildOptions(part_files=True), tmp_path / "a")
    names = sorted(p.name for p in paths if p.parent.name == "parts")
    assert names == sorted(f"{p.id}.dxf" for p in parts.parts)
    # The backend follows its options alone (the spec's fabrication.part_files is merged
    # into them once, before: tests/test_options.py).
    spec_on = replace(model, fabrication=replace(model.fabrication, part_files=True))
    assert not any(p.parent.name == "parts"
                   for p in dxf.write(spec_on, parts, BuildOptions(part_files=False),
                                      tmp_path / "c"))


def test_read_back_r2010(model: Resolved, parts: Parts, tmp_path: pathlib.Path) -> None:
    for path in dxf.write(model, parts, BuildOptions(part_files=True), tmp_path):
        doc = ezdxf.readfile(path)
        assert doc.dxfversion == "AC1024"
        assert doc.header["$INSUNITS"] == 4
        auditor = doc.audit()
        assert not auditor.has_errors and not auditor.fixes, path.name
        colours = {layer.dxf.name: layer.dxf.color for layer in doc.layers}
        assert {k: colours[k] for k in dxf.LAYER_COLOURS} == {
            "cut-inner": 5, "cut-outer": 1, "mark": 3, "engrave": 6, "sheet": 8}
        for e in doc.modelspace():
            layer = e.dxf.layer
            if layer.startswith("cut"):
                assert e.dxftype() in ("LWPOLYLINE", "CIRCLE"), path.name
                if e.dxftype() == "LWPOLYLINE":
                    assert e.closed
            if layer == "engrave":
                assert e.dxftype() == "TEXT"


def test_entities_per_layer_match_the_parts(model: Resolved, parts: Parts,
                                            tmp_path: pathlib.Path) -> None:
    for path in dxf.write(model, parts, BuildOptions(), tmp_path):
        doc = ezdxf.readfile(path)
        found = Counter(e.dxf.layer for e in doc.modelspace())
        assert found == _placed_counts(parts, path.stem)


def test_sheet_coordinates_read_back(model: Resolved, parts: Parts,
                                     tmp_path: pathlib.Path) -> None:
    dxf.write(model, parts, BuildOptions(), tmp_path)
    doc = ezdxf.readfile(tmp_path / "sheet-04-spotted-metal.dxf")
    sheet = next(s for s in parts.sheets if s.material == "spotted-metal")
    expected = [e for pl in sheet.placements
                for e in placed(parts.part(pl.part_id).entities, pl)]
    outlines = [e for e in expected if isinstance(e, Polyline) and e.operation == "cut-outer"]
    written = [e for e in doc.modelspace().query("LWPOLYLINE[layer=='cut-outer']")]
    assert len(written) == len(outlines)
    for ours, theirs in zip(outlines, written, strict=True):
        pts = theirs.get_points("xyb")
        assert [v for x, y, _ in pts for v in (x, y)] == pytest.approx(
            [v for point in ours.points for v in point], abs=1e-9)
        assert [b for _, _, b in pts] == pytest.approx(list(ours.bulges), abs=1e-12)
    # The languid's outline is a CIRCLE where the part says.
    (circle,) = doc.modelspace().query("CIRCLE[layer=='cut-outer']")
    (ours,) = [e for e in expected if isinstance(e, Circle) and e.operation == "cut-outer"]
    assert (circle.dxf.center.x, circle.dxf.center.y) == pytest.approx(ours.center)
    assert circle.dxf.radius == pytest.approx(92.5 / 2 + 0.1)


def test_r12_closed_polylines(model: Resolved, parts: Parts, tmp_path: pathlib.Path) -> None:
    paths = dxf.write(model, parts, BuildOptions(dxf_version="r12"), tmp_path)
    for path in paths:
        doc = ezdxf.readfile(path)
        assert doc.dxfversion == "AC1009"
        auditor = doc.audit()
        assert not auditor.has_errors and not auditor.fixes
        msp = doc.modelspace()
        assert not list(msp.query("LWPOLYLINE"))
        for e in msp.query("POLYLINE"):
            if e.dxf.layer.startswith("cut"):
                assert e.is_closed
        assert Counter(e.dxf.layer for e in msp) == _placed_counts(parts, path.stem)
        sheet = next(s for s in parts.sheets if s.id == path.stem)
        assert doc.header["$LIMMAX"][:2] == (sheet.length_mm, sheet.width_mm)
    foot = next(e for e in ezdxf.readfile(tmp_path / "sheet-04-spotted-metal.dxf")
                .modelspace().query("POLYLINE[layer=='cut-outer']")
                if any(v.dxf.bulge for v in e.vertices))
    assert sum(1 for v in foot.vertices if v.dxf.bulge) == 2


def test_two_builds_give_the_same_bytes(model: Resolved, parts: Parts,
                                        tmp_path: pathlib.Path) -> None:
    for version in ("r2010", "r12"):
        a = dxf.write(model, parts, BuildOptions(dxf_version=version, part_files=True),
                      tmp_path / f"{version}-a")
        b = dxf.write(model, layout(model, BuildOptions()),
                      BuildOptions(dxf_version=version, part_files=True),
                      tmp_path / f"{version}-b")
        assert [p.read_bytes() for p in a] == [p.read_bytes() for p in b]


def test_same_bytes_in_fresh_processes(tmp_path: pathlib.Path) -> None:
    # ezdxf keeps some registries in sets; Python's string hashing changes their order
    # from process to process, so build twice with different hash seeds.
    code = (
        "import sys, pathlib, importlib.util, hashlib\n"
        f"spec = importlib.util.spec_from_file_location('s', {str(ROOT / 'tests' / 'geometry' / 'geometry_samples.py')!r})\n"  # noqa: E501
        "s = importlib.util.module_from_spec(spec); spec.loader.exec_module(s)\n"
        "from compiler.geometry.layout import layout\n"
        "from compiler.emit import dxf\n"
        "from compiler.options import BuildOptions\n"
        "m = s.everything()\n"
        "out = pathlib.Path(sys.argv[1])\n"
        "for p in dxf.write(m, layout(m, BuildOptions()), BuildOptions(), out):\n"
        "    print(p.name, hashlib.sha256(p.read_bytes()).hexdigest())\n"
    )
    runs = []
    for seed in ("1", "2"):
        env = {**os.environ, "PYTHONHASHSEED": seed, "PYTHONPATH": str(ROOT)}
        runs.append(subprocess.run([sys.executable, "-c", code, str(tmp_path / seed)],
                                   check=True, capture_output=True, text=True, env=env,
                                   cwd=ROOT).stdout)
    assert runs[0] == runs[1] and runs[0].count("\n") == 4


def test_header_is_fixed_and_seeded(model: Resolved, parts: Parts,
                                    tmp_path: pathlib.Path) -> None:
    paths = dxf.write(model, parts, BuildOptions(), tmp_path)
    guids = set()
    for path in paths:
        # Read the raw header: loading with ezdxf would restamp $TDCREATE in memory.
        text = path.read_text(encoding="utf-8")
        for var in ("$TDCREATE", "$TDUPDATE"):
            assert f"{var}\n 40\n2451544.5\n" in text
        for var in ("$TDINDWG", "$TDUSRTIMER"):
            assert f"{var}\n 40\n0.0\n" in text
        assert "@ 20" not in text  # no wall-clock stamp in ezdxf's metadata
        guids.add(ezdxf.readfile(path).header["$FINGERPRINTGUID"])
    assert len(guids) == len(paths)  # seeded by the file name and content
    # GUIDs derive from each file's own content: an unchanged sheet keeps its bytes when
    # something else in the spec changes (that is what lets rebuilds reuse it).
    other = replace(model, spec_sha256="ab" * 32)
    again = dxf.write(other, parts, BuildOptions(), tmp_path / "other")
    assert [p.read_bytes() for p in again] == [p.read_bytes() for p in paths]


def _ogr_features(path: pathlib.Path) -> list[dict[str, object]]:
    ogr2ogr = shutil.which("ogr2ogr")
    assert ogr2ogr is not None
    out = subprocess.run([ogr2ogr, "-f", "GeoJSON", "/vsistdout/", str(path)], check=True,
                         capture_output=True, text=True).stdout
    features: list[dict[str, object]] = json.loads(out)["features"]
    return features


@pytest.mark.skipif(shutil.which("ogr2ogr") is None,
                    reason="GDAL's ogr2ogr is not installed (CI installs gdal-bin)")
def test_gdal_reads_the_same_coordinates(model: Resolved, parts: Parts,
                                         tmp_path: pathlib.Path) -> None:
    dxf.write(model, parts, BuildOptions(part_files=True), tmp_path)
    # Holder plate: GDAL turns each CIRCLE into a closed line string of points on it.
    holder = parts.part("tubes-holder")
    feats = _ogr_features(tmp_path / "parts" / "tubes-holder.dxf")
    rings = [f for f in feats if f["properties"]["Layer"] == "cut-inner"]  # type: ignore[index]
    ours = sorted((e for e in holder.entities if isinstance(e, Circle)
                   and e.operation == "cut-inner"), key=lambda c: c.center[0])
    assert len(rings) == len(ours) == 3
    for ring, circle in zip(sorted(rings, key=lambda f: f["geometry"]["coordinates"][0][0]),  # type: ignore[index]
                            ours, strict=True):
        pts = ring["geometry"]["coordinates"]  # type: ignore[index]
        for x, y, *_ in pts:
            assert math.dist((x, y), circle.center) == pytest.approx(circle.radius, abs=1e-6)
    labels = sorted((f["properties"]["Text"], tuple(f["geometry"]["coordinates"][:2]))  # type: ignore[index]
                    for f in feats if f["properties"]["Layer"] == "engrave")  # type: ignore[index]
    # A label is written centred on its box (MIDDLE_CENTER): GDAL reports that centre.
    texts = sorted((e.text, text_centre(e)) for e in holder.entities if isinstance(e, Text))
    assert [t for t, _ in labels] == [t for t, _ in texts]
    for (_, a), (_, b) in zip(labels, texts, strict=True):
        assert a == pytest.approx(b, abs=1e-6)
    # Metal sheet: the body's outline, placed (and turned) on the sheet, vertex for vertex.
    sheet = next(s for s in parts.sheets if s.material == "spotted-metal")
    body_pl = next(pl for pl in sheet.placements if pl.part_id == "principal-4-C3-body")
    (body,) = [e for e in placed(parts.part("principal-4-C3-body").entities, body_pl)
               if e.operation == "cut-outer"]
    assert isinstance(body, Polyline)
    feats = _ogr_features(tmp_path / f"{sheet.id}.dxf")
    lines = [f["geometry"]["coordinates"] for f in feats  # type: ignore[index]
             if f["properties"]["Layer"] == "cut-outer"  # type: ignore[index]
             and len(f["geometry"]["coordinates"]) == len(body.points) + 1]  # type: ignore[index]
    (coords,) = lines
    assert [v for c in coords[:-1] for v in c[:2]] == pytest.approx(
        [v for point in body.points for v in point], abs=1e-6)
    assert coords[0] == coords[-1]


def test_large_rank_writes_quickly(tmp_path: pathlib.Path) -> None:
    big = samples.metal_rank(610)
    start = time.perf_counter()
    paths = dxf.write(big, layout(big, BuildOptions()), BuildOptions(), tmp_path)
    assert time.perf_counter() - start < 20.0  # a few seconds on a laptop; generous for CI
    assert len(paths) > 1
    digest = hashlib.sha256(paths[0].read_bytes()).hexdigest()
    assert len(digest) == 64


def test_every_part_has_an_upright_label_with_its_note(model: Resolved, parts: Parts,
                                                       tmp_path: pathlib.Path) -> None:
    """Each placed part carries a TEXT on the engrave layer naming its note (or pipe), and
    every label reads from the bottom or the right of the sheet (0° or 90°) after nesting
    turned its part."""
    by_id = {p.id: p for p in parts.parts}
    notes = {p.id: p.note for p in model.pipes}
    for sheet in parts.sheets:
        for pl in sheet.placements:
            part = by_id[pl.part_id]
            texts = [e for e in placed(part.entities, pl) if isinstance(e, Text)]
            assert texts, part.id
            if part.pipe_id is not None:
                assert any(notes[part.pipe_id] in t.text.split(" ") or
                           t.text.startswith(part.pipe_id) for t in texts), part.id
            for t in texts:
                assert t.rotation_deg in (0.0, 90.0), (part.id, t)
    paths = dxf.write(model, parts, BuildOptions(), tmp_path)
    for path in paths:
        for e in ezdxf.readfile(path).modelspace().query("TEXT"):
            assert e.dxf.layer == "engrave"
            assert e.dxf.rotation in (0.0, 90.0)
            assert (e.dxf.halign, e.dxf.valign) == (1, 2)  # centred on its box


def test_sheet_outline_and_header_extents(model: Resolved, parts: Parts,
                                          tmp_path: pathlib.Path) -> None:
    """The sheet's outline sits on the non-cutting ``sheet`` layer; $EXTMIN/$EXTMAX are the
    bounds of the entities as ezdxf measures them (its own bounding-box code)."""
    from ezdxf import bbox

    for path in dxf.write(model, parts, BuildOptions(part_files=True), tmp_path):
        doc = ezdxf.readfile(path)
        msp = doc.modelspace()
        shapes = [e for e in msp if e.dxftype() != "TEXT"]
        box = bbox.extents(shapes)
        for e in msp.query("TEXT"):  # a label counts with its box (0.62 × height a letter)
            w, h = 0.62 * e.dxf.height * len(e.dxf.text), e.dxf.height
            if e.dxf.rotation == 90.0:
                w, h = h, w
            x, y = e.dxf.align_point.x, e.dxf.align_point.y
            box.extend([(x - w / 2, y - h / 2), (x + w / 2, y + h / 2)])
        low, high = doc.header["$EXTMIN"], doc.header["$EXTMAX"]
        if path.parent.name == "parts":
            assert not msp.query("*[layer=='sheet']")
            # (ezdxf bounds an arc by its Bezier approximation: within 0.01 mm)
            assert low[:2] == pytest.approx((box.extmin.x, box.extmin.y), abs=1e-2)
            assert high[:2] == pytest.approx((box.extmax.x, box.extmax.y), abs=1e-2)
            continue
        sheet = next(s for s in parts.sheets if s.id == path.stem)
        (outline,) = msp.query("*[layer=='sheet']")
        assert outline.dxftype() == "LWPOLYLINE" and outline.closed
        assert [tuple(p) for p in outline.get_points("xy")] == [
            (0.0, 0.0), (sheet.length_mm, 0.0), (sheet.length_mm, sheet.width_mm),
            (0.0, sheet.width_mm)]
        assert low[:2] == (0.0, 0.0) and high[:2] == (sheet.length_mm, sheet.width_mm)
        assert (box.extmin.x, box.extmin.y) == pytest.approx((0.0, 0.0))
        assert (box.extmax.x, box.extmax.y) == pytest.approx((sheet.length_mm,
                                                              sheet.width_mm))


def test_sheet_files_are_zero_padded_and_sort_in_order(model: Resolved, parts: Parts,
                                                        tmp_path: pathlib.Path) -> None:
    names = [p.name for p in dxf.write(model, parts, BuildOptions(), tmp_path)]
    numbers = [int(n.split("-")[1]) for n in names]
    assert numbers == list(range(1, len(names) + 1))
    assert all(len(n.split("-")[1]) == 2 for n in names)


def test_a_turned_label_is_flipped_to_read_upright() -> None:
    """A label along a part (90°) on a part that nesting turns by 90° would read upside
    down (180°): it is turned half a turn about its centre."""
    from compiler.geometry.model import Placement
    from compiler.geometry.paths import text_centre

    label = Text("engrave", (12.0, 5.0), 3.0, "C3 side", 90.0)
    (moved,) = placed((label,), Placement("p", 100.0, 50.0, True))
    assert moved.rotation_deg == 0.0
    # the centre goes where the 90° turn puts it: (x, y) -> (-y, x) + offset
    cx, cy = text_centre(label)
    assert text_centre(moved) == pytest.approx((100.0 - cy, 50.0 + cx))
