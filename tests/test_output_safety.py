"""Nothing in a spec can make a build write outside its output folder.

Names that become file names (rank, tube-set and flute ids, which name the part files) must
match the schema's plain-name pattern, so path tricks are refused at `check`; the
instrument's name becomes the output folder through a slug that keeps only ASCII letters,
digits and dashes, so `../../etc` or `/tmp/x` builds inside the output folder.
"""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest

from compiler.build import OutputError, build
from compiler.errors import SchemaError
from compiler.options import Overrides
from compiler.spec import load_spec

TRICKS = [
    "../escape", "..", ".", "/abs", "/etc/passwd", "a/b", "a/../../b", "a\\b", "..\\up",
    "C:\\temp", "C:", "~root", "-dash", ".hidden", "", " space", "name ", "tab\there",
    "line\n", "a\x00b",
    "ａｂｃ",        # fullwidth letters: NFKC would turn them into `abc`
    "a\u2215b",     # division slash, looks like `/`
    "a\u2044b",     # fraction slash
    "a\uff0fb",     # fullwidth solidus
    "\u202eabc",    # right-to-left override
    "a\u200bb",     # zero-width space
    "caf\u00e9",    # non-ASCII letter
]


def _spec_with_id(kind: str, ident: str) -> str:
    quoted = json.dumps(ident)  # a JSON string is a YAML double-quoted scalar
    head = ("boresmith: 1\ninstrument: Safety\nstock:\n"
            "  alu: {material: aluminium, tube: {outside_diameter: 16 mm, wall: 1 mm}}\n"
            "  tin: {material: spotted-metal, sheet: {thickness: 0.8 mm}}\n")
    if kind == "ranks":
        return head + (f"ranks:\n  - id: {quoted}\n    family: open-flue\n"
                       "    construction: rolled-sheet\n    stock: tin\n    notes: C4..D4\n"
                       "    scale: {reference: {note: C4, diameter: 50 mm}}\n")
    if kind == "tube_sets":
        return head + (f"tube_sets:\n  - id: {quoted}\n    family: open-tube\n"
                       "    stock: alu\n    notes: C5..D5\n")
    return head + (f"flutes:\n  - id: {quoted}\n    family: duct-flute\n    stock: alu\n"
                   "    head: {window: {length: 5 mm, width: 9 mm}}\n    holes: 1\n"
                   "    fingerings: [{note: D5, closed: x}]\n")


@pytest.mark.parametrize("kind", ["ranks", "tube_sets", "flutes"])
@pytest.mark.parametrize("ident", TRICKS, ids=[repr(t) for t in TRICKS])
def test_ids_that_could_name_a_path_are_refused(kind: str, ident: str) -> None:
    text = _spec_with_id(kind, ident)
    with pytest.raises(SchemaError) as info:
        load_spec(text, "safety.yaml")
    line = text.splitlines().index(f"  - id: {json.dumps(ident)}") + 1
    (problem,) = [p for p in info.value.problems if p.position.line == line]
    assert f"{kind}[0].id" in problem.message
    assert "not written the expected way" in problem.message or "at least 1" in problem.message
    assert "\n" not in problem.message  # shown escaped, on the problem's own line


@pytest.mark.parametrize("name", ["../alu", "a/b", "..", "line\n", "a\u2215b"],
                         ids=repr)
def test_stock_names_that_could_name_a_path_are_refused(name: str) -> None:
    text = ("boresmith: 1\ninstrument: Safety\nstock:\n"
            f"  {json.dumps(name)}: {{material: aluminium, tube: {{outside_diameter: 16 mm, "
            "wall: 1 mm}}\n")
    with pytest.raises(SchemaError) as info:
        load_spec(text, "safety.yaml")
    assert any(p.position.line == 4 and "cannot be used as a name" in p.message
               for p in info.value.problems), info.value


