"""Resolver for pipes without side holes, checked against hand calculations and published
formulas (sources beside each check)."""

from __future__ import annotations

import json
import math
from pathlib import Path

import jsonschema
import pytest

from compiler.acoustics import air
from compiler.emit.resolved_json import to_dict
from compiler.emit.table import render
from compiler.errors import PhysicsError
from compiler.resolve.resolver import resolve
from compiler.spec import load_spec
from compiler.spec.normalize import SOUND_SPEED_MODELS as SPEC_SPEED_MODELS

SCHEMAS = Path(__file__).resolve().parents[2] / "schemas"


def _spec(body: str, environment: str = "{temperature: 20 C, sound_speed: linear}",
          fabrication: str = "{precision: 0.01 mm}") -> str:
    return (f"boresmith: 1\ninstrument: Test bench\nenvironment: {environment}\n"
            f"fabrication: {fabrication}\n"
            "stock:\n"
            "  tube-20: {material: aluminium, tube: {inside_diameter: 20 mm, wall: 1 mm}}\n"
            "  tube-30: {material: aluminium, tube: {inside_diameter: 30 mm, wall: 1 mm}}\n"
            "  foil-20: {material: aluminium, tube: {inside_diameter: 20 mm, wall: 0.001 mm}}\n"
            "  tin: {material: spotted-metal, sheet: {thickness: 0.8 mm}}\n"
            "  pine: {material: pine, board: {thickness: 15 mm}}\n" + body)


def _resolve(text: str):  # type: ignore[no-untyped-def]
    return resolve(load_spec(text, "bench.yaml"))


def _tube_set(family: str, model: str, notes: str = "[A4]", extra: str = "",
              stock: str = "foil-20", losses: str = "none") -> str:
    # Lossless unless asked: these checks are against lossless closed forms; the wall losses
    # have their own tests (tests/resolve/test_losses.py).
    return _spec(f"tube_sets:\n  - id: t\n    family: {family}\n    stock: {stock}\n"
                 f"    losses: {losses}\n"
                 f"    notes: {notes}\n    end_correction: {model}\n{extra}")


def test_rule_of_thumb_and_linear_speed_match_hand_calculation() -> None:
    # Hand calculation: linear rule c = 331.3 + 0.606·20 = 343.42 m/s (common practice; the
    # first-order Taylor expansion of the ideal-gas law about 0 °C, standard physics texts);
    # open at both ends with 0.4 × diameter per open end (common practice, the rounding of the
    # flanged 0.8216a of Norris & Sheng 1989, quoted by Dalmont, Nederveen & Joly 2001):
    # L = c/(2·440) − 2·0.4·0.020; the length is rounded to 0.01 mm, then f = c/(2(L + 0.016)).
    r = _resolve(_tube_set("open-tube", "{model: rule-of-thumb, k: 0.4}"))
    pipe = r.pipes[0]
    c = 331.3 + 0.606 * 20
    length = round((c / (2 * 440) - 2 * 0.4 * 0.020) / 1e-5) * 1e-5
    assert r.groups[0].air.speed_m_s == pytest.approx(343.42, abs=1e-9)
    assert pipe.speaking_length_m == pytest.approx(length, abs=1e-9)
    assert pipe.predicted_hz == pytest.approx(c / (2 * (length + 0.016)), abs=0.01)


@pytest.mark.parametrize(("model", "ratio"), [("unflanged", 0.6133), ("flanged", 0.8216)])
def test_levine_schwinger_and_flanged_end_corrections(model: str, ratio: float) -> None:
    # Levine & Schwinger 1948: 0.6133 a unflanged (a wall of zero thickness: the foil tube's
    # 0.001 mm wall moves it by 1e-4 relative); Norris & Sheng 1989 via Dalmont et al. 2001:
    # 0.8216 a flanged. An open tube has two open ends.
    pipe = _resolve(_tube_set("open-tube", f"{{model: {model}}}")).pipes[0]
    assert pipe.end_correction_m == pytest.approx(2 * ratio * 0.010, rel=2e-4)
    assert pipe.acoustic_length_m == pytest.approx(pipe.speaking_length_m + 2 * ratio * 0.010,
                                                   rel=1e-5)


