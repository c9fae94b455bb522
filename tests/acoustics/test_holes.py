"""Tone holes: length corrections, lattice cutoff, and one-hole pipes in the full model.

Sources: A. Lefebvre & G. P. Scavone, JASA 131(4), 3153-3163 (2012) (t_i and t_a fits:
coefficients from memory; check values computed from the formulas as written);
Nederveen, Jansen & van Hassel, Acustica 84, 957-966 (1998) (t_m, from memory; the t_i limits
0.82b and 0.16b from its abstract); A. H. Benade, JASA 32, 1591-1608 (1960) (lattice cutoff:
check value computed from the formula, derived from one cell's inertance and compliance; the
coefficient from memory); the one-hole lumped effective length, derived from Zh ∥ Zdown =
jZc tan kΔ (same approach as J. Woodhouse, Euphonics §11.1.3; idea from C. J. Nederveen,
Acoustical Aspects of Woodwind Instruments, 1969/1998, from memory), check value computed from it;
H. Levine & J. Schwinger, Phys. Rev. 73 (1948) (0.6133a).
"""

from __future__ import annotations

import numpy as np
import pytest
from reference_air import AIR

from compiler.acoustics.holes import (
    downstream_for_shortening,
    effective_length,
    end_distance,
    hole_elements,
    inner_length,
    lattice_cutoff,
    matching_length,
    radiation_length,
    series_length,
)
from compiler.acoustics.impedance import Bore, Head, Hole, Instrument
from compiler.acoustics.playing import resonances

A = 0.0095


def first(instrument: Instrument, closed: list[bool]) -> float:
    return float(resonances(instrument, AIR, np.array([closed])).frequencies_hz[0, 0])


def cents(f: float, ref: float) -> float:
    return float(1200 * np.log2(f / ref))


def test_inner_length_check_value() -> None:
    # Check value computed from the Lefebvre & Scavone (2012) t_i fit (coefficients from
    # memory): b = 4 mm, a = 9.5 mm → t_i = 2.476 mm.
    assert float(inner_length(0.004, A)) == pytest.approx(2.476e-3, abs=5e-7)
    # Nederveen et al. 1998 abstract: 0.82b for a small hole down to 0.16b at δ = 1.
    assert float(inner_length(1e-5, A)) / 1e-5 == pytest.approx(0.82, abs=0.005)
    assert float(inner_length(A, A)) / A == pytest.approx(0.16, abs=0.005)


def test_inner_length_frequency_dependence() -> None:
    # Lefebvre & Scavone (2012), eqs. 31-32 (seen quoted in secondary sources): t_i(0) times
    # 1 + H(δ)·I(ka), H = 1 - 4.56δ + 6.55δ², I = 0.17ka + 0.92(ka)² + 0.16(ka)³ - 0.29(ka)⁴.
    # Check value computed from the formula as written: b 4 mm, a 9.5 mm, ka 0.3 → 2.557 mm.
    assert float(inner_length(0.004, A, 0.3 / A)) == pytest.approx(2.557e-3, abs=5e-7)
    # it tends to the low-frequency fit as k → 0, and grows with frequency for a finger hole
    # (the evanescent modes at the junction decay more slowly as k rises)
    assert float(inner_length(0.004, A, 1e-6)) == pytest.approx(float(inner_length(0.004, A)))
    ks = np.array([50.0, 100.0, 200.0])
    assert np.all(np.diff(inner_length(0.004, A, ks)) > 0)


@pytest.mark.parametrize(
    ("t_over_b", "open_ratio", "closed_ratio"),
    # check values computed from the Lefebvre & Scavone (2012) t_a fits (from memory)
    [(1.0, -0.2905, -0.2872), (0.5, -0.2976, -0.2617)],
)
def test_series_length_check_values(
    t_over_b: float, open_ratio: float, closed_ratio: float
) -> None:
    b = 0.004
    scale = b * (b / A) ** 2
    assert float(series_length(b, A, t_over_b * b, closed=False)) / scale == pytest.approx(
        open_ratio, abs=6e-5
    )
    assert float(series_length(b, A, t_over_b * b, closed=True)) / scale == pytest.approx(
        closed_ratio, abs=6e-5
    )


