"""Playing frequencies: peak finding and refinement.

Sources: H. Levine & J. Schwinger, Phys. Rev. 73(4), 383-406 (1948) (0.6133a, in the half-wave
resonances n c/2(L + 2·0.6133a) of a lossless open-open cylinder: Fletcher & Rossing, The Physics
of Musical Instruments, 1998, ch. 8, from memory); scipy.optimize.brentq as the reference root
finder for the refinement.
"""

from __future__ import annotations

import numpy as np
import pytest
from reference_air import AIR
from scipy.optimize import brentq

from compiler.acoustics.impedance import (
    Bore,
    Head,
    Hole,
    Instrument,
    impedance_batch,
    input_impedance,
)
from compiler.acoustics.playing import (
    default_range,
    log_grid,
    register_frequencies,
    resonances,
    second_register_quality,
    spectrum,
)


def cents(f: float, ref: float) -> float:
    return float(1200 * np.log2(f / ref))


def flute() -> Instrument:
    holes = tuple(Hole(0.17 + 0.021 * i, 0.0036, 0.0013) for i in range(6))
    head = Head(
        "duct",
        mouth_position_m=0.025,
        window_length_m=0.006,
        window_width_m=0.011,
        window_thickness_m=0.0013,
        cavity_length_m=0.003,
    )
    return Instrument(Bore.cylinder(0.0095), holes, head, 0.33)


SCALE = np.array([[True] * (6 - i) + [False] * i for i in range(7)])


def test_open_open_registers_and_octave() -> None:
    # Lossless narrow tube: registers at c/2L' and 2c/2L', L' = L + 2·0.6133a (Levine &
    # Schwinger 1948), within 0.2 cent; a perfect octave at this small ka.
    a, L = 0.004, 0.7
    pipe = Instrument(Bore.cylinder(a), (), Head("open"), L, losses="none")
    res = resonances(pipe, AIR)
    want = AIR.speed_m_s / (2 * (L + 2 * 0.6133 * a))
    assert abs(cents(float(res.frequencies_hz[0, 0]), want)) < 0.2
    assert abs(cents(float(res.frequencies_hz[0, 1]), 2 * want)) < 0.2
    assert abs(float(res.octave_cents[0])) < 0.1


def test_refinement_matches_brentq_to_a_hundredth_of_a_cent() -> None:
    pipe = flute()
    res = resonances(pipe, AIR, SCALE)
    for i, row in enumerate(SCALE):
        for r in range(2):
            f = float(res.frequencies_hz[i, r])

            def reactance(x: float, row: np.ndarray = row) -> float:
                return float(input_impedance(pipe, AIR, [x], row)[0, 0].imag)

            ref = brentq(reactance, f * 0.995, f * 1.005, xtol=1e-10)
            assert abs(cents(f, ref)) < 0.01
            # an upward crossing: reactance negative below, positive above (an impedance minimum)
            assert reactance(f * 0.999) < 0 < reactance(f * 1.001)


def test_scale_rises_and_registers_are_near_octaves() -> None:
    res = resonances(flute(), AIR, SCALE)
    f1 = res.frequencies_hz[:, 0]
    # opening holes from the foot up raises the pitch (each open hole shortens the effective
    # length: Nederveen 1969/1998, from memory)
    assert np.all(np.diff(f1) > 0)
    # low notes overblow near the octave (a nearly cylindrical open-open air column has nearly
    # harmonic resonances; Fletcher & Rossing 1998 ch. 8 and 16, from memory)
    assert np.all(np.abs(res.octave_cents[:3]) < 60)
    np.testing.assert_allclose(
        res.octave_cents, 1200 * np.log2(res.frequencies_hz[:, 1] / (2 * f1))
    )


def test_fingering_rows_are_independent() -> None:
    pipe = flute()
    together = resonances(pipe, AIR, SCALE).frequencies_hz
    for i in (0, 3, 6):
        alone = resonances(pipe, AIR, SCALE[i]).frequencies_hz[0]
        np.testing.assert_allclose(alone, together[i], rtol=1e-8)


def test_spectrum_peaks_at_the_first_register() -> None:
    pipe = flute()
    freqs, mag = spectrum(pipe, AIR, SCALE[:2], 100.0, 3000.0, 4000)
    assert freqs.shape == (4000,) and mag.shape == (2, 4000)
    f1 = resonances(pipe, AIR, SCALE[:2]).frequencies_hz[:, 0]
    # the largest |Y| below 1.5 f1 sits within one grid step of the refined frequency
    for i in range(2):
        band = freqs < 1.5 * f1[i]
        peak = freqs[band][np.argmax(mag[i, band])]
        assert abs(peak - f1[i]) <= freqs[1] - freqs[0]


def test_grid_and_range() -> None:
    grid = log_grid(100.0, 200.0, 20.0)
    assert grid[0] == pytest.approx(100.0) and grid[-1] == pytest.approx(200.0)
    assert 1200 * np.log2(grid[1] / grid[0]) <= 20.0 + 1e-9
    lo, hi = default_range(flute(), AIR)
    f = resonances(flute(), AIR, SCALE).frequencies_hz
    assert lo < f.min() and f.max() < hi


def test_register_frequencies_pick_each_rows_register() -> None:
    # The n-th upward reactance crossing per row, the same as the two-register scan: an
    # open-open pipe's first two resonances (half-wave series, Fletcher & Rossing 1998 ch. 8).
    pipe = Instrument(Bore.cylinder(0.008), (), Head("open"), 0.5, losses="none")
    closed = np.ones((2, 0), dtype=bool)

    def evaluate(freqs: np.ndarray) -> np.ndarray:
        return impedance_batch(pipe, AIR, freqs, closed)

    both = resonances(pipe, AIR, closed).frequencies_hz
    f, slope = register_frequencies(evaluate, (1, 2), [1, 2], 50.0, 3000.0)
    np.testing.assert_allclose(f[0], [both[0, 0], both[1, 1]], rtol=1e-9)
    assert np.all(slope > 0)  # upward crossings: the reactance rises through zero


def test_second_register_of_a_plain_pipe_is_clear() -> None:
    # A plain open pipe has a strong, single second resonance an octave up.
    pipe = Instrument(Bore.cylinder(0.008), (), Head("open"), 0.5)
    res = resonances(pipe, AIR)
    assert second_register_quality(pipe, AIR, None, res.frequencies_hz) == ("clear",)
    assert second_register_quality(pipe, AIR, None, [[np.nan, np.nan]]) == ("none",)