def test_the_tube_wall_lengthens_the_end_correction() -> None:
    # A wall of finite thickness puts the end correction between the thin-wall 0.6133a
    # (Levine & Schwinger 1948) and the infinite flange's 0.8216a (Norris & Sheng 1989), rising
    # with the outer radius (Dalmont, Nederveen & Joly 2001, J. Sound Vib. 244(3), 505–534).
    per_end = {}
    for name, wall in (("foil-20", 0.000001), ("tube-20", 0.001), ("thick-20", 0.005)):
        text = _tube_set("open-tube", "{model: unflanged}", stock=name).replace(
            "stock:\n", "stock:\n  thick-20: {material: brass, tube: {inside_diameter: "
            "20 mm, wall: 5 mm}}\n")
        per_end[wall] = _resolve(text).pipes[0].end_correction_m / 2 / 0.010
    ratios = [per_end[w] for w in sorted(per_end)]
    assert ratios[0] == pytest.approx(0.6133, abs=1e-4)
    assert 0.6133 < ratios[1] < ratios[2] < 0.8216
    # b/a = 1.1 (1 mm wall on a 10 mm radius): 0.8216 - 0.2083/1.1 + 0.057/1.1·(1 - 1.1^-5)
    # = 0.6518 (computed here from the interpolation as recalled, from memory).
    assert ratios[1] == pytest.approx(0.6518, abs=2e-4)


def test_stopped_tube_quarter_wave() -> None:
    # f = c/(4(L + 0.6133a)) for a tube closed at one end, lossless: quarter-wave resonance
    # (Fletcher & Rossing, The Physics of Musical Instruments, 1998, ch. 8, from memory) with
    # the open-end correction 0.6133a of Levine & Schwinger 1948, Phys. Rev. 73, 383.
    pipe = _resolve(_tube_set("stopped-tube", "{model: unflanged}")).pipes[0]
    c = 343.42
    # (the foil tube's 0.001 mm wall adds 1e-4 of the end correction: 3e-6 of the pitch)
    assert pipe.predicted_hz == pytest.approx(c / (4 * (pipe.speaking_length_m + 0.6133 * 0.01)),
                                              rel=1e-5)
    assert pipe.target_hz == pytest.approx(440.0)
    # the plug sits below the speaking length: cut = speaking length + plug; the default plug
    # is half the bore, 10 mm minimum (common practice, from memory), so 10 mm here
    assert pipe.stopper is not None
    assert pipe.cut_length_m == pytest.approx(pipe.speaking_length_m + 0.010, abs=1e-9)


def test_open_pipes_have_all_harmonics_stopped_only_odd() -> None:
    # Fletcher & Rossing 1998 §8.2 (section number from memory): open-open resonances at
    # n·f1, closed-open at odd n·f1.
    open_ = _resolve(_tube_set("open-tube", "{model: unflanged}")).pipes[0]
    stopped = _resolve(_tube_set("stopped-tube", "{model: unflanged}")).pipes[0]
    f1 = open_.harmonics_hz[0]
    assert [h / f1 for h in open_.harmonics_hz] == pytest.approx([1, 2, 3, 4, 5, 6])
    g1 = stopped.harmonics_hz[0]
    assert [h / g1 for h in stopped.harmonics_hz] == pytest.approx([1, 3, 5, 7, 9, 11])


def test_even_harmonic_of_a_stopped_tube_is_an_error() -> None:
    # A tube closed at one end has only odd resonances (quarter-wave: f = (2n−1)c/4L', Fletcher
    # & Rossing 1998 ch. 8, from memory), so a request for harmonic 2 cannot be met.
    with pytest.raises(PhysicsError, match="only odd harmonics"):
        _resolve(_tube_set("stopped-tube", "{model: unflanged}", extra="    harmonic: 2\n"))


