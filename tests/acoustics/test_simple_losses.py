"""The closed form with wall losses against the transfer-matrix engine, and against Keefe's
(1984) series written out here from the paper.

References: D. H. Keefe, "Acoustical wave propagation in cylindrical ducts: transmission line
parameter approximations for isothermal and nonisothermal boundary conditions", JASA 75(1),
58–62 (1984): Γ = k·[1.045/rv + 1.080/rv² + 0.750/rv³ + j(1 + 1.045/rv)], rv = a·sqrt(ρω/η), so
the phase velocity is v_p = c/(1 + 1.045/rv). Air at 20 °C from the linearisation of Benade,
JASA 44(2), 616–623 (1968): ρ = 1.2039 kg/m³, η = 1.8144e-5 Pa·s. Check value (computed from
those formulas): a = 9.5 mm, 440 Hz → v_p/c = 0.99194. The engine is the project's own
transfer-matrix model (``compiler.acoustics.impedance`` and ``bore``), built from the
transmission-line matrices; a flue pipe plays at the minima of the impedance at its mouth.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from reference_air import AIR

from compiler.acoustics import bore, playing, radiation, simple
from compiler.acoustics.impedance import Bore, Head, Instrument

LOG_C = 1200 / math.log(2)


def keefe_phase_ratio(radius_m: float, frequency_hz: float, rho: float = 1.2039,
                      eta: float = 1.8144e-5) -> float:
    """v_p/c from Keefe's (1984) series: 1 / (1 + 1.045/rv), rv = a·sqrt(ρω/η)."""
    rv = radius_m * math.sqrt(rho * 2 * math.pi * frequency_hz / eta)
    return 1 / (1 + 1.045 / rv)


def test_the_reference_reproduces_the_published_check_value() -> None:
    assert keefe_phase_ratio(0.0095, 440.0) == pytest.approx(0.99194, abs=5e-6)


def _pipe(radius: float, stopped: bool, losses: str, k: float = 0.3,
          model: str = "unflanged") -> simple.PipeAcoustics:
    return simple.PipeAcoustics(stopped=stopped, open_ends=1 if stopped else 2,
                                radius_m=radius, end_model=model, k=k, losses=losses)


def test_a_narrow_tube_without_end_corrections_slows_by_keefes_phase_velocity() -> None:
    # With the end corrections set to zero (k = 0), the tube's pitch is n·v/(2L): the loss
    # lowers it by 1200·log2(v_p/c) cents, about 14 cents for a 19 mm bore at 440 Hz.
    length = AIR.speed_m_s / (2 * 440.0)
    lossless = simple.predict_frequency(_pipe(0.0095, False, "none", 0.0, "rule-of-thumb"),
                                        length, AIR, 1)
    lossy = simple.predict_frequency(_pipe(0.0095, False, "keefe", 0.0, "rule-of-thumb"),
                                     length, AIR, 1)
    ratio = keefe_phase_ratio(0.0095, lossy, AIR.density_kg_m3, AIR.viscosity_pa_s)
    assert lossless == pytest.approx(440.0, rel=1e-12)
    # within 5e-5 (0.09 cents): the closed form's waves travel at Im(ΓZc)/Re(Zc), the phase
    # velocity to second order in 1/rv (see simple.wave_speed)
    assert lossy / lossless == pytest.approx(ratio, abs=5e-5)
    assert LOG_C * math.log(lossy / lossless) == pytest.approx(-14.0, abs=0.2)
    # solving for the length inverts the prediction
    back, _ = simple.solve_length(_pipe(0.0095, False, "keefe", 0.0, "rule-of-thumb"), lossy,
                                  AIR, 1)
    assert back == pytest.approx(length, rel=1e-10)


def _engine_open(radius: float, length: float, losses: str) -> float:
    """First resonance of a tube open at both ends, blown at one: the transfer-matrix engine's
    first impedance minimum with both ends radiating (Levine–Schwinger, unflanged)."""
    inst = Instrument(Bore.cylinder(radius, 2 * length), (), Head("open"), length,
                      radiation="unflanged", losses=losses)
    return float(playing.resonances(inst, AIR).frequencies_hz[0][0])


def _engine_stopped(radius: float, length: float, losses: str, guess: float) -> float:
    """First impedance minimum at the open end of a tube closed at the other: the cylinder's
    transmission-line matrix closed at its far end (Z = A/C) plus the radiation impedance."""
    def reactance(f: float) -> float:
        w = 2 * math.pi * f
        zc, gamma = bore.characteristic(AIR, radius, w, losses)
        a, _, c, _ = bore.cylinder_matrix(length, zc, gamma)
        z0 = AIR.density_kg_m3 * AIR.speed_m_s / (math.pi * radius**2)
        zr = radiation.radiation_impedance("unflanged", radius, w / AIR.speed_m_s, z0)
        return float(np.imag(zr + a / c))

    lo, hi = guess * 0.97, guess * 1.03
    assert reactance(lo) < 0 < reactance(hi)
    for _ in range(100):
        mid = (lo + hi) / 2
        lo, hi = (mid, hi) if reactance(mid) < 0 else (lo, mid)
    return (lo + hi) / 2


@pytest.mark.parametrize(("radius", "length"), [
    (0.003, 0.18), (0.005, 0.30), (0.0095, 0.57), (0.02, 1.2), (0.05, 3.0)])
def test_closed_form_and_engine_agree_with_losses(radius: float, length: float) -> None:
    # Both resolve the same physics (Keefe's losses, unflanged ends); the loss moves the pitch
    # by 7 to 42 cents here, and the two agree on it to 0.1 cent, and on the pitch itself.
    for stopped in (False, True):
        closed = {loss: simple.predict_frequency(_pipe(radius, stopped, loss), length, AIR, 1)
                  for loss in ("none", "keefe")}
        engine = {loss: (_engine_stopped(radius, length, loss, closed[loss]) if stopped
                         else _engine_open(radius, length, loss))
                  for loss in ("none", "keefe")}
        shift_closed = LOG_C * math.log(closed["keefe"] / closed["none"])
        shift_engine = LOG_C * math.log(engine["keefe"] / engine["none"])
        assert shift_engine < -5
        assert shift_closed == pytest.approx(shift_engine, abs=0.1)
        assert LOG_C * math.log(closed["keefe"] / engine["keefe"]) == pytest.approx(0, abs=0.1)
