"""Trim advice: from a measured pipe as built to its target in the spec's air.

Independent references: the half-wave resonance of a pipe open at both ends,
f = c/(2(L + Δ)), and of one closed at one end, f = c/(4(L + Δ)) (Fletcher & Rossing 1998,
The Physics of Musical Instruments, §8.2), so that a length change ΔL near L moves the pitch
by −1200·log2((L + ΔL + Δ)/(L + Δ)) cents (a fact of the trade: cents per mm fall as the
pipe gets longer); the linear speed-of-sound rule c = 331.3 + 0.606·t (t in °C; the
first-order expansion of the ideal-gas law about 0 °C, standard physics texts). With one
measurement the fit is exact, so the end correction Δ the model uses is the one the
measurement implies: Δ = c_measured/(2 f) − L (open) or c/(4 f) − L (stopped).
"""

from __future__ import annotations

import json
import math
from pathlib import Path

import jsonschema
import pytest

from compiler.cli import main
from compiler.emit.resolved_json import to_dict
from compiler.resolve.resolver import resolve
from compiler.spec import load_spec

ROOT = Path(__file__).resolve().parents[2]


def speed(celsius: float) -> float:
    return 331.3 + 0.606 * celsius


def tube_spec(family: str, measured: str, allowance: str = "0 mm", extra: str = "") -> str:
    return ("boresmith: 1\ninstrument: Trim bench\n"
            "environment: {temperature: 20 C, sound_speed: linear}\n"
            f"fabrication: {{precision: 0.01 mm, tuning_allowance: {allowance}}}\n"
            "stock:\n  alu: {material: aluminium, tube: {inside_diameter: 20 mm, wall: 1 mm}}\n"
            f"tube_sets:\n  - id: t\n    family: {family}\n    stock: alu\n    notes: [A4]\n"
            "    end_correction: {model: rule-of-thumb}\n    losses: none\n" + extra
            + f"    measured:\n      - {measured}\n")


def test_open_tube_measured_warm_follows_the_closed_form() -> None:
    # Built 360 mm, sounding 455.0 Hz at 26 C; the spec's air is 20 C and A4 = 440 Hz.
    r = resolve(load_spec(tube_spec(
        "open-tube", "{note: A4, frequency: 455.0 Hz, temperature: 26 C, length: 360 mm}"),
        "bench.yaml"))
    [trim] = r.groups[0].trims
    built, f_measured, target = 0.360, 455.0, 440.0
    delta = speed(26) / (2 * f_measured) - built           # what the measurement implies
    in_spec_air = speed(20) / (2 * (built + delta))         # the same pipe at 20 C
    missing = 1200 * math.log2(target / in_spec_air)        # cents to go
    change = (built + delta) * 2 ** (-missing / 1200) - (built + delta)
    assert trim.built_length_m == pytest.approx(built)
    assert trim.in_spec_air_hz == pytest.approx(in_spec_air, abs=1e-6)
    assert trim.off_cents == pytest.approx(-missing, abs=1e-6)
    assert trim.change_m == pytest.approx(change, abs=1e-8)  # 0.01 µm
    # The trade's closed form: the change moves the pitch by exactly the cents missing.
    moved = -1200 * math.log2((built + trim.change_m + delta) / (built + delta))
    assert moved == pytest.approx(missing, abs=1e-5)
    assert trim.action == "lengthen" and "too short" in trim.advice
    # The sensitivity is the model's around the built length: d cents / d mm of the form.
    assert trim.cents_per_mm == pytest.approx(
        -1200 / math.log(2) / ((built + delta) * 1000), rel=1e-4)


def test_stopped_tube_plug_and_its_travel() -> None:
    # A stopped tube measured flat by 30 cents at the spec's temperature: the plug goes in.
    built = 0.180
    def frequency(delta: float) -> float:
        return speed(20) / (4 * (built + delta))
    f_flat = 440.0 * 2 ** (-30 / 1200)
    r = resolve(load_spec(tube_spec(
        "stopped-tube", f"{{note: A4, frequency: {f_flat:.6f} Hz, temperature: 20 C, "
        "length: 180 mm}", allowance="5 mm"), "bench.yaml"))
    [trim] = r.groups[0].trims
    delta = speed(20) / (4 * f_flat) - built
    assert frequency(delta) == pytest.approx(f_flat)
    expected = speed(20) / (4 * 440.0) - delta - built      # quarter wave at the target
    assert trim.change_m == pytest.approx(expected, abs=1e-8)
    assert trim.action == "plug in"
    assert trim.advice == f"push the plug {abs(expected) * 1000:.2f} mm further in"
    # Sharp by 60 cents: the plug must come out further than the 5 mm of tube below it.
    f_sharp = 440.0 * 2 ** (60 / 1200)
    r = resolve(load_spec(tube_spec(
        "stopped-tube", f"{{note: A4, frequency: {f_sharp:.6f} Hz, temperature: 20 C, "
        "length: 180 mm}", allowance="5 mm"), "bench.yaml"))
    [trim] = r.groups[0].trims
    assert trim.action == "plug out" and trim.change_m > 0.005
    assert "more than the 5.00 mm of tube below it" in trim.advice