def test_open_tube_on_a_higher_harmonic() -> None:
    # Tuned on harmonic 3: L_eff = 3c/(2f), the third half-wave resonance of a tube open at
    # both ends (Fletcher & Rossing 1998 ch. 8, from memory); c = 343.42 m/s, the linear rule
    # at 20 °C (common practice).
    pipe = _resolve(_tube_set("open-tube", "{model: unflanged}",
                              extra="    harmonic: 3\n")).pipes[0]
    assert pipe.acoustic_length_m == pytest.approx(3 * 343.42 / (2 * 440), abs=2e-5)


@pytest.mark.parametrize(("model", "speed"), [
    # Check values computed from the formulas: linear rule c = 331.3 + 0.606 t (common
    # practice) 343.42; ideal-gas law c = 331.3·sqrt(1 + t/273.15) 343.215 at 20 °C; Cramer 1993,
    # JASA 93(5) 2510–2516, with the Davis 1992 (Metrologia 29, 67–70) vapour pressure, at
    # 20 °C, 50 % RH, 400 ppm, 101.325 kPa: 343.987 m/s.
    ("linear", 343.42), ("ideal-gas", 343.215), ("cramer-1993", 343.987)])
def test_speed_of_sound_models_in_use(model: str, speed: float) -> None:
    env = f"{{temperature: 20 C, humidity: 50 %, co2: 400 ppm, sound_speed: {model}}}"
    r = resolve(load_spec(_spec("tube_sets:\n  - {id: t, family: open-tube, stock: tube-20, "
                                "notes: [A4]}\n", environment=env), "b.yaml"))
    assert r.groups[0].air.speed_m_s == pytest.approx(speed, abs=1e-3)


def test_sensitivities() -> None:
    # d(cents)/dL = −1200/ln2 / L_eff (f ∝ 1/L_eff; exact derivative of cents = 1200·log2 of
    # the frequency ratio); d(cents)/dT = 1200/ln2 · (dc/dT)/c with the linear rule's
    # dc/dT = 0.606 m/s per K (common practice; 331.3/(2·273.15), the slope of the ideal-gas
    # law at 0 °C).
    pipe = _resolve(_tube_set("open-tube", "{model: unflanged}")).pipes[0]
    per_mm = -1200 / math.log(2) / (pipe.acoustic_length_m * 1000)
    assert pipe.cents_per_mm == pytest.approx(per_mm, rel=1e-4)
    assert pipe.cents_per_c == pytest.approx(1200 / math.log(2) * 0.606 / 343.42, rel=1e-6)


def test_calibration_recovers_a_known_factor() -> None:
    # Synthetic prototypes: open tubes built 300 and 200 mm long, measured at 20 °C where the
    # true end correction is 1.25 × Levine–Schwinger: f = c/(2(L + 1.25·2·0.6133a)). (The
    # foil tube's 0.001 mm wall makes the model's own end 1e-4 longer than Levine–Schwinger.)
    c = 343.42
    measured = [(note, length, c / (2 * (length + 1.25 * 2 * 0.6133 * 0.010)))
                for note, length in (("A4", 0.300), ("A5", 0.200))]
    rows = "".join(f"      - {{note: {n}, frequency: {f!r} Hz, temperature: 20 C, "
                   f"length: {L * 1000!r} mm}}\n" for n, L, f in measured)
    r = _resolve(_tube_set("open-tube", "{model: unflanged}", notes="[A4, A5]",
                           extra="    measured:\n" + rows))
    fit = r.groups[0].calibration
    assert fit.calibrated
    assert fit.value == pytest.approx(1.25, rel=2e-4)
    assert fit.rms_cents == pytest.approx(0.0, abs=1e-4)
    assert r.pipes[0].end_correction_m == pytest.approx(1.25 * 2 * 0.6133 * 0.010, rel=1e-6)


def test_uncalibrated_is_reported() -> None:
    fit = _resolve(_tube_set("open-tube", "{model: unflanged}")).groups[0].calibration
    # No measured prototypes in the spec: the published correction is used unscaled (factor 1).
    assert not fit.calibrated and fit.value == 1.0