def test_matching_and_radiation_lengths() -> None:
    b = 0.004
    d = b / A
    # t_m = bδ(1 + 0.207δ³)/8 (Nederveen, Jansen & van Hassel 1998; Dubos et al. 1999, Acta
    # Acustica 85(2), 153-169: from memory).
    assert float(matching_length(b, A)) == pytest.approx(b * d * (1 + 0.207 * d**3) / 8)
    # Radiation lengths: 0.6133b unflanged (Levine & Schwinger 1948), 0.8216b flanged (Norris &
    # Sheng 1989, quoted by Dalmont, Nederveen & Joly 2001).
    assert float(radiation_length("unflanged", b, A + 0.002)) == pytest.approx(0.6133 * b)
    assert float(radiation_length("flanged", b, A + 0.002)) == pytest.approx(0.8216 * b)
    # the on-cylinder fit (Dalmont et al. 2002, Acta Acustica 88, 567-575: from memory, not
    # verified) lies between the limits for a finger-hole-sized opening
    mid = float(radiation_length("on-cylinder", b, A + 0.002))
    assert 0.5 * b < mid < 0.8216 * b
    # with the frequency dependence of the unflanged end correction (Dalmont, Nederveen & Joly
    # 2001, quoted in secondary sources): the same at k → 0, a little shorter at kb = 0.5
    # (Δ(0.5)/Δ(0) = 0.5832/0.6133 from the REFERENCES table of that formula)
    k = 0.5 / b
    assert float(radiation_length("frequency-dependent", b, A + 0.002)) == pytest.approx(mid)
    assert float(radiation_length("frequency-dependent", b, A + 0.002, k)) == pytest.approx(
        mid * 0.5832 / 0.6133, rel=2e-4)
    with pytest.raises(ValueError):
        radiation_length("baffle", b, A)


def test_lattice_cutoff_check_value() -> None:
    # Check value computed from Benade's (1960) cutoff f_c = (c/2π)(b/a)/sqrt(2s·t_e) (coefficient
    # from memory; derived from one cell's hole inertance and bore compliance):
    # c 343.36, a 9.5 mm, b 5 mm, 2s 30 mm, t_e 8 mm → 1856.6 Hz.
    assert float(lattice_cutoff(343.36, A, 0.005, 0.030, 0.008)) == pytest.approx(1856.6, abs=0.05)


def test_lumped_end_distance_check_value_and_inverse() -> None:
    # Check value computed from the lumped one-hole formula Δ = L_d/(1 + L_d·Sh/(S·t_e)), the
    # low-frequency limit of Zh ∥ Zdown = jZc tan kΔ (Nederveen 1969/1998, from memory):
    # a 9.5, b 4, t 4 mm, t_e = t + t_i + 0.6133b = 8.93 mm, L_d = 50 mm + 0.6133a → 26.48 mm.
    t_e = 0.004 + float(inner_length(0.004, A)) + 0.6133 * 0.004
    assert t_e == pytest.approx(8.93e-3, abs=5e-6)
    ld = 0.050 + 0.6133 * A
    delta = float(end_distance(ld, A, 0.004, t_e))
    assert delta == pytest.approx(26.48e-3, abs=5e-6)
    # the inverse recovers L_d (the same formula solved for L_d: exact algebra)
    assert float(downstream_for_shortening(ld - delta, A, 0.004, t_e)) == pytest.approx(ld)


def test_one_hole_pipe_full_model_against_lumped_formula() -> None:
    # A long lossless pipe, open at the top (Levine & Schwinger end, 0.6133a), one open hole
    # 50 mm above the open foot: at low frequency its first resonance is c / 2(L_up + 0.6133a + Δ)
    # with Δ from the lumped one-hole formula (Nederveen 1969/1998, from memory). The full model
    # also has the series length and the chimney's
    # frequency dependence, so they agree to a fraction of a cent only at low frequency.
    b, t, up = 0.004, 0.004, 1.5
    pipe = Instrument(Bore.cylinder(A), (Hole(up, b, t),), Head("open"), up + 0.05, losses="none")
    t_e = float(effective_length(b, A, t))
    delta = float(end_distance(0.05 + 0.6133 * A, A, b, t_e))
    lumped = AIR.speed_m_s / (2 * (up + 0.6133 * A + delta))
    assert abs(cents(first(pipe, [False]), lumped)) < 0.5


