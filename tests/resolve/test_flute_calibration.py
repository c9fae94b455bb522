"""Flutes calibrated on measured prototypes: the fit recovers a known head correction.

Synthetic measurements: the prototype (the flute as the uncalibrated model makes it) is given
a head correction we choose, and its pitches at the measuring temperature are computed by the
transfer-matrix engine; fitting them must give the correction back (a recovery test of the
least squares, not of the physics: the model that makes the data is the one that fits it).
The flutes are the project's invented examples.
"""

from __future__ import annotations

from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest

from compiler.acoustics.playing import resonances
from compiler.emit.table import render
from compiler.errors import PhysicsError
from compiler.resolve.environment import group_air
from compiler.resolve.flutes import prototype
from compiler.resolve.inputs import group_inputs
from compiler.resolve.resolver import resolve
from compiler.spec import load_spec

EXAMPLES = Path(__file__).resolve().parents[2] / "specs_examples"


def _measured_text(name: str, extra_m: float, lip: float | None,
                   picks: list[tuple[str, str, int]], temperature_c: float) -> str:
    """The example with `measured:` entries made by the prototype with a given head
    correction; ``picks`` are (note, fingering, register)."""
    text = (EXAMPLES / f"{name}.yaml").read_text()
    spec = load_spec(text, f"{name}.yaml")
    flute = spec.flutes[0]
    built = prototype(group_inputs(spec, flute))
    head = replace(built.head, extra_length_m=extra_m,
                   lip_coverage=built.head.lip_coverage if lip is None else lip)
    true = replace(built, head=head)
    air = group_air(flute.family, spec.environment, flute.environment)
    state = air.at_temperature(temperature_c + 273.15)
    lines = ["    measured:\n"]
    for note, fingering, register in picks:
        closed = np.array([[c == "x" for c in fingering]])
        f = float(resonances(true, state, closed).frequencies_hz[0, register - 1])
        lines.append(f"      - {{note: {note}, frequency: {f:.4f} Hz, "
                     f"temperature: {temperature_c} C, fingering: {fingering}}}\n")
    marker = "    losses: keefe\n"
    assert marker in text
    return text.replace(marker, "".join(lines) + marker)


SIDE_PICKS = [("C5", "xxxxxxxx", 1), ("E5", "xxxxxxoo", 1), ("A5", "xxxooooo", 1),
              ("D6", "oooooooo", 1), ("C6", "xxxxxxxx", 2), ("F6", "xxxxxooo", 2)]


def test_side_blown_fit_recovers_the_embouchure_correction() -> None:
    text = _measured_text("side-blown-flute-c", 0.0015, None, SIDE_PICKS, 24.0)
    resolved = resolve(load_spec(text, "side-blown-flute-c.yaml"))
    fit = resolved.groups[0].calibration
    assert fit.calibrated and (fit.parameter, fit.unit) == ("head's extra length", "mm")
    assert fit.value == pytest.approx(1.5, abs=0.05)
    # shown as a maker reads it: a length with its unit, to the hundredth of a millimetre
    assert f"calibrated, head's extra length {fit.value:.2f} mm, lip cover" in render(resolved)
    (lip,) = fit.more
    assert lip.name == "lip cover" and lip.value == pytest.approx(0.25, abs=0.005)
    assert fit.rms_cents < 0.05
    # the correction is applied: the flute cut from the calibrated model is in tune again
    first = [f for f in resolved.pipes[0].fingerings if f.register == 1]
    assert all(abs(f.error_cents) <= 2.0 for f in first)