RANK = """ranks:
  - id: p
    family: open-flue
    construction: rolled-sheet
    stock: tin
    notes: {notes}
    scale: {{reference: {{note: C2, diameter: 155.5 mm}}, halving_interval: 16}}
    mouth: {{width: 1/4, cutup: 1/4}}
"""


def test_halving_interval_reproduces_normalmensur() -> None:
    # Töpfer's Normalmensur (Töpfer 1855, Die Theorie und Praxis des Orgelbaues, via Adelung
    # 1991, Einführung in den Orgelbau, pp. 85–86; seen in secondary tables only):
    # D = 155.5 mm · 2^(−n/16). Check values computed from that formula (the published tables
    # print 92.4 and 54.9): 4' C = 92.46 mm, 2' C = 54.98 mm, 1' C = 32.69 mm; halves on the
    # 17th note (E3).
    r = _resolve(_spec(RANK.format(notes="[C2, C3, E3, C4, C5]")))
    d = {p.note: p.inside_diameter_m * 1000 for p in r.pipes}
    assert d["C3"] == pytest.approx(92.46, abs=0.005)
    assert d["C4"] == pytest.approx(54.98, abs=0.005)
    assert d["C5"] == pytest.approx(32.69, abs=0.005)
    assert d["E3"] == pytest.approx(155.5 / 2, abs=1e-9)


def test_tuning_allowance_adds_to_the_cut_length() -> None:
    r = _resolve(_spec(RANK.format(notes="[C3]")).replace(
        "fabrication: {precision: 0.01 mm}",
        "fabrication: {precision: 0.1 mm, tuning_allowance: 3 %}"))
    pipe = r.pipes[0]
    # The spec's tuning allowance: 3 % of the speaking length added to the cut, rounded to the
    # spec's 0.1 mm precision (the definition of the field, not a physical law).
    assert pipe.cut_length_m == pytest.approx(
        pipe.speaking_length_m + round(pipe.speaking_length_m * 0.03, 4), abs=1e-9)


def test_stopped_wooden_pipe_has_a_stopper_and_block() -> None:
    text = _spec("""ranks:
  - id: g
    family: stopped-flue
    construction: boards
    stock: pine
    notes: [C3]
    scale: {reference: {note: C3, width: 60 mm, depth: 75 mm}, halving_interval: 17}
    mouth: {width: 1, cutup: 0.4}
    stopper: {length: 50 mm, travel: 20 mm}
    losses: none
""")
    pipe = _resolve(text).pipes[0]
    assert pipe.section == "rect"
    assert pipe.stopper is not None and pipe.block is not None
    # The stopper's face closes the speaking length; the board is cut to block + speaking
    # length + the spec's stopper length (50 mm) + travel (20 mm): a sum by construction.
    assert pipe.stopper.position_m == pytest.approx(pipe.speaking_length_m)
    assert pipe.cut_length_m == pytest.approx(
        pipe.block.length_m + pipe.speaking_length_m + 0.050 + 0.020, abs=1e-9)
    # stopped: quarter wave, odd harmonics (Fletcher & Rossing 1998 ch. 8, from memory); the
    # equivalent radius is sqrt(W·D/π), the traditional equal-area equivalence of square wooden
    # pipes (common practice; organ-building tradition after Töpfer 1855 / Adelung 1991)
    assert [h / pipe.harmonics_hz[0] for h in pipe.harmonics_hz[:3]] == pytest.approx([1, 3, 5])


def test_stock_choice_picks_the_nearest_fitting_tube() -> None:
    text = _spec("tube_sets:\n  - {id: t, family: stopped-tube, stock: [tube-20, tube-30], "
                 "notes: [C4, C5]}\n")
    r = _resolve(text)
    picked = {p.note: p.stock for p in r.pipes}
    # Preferred length over bore ≈ 12 for tube sets (common practice, from memory).
    # C4 (≈ 320 mm long): the 30 mm bore gives L/D ≈ 10.6, nearer 12 than 20 mm (≈ 16);
    # C5 (≈ 158 mm): 20 mm gives ≈ 7.9, nearer 12 than 30 mm (≈ 5.1).
    assert picked == {"C4": "tube-30", "C5": "tube-20"}


