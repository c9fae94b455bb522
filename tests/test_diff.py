"""`boresmith diff`: resolved changes between two specs, read from files or git revisions."""

from __future__ import annotations

import dataclasses
import math
import re
import shutil
import subprocess
from pathlib import Path

import pytest

from compiler.diff import Change, DiffInputError, compare, read_spec_arg, render, run_diff
from compiler.ir import Resolved
from compiler.resolve.resolver import resolve
from compiler.spec import load_spec

ROOT = Path(__file__).resolve().parents[1]
ORGAN = ROOT / "specs_examples" / "house-organ-principal.yaml"
WHISTLE = ROOT / "specs_examples" / "duct-flute-d.yaml"

needs_git = pytest.mark.skipif(shutil.which("git") is None, reason="git is not installed")


def _edit(path: Path, old: str, new: str) -> str:
    text = path.read_text(encoding="utf-8")
    assert text.count(old) == 1, f"{path.name} no longer has exactly one `{old}`"
    return text.replace(old, new)


def _resolve(text: str, name: str = "spec.yaml") -> Resolved:
    return resolve(load_spec(text, name))


def _by(changes: list[Change], scope: str, field: str) -> dict[str, Change]:
    return {c.owner: c for c in changes if c.scope == scope and c.field == field}


def _number(value: object) -> float:
    assert isinstance(value, int | float) and not isinstance(value, bool)
    return float(value)


# --- a warmer room -----------------------------------------------------------------------------


def test_warmer_room_lengthens_every_pipe_in_proportion_to_the_speed_of_sound() -> None:
    old = _resolve(ORGAN.read_text(encoding="utf-8"))
    new = _resolve(_edit(ORGAN, "temperature: 18 C", "temperature: 25 C"))
    changes = compare(old, new)

    air = _by(changes, "group", "air.temperature_c")["principal-4"]
    assert (air.old, air.new, air.delta, air.unit) == (18.0, 25.0, 7.0, "C")
    speed = _by(changes, "group", "air.speed_m_s")["principal-4"]
    ratio = _number(speed.new) / _number(speed.old)
    # Ideal gas: c ∝ sqrt(T) (Kinsler et al., Fundamentals of Acoustics, 2000, ch. 5, section
    # from memory). Moist air gains a little more (more water vapour at the
    # same 55 % RH, Cramer 1993), so the ratio sits just above the ideal-gas one.
    ideal = math.sqrt((25 + 273.15) / (18 + 273.15))
    assert ideal < ratio < ideal + 0.002

    cut = _by(changes, "pipe", "cut_length_mm")
    speaking = _by(changes, "pipe", "speaking_length_mm")
    acoustic = _by(changes, "pipe", "acoustic_length_mm")
    pitch = _by(changes, "pipe", "predicted_hz")
    assert set(cut) == {p.id for p in old.pipes}, "every pipe must be cut longer"
    assert not _by(changes, "pipe", "target_hz"), "the targets do not depend on the air"
    assert not _by(changes, "pipe", "end_correction_mm"), "end corrections are geometry only"
    for pipe_id, change in cut.items():
        assert change.delta_mm is not None and change.delta_mm > 0
        # Open pipe: f = c / (2 L_eff) (Fletcher & Rossing, The Physics of Musical
        # Instruments, 1998, ch. 8, section from memory), so L_eff scales with c at the same pitch.
        old_l, new_l = _number(acoustic[pipe_id].old), _number(acoustic[pipe_id].new)
        f_old = _number(pitch[pipe_id].old) if pipe_id in pitch else 1.0
        f_new = _number(pitch[pipe_id].new) if pipe_id in pitch else 1.0
        assert new_l / old_l == pytest.approx(ratio * f_old / f_new, rel=3e-4)
        assert 0.011 < new_l / old_l - 1 < 0.015
        # The end corrections stay, so the speaking length takes all of the growth and the
        # 3 % tuning allowance grows with it (each rounded to the spec's 0.1 mm precision).
        grown = speaking[pipe_id].delta_mm
        assert grown is not None
        assert grown == pytest.approx(acoustic[pipe_id].delta_mm, abs=0.011)
        assert change.delta_mm == pytest.approx(1.03 * grown, abs=0.11)
    # Lengths are re-solved for the new air: pitch moves only by the 0.1 mm rounding.
    slope = {p.id: abs(p.cents_per_mm) for p in old.pipes}
    for pipe_id, change in pitch.items():
        assert change.delta_cents is not None
        assert abs(change.delta_cents) <= 0.1 * slope[pipe_id] + 0.05

    text = render(changes)
    c3 = cut["principal-4-C3"]
    line = (rf"^principal-4-C3 +cut_length_mm +{_number(c3.old):.2f} -> {_number(c3.new):.2f}"
            rf" +\(\+{c3.delta_mm:.2f} mm\)$")
    assert re.search(line, text, re.MULTILINE), text[:400]
    assert text.rstrip().endswith(f"{len(old.pipes)} pipes changed, 0 added, 0 removed; "
                                  "1 group changed")


