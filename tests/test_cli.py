"""The command line: exit codes, JSON problems, `python -m compiler`, a fast `check`."""

from __future__ import annotations

import json
import re
import subprocess
import sys
from fractions import Fraction
from pathlib import Path

import pytest

from compiler.cli import main

ROOT = Path(__file__).resolve().parents[1]
EXAMPLE = ROOT / "specs_examples" / "house-organ-principal.yaml"
BAD = ROOT / "tests" / "invalid" / "misspelt-env-key.yaml"


def test_check_ok(capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["check", str(EXAMPLE)]) == 0
    assert "ok" in capsys.readouterr().err


def test_check_json(capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["check", "--json", str(BAD), str(EXAMPLE)]) == 1
    problems = json.loads(capsys.readouterr().out)
    # the misspelt key, and (independently) the pipes this fragment of a spec lacks
    assert [p["message"] for p in problems] == ["the spec has no pipes",
                                                "unknown key `humidty` in environment"]
    assert problems[1] == {
        "file": str(BAD), "line": 5, "col": 3, "severity": "error", "category": "schema",
        "message": "unknown key `humidty` in environment",
        "hint": "did you mean `humidity`? valid keys here: `co2`, `humidity`, `pressure`, "
                "`sound_speed`, `temperature`"}


def test_usage_errors() -> None:
    assert main([]) == 2
    assert main(["frobnicate"]) == 2
    assert main(["check"]) == 2


def test_python_dash_m_is_the_same_program() -> None:
    done = subprocess.run([sys.executable, "-m", "compiler", "check", str(BAD)],
                          capture_output=True, text=True, cwd=ROOT, check=False)
    assert done.returncode == 1
    assert f"{BAD}:5:3: error: unknown key `humidty`" in done.stderr


def test_check_imports_no_heavy_modules() -> None:
    code = (f"import sys; from compiler.cli import main; main(['check', {str(EXAMPLE)!r}]); "
            "print(sorted(m for m in ('numpy', 'ezdxf', 'reportlab', 'shapely') "
            "if m in sys.modules))")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          cwd=ROOT, check=True)
    assert done.stdout.strip() == "[]"


def test_resolve_json_is_deterministic(capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["resolve", "--json", str(EXAMPLE)]) == 0
    first = capsys.readouterr().out
    assert main(["resolve", "--json", str(EXAMPLE)]) == 0
    assert capsys.readouterr().out == first
    data = json.loads(first)
    assert data["pipes"][0]["id"] == "principal-4-C3"
    assert len(data["pipes"]) == 37


def test_resolve_table(capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["resolve", str(EXAMPLE)]) == 0
    out = capsys.readouterr().out
    assert "note  target Hz  predicted Hz" in out
    assert "\nC3 " in out and "\nC6 " in out


def test_resolve_table_shows_inches_for_inch_specs(tmp_path: Path,
                                                   capsys: pytest.CaptureFixture[str]) -> None:
    # 1 in = 25.4 mm exactly (international yard and pound agreement, 1959).
    spec = tmp_path / "inch.yaml"
    spec.write_text((ROOT / "specs_examples" / "blown-stopped-tubes.yaml").read_text()
                    .replace("units: mm", "units: in").replace("precision: 0.1 mm", ""))
    assert main(["resolve", str(spec)]) == 0
    lines = capsys.readouterr().out.splitlines()
    header = next(ln for ln in lines if ln.startswith("note "))
    assert re.search(r"speaking in +cut in +section in +mouth in +cut-up in +toe in$",
                     header.rstrip())
    c4 = next(ln for ln in lines if ln.startswith("C4 "))
    cut_mm = float(c4.split()[5])
    # the cut length in inches (its column is right-aligned under "cut in"), in 32nds (the
    # default precision of a spec in inches): "8 15/32" or "8"
    end = header.index("cut in") + len("cut in")
    shown = re.search(r"  (\d+)(?: (\d+)/(\d+))?$", c4[:end])
    assert shown is not None
    whole, num, den = shown.group(1), shown.group(2), shown.group(3)
    cut_in = Fraction(int(whole)) + (Fraction(int(num), int(den)) if num else 0)
    assert 32 % cut_in.denominator == 0
    assert float(cut_in) == pytest.approx(cut_mm / 25.4, abs=1 / 64 + 0.05 / 25.4)
    # the tube's bore in inches too, under "section in"
    end = header.index("section in") + len("section in")
    bore = re.search(r"ø(\d+/\d+|\d+(?: \d+/\d+)?)$", c4[:end])
    bore_mm = float(c4.split()[6].removeprefix("ø"))
    assert bore is not None
    assert float(sum(Fraction(p) for p in bore.group(1).split())) == pytest.approx(
        bore_mm / 25.4, abs=1 / 64 + 0.05 / 25.4)


