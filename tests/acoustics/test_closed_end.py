"""A closed, reed-driven end: the input impedance at the closed end and its maxima.

Sources: H. Levine & J. Schwinger, "On the radiation of sound from an unflanged circular pipe",
Phys. Rev. 73(4), 383-406 (1948): the open end's correction 0.6133a; the quarter-wave series
f_n = (2n - 1)c / 4(L + 0.6133a) of a lossless cylinder closed at one end and open at the other
(N. H. Fletcher & T. D. Rossing, The Physics of Musical Instruments, 2nd ed., Springer 1998,
ch. 8, from memory). A reed sounds near the maxima of the input impedance (the same book,
ch. 13, from memory).
"""

from __future__ import annotations

import numpy as np
from reference_air import AIR

from compiler.acoustics.impedance import Bore, Head, Hole, Instrument, input_impedance
from compiler.acoustics.playing import resonances, spectrum


def cents(f: float, ref: float) -> float:
    return float(1200 * np.log2(f / ref))


def test_closed_open_cylinder_sounds_its_odd_quarter_wave_series() -> None:
    # Lossless narrow tube: f1 = c/4(L + 0.6133a) and f2 = 3 f1 within 0.2 cent.
    a, L = 0.004, 0.6
    pipe = Instrument(Bore.cylinder(a), (), Head("closed"), L, radiation="unflanged",
                      losses="none")
    res = resonances(pipe, AIR)
    want = AIR.speed_m_s / (4 * (L + 0.6133 * a))
    assert abs(cents(float(res.frequencies_hz[0, 0]), want)) < 0.2
    assert abs(cents(float(res.frequencies_hz[0, 1]), 3 * want)) < 0.2


def test_playing_frequency_is_an_impedance_maximum() -> None:
    a, L = 0.007, 0.45
    pipe = Instrument(Bore.cylinder(a), (Hole(0.3, 0.003, 0.002),), Head("closed"), L)
    f1 = float(resonances(pipe, AIR).frequencies_hz[0, 0])
    around = f1 * np.array([0.98, 0.995, 1.0, 1.005, 1.02])
    magnitude = np.abs(input_impedance(pipe, AIR, around))[0]
    assert magnitude[2] == magnitude.max()
    # the plotted curve of a closed end is |Z|, so it peaks where the pipe plays
    freqs, curve = spectrum(pipe, AIR, f_min_hz=f1 * 0.5, f_max_hz=f1 * 1.5, n=2001)
    assert abs(cents(float(freqs[np.argmax(curve[0])]), f1)) < 2.0


def test_cavity_above_a_closed_end_acts_as_more_bore() -> None:
    # A closed length of bore above the driven point (a reed's equivalent volume) gives the
    # quarter-wave series of the whole length, c/4(L + 0.6133a).
    a, L, extra = 0.005, 0.5, 0.02
    pipe = Instrument(Bore.cylinder(a), (), Head("closed", mouth_position_m=extra,
                                                 cavity_length_m=extra), L,
                      radiation="unflanged", losses="none")
    f1 = float(resonances(pipe, AIR).frequencies_hz[0, 0])
    assert abs(cents(f1, AIR.speed_m_s / (4 * (L + 0.6133 * a)))) < 0.2
