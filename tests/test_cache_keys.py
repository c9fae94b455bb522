"""Every cached unit of a build is computed from one frozen inputs object, which is also its
cache key: a change to any value inside it gives another key, and a cached rebuild after an
edit to the spec gives the same bytes as a cold build of the edited spec.

The first tests change every field of every kind of inputs object (down to single float
bits deep inside nested values) and check the key changes; the end-to-end tests edit the
spec where a maker would and compare a warm rebuild with a cold one.
"""

from __future__ import annotations

import copy
import inspect
import math
import os
import subprocess
import sys
from collections.abc import Iterator, Mapping
from dataclasses import FrozenInstanceError, fields, is_dataclass
from fractions import Fraction
from pathlib import Path
from types import MappingProxyType

import pytest
from reportlab.lib.colors import Color

from compiler.build import BuildInputs, build, compile_text
from compiler.cache import FOLDER, key_of
from compiler.emit import dxf, pdf
from compiler.emit.pdf.style import frame_for
from compiler.geometry.layout import PipePartsInputs, pipe_parts
from compiler.options import Overrides
from compiler.resolve.inputs import GroupInputs, group_inputs
from compiler.spec import load_spec

ROOT = Path(__file__).resolve().parents[1]
EXAMPLES = ROOT / "specs_examples"
SAMPLES_PER_FIELD = 24
"""Changed copies tried per field: spread evenly over the field's leaves."""


def _leaves(value: object) -> int:
    """How many single values ``_changes`` can change inside ``value``."""
    if is_dataclass(value) and not isinstance(value, type):
        return sum(_leaves(getattr(value, f.name)) for f in fields(value))
    if isinstance(value, tuple):
        return 1 + sum(_leaves(item) for item in value)
    if isinstance(value, Mapping):
        return 1 + sum(_leaves(item) for item in value.values())
    return 1


def _changes(value: object) -> Iterator[object]:
    """Copies of ``value`` with one value inside it changed, for every value inside it
    (a float by its smallest step, so a ``repr`` that rounds would be caught)."""
    if isinstance(value, bool):
        yield not value
    elif isinstance(value, float):
        yield math.nextafter(value, math.inf) if math.isfinite(value) else 0.0
    elif isinstance(value, (int, Fraction)):
        yield value + 1
    elif isinstance(value, (str, bytes)):
        yield value + ("x" if isinstance(value, str) else b"x")
    elif value is None:
        yield 0
    elif is_dataclass(value) and not isinstance(value, type):
        for f in fields(value):
            for changed in _changes(getattr(value, f.name)):
                made = copy.copy(value)
                object.__setattr__(made, f.name, changed)
                yield made
    elif isinstance(value, tuple):
        yield value[:-1] if value else (0,)
        for i, item in enumerate(value):
            for changed in _changes(item):
                yield value[:i] + (changed,) + value[i + 1:]
    elif isinstance(value, Color):
        # reportlab writes a colour to the precision of its repr (5 decimals), the key's
        yield Color(value.red + 0.01, value.green, value.blue, value.alpha)
    elif isinstance(value, Mapping):
        yield MappingProxyType({**value, "added": None})
        for name, item in value.items():
            for changed in _changes(item):
                yield MappingProxyType({**value, name: changed})
    else:
        raise TypeError(f"no way to change a {type(value).__name__} is known: add one, and "
                        "check that its repr shows every value it holds")