def test_air_change_is_reported_with_cramers_speeds() -> None:
    base = _edit(ORGAN, "humidity: 55 %", "humidity: 50 %")
    old = _resolve(base.replace("temperature: 18 C", "temperature: 20 C"))
    new = _resolve(base.replace("temperature: 18 C", "temperature: 25 C"))
    speed = _by(compare(old, new), "group", "air.speed_m_s")["principal-4"]
    # Cramer (1993), JASA 93(5), 2510-2516, with the Davis (1992, Metrologia 29) vapour pressure
    # at 101.325 kPa, 50 % RH, 400 ppm CO2: check values computed from those formulas.
    assert _number(speed.old) == pytest.approx(343.987, abs=2e-3)
    assert _number(speed.new) == pytest.approx(347.127, abs=2e-3)
    assert speed.unit == "m/s"


def test_cooler_flute_moves_every_hole_toward_the_head() -> None:
    old = _resolve(WHISTLE.read_text(encoding="utf-8"))
    new = _resolve(_edit(WHISTLE, "temperature: 30 C", "temperature: 20 C"))
    changes = compare(old, new)
    speed = _by(changes, "group", "air.speed_m_s")["whistle-d"]
    ratio = _number(speed.new) / _number(speed.old)
    tube = _by(changes, "pipe", "cut_length_mm")["whistle-d"]
    # At fixed pitches every wavelength λ = c/f scales with c, and with it the bore's layout
    # (Fletcher & Rossing 1998, ch. 15, from memory); the fixed head, wall and drill sizes
    # keep it from being exact.
    assert _number(tube.new) / _number(tube.old) == pytest.approx(ratio, rel=0.01)
    holes = {c.field: c for c in changes if c.field.startswith("holes[")}
    for number in range(1, len(old.pipes[0].holes) + 1):
        moved = holes[f"holes[{number}].position_from_top_mm"]
        assert moved.delta_mm is not None and moved.delta_mm < 0


# --- the comparison itself ---------------------------------------------------------------------


@pytest.fixture(scope="module")
def organ() -> Resolved:
    return _resolve(ORGAN.read_text(encoding="utf-8"))


@pytest.fixture(scope="module")
def whistle() -> Resolved:
    return _resolve(WHISTLE.read_text(encoding="utf-8"))


def _with_pipe(resolved: Resolved, index: int, **fields: object) -> Resolved:
    pipes = list(resolved.pipes)
    pipes[index] = dataclasses.replace(pipes[index], **fields)  # type: ignore[arg-type]
    return dataclasses.replace(resolved, pipes=tuple(pipes))


def test_identical_models_have_no_changes(organ: Resolved) -> None:
    assert compare(organ, organ) == []
    assert render([]) == "no changes\n"


def test_differences_below_the_json_rounding_are_ignored(organ: Resolved) -> None:
    pipe = organ.pipes[5]
    shown = round(pipe.cut_length_m * 1000, 2)  # resolved.json keeps 0.01 mm
    base = _with_pipe(organ, 5, cut_length_m=shown / 1000)
    hidden = _with_pipe(organ, 5, cut_length_m=(shown + 0.001) / 1000)
    assert compare(base, hidden) == []
    visible = _with_pipe(organ, 5, cut_length_m=(shown + 0.01) / 1000)
    [change] = compare(base, visible)
    assert (change.owner, change.field, change.unit) == (pipe.id, "cut_length_mm", "mm")
    assert change.delta_mm == pytest.approx(0.01, abs=1e-9)


def test_pitch_changes_are_in_cents(organ: Resolved) -> None:
    pipe = organ.pipes[0]
    sharper = _with_pipe(organ, 0, predicted_hz=pipe.predicted_hz * 2 ** (5 / 1200))
    [change] = [c for c in compare(organ, sharper) if c.field == "predicted_hz"]
    # 1200·log2(f2/f1) (Ellis 1885); the rounding to 0.01 Hz costs up to 0.13 cent at 131 Hz.
    assert change.delta_cents == pytest.approx(5.0, abs=0.15)
    assert change.delta_mm is None
    assert f"(+{change.delta_cents:.2f} cents)" in render([change])