def test_without_a_length_the_open_pipe_is_taken_as_cut_with_its_allowance() -> None:
    # Cut as boresmith said, 3 % long, and measured in tune with the model's own end
    # correction (Δ = 2·0.3·20 mm, rule of thumb): the advice cuts the allowance off.
    delta = 2 * 0.3 * 0.020
    speaking = speed(20) / (2 * 440.0) - delta
    as_cut = round(speaking, 5) + round(0.03 * round(speaking, 5), 5)
    f_measured = speed(18) / (2 * (as_cut + delta))
    r = resolve(load_spec(tube_spec(
        "open-tube", f"{{note: A4, frequency: {f_measured:.6f} Hz, temperature: 18 C}}",
        allowance="3 %"), "bench.yaml"))
    [trim] = r.groups[0].trims
    assert r.groups[0].calibration.value == pytest.approx(1.0, abs=1e-6)
    assert trim.built_length_m == pytest.approx(as_cut, abs=1e-9)
    assert trim.change_m == pytest.approx(speaking - as_cut, abs=1e-7)
    # Whole 0.01 mm steps, rounded down: a cut cannot be undone.
    assert trim.advice == f"cut {math.floor((as_cut - speaking) * 1e5) / 100:.2f} mm off one end"


@pytest.mark.parametrize(("long_mm", "advice"), [
    (0.9, "cut 0.5 mm off one end"),     # nearest would say 1.0 mm: 0.1 mm past the target
    (1.2, "cut 1.0 mm off one end"),
    (1.49, "cut 1.0 mm off one end"),
    (0.4, "0.40 mm long, less than one 0.5 mm step: leave it, or shave a little and "
          "measure again"),
])
def test_a_cut_is_rounded_down_never_past_the_target(long_mm: float, advice: str) -> None:
    # Common practice: a cut cannot be undone, so cut less and measure again. An open tube
    # measured at the spec's temperature sounding as if long_mm longer than its target length
    # (half-wave resonance with the measured end correction, Fletcher & Rossing 1998 §8.2),
    # at a precision of 0.5 mm.
    built, delta = 0.360, 2 * 0.3 * 0.020
    f_measured = speed(20) / (2 * (built + delta))
    target_length = built - long_mm / 1000
    a4 = speed(20) / (2 * (target_length + delta))
    text = tube_spec("open-tube", f"{{note: A4, frequency: {f_measured:.9f} Hz, "
                     "temperature: 20 C, length: 360 mm}")
    text = text.replace("precision: 0.01 mm", "precision: 0.5 mm").replace(
        "instrument: Trim bench\n", f"instrument: Trim bench\ntuning: {{a4: {a4:.9f} Hz}}\n")
    [trim] = resolve(load_spec(text, "bench.yaml")).groups[0].trims
    assert trim.change_m == pytest.approx(-long_mm / 1000, abs=1e-7)
    assert trim.advice == advice
    assert trim.action == ("none" if long_mm < 0.5 else "cut")


def test_gedackt_example_in_every_output(tmp_path: Path,
                                         capsys: pytest.CaptureFixture[str]) -> None:
    spec = ROOT / "specs_examples" / "stopped-wood-gedackt.yaml"
    resolved = resolve(load_spec(spec.read_text(encoding="utf-8"), str(spec)))
    group = resolved.groups[0]
    [trim] = group.trims
    pipe = next(p for p in resolved.pipes if p.note == "G2")
    # One measurement: the calibrated model sounds it exactly, so the advice lands on the
    # length the rank is resolved to (rounded there to the 0.5 mm precision).
    assert trim.new_length_m == pytest.approx(pipe.speaking_length_m, abs=0.00025)
    assert trim.action == "stopper in" and trim.advice.startswith("push the stopper ")
    data = to_dict(resolved)
    schema = json.loads((ROOT / "schemas" / "boresmith-resolved.schema.json").read_text())
    jsonschema.validate(data, schema)
    written = data["groups"][0]["trims"][0]
    assert written["change_mm"] == round(trim.change_m * 1000, 2)
    assert written["measured_temperature_c"] == 19.0
    assert main(["resolve", str(spec)]) == 0
    out = capsys.readouterr().out
    assert "trim advice for the measured pipes" in out and trim.advice in out
    assert main(["build", str(spec), "-o", str(tmp_path)]) == 0
    from pypdf import PdfReader

    pdf = next(tmp_path.glob("*/build-sheet.pdf"))
    cover = PdfReader(str(pdf)).pages[0].extract_text()
    assert "Trim advice for the measured pipes" in cover
    assert trim.advice in " ".join(cover.split())