def assert_every_field_is_in_the_key(inputs: object) -> int:
    """Change every field of ``inputs`` (a sample of the values inside each) and check the
    key changes each time; returns how many changes were tried."""
    assert is_dataclass(inputs) and not isinstance(inputs, type)
    with pytest.raises(FrozenInstanceError):
        setattr(inputs, fields(inputs)[0].name, None)  # inputs must be frozen
    before = key_of(inputs)
    tried = 0
    for f in fields(inputs):
        assert f.repr, f"{type(inputs).__name__}.{f.name} is left out of the repr, the key"
        value = getattr(inputs, f.name)
        every = max(1, _leaves(value) // SAMPLES_PER_FIELD)
        for k, changed in enumerate(_changes(value)):
            if k % every:
                continue
            made = copy.copy(inputs)
            object.__setattr__(made, f.name, changed)
            assert key_of(made) != before, f"a change inside {f.name} keeps the key"
            tried += 1
    return tried


def _spec(name: str) -> tuple[str, Path]:
    path = EXAMPLES / name
    return path.read_text(encoding="utf-8"), path


def test_each_cached_computation_takes_only_its_inputs() -> None:
    """The functions whose results are cached receive their inputs object and nothing else
    (a page body draws from its own fields and the frame; the sheet's cache only replays
    bodies)."""
    from compiler.resolve import flue, flutes, surveys, tubes

    for made_by in (flue.resolve_rank, tubes.resolve_tube_set, flutes.resolve_flute,
                    surveys.resolve_survey, pipe_parts, dxf.render):
        assert list(inspect.signature(made_by).parameters) in (["inputs"], ["drawing"])
    assert list(inspect.signature(pdf.draw_sheet).parameters) == ["sheet", "cache"]


# --- every field of every inputs object is in its key -------------------------------------

GROUP_EXAMPLES = ["house-organ-principal.yaml", "blown-stopped-tubes.yaml",
                  "duct-flute-d.yaml", "measured-reed-pipe-and-whistle.yaml"]


@pytest.mark.parametrize("name", GROUP_EXAMPLES)
def test_group_inputs_key_on_every_field(name: str) -> None:
    text, path = _spec(name)
    spec = load_spec(text, str(path))
    groups = (*spec.ranks, *spec.tube_sets, *spec.flutes, *spec.surveys)
    assert groups
    for group in groups:
        inputs: GroupInputs[object] = group_inputs(spec, group)  # type: ignore[type-var]
        assert assert_every_field_is_in_the_key(inputs) > 20


def test_group_inputs_hold_only_the_stock_the_group_names() -> None:
    text, path = _spec("practice-organ-610.yaml")
    spec = load_spec(text, str(path))
    rank = spec.ranks[0]
    inputs = group_inputs(spec, rank)
    assert [s.name for s in inputs.stock] == [rank.stock]
    assert inputs.stock_named(rank.stock) == spec.stock_named(rank.stock)
    other = next(s.name for s in spec.stock if s.name != rank.stock)
    with pytest.raises(LookupError, match="not among the inputs"):
        inputs.stock_named(other)
    text, path = _spec("blown-stopped-tubes.yaml")
    spec = load_spec(text, str(path))
    tubes = spec.tube_sets[0]
    assert tubes.holder is not None
    assert {s.name for s in group_inputs(spec, tubes).stock} == {*tubes.stock,
                                                                 tubes.holder.stock}


@pytest.mark.parametrize("name", ["house-organ-principal.yaml", "stopped-wood-gedackt.yaml",
                                  "blown-stopped-tubes.yaml", "duct-flute-d.yaml"])
def test_pipe_parts_inputs_key_on_every_field(name: str) -> None:
    text, path = _spec(name)
    resolved = compile_text(text, str(path), Overrides()).resolved
    stock = {s.name: s.thickness_m for s in resolved.stock}
    for pipe in (resolved.pipes[0], resolved.pipes[-1]):
        inputs = PipePartsInputs(pipe, resolved.fabrication.kerf_m,
                                 resolved.fabrication.seam_allowance_m, stock.get(pipe.stock))
        assert assert_every_field_is_in_the_key(inputs) > 20


def test_a_whole_build_keys_on_every_field() -> None:
    text, path = _spec("blown-stopped-tubes.yaml")
    inputs = BuildInputs(text.encode(), path.name, "0" * 64, Overrides())
    assert assert_every_field_is_in_the_key(inputs) > 5


def test_dxf_files_key_on_every_field(tmp_path: Path) -> None:
    text, path = _spec("blown-stopped-tubes.yaml")
    compiled = compile_text(text, str(path), Overrides())
    sheet = compiled.parts.sheets[0]
    by_id = {p.id: p for p in compiled.parts.parts}
    drawing = dxf.DxfFile(f"{sheet.id}.dxf", "r2010", (0.0, 0.0, sheet.length_mm,
                                                       sheet.width_mm),
                          dxf.sheet_entities(sheet, by_id))
    assert assert_every_field_is_in_the_key(drawing) > 20


@pytest.fixture(scope="module")
def sheets() -> list[pdf.BuildSheet]:
    """Build sheets between them showing every kind of page."""
    made = []
    for name in ("duct-flute-d.yaml", "blown-stopped-tubes.yaml"):
        text, path = _spec(name)
        compiled = compile_text(text, str(path), Overrides())
        made.append(pdf.BuildSheet.of(compiled.resolved, compiled.parts, compiled.options))
    return made


def test_the_build_sheet_keys_on_every_field(sheets: list[pdf.BuildSheet]) -> None:
    assert assert_every_field_is_in_the_key(sheets[1]) > 40
    assert assert_every_field_is_in_the_key(frame_for("letter")) > 5


def test_every_page_body_keys_on_every_field(sheets: list[pdf.BuildSheet]) -> None:
    bodies: dict[type, list[object]] = {}
    for sheet in sheets:
        for page in pdf.plan(sheet):
            bodies.setdefault(type(page.body), []).append(page.body)
    assert {kind.__name__ for kind in bodies} == {
        "Blocks", "PipePage", "GroupTablePage", "DuctBlockPage", "IndexPage", "SharedPage",
        "TilePage", "MapPage"}
    for found in bodies.values():
        for body in (found[0], found[-1]):
            assert assert_every_field_is_in_the_key(body) > 0


# --- the keys are the same in every process ------------------------------------------------

def test_cache_keys_do_not_depend_on_the_process(tmp_path: Path) -> None:
    """Two builds in processes with different string hashing store the same entries (a
    key holding a set's order or an object's address would never be found again)."""
    _, path = _spec("house-organ-principal.yaml")
    listings = []
    for seed in ("1", "2"):
        out = tmp_path / seed
        env = {**os.environ, "PYTHONHASHSEED": seed}
        subprocess.run([sys.executable, "-m", "compiler", "build", str(path), "-o", str(out)],
                       check=True, env=env, cwd=ROOT, capture_output=True)
        listings.append(sorted(p.name for p in (out / FOLDER).rglob("*") if p.is_file()))
    assert len(listings[0]) > 10
    assert listings[0] == listings[1]


# --- a cached rebuild after an edit is a cold build of the edited spec ---------------------

def _tree(folder: Path) -> dict[str, bytes]:
    return {p.relative_to(folder).as_posix(): p.read_bytes()
            for p in sorted(folder.rglob("*")) if p.is_file()}


EDITS = [
    # (example, text in the spec, the text before the edit, after it, a file the edit must
    # change). Edits keep every line where it was, so no spec position moves.
    ("house-organ-principal.yaml", "cutup: 1/4                  # of the mouth width",
     "cutup: 1/4", "cutup: 2/7", "resolved.json"),
    ("blown-stopped-tubes.yaml", "temperature: 21 C", "temperature: 21 C",
     "temperature: 25 C", "resolved.json"),
    ("stopped-wood-gedackt.yaml", "kerf: 3 mm", "kerf: 3 mm", "kerf: 2.5 mm",
     "sheet-01-pine.dxf"),
    ("house-organ-principal.yaml", "kerf: 0.2 mm", "kerf: 0.2 mm\n  seam_allowance: 6 mm",
     "kerf: 0.2 mm\n  seam_allowance: 8 mm", "sheet-01-spotted-metal.dxf"),
    ("stopped-wood-gedackt.yaml", "board: {thickness: 12 mm", "board: {thickness: 12 mm",
     "board: {thickness: 15 mm", "resolved.json"),
    ("measured-reed-pipe-and-whistle.yaml", "{from_bottom: 62 mm, diameter: 6 mm",
     "{from_bottom: 62 mm, diameter: 6 mm", "{from_bottom: 62 mm, diameter: 6.5 mm",
     "resolved.json"),
]


@pytest.mark.parametrize(("name", "spot", "old", "new", "changed"), EDITS,
                         ids=[f"{e[0].split('.')[0]}:{e[3].split(chr(10))[-1].strip()}"
                              for e in EDITS])
def test_cached_rebuild_after_an_edit_is_a_cold_build(tmp_path: Path, name: str, spot: str,
                                                      old: str, new: str,
                                                      changed: str) -> None:
    text, path = _spec(name)
    assert text.count(spot) == 1
    original, edited = text.replace(spot, old), text.replace(spot, new)
    before = _tree(build(original, str(path), tmp_path / "warm", Overrides()))
    warm = _tree(build(edited, str(path), tmp_path / "warm", Overrides()))
    cold = _tree(build(edited, str(path), tmp_path / "cold", Overrides(), use_cache=False))
    assert warm == cold
    assert changed in warm and warm[changed] != before[changed]


# --- another library version is another program -------------------------------------------

def test_the_libraries_are_every_dependency() -> None:
    """The fingerprint covers the version of every distribution ``pyproject.toml`` depends
    on (a new dependency must be added to ``cache.LIBRARIES``)."""
    import re
    import tomllib

    from compiler import cache

    project = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))["project"]
    wanted = {re.split(r"[<>=!~ \[;]", d, maxsplit=1)[0].lower()
              for d in project["dependencies"]}
    assert wanted == set(cache.LIBRARIES)


def test_another_library_version_misses_the_cache(tmp_path: Path,
                                                  monkeypatch: pytest.MonkeyPatch) -> None:
    """After an upgrade of reportlab (which writes the PDF and whose page operators a
    rebuild replays) no entry of the earlier build is read, and the build is not taken as
    up to date: a cached rebuild must give the bytes of a cold build with the new library."""
    from compiler import cache

    text, path = _spec("house-organ-principal.yaml")
    out = tmp_path / "out"

    def entries() -> set[str]:
        return {p.name for p in (out / FOLDER).rglob("*") if p.is_file()}

    try:
        build(text, str(path), out, Overrides())
        before = entries()
        assert len(before) > 10
        real = cache.metadata.version
        monkeypatch.setattr(cache.metadata, "version",
                            lambda name: "999.0" if name == "reportlab" else real(name))
        cache.fingerprint.cache_clear()
        assert "reportlab 999.0" in cache.runtime()
        steps: list[str] = []
        build(text, str(path), out, Overrides(), progress=steps.append)
        assert "up to date" not in steps
        after = entries()
        assert len(after) > 10
        assert not (before & after) - {"last-builds.json"}
    finally:
        monkeypatch.undo()
        cache.fingerprint.cache_clear()