SMALL = """boresmith: 1
instrument: {name}
stock:
  alu: {{material: aluminium, tube: {{outside_diameter: 22 mm, wall: 1 mm}}}}
  ply: {{material: birch-ply, sheet: {{thickness: 4 mm, size: 600 x 300 mm}}}}
  tin: {{material: {material}, sheet: {{thickness: 0.5 mm, size: 1200 x 600 mm}}}}
tube_sets:
  - {{id: tubes, family: stopped-tube, stock: alu, notes: G5..A5, holder: {{stock: ply}}}}
ranks:
  - id: pipe
    family: open-flue
    construction: rolled-sheet
    stock: tin
    notes: C6
    scale: {{reference: {{note: C6, diameter: 20 mm}}}}
"""


def _spec(name: str, material: str = "tin") -> str:
    return SMALL.format(name=json.dumps(name), material=json.dumps(material))


def _everything(root: Path) -> list[Path]:
    return sorted(p for p in root.rglob("*"))


def _inside(folder: Path, path: Path) -> bool:
    return path.resolve().is_relative_to(folder.resolve())


@pytest.mark.parametrize("name", [
    "../../etc", "../escaped", "/tmp/x", "..", ".", "a/../../b", "C:\\Windows\\x",
    "\u202e../x", "ＡＢＣ ../", "~/x", "...",
], ids=repr)
def test_instrument_name_builds_inside_the_output_folder(name: str, tmp_path: Path) -> None:
    out = tmp_path / "out"
    folder = build(_spec(name), "safety.yaml", out, Overrides(part_files=True))
    assert folder.parent.resolve() == out.resolve()
    assert folder.name and "/" not in folder.name and "\\" not in folder.name
    assert folder.name not in {".", ".."} and not folder.name.startswith(".")
    assert sorted(p.name for p in tmp_path.iterdir()) == ["out"]  # nothing beside it
    for path in _everything(out):
        assert _inside(out, path), path
    assert (folder / "resolved.json").is_file()


def test_absolute_instrument_name_does_not_reach_that_path(tmp_path: Path) -> None:
    target = tmp_path / "elsewhere"
    out = tmp_path / "out"
    build(_spec(str(target)), "safety.yaml", out, Overrides())
    assert not target.exists()
    assert sorted(p.name for p in tmp_path.iterdir()) == ["out"]


def test_part_files_land_inside_the_output_folder(tmp_path: Path) -> None:
    out = tmp_path / "out"
    folder = build(_spec("../../Parts test", material="../../../sheet"), "safety.yaml", out,
                   Overrides(part_files=True))
    parts = sorted((folder / "parts").glob("*.dxf"))
    assert {p.stem for p in parts} >= {"tubes-holder", "pipe-C6-body"}
    for path in _everything(tmp_path):
        assert path == out or _inside(out, path), path
    for path in parts:
        assert path.parent == folder / "parts"
    sheets = sorted(folder.glob("sheet-*.dxf"))
    assert sheets and all(_inside(folder, p) and "/" not in p.name for p in sheets)
    manifest = json.loads((folder / "manifest.json").read_text(encoding="utf-8"))
    for entry in manifest["files"]:
        assert not entry["path"].startswith("/") and ".." not in entry["path"].split("/")
        assert (folder / entry["path"]).is_file()


def test_output_folder_that_is_a_link_elsewhere_is_not_written_through(tmp_path: Path) -> None:
    # Someone replaced the output folder by a link to another place: the build must not
    # write into that place.
    elsewhere = tmp_path / "elsewhere"
    elsewhere.mkdir()
    out = tmp_path / "out"
    out.mkdir()
    (out / "link-test").symlink_to(elsewhere, target_is_directory=True)
    with pytest.raises(OutputError, match="refusing to write outside"):
        build(_spec("Link test"), "safety.yaml", out, Overrides())
    assert list(elsewhere.iterdir()) == []
    assert (out / "link-test").is_symlink()
    # on the command line: a clean usage error, no traceback
    spec = tmp_path / "safety.yaml"
    spec.write_text(_spec("Link test"))
    done = subprocess.run([sys.executable, "-m", "compiler", "build", str(spec), "-o", str(out)],
                          capture_output=True, text=True, check=False)
    assert done.returncode == 2
    assert "refusing to write outside" in done.stderr and "Traceback" not in done.stderr