def test_note_no_stock_can_reach() -> None:
    text = _spec("tube_sets:\n  - {id: t, family: stopped-tube, stock: tube-30, "
                 "notes: [C7]}\n")
    # C7 (2093 Hz, 12-TET) needs a quarter wavelength c/4f ≈ 41 mm less the end correction:
    # far below four bore diameters (120 mm) of the 30 mm tube, the shortest length over bore
    # the resolver accepts (end corrections stop being a small fix; common practice).
    with pytest.raises(PhysicsError, match="no listed stock can make C7"):
        _resolve(text)


def test_resolved_json_follows_its_schema() -> None:
    schema = json.loads((SCHEMAS / "boresmith-resolved.schema.json").read_text())
    text = _spec(RANK.format(notes="C3..C4") + "tube_sets:\n  - {id: t, family: open-tube, "
                 "stock: tube-20, notes: [A4, B4]}\n")
    data = json.loads(json.dumps(to_dict(_resolve(text))))
    # JSON Schema draft 2020-12 (json-schema.org), validated by the jsonschema library.
    jsonschema.Draft202012Validator(schema).validate(data)
    assert len(data["pipes"]) == 15
    for pipe in data["pipes"]:
        for key in pipe:
            assert key.endswith(("_mm", "_hz", "_cents", "_c", "_m_s")) or key in {
                "id", "group", "family", "construction", "note", "harmonic", "stock", "material",
                "section", "mouth", "foot", "block", "stopper", "head", "holes", "fingerings",
                "curves", "source", "bore", "jig"}, key


@pytest.mark.parametrize(("a4", "warned"), [("415 Hz", False), ("440 Hz", False),
                                             ("4400 Hz", True), ("44 Hz", True)])
def test_reference_pitch_far_from_any_standard_is_flagged(a4: str, warned: bool) -> None:
    # Pitch standards in use run from about 392 Hz (low baroque) to about 466 Hz; ISO 16:1975
    # sets 440 Hz (common practice, from memory). A value far outside is most likely a typo.
    text = _spec("tuning: {a4: " + a4 + "}\ntube_sets:\n  - {id: t, family: open-tube, "
                 "stock: tube-20, notes: [A4]}\n").replace("notes: [A4]", "notes: [A2]"
                                                           if a4 == "4400 Hz" else "notes: [A4]")
    if a4 == "44 Hz":
        text = text.replace("tube-20, notes: [A4]", "tube-30, notes: [A6]")
    notes = [n.message for n in _resolve(text).warnings]
    assert any("far from any pitch standard" in m for m in notes) == warned


def test_a_measured_speed_of_sound_is_used_as_given() -> None:
    # A speed measured in the room at 18 °C; at other temperatures the ideal-gas law c ∝ sqrt(T)
    # (standard physics texts) carries it, so the pitch of a pipe whose corrections do not
    # depend on frequency moves by 1200/ln2 · 1/(2T) cents per kelvin (the derivative of
    # 1200·log2 sqrt(T)).
    env = "{temperature: 18 C, sound_speed: 344.1 m/s}"
    r = resolve(load_spec(_spec("tube_sets:\n  - {id: t, family: open-tube, stock: foil-20, "
                                "notes: [A4], losses: none}\n", environment=env), "b.yaml"))
    air = r.groups[0].air
    assert air.speed_m_s == 344.1 and air.sound_speed_model == "measured"
    assert air.sound_speed_formula.startswith("measured 344.10 m/s at 18.0 °C")
    assert r.pipes[0].cents_per_c == pytest.approx(1200 / math.log(2) / (2 * 291.15), rel=1e-4)
    assert not r.warnings
    # 1.5 % away from Cramer (1993) for this air (342.8 m/s): worth a second look.
    far = resolve(load_spec(_spec("tube_sets:\n  - {id: t, family: open-tube, stock: foil-20, "
                                  "notes: [A4]}\n", environment=env.replace("344.1", "348")),
                            "b.yaml"))
    assert [(n.position.line, n.position.col) for n in far.warnings] == [(3, 47)]
    assert "from Cramer (1993)" in far.warnings[0].message


