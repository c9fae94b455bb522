"""The bad-spec corpus: every file under tests/invalid/ must fail `boresmith check` (or
`resolve`, where the file says `# stage: resolve`, or `build`, where it says
`# stage: build`) with exit 1, the exact line and column in its `# expect:` header, a
message containing the expected words, a hint, and no traceback. A failed build writes
nothing into its output folder.
"""

from __future__ import annotations

import re
import time
from pathlib import Path

import pytest

from compiler.cache import FOLDER as CACHE_FOLDER
from compiler.cli import main

CORPUS = Path(__file__).resolve().parents[1] / "invalid"
FILES = sorted(CORPUS.glob("*.yaml"))
HEADER = re.compile(r"# expect: (\d+):(\d+) (.+)")


def _expectation(path: Path) -> tuple[int, int, str, str]:
    lines = path.read_text(encoding="utf-8", errors="replace").splitlines() or [""]
    match = HEADER.match(lines[0])
    assert match, f"{path.name}: first line must be '# expect: LINE:COL words'"
    stages = [line.strip()[len("# stage: "):] for line in lines
              if line.strip().startswith("# stage: ")]
    stage = stages[0] if stages else "check"
    assert stage in STAGE_SECONDS, f"{path.name}: unknown stage {stage!r}"
    return int(match[1]), int(match[2]), match[3], stage


STAGE_SECONDS = {"check": 1.0, "resolve": 10.0, "build": 10.0}
"""Time allowed per case: loader limits must stop an alias bomb at once; resolving a flute
runs the hole solver."""


def test_corpus_is_large_enough() -> None:
    assert len(FILES) >= 85
    stages = [_expectation(path)[3] for path in FILES]
    assert stages.count("resolve") >= 20 and stages.count("build") >= 3


