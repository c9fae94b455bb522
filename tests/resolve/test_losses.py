"""Wall losses in ranks and tube sets: on by default, `losses: none` to switch them off.

Reference: D. H. Keefe, JASA 75(1), 58–62 (1984): the phase velocity in a cylinder of
radius a is v_p = c/(1 + 1.045/rv), rv = a·sqrt(ρω/η), written out here; the viscosity from
Benade's (1968, JASA 44(2), 616–623) linearisation η = 1.846e-5·(1 + 0.0025·(T − 300 K)).
The closed form's agreement with the transfer-matrix engine is checked in
tests/acoustics/test_simple_losses.py.
"""

from __future__ import annotations

import math

import pytest

from compiler.errors import SchemaError
from compiler.ir import Resolved
from compiler.resolve.resolver import resolve
from compiler.spec import load_spec

LOG_C = 1200 / math.log(2)


def _tubes(losses: str, extra: str = "") -> Resolved:
    line = f"    losses: {losses}\n" if losses else ""
    text = ("boresmith: 1\ninstrument: Loss bench\n"
            "environment: {temperature: 20 C, humidity: 0 %, sound_speed: linear}\n"
            "fabrication: {precision: 0.001 mm}\nstock:\n"
            "  tube-19: {material: brass, tube: {inside_diameter: 19 mm, wall: 0.001 mm}}\n"
            "tube_sets:\n  - id: t\n    family: open-tube\n    stock: tube-19\n"
            "    notes: [A4]\n    end_correction: {model: rule-of-thumb, k: 0}\n"
            + line + extra)
    return resolve(load_spec(text, "bench.yaml"))


def test_a_narrow_tube_is_cut_shorter_by_keefes_phase_velocity() -> None:
    # Without end corrections (k = 0) the tube is n·v/(2f) long: with Keefe's losses, v is the
    # phase velocity (to 5e-5, see compiler.acoustics.simple.wave_speed), so the lengths
    # differ by v_p/c ≈ 0.992 for a 19 mm bore at 440 Hz: 14 cents if cut lossless.
    lossy, lossless = _tubes(""), _tubes("none")
    assert lossy.groups[0].losses == "keefe" and lossless.groups[0].losses == "none"
    air = lossy.groups[0].air
    eta = 1.846e-5 * (1 + 0.0025 * (293.15 - 300.0))
    rv = 0.0095 * math.sqrt(air.density_kg_m3 * 2 * math.pi * 440.0 / eta)
    ratio = 1 / (1 + 1.045 / rv)
    short, long_ = lossy.pipes[0].speaking_length_m, lossless.pipes[0].speaking_length_m
    assert long_ == pytest.approx(343.42 / 880, abs=1e-6)
    assert short / long_ == pytest.approx(ratio, abs=6e-5)
    assert LOG_C * math.log(short / long_) == pytest.approx(-14.0, abs=0.2)
    assert lossy.pipes[0].predicted_hz == pytest.approx(440.0, abs=0.002)


def test_losses_lower_a_lossless_design_in_every_family() -> None:
    # The same lengths, predicted with losses, sound flat: more for a narrow stopped tube at
    # low pitch (rv small) than for a wide open metal pipe (Keefe 1984: 1/rv ∝ 1/(a·sqrt f)).
    def rank(losses: str) -> Resolved:
        text = ("boresmith: 1\ninstrument: Loss bench\n"
                "environment: {temperature: 20 C, sound_speed: linear}\n"
                "fabrication: {precision: 0.01 mm, tuning_allowance: 3 % + 5 mm}\nstock:\n"
                "  tin: {material: spotted-metal, sheet: {thickness: 0.8 mm}}\n"
                "  pine: {material: pine, board: {thickness: 12 mm}}\n"
                "  tube: {material: aluminium, tube: {inside_diameter: 19 mm, wall: 1 mm}}\n"
                "ranks:\n"
                "  - {id: m, family: open-flue, construction: rolled-sheet, stock: tin, "
                "notes: [C3], scale: {reference: {note: C3, diameter: 92.5 mm}}, "
                f"losses: {losses}}}\n"
                "  - {id: w, family: stopped-flue, construction: boards, stock: pine, "
                "notes: [C3], scale: {reference: {note: C3, width: 40 mm, depth: 50 mm}}, "
                f"losses: {losses}}}\n"
                "tube_sets:\n  - {id: s, family: stopped-tube, stock: tube, notes: [G3], "
                f"losses: {losses}}}\n")
        return resolve(load_spec(text, "bench.yaml"))

    with_, without = rank("keefe"), rank("none")
    shortened = {p.group: p.speaking_length_m / q.speaking_length_m
                 for p, q in zip(with_.pipes, without.pipes, strict=True)}
    assert all(r < 1 for r in shortened.values())
    assert shortened["s"] < shortened["w"] < shortened["m"]


def test_losses_take_only_keefe_or_none() -> None:
    with pytest.raises(SchemaError, match="not one of the choices"):
        _tubes("lossy")