def test_pipes_added_and_removed(organ: Resolved) -> None:
    fewer = dataclasses.replace(organ, pipes=organ.pipes[:-1])
    [removed] = compare(organ, fewer)
    assert (removed.status, removed.owner) == ("removed", organ.pipes[-1].id)
    assert render([removed]).rstrip().endswith("0 pipes changed, 0 added, 1 removed")
    [added] = compare(fewer, organ)
    assert (added.status, added.owner) == ("added", organ.pipes[-1].id)
    assert "1 added" in render([added])


def test_holes_are_matched_by_number_and_fingerings_by_note_and_register(
        whistle: Resolved) -> None:
    pipe = whistle.pipes[0]
    holes = list(pipe.holes)
    third = next(i for i, h in enumerate(holes) if h.number == 3)
    holes[third] = dataclasses.replace(holes[third], diameter_m=holes[third].diameter_m + 5e-4)
    fingerings = list(pipe.fingerings)
    last = len(fingerings) - 1
    fingerings[last] = dataclasses.replace(fingerings[last],
                                           predicted_hz=fingerings[last].predicted_hz * 1.01)
    changed = _with_pipe(whistle, 0, holes=tuple(holes), fingerings=tuple(fingerings))
    found = {c.field: c for c in compare(whistle, changed)}
    f = fingerings[last]
    assert set(found) == {"holes[3].diameter_mm", f"fingerings[{f.note} r{f.register}]"
                          ".predicted_hz"}
    assert found["holes[3].diameter_mm"].delta_mm == pytest.approx(0.5, abs=0.011)
    # 1200·log2(1.01) = 17.23 cents (Ellis 1885 definition), less the 0.01 Hz rounding.
    cents = found[f"fingerings[{f.note} r{f.register}].predicted_hz"].delta_cents
    assert cents == pytest.approx(1200 * math.log2(1.01), abs=0.05)


# --- reading files and revisions --------------------------------------------------------------


def test_identical_files_exit_zero(tmp_path: Path) -> None:
    (tmp_path / "a.yaml").write_bytes(ORGAN.read_bytes())
    (tmp_path / "b.yaml").write_bytes(ORGAN.read_bytes())
    assert run_diff("a.yaml", "b.yaml", tmp_path) == (0, "no changes\n")


def test_changed_files_exit_one(tmp_path: Path) -> None:
    (tmp_path / "a.yaml").write_bytes(ORGAN.read_bytes())
    (tmp_path / "b.yaml").write_text(_edit(ORGAN, "a4: 440 Hz", "a4: 442 Hz"), encoding="utf-8")
    code, text = run_diff("a.yaml", str(tmp_path / "b.yaml"), tmp_path)
    assert code == 1
    assert "tuning.a4_hz" in text and "target_hz" in text


def test_a_path_with_an_at_sign_that_exists_is_a_plain_file(tmp_path: Path) -> None:
    (tmp_path / "organ@2.yaml").write_bytes(b"boresmith: 1\n")
    assert read_spec_arg("organ@2.yaml", tmp_path) == (b"boresmith: 1\n", "organ@2.yaml")


def test_missing_file(tmp_path: Path) -> None:
    with pytest.raises(DiffInputError, match="no such file"):
        read_spec_arg("nothing.yaml", tmp_path)


def _git(repo: Path, *args: str) -> None:
    subprocess.run(["git", "-c", "user.name=Test", "-c", "user.email=test@example.invalid",
                    "-c", "commit.gpgsign=false", "-C", str(repo), *args],
                   check=True, capture_output=True)