def test_the_linear_rule_shows_its_coefficients() -> None:
    # The linear rule c = 331.3 + 0.606·t (common practice) is reported with its numbers.
    r = _resolve(_tube_set("open-tube", "{model: unflanged}"))
    assert r.groups[0].air.sound_speed_formula == "c = 331.3 + 0.606·t m/s (t in °C), dry air"
    assert "speed of sound: c = 331.3 + 0.606·t m/s" in render(r)


def test_speed_models_agree_between_the_schema_the_spec_reader_and_the_physics() -> None:
    schema = json.loads((SCHEMAS / "boresmith-spec.schema.json").read_text())
    branches = schema["$defs"]["environment"]["properties"]["sound_speed"]["oneOf"]
    assert set(branches[0]["enum"]) == set(SPEC_SPEED_MODELS) == set(
        air.SOUND_SPEED_MODELS)


def _two_takes(apart_cents: float) -> str:
    # Two prototypes of one length (300 mm, open, lossless), the second measured
    # ``apart_cents`` higher: no factor on the end correction makes one tube sound two
    # pitches, so least squares in cents leaves each half the gap (cents are additive: the
    # best model pitch is the two takes' geometric mean).
    c = 343.42
    f = c / (2 * (0.300 + 2 * 0.6133 * 0.010))
    takes = [("A4", f), ("A5", f * 2 ** (apart_cents / 1200))]
    rows = "".join(f"      - {{note: {n}, frequency: {hz!r} Hz, temperature: 20 C, "
                   "length: 300 mm}\n" for n, hz in takes)
    return _tube_set("open-tube", "{model: unflanged}", notes="[A4, A5]",
                     extra="    measured:\n" + rows)


def test_prototypes_that_disagree_are_warned_at_their_entries() -> None:
    text = _two_takes(36.0)
    r = _resolve(text)
    fit = r.groups[0].calibration
    assert [round(x.error_cents, 2) for x in fit.residuals] == [-18.0, 18.0]
    assert fit.rms_cents == pytest.approx(18.0, abs=0.01)
    (note,) = [w for w in r.warnings if "disagree" in w.message]
    first = next(i for i, ln in enumerate(text.splitlines(), 1) if "{note: A4" in ln)
    assert (note.position.line, note.position.col) == (first, 7)
    assert "A4 -18.0, A5 +18.0 cents" in note.message and "rms 18.0" in note.message
    assert "temperature" in note.message and "trimmed" in note.message


def test_prototypes_within_a_careful_tuning_are_not_warned() -> None:
    r = _resolve(_two_takes(8.0))  # ±4 cents: within the 5 cents a careful maker explains
    assert r.groups[0].calibration.rms_cents == pytest.approx(4.0, abs=0.01)
    assert not [w for w in r.warnings if "disagree" in w.message]


def test_rank_prototypes_that_disagree_are_warned() -> None:
    # The example gedackt's prototype G2, measured twice 30 cents apart: the fit splits the
    # gap (±15 cents), and the rank's `measured:` entries get the warning.
    name = "stopped-wood-gedackt.yaml"
    text = (SCHEMAS.parent / "specs_examples" / name).read_text()
    take = "      - {note: G2, frequency: 92.9 Hz, temperature: 19 C}\n"
    assert take in text
    other = f"      - {{note: G2, frequency: {92.9 * 2 ** (30 / 1200)!r} Hz, temperature: 19 C}}\n"
    text = text.replace(take, take + other)
    r = resolve(load_spec(text, name))
    assert r.groups[0].calibration.rms_cents == pytest.approx(15.0, abs=0.01)
    (note,) = [w for w in r.warnings if "disagree" in w.message]
    assert note.position.line == text.splitlines().index(take.rstrip("\n")) + 1
    assert note.message.startswith("rank `gedackt-8`: the measurements disagree")