def test_side_blown_fit_recovers_what_lip_cover_and_correction_do_together() -> None:
    # Lip cover and the head's extra length both change the mouth's inertance, so pitches
    # fix their joint effect, not each alone (the fit splits it toward the starting values).
    # What must come back is that effect: the fitted head plays the unmeasured fingerings as
    # the true one does.
    true_extra, true_lip = 0.0015, 0.32
    text = _measured_text("side-blown-flute-c", true_extra, true_lip, SIDE_PICKS, 24.0)
    spec = load_spec(text, "side-blown-flute-c.yaml")
    fit = resolve(spec).groups[0].calibration
    assert fit.rms_cents < 0.05
    flute = spec.flutes[0]
    built = prototype(group_inputs(spec, flute))
    air = group_air(flute.family, spec.environment, flute.environment).at_temperature(297.15)
    others = np.array([[c == "x" for c in f] for f in ("xxxxxxxo", "xxxxoooo", "xxoooooo",
                                                       "xooooooo")])

    def played(extra: float, lip: float) -> np.ndarray:
        head = replace(built.head, extra_length_m=extra, lip_coverage=lip)
        return resonances(replace(built, head=head), air, others).frequencies_hz

    want = played(true_extra, true_lip)
    got = played(fit.value / 1000, fit.more[0].value)
    assert np.max(np.abs(1200 * np.log2(got / want))) < 0.3


def test_duct_fit_recovers_window_correction() -> None:
    picks = [("D5", "xxxxxx", 1), ("G5", "xxxooo", 1), ("D6", "xxxxxx", 2)]
    text = _measured_text("duct-flute-d", -0.0008, None, picks, 22.0)
    fit = resolve(load_spec(text, "duct-flute-d.yaml")).groups[0].calibration
    assert (fit.parameter, fit.unit) == ("head's extra length", "mm") and fit.more == ()
    assert fit.value == pytest.approx(-0.8, abs=0.05)
    assert fit.rms_cents < 0.05


def test_a_measurement_far_off_is_refused_at_its_line() -> None:
    text = _measured_text("duct-flute-d", 0.0, None, [("D5", "xxxxxx", 1)], 22.0)
    text = text.replace("frequency: 5", "frequency: 6")  # a D5 near 620 Hz: a wrong note
    with pytest.raises(PhysicsError, match="even after calibration") as info:
        resolve(load_spec(text, "duct-flute-d.yaml"))
    line = next(i for i, ln in enumerate(text.splitlines(), 1) if "{note: D5, frequency" in ln)
    assert info.value.problems[0].position.line == line


def test_a_note_the_flute_does_not_play_is_refused() -> None:
    text = _measured_text("duct-flute-d", 0.0, None, [("D5", "xxxxxx", 1)], 22.0)
    text = text.replace("{note: D5, frequency", "{note: C4, frequency")
    with pytest.raises(PhysicsError, match="not played by"):
        resolve(load_spec(text, "duct-flute-d.yaml"))


def test_notes_that_disagree_are_warned_at_the_measured_entries() -> None:
    # A prototype's notes made by one head, then one of them (A5) 40 cents sharp, as a take
    # of another flute or at another temperature would be: the head's two corrections
    # cannot follow one note alone, the fit's rms stays over 5 cents and the flute's
    # `measured:` entries get the warning. The same notes as made are fitted within 0.05
    # cents (above) and draw none.
    text = _measured_text("side-blown-flute-c", 0.0015, None, SIDE_PICKS, 24.0)
    spec = load_spec(text, "side-blown-flute-c.yaml")
    assert not [w for w in resolve(spec).warnings if "disagree" in w.message]
    line = next(ln for ln in text.splitlines() if "{note: A5, frequency" in ln)
    hz = float(line.split("frequency: ")[1].split(" Hz")[0])
    text = text.replace(line, line.replace(f"{hz:.4f}", f"{hz * 2 ** (40 / 1200):.4f}"))
    resolved = resolve(load_spec(text, "side-blown-flute-c.yaml"))
    fit = resolved.groups[0].calibration
    assert fit.rms_cents > 5.0
    (note,) = [w for w in resolved.warnings if "disagree" in w.message]
    first = next(i for i, ln in enumerate(text.splitlines(), 1) if "{note: C5, frequency" in ln)
    assert note.position.line == first
    assert note.message.startswith("flute `")
    assert "fingering" in note.message and "temperature" in note.message