def test_build_into_a_file_is_a_usage_error(tmp_path: Path,
                                            capsys: pytest.CaptureFixture[str]) -> None:
    blocker = tmp_path / "not-a-folder"
    blocker.write_text("x")
    assert main(["build", str(EXAMPLE), "-o", str(blocker)]) == 2
    err = capsys.readouterr().err
    assert "cannot write the output" in err and "Traceback" not in err
    assert blocker.read_text() == "x"


def _ascii_terminal(args: list[str], cwd: Path) -> subprocess.CompletedProcess[str]:
    import os

    env = {**os.environ, "PYTHONIOENCODING": "ascii"}
    return subprocess.run([sys.executable, "-m", "compiler", *args], capture_output=True,
                          text=True, encoding="ascii", errors="strict", cwd=cwd, env=env,
                          check=False)


def test_a_terminal_without_the_characters_gets_escapes_not_a_traceback(tmp_path: Path) -> None:
    # PYTHONIOENCODING=ascii stands for a terminal that cannot show ′ or ö.
    text = (ROOT / "specs_examples" / "blown-stopped-tubes.yaml").read_text(encoding="utf-8")
    spec = tmp_path / "tubes.yaml"
    spec.write_text(text.replace("instrument: Riverside workshop stopped tubes",
                                 "instrument: Röhren für 4′ und 2′ 😀"), encoding="utf-8")
    table = _ascii_terminal(["resolve", str(spec)], tmp_path)
    assert table.returncode == 0 and "Traceback" not in table.stderr
    assert "R\\xf6hren f\\xfcr 4\\u2032" in table.stdout
    as_json = _ascii_terminal(["resolve", "--json", str(spec)], tmp_path)
    assert as_json.returncode == 0, as_json.stderr
    assert json.loads(as_json.stdout)["instrument"] == "Röhren für 4′ und 2′ 😀"
    bad = tmp_path / "bad.yaml"
    bad.write_text(text.replace("environment:", "größe: 4′\nenvironment:"), encoding="utf-8")
    check = _ascii_terminal(["check", str(bad)], tmp_path)
    assert check.returncode == 1 and "Traceback" not in check.stderr
    assert "unknown key `gr\\xf6\\xdfe`" in check.stderr
    problems = _ascii_terminal(["check", "--json", str(bad)], tmp_path)
    assert json.loads(problems.stdout)[0]["message"] == "unknown key `größe` in the spec"
    built = _ascii_terminal(["build", str(spec), "-o", str(tmp_path / "out")], tmp_path)
    assert built.returncode == 0 and "Traceback" not in built.stderr


