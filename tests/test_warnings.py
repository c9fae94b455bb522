"""One path for warnings: whichever stage finds one, it is a ``Note`` at a spec position,
reported each once and in order, printed as ``FILE:LINE:COL: warning: ...``, kept in the
manifest (and repeated by a rebuild that is up to date), and an error with ``--strict``."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from compiler.build import build
from compiler.cli import main
from compiler.errors import STRICT_HINT, Note, Position, SpecError, in_order, refuse_if_strict
from compiler.options import Overrides

ROOT = Path(__file__).resolve().parents[1]
FLUTE = ROOT / "specs_examples" / "duct-flute-d.yaml"


def _far_a4(tmp_path: Path, name: str = "whistle.yaml") -> Path:
    """The whistle tuned to A4 = 500 Hz: a warning at the value (line 18, column 7)."""
    text = FLUTE.read_text(encoding="utf-8")
    assert text.splitlines()[17] == "  a4: 440 Hz"
    path = tmp_path / "specs" / name
    path.parent.mkdir(exist_ok=True)
    path.write_text(text.replace("  a4: 440 Hz", "  a4: 500 Hz"), encoding="utf-8")
    return path


def test_a_note_as_printed_and_as_kept() -> None:
    note = Note(Position("specs/rank.yaml", 12, 5), "cut-up: low")
    assert note.format() == "specs/rank.yaml:12:5: warning: cut-up: low"
    assert note.shown() == "rank.yaml:12:5: warning: cut-up: low"
    assert Note.from_shown(note.shown(), "specs/rank.yaml") == note
    assert Note.from_shown(note.shown(), "C:\\work\\rank.yaml").position == Position(
        "C:\\work\\rank.yaml", 12, 5)


def test_each_once_in_order_and_errors_when_strict() -> None:
    a = Note(Position("r.yaml", 9, 1), "b")
    b = Note(Position("r.yaml", 3, 7), "a")
    assert in_order([a, b, a]) == (b, a)
    refuse_if_strict([a, b], strict=False)
    with pytest.raises(SpecError) as info:
        refuse_if_strict([a, b, a], strict=True)
    assert [(p.position, p.hint) for p in info.value.problems] == [
        (b.position, STRICT_HINT), (a.position, STRICT_HINT)]
    assert str(info.value).startswith("r.yaml:3:7: error: a")


def test_a_build_reports_them_keeps_them_and_repeats_them(tmp_path: Path) -> None:
    spec = _far_a4(tmp_path)
    told: list[Note] = []
    folder = build(spec.read_bytes(), str(spec), tmp_path / "out", Overrides(),
                   warn=told.append)
    assert told[0].position == Position(str(spec), 18, 7)  # and notes that miss their goal
    assert "A4 = 500 Hz is far from any pitch standard" in told[0].message
    assert tuple(told) == in_order(told)
    manifest = json.loads((folder / "manifest.json").read_text(encoding="utf-8"))
    assert manifest["warnings"] == [n.shown() for n in told]
    said: list[str] = []
    again: list[Note] = []
    assert build(spec.read_bytes(), str(spec), tmp_path / "out", Overrides(),
                 progress=said.append, warn=again.append) == folder
    assert said == ["up to date"] and again == told


def test_strict_refuses_them_and_writes_nothing(tmp_path: Path) -> None:
    spec = _far_a4(tmp_path)
    with pytest.raises(SpecError) as info:
        build(spec.read_bytes(), str(spec), tmp_path / "out", Overrides(strict=True))
    assert info.value.problems[0].hint == STRICT_HINT
    assert not (tmp_path / "out" / "fenwick-road-whistle-in-d").exists()


def test_replacing_another_specs_output_is_a_warning_like_the_others(tmp_path: Path) -> None:
    first, second = FLUTE.read_bytes(), FLUTE.read_bytes().replace(b"# ", b"#  ", 1)
    out = tmp_path / "out"
    folder = build(first, "first.yaml", out, Overrides())
    before = (folder / "manifest.json").read_bytes()
    # with --strict it is an error, and the other spec's output stays as it was
    with pytest.raises(SpecError) as info:
        build(second, "second.yaml", out, Overrides(strict=True))
    (problem,) = info.value.problems
    assert problem.position == Position("second.yaml", 8, 13)  # the `instrument:` value
    assert "the output of first.yaml" in problem.message and problem.hint == STRICT_HINT
    assert (folder / "manifest.json").read_bytes() == before
    told: list[Note] = []
    build(second, "second.yaml", out, Overrides(), warn=told.append)
    assert [n.position for n in told] == [Position("second.yaml", 8, 13)]
    # it is about that run, not the spec: the manifest does not keep it
    assert json.loads((folder / "manifest.json").read_text(encoding="utf-8"))["warnings"] == []


def test_a_spec_of_the_same_name_in_another_folder_is_another_spec(tmp_path: Path) -> None:
    # A/spec.yaml and B/spec.yaml naming the same instrument: the file name alone would
    # take them for one spec and let them overwrite each other's output without a word.
    text = FLUTE.read_bytes()
    a, b = tmp_path / "A" / "spec.yaml", tmp_path / "B" / "spec.yaml"
    for path, data in ((a, text), (b, text.replace(b"# ", b"#  ", 1))):
        path.parent.mkdir()
        path.write_bytes(data)
    out = tmp_path / "out"
    told: list[Note] = []
    folder = build(a.read_bytes(), str(a), out, Overrides(), warn=told.append)
    assert told == []
    build(b.read_bytes(), str(b), out, Overrides(), warn=told.append)
    (note,) = told
    assert note.position == Position(str(b), 8, 13)  # the `instrument:` value
    assert "the output of spec.yaml in another folder" in note.message
    # the same spec edited, rebuilt: its own output, no warning
    told.clear()
    b.write_bytes(b.read_bytes().replace(b"#  ", b"#   ", 1))
    build(b.read_bytes(), str(b), out, Overrides(), warn=told.append)
    assert told == []
    # the manifest names which file without a path: neither absolute nor the folders' names
    kept = (folder / "manifest.json").read_text(encoding="utf-8")
    assert str(tmp_path) not in kept and '"B' not in kept and "/B" not in kept
    # and it is the same wherever the project is: a copy elsewhere gives the same manifest
    moved = tmp_path / "elsewhere"
    moved.mkdir()
    (moved / "B").mkdir()
    (moved / "B" / "spec.yaml").write_bytes(b.read_bytes())
    again = build(b.read_bytes(), str(moved / "B" / "spec.yaml"), moved / "out", Overrides())
    assert (again / "manifest.json").read_text(encoding="utf-8") == kept


def test_the_command_line_prints_them_the_same_way(tmp_path: Path,
                                                   capsys: pytest.CaptureFixture[str]) -> None:
    spec = _far_a4(tmp_path)
    assert main(["resolve", str(spec)]) == 0
    err = capsys.readouterr().err
    assert err.startswith(f"{spec}:18:7: warning: A4 = 500 Hz is far from")
    assert main(["build", str(spec), "-o", str(tmp_path / "out")]) == 0
    assert f"{spec}:18:7: warning: A4 = 500 Hz" in capsys.readouterr().err
    assert main(["resolve", "--strict", str(spec)]) == 1
    err = capsys.readouterr().err
    assert f"{spec}:18:7: error: A4 = 500 Hz" in err and f"hint: {STRICT_HINT}" in err


def test_diff_reports_each_specs_warnings_the_same_way(
        tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    # diff resolves both specs: their warnings are printed as resolve prints them, not lost
    old = _far_a4(tmp_path, "old.yaml")
    new = _far_a4(tmp_path, "new.yaml")
    new.write_text(new.read_text(encoding="utf-8").replace("  a4: 500 Hz", "  a4: 501 Hz"),
                   encoding="utf-8")
    assert main(["diff", str(old), str(new)]) == 1
    captured = capsys.readouterr()
    assert f"{old}:18:7: warning: A4 = 500 Hz is far from" in captured.err
    assert f"{new}:18:7: warning: A4 = 501 Hz is far from" in captured.err
    assert "warning" not in captured.out  # the report itself stays clean
    assert main(["diff", "--json", str(old), str(new)]) == 1
    captured = capsys.readouterr()
    assert json.loads(captured.out)["summary"] and f"{new}:18:7: warning:" in captured.err
    # with --strict they are errors: diff's trouble, exit 2, and no report
    assert main(["diff", "--strict", str(old), str(new)]) == 2
    captured = capsys.readouterr()
    assert f"{new}:18:7: error: A4 = 501 Hz" in captured.err and captured.out == ""
    assert f"hint: {STRICT_HINT}" in captured.err