@pytest.fixture()
def repo(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> Path:
    monkeypatch.setenv("GIT_CEILING_DIRECTORIES", str(tmp_path.parent))
    _git(tmp_path, "init", "-q")
    (tmp_path / "organ").mkdir()
    (tmp_path / "organ" / "spec.yaml").write_bytes(ORGAN.read_bytes())
    _git(tmp_path, "add", "organ/spec.yaml")
    _git(tmp_path, "commit", "-q", "-m", "first")
    return tmp_path


@needs_git
def test_git_revision_against_the_working_file(repo: Path) -> None:
    spec = repo / "organ" / "spec.yaml"
    assert read_spec_arg("organ/spec.yaml@HEAD", repo) == (ORGAN.read_bytes(),
                                                           "organ/spec.yaml@HEAD")
    assert run_diff("organ/spec.yaml@HEAD", "organ/spec.yaml", repo) == (0, "no changes\n")
    spec.write_text(_edit(ORGAN, "temperature: 18 C", "temperature: 25 C"), encoding="utf-8")
    # From inside the folder: the path is relative to the working folder, not the repo root.
    code, text = run_diff("spec.yaml@HEAD", "spec.yaml", repo / "organ")
    assert code == 1
    assert "air.temperature_c" in text and "cut_length_mm" in text
    _git(repo, "commit", "-q", "-a", "-m", "warmer")
    assert run_diff("spec.yaml@HEAD~1", "spec.yaml@HEAD", repo / "organ")[1] == text


@needs_git
def test_git_errors(repo: Path, tmp_path_factory: pytest.TempPathFactory) -> None:
    with pytest.raises(DiffInputError, match="unknown revision `no-such-branch`"):
        read_spec_arg("organ/spec.yaml@no-such-branch", repo)
    with pytest.raises(DiffInputError, match="unknown revision"):
        read_spec_arg("organ/spec.yaml@--output=x", repo)
    with pytest.raises(DiffInputError, match="does not exist at revision"):
        read_spec_arg("organ/other.yaml@HEAD", repo)
    with pytest.raises(DiffInputError, match="not a file at revision"):
        read_spec_arg("organ@HEAD", repo)
    with pytest.raises(DiffInputError, match="no revision after"):
        read_spec_arg("organ/spec.yaml@", repo)
    elsewhere = tmp_path_factory.mktemp("plain")
    (elsewhere / "spec.yaml").write_bytes(ORGAN.read_bytes())
    with pytest.raises(DiffInputError, match="not in a git repository"):
        read_spec_arg("spec.yaml@HEAD", elsewhere)


# --- what to do at the bench ------------------------------------------------------------------


def test_report_leads_with_one_line_per_pipe_to_trim_or_recut(organ: Resolved) -> None:
    from compiler.diff import actions

    cooler = _resolve(_edit(ORGAN, "temperature: 18 C", "temperature: 12 C"))
    changes = compare(organ, cooler)
    cuts = _by(changes, "pipe", "cut_length_mm")
    found = {a.pipe: a for a in actions(changes)}
    # Colder air, slower sound: every pipe shorter, so each is trimmed by what its cut
    # length lost (c ∝ √T: Kinsler et al., Fundamentals of Acoustics, 2000, from memory).
    assert set(found) == {p.id for p in organ.pipes} == set(cuts)
    for pipe, change in cuts.items():
        assert change.delta is not None and change.delta < 0
        assert found[pipe].action == "trim"
        assert f"(trim {abs(change.delta):.2f} mm)" in found[pipe].line
    text = render(changes, len(cooler.pipes))
    first = text.splitlines()
    assert first[0] == "what to re-cut or re-drill, one line per pipe:"
    assert first[1].split()[:2] == ["principal-4-C3", "trim:"]
    assert len([ln for ln in first if ln.startswith("  principal-4-")]) == len(organ.pipes)
    assert "every change:" in text
    # The other way round the pipes are too short: new ones.
    back = {a.pipe: a for a in actions(compare(cooler, organ))}
    assert all(a.action == "re-cut" and "longer: cut a new one" in a.line
               for a in back.values())


def test_a_recalibrated_rank_is_trimmed_not_recut(organ: Resolved) -> None:
    from compiler.diff import actions

    # A prototype C3 measured sharp of the uncalibrated model: the fit shrinks the mouth
    # term, so the calibrated rank is cut longer. Going back to the plain model, every pipe
    # is shorter (a trim); the mouth term and its ±8 % band are the model's lengths, not a
    # part's, and must not turn a trim into "make it again".
    measured = ORGAN.read_text(encoding="utf-8") + (
        "    measured:\n      - {note: C3, frequency: 129.9 Hz, temperature: 19 C}\n")
    changes = compare(_resolve(measured), organ)
    bands = _by(changes, "pipe", "mouth.band_mm")
    assert bands  # the band moved with the calibration
    found = {a.pipe: a for a in actions(changes)}
    for pipe in bands:
        assert found[pipe].action == "trim", found[pipe].line
        assert "band" not in found[pipe].line


def test_an_inch_specs_bench_lines_are_in_inches(tmp_path: Path) -> None:
    # A rank written in inches, 4 °F cooler: every pipe is trimmed, and the line that says
    # by how much gives the fraction of an inch the maker's rule reads (1 in = 25.4 mm).
    spec = ROOT / "tests" / "cases" / "organ-ranks-inch" / "spec.yaml"
    (tmp_path / "a.yaml").write_bytes(spec.read_bytes())
    (tmp_path / "b.yaml").write_text(_edit(spec, "temperature: 64 F", "temperature: 60 F"),
                                     encoding="utf-8")
    code, text = run_diff("a.yaml", "b.yaml", tmp_path)
    assert code == 1
    bench = [ln for ln in text.split("every change:")[0].splitlines() if "trim:" in ln]
    assert bench
    for line in bench:
        trim = re.search(r"\(trim (\d+/\d+) in = (\d+\.\d+) mm\)", line)
        assert trim is not None, line
        num, den = map(int, trim.group(1).split("/"))
        assert abs(25.4 * num / den - float(trim.group(2))) <= 25.4 / 64 + 1e-9
        assert re.search(r"cut length [\d /]+ in = [\d.]+ mm -> [\d /]+ in = ", line), line


def test_a_cooler_flute_is_recut_and_redrilled() -> None:
    from compiler.diff import actions

    old = _resolve(WHISTLE.read_text(encoding="utf-8"))
    new = _resolve(_edit(WHISTLE, "temperature: 30 C", "temperature: 25 C"))
    [whistle] = actions(compare(old, new))
    assert whistle.action == "re-cut, re-drill"
    # 5 °C cooler, slower sound: every length shrinks in proportion (a quarter wave scales
    # with c / f, common practice), so the holes move up towards the top end, said in
    # words; '-0.60 mm from the top' read as a position
    assert re.search(r"hole 1 moves \d+\.\d\d mm nearer the top", whistle.line), whistle.line
    assert "further from the top" not in whistle.line and "moves -" not in whistle.line


def test_added_and_removed_pipes_and_a_wider_scale(organ: Resolved) -> None:
    from compiler.diff import actions

    fewer = _resolve(_edit(ORGAN, "notes: C3..C6", "notes: D3..C6"))
    found = {a.pipe: a for a in actions(compare(organ, fewer))}
    assert found["principal-4-C3"].action == "drop" and "principal-4-Cs3" in found
    found = {a.pipe: a for a in actions(compare(fewer, organ))}
    assert found["principal-4-C3"].action == "make"
    assert found["principal-4-C3"].line.startswith("make: new pipe, C3,")


def test_diff_json(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    import json

    from compiler.cli import main

    (tmp_path / "a.yaml").write_bytes(ORGAN.read_bytes())
    (tmp_path / "b.yaml").write_text(_edit(ORGAN, "temperature: 18 C", "temperature: 12 C"),
                                     encoding="utf-8")
    assert main(["diff", "--json", str(tmp_path / "a.yaml"), str(tmp_path / "b.yaml")]) == 1
    data = json.loads(capsys.readouterr().out)
    assert data["changed"] is True and data["summary"].startswith("37 pipes changed")
    assert {p["action"] for p in data["pipes"]} == {"trim"} and len(data["pipes"]) == 37
    change = next(c for c in data["changes"] if c["field"] == "cut_length_mm")
    assert set(change) == {"scope", "owner", "status", "field", "old", "new", "delta", "unit"}
    assert change["unit"] == "mm" and change["delta"] == pytest.approx(change["new"]
                                                                        - change["old"])
    assert main(["diff", "--json", str(tmp_path / "a.yaml"), str(tmp_path / "a.yaml")]) == 0
    assert json.loads(capsys.readouterr().out) == {"changed": False, "summary": "no changes",
                                                   "pipes": [], "changes": []}


def test_trim_advice_is_compared_field_by_field_per_measured_pipe(organ: Resolved) -> None:
    # A prototype G3 measured flat (the pipe as cut is long): the group gains trim advice.
    # Each of its fields is a change of its own, keyed by the measured note, in mm for the
    # lengths (never the record printed whole).
    measured = ORGAN.read_text(encoding="utf-8") + (
        "    measured:\n      - {note: G3, frequency: 193.5 Hz, temperature: 18 C}\n")
    changes = compare(organ, _resolve(measured))
    trims = {c.field: c for c in changes if c.scope == "group" and c.field.startswith("trims")}
    assert "trims" not in trims
    change = trims["trims[G3].change_mm"]
    assert change.old is None and isinstance(change.new, float) and change.new < 0
    assert trims["trims[G3].action"].new == "cut"
    # the same measurement a little warmer: only what moved, with its change in mm
    warmer = _resolve(measured.replace("193.5 Hz, temperature: 18 C",
                                       "193.5 Hz, temperature: 20 C"))
    moved = {c.field: c for c in compare(_resolve(measured), warmer)
             if c.field.startswith("trims")}
    assert moved["trims[G3].change_mm"].unit == "mm"
    assert "{" not in render(compare(organ, warmer))
