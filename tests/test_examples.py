"""End to end: every bundled example builds in strict mode, its manifest matches the files,
and a second build gives the same bytes."""

from __future__ import annotations

import hashlib
import json
from pathlib import Path

import pytest

from compiler.build import build
from compiler.options import Overrides

EXAMPLES = sorted((Path(__file__).resolve().parents[1] / "specs_examples").glob("*.yaml"))


def _tree(folder: Path) -> dict[str, bytes]:
    return {p.relative_to(folder).as_posix(): p.read_bytes()
            for p in sorted(folder.rglob("*")) if p.is_file()}


def test_at_least_the_six_instruments() -> None:
    assert len(EXAMPLES) >= 6


@pytest.mark.parametrize("spec", EXAMPLES, ids=lambda p: p.stem)
def test_example_builds_strict(spec: Path, tmp_path: Path) -> None:
    folder = build(spec.read_bytes(), str(spec), tmp_path, Overrides(strict=True))
    files = _tree(folder)
    assert {"resolved.json", "build-sheet.pdf", "cut-list.csv", "manifest.json"} <= set(files)
    manifest = json.loads(files["manifest.json"])
    listed = {f["path"]: f["sha256"] for f in manifest["files"]}
    assert set(listed) == set(files) - {"manifest.json"}
    for name, digest in listed.items():
        assert hashlib.sha256(files[name]).hexdigest() == digest
    assert manifest["spec_sha256"] == hashlib.sha256(spec.read_bytes()).hexdigest()


def test_same_spec_same_bytes(tmp_path: Path) -> None:
    spec = next(p for p in EXAMPLES if p.stem == "house-organ-principal")
    first = _tree(build(spec.read_bytes(), str(spec), tmp_path / "a", Overrides()))
    second = _tree(build(spec.read_bytes(), str(spec), tmp_path / "b", Overrides()))
    assert first == second


def test_failed_build_keeps_the_previous_output(tmp_path: Path) -> None:
    spec = next(p for p in EXAMPLES if p.stem == "blown-stopped-tubes")
    folder = build(spec.read_bytes(), str(spec), tmp_path, Overrides())
    before = _tree(folder)
    broken = spec.read_text().replace("count: 15", "count: 30")  # notes no tube can reach
    with pytest.raises(Exception, match="no listed stock"):
        build(broken, str(spec), tmp_path, Overrides())
    assert _tree(folder) == before
    assert sorted(p.name for p in tmp_path.iterdir()) == [".boresmith-cache", folder.name]


def test_unchanged_rebuild_is_skipped_and_a_damaged_output_is_rebuilt(tmp_path: Path) -> None:
    spec = next(p for p in EXAMPLES if p.stem == "blown-stopped-tubes")
    messages: list[str] = []
    folder = build(spec.read_bytes(), str(spec), tmp_path, Overrides(), messages.append)
    before = _tree(folder)
    messages.clear()
    build(spec.read_bytes(), str(spec), tmp_path, Overrides(), messages.append)
    assert messages == ["up to date"]
    (folder / "cut-list.csv").write_text("damaged")
    messages.clear()
    build(spec.read_bytes(), str(spec), tmp_path, Overrides(), messages.append)
    assert "up to date" not in messages
    assert _tree(folder) == before
    # other options are another build
    messages.clear()
    build(spec.read_bytes(), str(spec), tmp_path, Overrides(paper="letter"), messages.append)
    assert "up to date" not in messages


def test_cached_rebuild_gives_the_same_bytes_as_a_cold_one(tmp_path: Path) -> None:
    spec = next(p for p in EXAMPLES if p.stem == "stopped-wood-gedackt")
    build(spec.read_bytes(), str(spec), tmp_path / "warm", Overrides())
    changed = spec.read_text().replace("travel: 25 mm", "travel: 30 mm")
    warm = _tree(build(changed, str(spec), tmp_path / "warm", Overrides()))
    cold = _tree(build(changed, str(spec), tmp_path / "cold", Overrides(), use_cache=False))
    assert warm == cold
    assert not (tmp_path / "cold" / ".boresmith-cache").exists()
