"""Golden tests: every backend's output for a few small specs, kept as readable files that a
change must update on purpose.

Each ``tests/cases/<name>/spec.yaml`` is built (as ``spec.yaml``, so no path of the checkout
reaches the output) and every file it writes is compared with its dump in
``tests/cases/<name>/expected/`` (see ``golden_dump.py``). The cases are invented demo data,
together covering every family and construction, inch units and a survey. A change that
moves any number, label or line shows as a diff of those files; when it is meant, rewrite
them and review the diff like code:

    BORESMITH_UPDATE_GOLDEN=1 .venv/bin/python -m pytest tests/test_golden.py
"""

from __future__ import annotations

import difflib
import json
import os
import shutil
from pathlib import Path

import jsonschema
import pytest
from golden_dump import dumps_of

from compiler.build import build
from compiler.options import Overrides

ROOT = Path(__file__).resolve().parents[1]
CASES_DIR = Path(__file__).resolve().parent / "cases"
CASES = sorted(p.name for p in CASES_DIR.iterdir() if (p / "spec.yaml").is_file())
UPDATE = os.environ.get("BORESMITH_UPDATE_GOLDEN", "") not in ("", "0")
SHOWN_DIFF_LINES = 80


def _build_dumps(name: str, out_root: Path) -> dict[str, str]:
    """The dumps of every file the build writes, and ``warnings.txt``: the warnings as the
    command line prints them (left out when there are none)."""
    spec = CASES_DIR / name / "spec.yaml"
    warnings: list[str] = []
    folder = build(spec.read_bytes(), "spec.yaml", out_root, Overrides(),
                   use_cache=False, warn=lambda note: warnings.append(note.format()))
    dumps = dumps_of(folder)
    if warnings:
        dumps["warnings.txt"] = "\n".join(warnings) + "\n"
    return dumps


def _expected(name: str) -> dict[str, str]:
    folder = CASES_DIR / name / "expected"
    if not folder.is_dir():
        return {}
    return {p.relative_to(folder).as_posix(): p.read_text(encoding="utf-8")
            for p in sorted(folder.rglob("*")) if p.is_file()}


def _write_expected(name: str, dumps: dict[str, str]) -> None:
    folder = CASES_DIR / name / "expected"
    shutil.rmtree(folder, ignore_errors=True)
    for dump_name, text in dumps.items():
        path = folder / dump_name
        path.parent.mkdir(parents=True, exist_ok=True)
        path.write_text(text, encoding="utf-8", newline="\n")


def _difference(name: str, expected: dict[str, str], actual: dict[str, str]) -> str:
    lines: list[str] = []
    for dump_name in sorted(set(expected) | set(actual)):
        before, after = expected.get(dump_name), actual.get(dump_name)
        if before == after:
            continue
        if before is None:
            lines.append(f"new output file, no expected dump: {dump_name}")
        elif after is None:
            lines.append(f"expected dump, output file no longer written: {dump_name}")
        else:
            lines.extend(difflib.unified_diff(
                before.splitlines(), after.splitlines(), f"expected/{dump_name}",
                f"actual/{dump_name}", lineterm="", n=1))
    shown = lines[:SHOWN_DIFF_LINES]
    if len(lines) > SHOWN_DIFF_LINES:
        shown.append(f"... {len(lines) - SHOWN_DIFF_LINES} more lines of difference")
    return (f"golden case {name}: the output changed. If the change is meant, rewrite the "
            "expected files with `BORESMITH_UPDATE_GOLDEN=1 .venv/bin/python -m pytest "
            "tests/test_golden.py` and review their diff.\n" + "\n".join(shown))


def test_the_cases_are_there() -> None:
    assert len(CASES) >= 4
    for name in CASES:
        assert (CASES_DIR / name / "expected").is_dir() or UPDATE, (
            f"golden case {name} has no expected files: run with BORESMITH_UPDATE_GOLDEN=1")


@pytest.mark.parametrize("name", CASES)
def test_golden(name: str, tmp_path: Path) -> None:
    actual = _build_dumps(name, tmp_path)
    if UPDATE:
        _write_expected(name, actual)
    expected = _expected(name)
    if expected != actual:
        pytest.fail(_difference(name, expected, actual), pytrace=False)


def test_golden_resolved_json_follows_its_schema() -> None:
    # JSON Schema draft 2020-12 (json-schema.org), validated by the jsonschema library.
    schema = json.loads((ROOT / "schemas" / "boresmith-resolved.schema.json").read_text())
    validator = jsonschema.Draft202012Validator(schema)
    for name in CASES:
        resolved = CASES_DIR / name / "expected" / "resolved.json"
        errors = sorted(validator.iter_errors(json.loads(resolved.read_text())), key=str)
        assert not errors, f"{name}: {errors[0].message} at {list(errors[0].absolute_path)}"


def test_the_cases_cover_every_family_and_construction() -> None:
    """Every family and construction the spec language offers (its schema's enums), a
    survey, inch units, both DXF versions, part files and a warning appear in some case, so
    each backend's every path has a golden file."""
    schema = json.loads((ROOT / "schemas" / "boresmith-spec.schema.json").read_text())
    sections = schema["properties"]
    wanted = {("family", f) for section in ("ranks", "tube_sets", "flutes")
              for f in sections[section]["items"]["properties"]["family"]["enum"]}
    wanted |= {("construction", c)
               for c in sections["ranks"]["items"]["properties"]["construction"]["enum"]}
    wanted |= {("kind", "survey"), ("units", "in"), ("units", "mm"), ("part_files", True),
               ("warnings", True)}
    wanted |= {("dxf_version", v) for v in
               sections["fabrication"]["properties"]["dxf_version"]["enum"]}
    seen: set[tuple[str, object]] = set()
    for name in CASES:
        expected = CASES_DIR / name / "expected"
        resolved = json.loads((expected / "resolved.json").read_text())
        for group in resolved["groups"]:
            seen |= {("kind", group["kind"]), ("family", group["family"]),
                     ("construction", group["construction"])}
        fabrication = resolved["fabrication"]
        seen |= {("units", fabrication["units"]), ("dxf_version", fabrication["dxf_version"]),
                 ("part_files", fabrication["part_files"]),
                 ("warnings", (expected / "warnings.txt").is_file())}
    assert wanted <= seen, f"no golden case has {sorted(wanted - seen, key=str)}"