@pytest.mark.parametrize("path", FILES, ids=[p.stem for p in FILES])
def test_bad_spec(path: Path, tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    line, col, words, stage = _expectation(path)
    out = tmp_path / "out"
    out.mkdir()
    argv = [stage, str(path)] + (["-o", str(out)] if stage == "build" else [])
    started = time.perf_counter()
    code = main(argv)
    elapsed = time.perf_counter() - started
    err = capsys.readouterr().err
    assert code == 1, err
    assert "Traceback" not in err
    starts = [ln for ln in err.splitlines() if ln.startswith(f"{path}:{line}:{col}: error: ")]
    assert starts, err
    assert words in err, err
    assert "hint:" in err or path.stem in {"empty-file"}, err
    for problem in (ln for ln in err.splitlines() if ": error: " in ln):
        assert problem.startswith(f"{path}:"), problem  # every problem points into the spec
    assert elapsed < STAGE_SECONDS[stage]
    # A spec error writes no output folder and leaves no temporary folder. The build cache
    # may keep the groups that did resolve (they speed up the rebuild after the fix).
    assert sorted(p.name for p in out.iterdir() if p.name != CACHE_FOLDER) == []


def test_oversized_file(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    spec = tmp_path / "huge.yaml"
    spec.write_text("boresmith: 1\ninstrument: Big\n" + "# padding\n" * 300_000)
    assert main(["check", str(spec)]) == 1
    err = capsys.readouterr().err
    assert f"{spec}:1:1: error: the file is " in err and "limit" in err


def test_missing_file_is_usage_error(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["check", str(tmp_path / "nope.yaml")]) == 2
    assert "no such file" in capsys.readouterr().err


def test_all_problems_reported_at_once(tmp_path: Path,
                                       capsys: pytest.CaptureFixture[str]) -> None:
    spec = tmp_path / "many.yaml"
    spec.write_text("boresmith: 1\ninstrument: Many\nunits: furlong\n"
                    "environment:\n  temprature: 20 C\ntuning:\n  temperament: welltempered\n")
    assert main(["check", str(spec)]) == 1
    lines = [ln for ln in capsys.readouterr().err.splitlines() if ": error: " in ln]
    assert [ln.split(": error")[0] for ln in lines] == [
        f"{spec}:1:1", f"{spec}:3:8", f"{spec}:5:3", f"{spec}:7:16"]
    assert "the spec has no pipes" in lines[0]


def test_every_independent_problem_in_one_run(tmp_path: Path,
                                              capsys: pytest.CaptureFixture[str]) -> None:
    # YAML, schema, unit and reference problems in different places: each is reported, and
    # a value the schema refused is not judged again by the unit reader.
    spec = tmp_path / "many.yaml"
    spec.write_text(
        "boresmith: 1\n"
        "instrument: Many\n"
        "environment: {temprature: 20 C}\n"                               # 3: schema
        "stock:\n"
        "  alu: {material: aluminium, tube: {outside_diameter: 20 mmm, wall: 1 mm}}\n"  # 5: unit
        "tube_sets:\n"
        "  - id: a\n"
        "    family: stopped-tube\n"
        "    stock: steel\n"                                              # 9: reference
        "    notes: [C5, D5, C5, D5]\n"                                   # 10: two repeats
        "    harmonic: two\n"                                             # 11: schema
        "  - id: b\n"
        "    family: open-tube\n"
        "    stock: alu\n"
        "    notes: C5..C6\n"
        "    notes: C4..C5\n"                                             # 16: duplicate key
        "    end_correction: {model: unflanged, k: 3 mm}\n",             # 17: unit
        encoding="utf-8")
    assert main(["check", str(spec)]) == 1
    err = capsys.readouterr().err
    where = [ln.split(": error: ")[0].rsplit(":", 2)[1:] for ln in err.splitlines()
             if ": error: " in ln]
    assert [int(line) for line, _ in where] == [3, 5, 9, 10, 10, 11, 16, 17], err
    assert "unknown key `temprature`" in err and "duplicate key `notes`" in err
    assert "the note C5 is listed twice" in err and "the note D5 is listed twice" in err
    assert "no stock named `steel`" in err and "give two of" not in err
    assert sum("harmonic" in ln for ln in err.splitlines() if ": error: " in ln) == 1


def test_a_refused_name_is_reported_once_and_a_refused_id_is_not_called_none(
        tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    # A stock name the schema refuses (a space) is reported at the name, not again at the
    # rank that uses it; a rank whose id is refused is called by its place (`rank 2`), never
    # `None`; the id's hint says which characters an id takes.
    spec = tmp_path / "names.yaml"
    rank = ("  - id: {id}\n"
            "    family: open-flue\n"
            "    construction: rolled-sheet\n"
            "    stock: {stock}\n"
            "    notes: C4..C5\n"
            "    scale: {{reference: {{note: C4, diameter: 55 mm}}, halving_interval: 16}}\n"
            "    mouth: {{width: 1/4, cutup: 1/4}}\n")
    spec.write_text(
        "boresmith: 1\n"
        "instrument: Names\n"
        "stock:\n"
        "  zinc 07: {material: zinc, sheet: {thickness: 0.7 mm}}\n"        # 4: refused name
        "ranks:\n"
        + rank.format(id="open-2ft", stock="zinc 07")                       # 6..12
        + rank.format(id="große-flöte", stock="zink-07")                    # 13: refused id
        + rank.format(id="große-flöte2", stock="zink-07"),                  # 20: refused id
        encoding="utf-8")
    assert main(["check", str(spec)]) == 1
    err = capsys.readouterr().err
    errors = [ln for ln in err.splitlines() if ": error: " in ln]
    assert [ln.split(": error: ")[0].rsplit(":", 2)[1] for ln in errors] == [
        "4", "13", "16", "20", "23"], err
    assert "None" not in err
    assert f"{spec}:16:12: error: rank 2: no stock named `zink-07`" in err
    assert f"{spec}:23:12: error: rank 3: no stock named `zink-07`" in err
    assert "none usable yet (see the errors at `stock:`)" in err
    assert "used twice" not in err  # two refused ids are not the same id
    assert "hint: use letters, digits, `-`, `_` and `.` only (no spaces, no accented " \
           "letters), starting with a letter or digit (it names output files)." in err