def test_hole_as_wide_as_the_bore_acts_like_a_cut() -> None:
    # A hole as wide as the bore, in a thin wall: nearly the tube cut at the hole plus its
    # end correction (Levine & Schwinger 0.6133a). The 50 mm of bore below still adds a little
    # inertance in parallel (the Zh ∥ Zdown network of the lumped one-hole formula, Nederveen
    # 1969/1998, from memory), so the model sounds a few cents lower, not higher.
    up = 0.4
    pipe = Instrument(
        Bore.cylinder(A), (Hole(up, A, 0.001),), Head("open"), up + 0.05, losses="none"
    )
    cut = AIR.speed_m_s / (2 * (up + 2 * 0.6133 * A))
    diff = cents(first(pipe, [False]), cut)
    assert -6.0 < diff < 0.0


def test_closed_hole_lowers_the_pitch_slightly() -> None:
    # A closed hole near the middle of an open pipe (a pressure maximum) adds compliance: the
    # pitch drops by a few cents at most (Keefe 1982, JASA 72(3), 688-699, from memory; the
    # closed chimney as a stub in the T-network of Keefe 1990, JASA 88(1), 35-51, from memory).
    L = 0.5
    plain = Instrument(Bore.cylinder(A), (), Head("open"), L, losses="none")
    holed = Instrument(
        Bore.cylinder(A), (Hole(L / 2, 0.004, 0.004),), Head("open"), L, losses="none"
    )
    drop = cents(first(holed, [True]), first(plain, []))
    assert -10.0 < drop < -0.5


def test_bigger_or_undercut_hole_sounds_higher() -> None:
    # Opening area raises the pitch: Δ = L_d/(1 + L_d·Sh/(S·t_e)) shrinks as the hole area Sh
    # grows (Nederveen 1969/1998, from memory).
    def pitch(b: float, undercut: float) -> float:
        hole = Hole(0.30, b, 0.003, undercut)
        return first(Instrument(Bore.cylinder(A), (hole,), Head("open"), 0.42), [False])

    assert pitch(0.0035, 0.0) < pitch(0.0035, 0.001) < pitch(0.0045, 0.0)


def test_hole_elements_closed_stub_and_open_shunt() -> None:
    # Lossless, a closed cylinder chimney is a stub: Zs = j Zh (k t_i - cot(k h)), h = t + t_m
    # (T-network of Keefe 1990 and Dubos et al. 1999: standard form, from memory); open, the
    # shunt is close to the inertance j ω ρ t_e / Sh at low frequency.
    b, t = 0.004, 0.003
    w = 2 * np.pi * np.array([200.0, 800.0])
    k = w / AIR.speed_m_s
    zh = AIR.density_kg_m3 * AIR.speed_m_s / (np.pi * b * b)
    za_o, ys_o, za_c, ys_c = hole_elements(AIR, w, A, b, t, 0.0, "none", "unflanged")
    h = t + float(matching_length(b, A))
    np.testing.assert_allclose(
        1 / ys_c, 1j * zh * (k * inner_length(b, A, k) - 1 / np.tan(k * h)), rtol=1e-10
    )
    t_e = float(effective_length(b, A, t))
    np.testing.assert_allclose((1 / ys_o).imag[0], zh * k[0] * t_e, rtol=2e-3)
    np.testing.assert_allclose(
        za_o,
        1j * w * AIR.density_kg_m3 / (np.pi * A * A) * float(series_length(b, A, t, closed=False)),
    )
    # negative series lengths (Dubos et al. 1999; Lefebvre & Scavone 2012: from memory)
    assert np.all(za_c.imag < 0) and np.all(za_o.imag < 0)
