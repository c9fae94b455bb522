"""Input impedance of the instrument model: open and closed pipes, losses, vectorisation.

Sources: H. Levine & J. Schwinger, Phys. Rev. 73(4), 383-406 (1948) (end correction 0.6133a);
the quarter- and half-wave resonances of a lossless cylinder, closed-open f = (2n-1)c/4(L + 0.6133a)
and open-open f = n c/2(L + 2·0.6133a) (Fletcher & Rossing, The Physics of Musical Instruments,
1998, ch. 8, from memory); D. H. Keefe, JASA 75(1), 58-62 (1984) (phase velocity with losses);
N. H. Fletcher & T. D. Rossing, The Physics of Musical Instruments (1998) ch. 16 (the flute's
head cavity lowers the upper resonances more than the lower ones: from memory).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import replace

import numpy as np
import pytest
from reference_air import AIR
from scipy.optimize import brentq

from compiler.acoustics.bore import characteristic
from compiler.acoustics.impedance import (
    Bore,
    Head,
    Hole,
    Instrument,
    Segment,
    bore_impedance,
    head_impedance,
    impedance_batch,
    input_admittance,
    input_impedance,
)
from compiler.acoustics.playing import resonances
from compiler.acoustics.radiation import thick_wall_end_correction

A9 = 0.0095

C = AIR.speed_m_s
LS = 0.6133  # Levine & Schwinger (1948)


def root(fn: Callable[[float], float], lo: float, hi: float) -> float:
    return float(brentq(fn, lo, hi, xtol=1e-12, rtol=1e-14))


def cents(f: float, ref: float) -> float:
    return float(1200 * np.log2(f / ref))


@pytest.mark.parametrize("radiation", ["unflanged", "frequency-dependent"])
def test_open_open_cylinder_admittance_peaks(radiation: str) -> None:
    # Lossless narrow tube at low frequency: peaks of Y at n c / 2L' with L' = L + 2·0.6133a
    # (Levine & Schwinger 1948; half-wave resonances, Fletcher & Rossing 1998 ch. 8, from
    # memory), within 0.2 cent.
    a, L = 0.004, 0.8
    pipe = Instrument(Bore.cylinder(a), (), Head("open"), L, radiation=radiation, losses="none")

    def reactance(f: float) -> float:
        return float(input_impedance(pipe, AIR, [f])[0, 0].imag)

    for n in (1, 2, 3):
        want = n * C / (2 * (L + 2 * LS * a))
        got = root(reactance, want * 0.97, want * 1.03)
        assert abs(cents(got, want)) < 0.2
        # and it is a peak of |Y|: larger than at ±1 % on either side
        y = np.abs(input_admittance(pipe, AIR, [got * 0.99, got * 1.0000001, got * 1.01])[0])
        assert y[1] > 20 * max(y[0], y[2])


def test_closed_open_cylinder() -> None:
    # Closed at the top, open at the foot: Z_down at the closed end is infinite at
    # f = (2n-1) c / 4(L + 0.6133a) (quarter-wave resonances, Fletcher & Rossing 1998 ch. 8, from
    # memory; Levine & Schwinger 1948 end), i.e. 1/Z_down crosses zero.
    a, L = 0.005, 0.6
    pipe = Instrument(Bore.cylinder(a), (), Head("open"), L, losses="none")

    def admittance(f: float) -> float:
        return float((1 / bore_impedance(pipe, AIR, [f])[0, 0]).imag)

    for n in (1, 3):
        want = n * C / (4 * (L + LS * a))
        assert abs(cents(root(admittance, want * 0.97, want * 1.03), want)) < 0.2


def test_losses_lower_the_resonance_by_the_phase_velocity() -> None:
    # With wall losses an open-open tube resonates near n v_p / 2L' (Keefe 1984: v_p = ω/Im Γ),
    # about 14 cents flat for a 19 mm bore at 440 Hz (v_p/c = 0.99194, a check value computed
    # from Keefe's 1984 series with Benade 1968 air at 20 °C).
    a, L = 0.0095, 0.38
    pipe = Instrument(Bore.cylinder(a), (), Head("open"), L)
    lossless = Instrument(Bore.cylinder(a), (), Head("open"), L, losses="none")
    f_loss = float(resonances(pipe, AIR).frequencies_hz[0, 0])
    f_free = float(resonances(lossless, AIR).frequencies_hz[0, 0])
    _, gamma = characteristic(AIR, a, 2 * np.pi * f_loss)
    ratio = float(2 * np.pi * f_loss / C / gamma.imag)  # v_p / c
    assert abs(cents(f_loss, f_free * ratio)) < 1.0
    assert -20.0 < cents(f_loss, f_free) < -10.0


def test_stepped_and_conical_profile_equals_hand_built_chain() -> None:
    # A two-segment profile evaluated by the engine equals the same chain built by hand from
    # the bore functions (it checks the splitting of pieces at segment edges and at holes).
    from compiler.acoustics.bore import frustum_matrix
    from compiler.acoustics.bore import input_impedance as zin
    from compiler.acoustics.radiation import radiation_impedance

    bore = Bore((Segment(0.1, 0.008, 0.008), Segment(0.2, 0.008, 0.006)))
    pipe = Instrument(bore, (), Head("open"), 0.35, losses="keefe")
    f = np.array([300.0, 1234.0])
    w = 2 * np.pi * f
    k = w / C
    z = radiation_impedance("unflanged", 0.006, k, AIR.density_kg_m3 * C / (np.pi * 0.006**2))
    z = zin(frustum_matrix(AIR, 0.05, 0.006, 0.006, w), z)  # beyond the profile: cylinder
    z = zin(frustum_matrix(AIR, 0.2, 0.008, 0.006, w), z)
    z = zin(frustum_matrix(AIR, 0.1, 0.008, 0.008, w), z)
    np.testing.assert_allclose(bore_impedance(pipe, AIR, f)[0], z, rtol=1e-10)
    assert float(bore.radius_at(0.2)) == pytest.approx(0.007)


def six_hole_flute() -> Instrument:
    holes = tuple(Hole(0.16 + 0.022 * i, 0.0035 + 0.0002 * i, 0.0012) for i in range(6))
    head = Head(
        "embouchure",
        mouth_position_m=0.03,
        embouchure_radius_m=0.0048,
        embouchure_chimney_m=0.004,
        cavity_length_m=0.018,
    )
    return Instrument(Bore.cylinder(0.0085), holes, head, 0.36)


def test_batch_equals_one_fingering_one_frequency_at_a_time() -> None:
    pipe = six_hole_flute()
    rng = np.random.default_rng(7)
    fingerings = rng.random((5, 6)) < 0.5
    freqs = np.array([180.0, 611.0, 1333.0, 2900.0])
    batch = input_admittance(pipe, AIR, freqs, fingerings)
    assert batch.shape == (5, 4)
    for i in range(5):
        for j, f in enumerate(freqs):
            one = input_admittance(pipe, AIR, [f], fingerings[i])
            assert complex(one[0, 0]) == pytest.approx(complex(batch[i, j]), rel=1e-12)


def test_geometry_overrides_equal_separate_instruments() -> None:
    pipe = six_hole_flute()
    xs = np.array([[h.position_m for h in pipe.holes]] * 2)
    xs[1] += 0.004
    rs = np.array([[h.radius_m for h in pipe.holes]] * 2)
    rs[1, 2] = 0.0041
    lengths = np.array([0.36, 0.372])
    fing = np.array([[True] * 6, [True, True, False, False, False, False]])
    z = impedance_batch(
        pipe,
        AIR,
        np.array([400.0, 900.0]),
        fing,
        length_m=lengths,
        hole_positions_m=xs,
        hole_radii_m=rs,
    )
    for i in range(2):
        holes = tuple(Hole(x, r, 0.0012) for x, r in zip(xs[i], rs[i], strict=True))
        other = Instrument(pipe.bore, holes, pipe.head, float(lengths[i]))
        np.testing.assert_allclose(
            z[i], input_impedance(other, AIR, [400.0, 900.0], fing), rtol=1e-12
        )


def test_cavity_override_equals_separate_instruments() -> None:
    pipe = six_hole_flute()
    fing = np.array([[True] * 6, [True, True, False, False, False, False]])
    freqs = np.array([400.0, 900.0, 2100.0])
    cavities = np.array([0.0, 0.007, 0.018])
    z = impedance_batch(pipe, AIR, freqs, fing, cavity_length_m=cavities)
    for i, cavity in enumerate(cavities):
        other = Instrument(pipe.bore, pipe.holes, replace(pipe.head, cavity_length_m=cavity),
                           pipe.length_m)
        np.testing.assert_allclose(z[i], input_impedance(other, AIR, freqs, fing), rtol=1e-12)


def test_a_thick_wall_at_the_foot_lowers_the_pitch() -> None:
    # A wall at the open foot lengthens its end correction (Dalmont, Nederveen & Joly 2001:
    # between 0.6133a and 0.8216a), so the tube sounds lower; the change is the extra
    # correction over the acoustic length, as for any small length change (a 1 mm wall on
    # a 9.5 mm bore adds about 0.02a = 0.2 mm: a few tenths of a cent at this length).
    thin = Instrument(Bore.cylinder(A9), (), Head("open"), 0.3, losses="none")
    thick = replace(thin, wall_m=0.0095)
    f_thin = float(resonances(thin, AIR).frequencies_hz[0, 0])
    f_thick = float(resonances(thick, AIR).frequencies_hz[0, 0])
    extra = float(thick_wall_end_correction(A9, 2 * A9)) - 0.6133 * A9
    want = f_thin * (0.3 + 2 * 0.6133 * A9) / (0.3 + 2 * 0.6133 * A9 + 2 * extra)
    # both ends of the "open" head carry the wall; within 0.5 cent of the length rule
    assert f_thick < f_thin
    assert abs(cents(f_thick, want)) < 0.5


def test_head_resonance_is_a_helmholtz_resonator() -> None:
    # The mouth opening against the closed cork cavity is a Helmholtz resonator: for a cavity
    # short against the wavelength f = (c/2π)·sqrt(S/(V·l)), so doubling the cavity lowers it
    # by √2 (Rayleigh, The Theory of Sound, 1896, §303-306, from memory); within 3 %.
    head = Head("embouchure", mouth_position_m=0.04, embouchure_radius_m=0.005,
                embouchure_chimney_m=0.0008, cavity_length_m=0.005)
    pipe = Instrument(Bore.cylinder(0.0102), (), head, 0.33)
    f = np.geomspace(1000.0, 9000.0, 4000)
    z = head_impedance(pipe, AIR, f, np.array([0.0025, 0.005]))
    found = [f[np.flatnonzero((row.imag[:-1] < 0) & (row.imag[1:] >= 0))[0]] for row in z]
    assert found[0] / found[1] == pytest.approx(np.sqrt(2.0), rel=0.03)
    with pytest.raises(ValueError):
        head_impedance(Instrument(Bore.cylinder(0.01), (), Head("open"), 0.3), AIR, [500.0])


def test_per_fingering_frequencies() -> None:
    pipe = six_hole_flute()
    fing = np.array([[True] * 6, [False] * 6])
    f = np.array([[300.0, 700.0], [650.0, 1500.0]])
    z = input_impedance(pipe, AIR, f, fing)
    assert complex(z[1, 1]) == pytest.approx(
        complex(input_impedance(pipe, AIR, [1500.0], fing[1])[0, 0])
    )


def test_head_cavity_narrows_the_octave() -> None:
    # The closed cavity above the embouchure lowers the second resonance more than the first
    # (Fletcher & Rossing 1998 ch. 16, from memory): the octave narrows as the cork moves up.
    def octave(cavity: float) -> tuple[float, float]:
        head = Head(
            "embouchure",
            mouth_position_m=0.04,
            embouchure_radius_m=0.005,
            embouchure_chimney_m=0.004,
            cavity_length_m=cavity,
        )
        res = resonances(Instrument(Bore.cylinder(0.0095), (), head, 0.6), AIR)
        return float(res.frequencies_hz[0, 0]), float(res.octave_cents[0])

    (f0, o0), (f1, o1) = octave(0.0), octave(0.025)
    assert f1 < f0
    assert o1 < o0 - 5.0


def test_mouth_inertance_lowers_the_pitch_below_the_open_pipe() -> None:
    # A window smaller than the bore adds inertance at the mouth (Rayleigh's orifice inertance,
    # The Theory of Sound, 1896, §306-307, from memory; Fletcher & Rossing 1998 ch. 16-17 treat the
    # mouth as a short duct, from memory): lower pitch
    # than the same tube driven at a plain open end, more so for a smaller window.
    bore = Bore.cylinder(0.0095)

    def f1(head: Head) -> float:
        pipe = Instrument(bore, (), head, 0.32)
        return float(resonances(pipe, AIR).frequencies_hz[0, 0])

    open_end = f1(Head("open", mouth_position_m=0.02))
    big = f1(
        Head("duct", 0.02, window_length_m=0.008, window_width_m=0.014, window_thickness_m=0.001)
    )
    small = f1(
        Head("duct", 0.02, window_length_m=0.004, window_width_m=0.010, window_thickness_m=0.001)
    )
    assert small < big < open_end


def test_invalid_instruments_are_refused() -> None:
    head = Head("open")
    with pytest.raises(ValueError, match="in order"):
        Instrument(Bore.cylinder(0.008), (Hole(0.5, 0.003, 0.001),), head, 0.4)
    with pytest.raises(ValueError, match="radiation"):
        Instrument(Bore.cylinder(0.008), (), head, 0.4, radiation="baffle")
    with pytest.raises(ValueError, match="positive"):
        input_impedance(Instrument(Bore.cylinder(0.008), (), head, 0.4), AIR, [0.0])
    with pytest.raises(ValueError):
        Head("duct", 0.02)  # a duct head needs a window
