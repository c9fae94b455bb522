"""The bad-spec corpus: every file under tests/invalid/ must fail `boresmith check` (or
`resolve`, where the file says `# stage: resolve`) with exit 1, the exact line and column
in its `# expect:` header, a message containing the expected words, and no traceback.
"""

from __future__ import annotations

import re
import time
from pathlib import Path

import pytest

from compiler.cli import main

CORPUS = Path(__file__).resolve().parents[1] / "invalid"
FILES = sorted(CORPUS.glob("*.yaml"))
HEADER = re.compile(r"# expect: (\d+):(\d+) (.+)")


def _expectation(path: Path) -> tuple[int, int, str, str]:
    lines = path.read_text(encoding="utf-8").splitlines() or [""]
    match = HEADER.match(lines[0])
    assert match, f"{path.name}: first line must be '# expect: LINE:COL words'"
    stage = "resolve" if any(line.strip() == "# stage: resolve" for line in lines) else "check"
    return int(match[1]), int(match[2]), match[3], stage


def test_corpus_is_large_enough() -> None:
    assert len(FILES) >= 30


@pytest.mark.parametrize("path", FILES, ids=[p.stem for p in FILES])
def test_bad_spec(path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    line, col, words, stage = _expectation(path)
    started = time.perf_counter()
    code = main([stage, str(path)])
    elapsed = time.perf_counter() - started
    err = capsys.readouterr().err
    assert code == 1, err
    assert "Traceback" not in err
    starts = [ln for ln in err.splitlines() if ln.startswith(f"{path}:{line}:{col}: error: ")]
    assert starts, err
    assert words in err, err
    assert "hint:" in err or path.stem in {"empty-file"}, err
    assert elapsed < 1.0  # an alias bomb or deep nesting must fail at once, not hang


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
        f"{spec}:3:8", f"{spec}:5:3", f"{spec}:7:16"]