def test_build_warns_when_it_replaces_another_specs_output(
        tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    text = (ROOT / "specs_examples" / "blown-stopped-tubes.yaml").read_text(encoding="utf-8")
    first, second = tmp_path / "tubes.yaml", tmp_path / "tubes-wider.yaml"
    first.write_text(text, encoding="utf-8")
    second.write_text(text.replace("alu-20, alu-25]", "alu-25]"), encoding="utf-8")
    out = tmp_path / "out"
    assert main(["build", str(first), "-o", str(out)]) == 0
    assert "warning" not in capsys.readouterr().err
    assert main(["build", str(second), "-o", str(out)]) == 0
    err = capsys.readouterr().err
    # at the spec's `instrument:` (line 12, its value at column 13)
    assert (f"{second}:12:13: warning: replacing " in err and "the output of tubes.yaml" in err
            and "`Riverside workshop stopped tubes`" in err)
    # the same spec again, or edited: its own output, no warning
    second.write_text(text.replace("alu-20, alu-25]", "alu-20]"), encoding="utf-8")
    assert main(["build", str(second), "-o", str(out)]) == 0
    assert main(["build", str(second), "-o", str(out)]) == 0
    assert "warning" not in capsys.readouterr().err


def test_resolve_reports_the_problems_of_every_group(tmp_path: Path,
                                                     capsys: pytest.CaptureFixture[str]) -> None:
    spec = tmp_path / "two.yaml"
    spec.write_text(
        "boresmith: 1\ninstrument: Two bad groups\nstock:\n"
        "  alu: {material: aluminium, tube: {outside_diameter: 20 mm, wall: 1 mm, "
        "length: 1000 mm}}\n"
        "tube_sets:\n"
        "  - {id: a, family: stopped-tube, stock: alu, notes: [C2]}\n"   # far too long
        "  - {id: b, family: stopped-tube, stock: alu, notes: [C9]}\n",  # far too short
        encoding="utf-8")
    assert main(["resolve", str(spec)]) == 1
    err = capsys.readouterr().err
    assert "tube set `a`: no listed stock can make C2" in err
    assert "tube set `b`: no listed stock can make C9" in err


def test_resolve_table_gives_the_cut_up_sensitivity_per_sixteenth_inch(
        tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    # A flue rank in inches: 1 mm more cut-up moves the pitch by x cents, so 1/16 in
    # (1.5875 mm: 1 in = 25.4 mm exactly, international yard and pound agreement, 1959) by
    # 1.5875·x; the column stands beside the other inch columns.
    spec = tmp_path / "inch.yaml"
    spec.write_text((ROOT / "specs_examples" / "house-organ-principal.yaml").read_text()
                    .replace("units: mm", "units: in").replace("precision: 0.1 mm", "")
                    .replace("notes: C3..C6", "notes: C3..E3"))
    assert main(["resolve", str(spec)]) == 0
    lines = capsys.readouterr().out.splitlines()
    header = next(ln for ln in lines if ln.startswith("note ")).split("  ")
    header = [h.strip() for h in header if h.strip()]
    assert header[-1] == "cents/1/16 in cut-up"
    for row in (ln for ln in lines if ln[:3] in ("C3 ", "D3 ", "E3 ")):
        cells = row.split()
        per_mm = float(cells[header.index("cents/mm cut-up")])
        assert float(cells[-1]) == pytest.approx(per_mm * 1.5875, abs=0.011)


def test_build_warns_of_a_name_the_build_sheet_cannot_print(
        tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    # The build sheet's font (DejaVu Sans) covers Latin, Greek and Cyrillic but no Chinese
    # characters (its coverage as published with the font, from memory): a Chinese name
    # would print as '???' unseen. Names in Polish, Czech and German with the foot mark
    # print whole and draw no warning.
    text = (ROOT / "specs_examples" / "blown-stopped-tubes.yaml").read_text(encoding="utf-8")
    spec = tmp_path / "tubes.yaml"
    spec.write_text(text.replace("instrument: Riverside workshop stopped tubes",
                                 "instrument: Łódź Dvořák Große Орган 8′"), encoding="utf-8")
    assert main(["build", str(spec), "-o", str(tmp_path / "out")]) == 0
    assert "warning" not in capsys.readouterr().err
    spec.write_text(text.replace("instrument: Riverside workshop stopped tubes",
                                 "instrument: 竹管 Riverside"), encoding="utf-8")
    assert main(["build", str(spec), "-o", str(tmp_path / "out")]) == 0
    err = capsys.readouterr().err
    assert (f"{spec}:12:13: warning: the instrument's name, `竹管 Riverside`, has characters "
            "the build sheet's font cannot print (竹 管)") in err
    # kept with the spec's warnings: an up-to-date rebuild says it again, --strict refuses
    assert main(["build", str(spec), "-o", str(tmp_path / "out")]) == 0
    assert "cannot print (竹 管)" in capsys.readouterr().err
    assert main(["build", str(spec), "-o", str(tmp_path / "strict"), "--strict"]) == 1
    assert f"{spec}:12:13: error: the instrument's name" in capsys.readouterr().err
