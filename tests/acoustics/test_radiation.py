"""Open-end corrections and radiation impedance.

Sources: H. Levine & J. Schwinger, Phys. Rev. 73(4), 383-406 (1948) (0.6133a and the low-frequency
resistance (ka)^2/4); J.-P. Dalmont, C. J. Nederveen & N. Joly, J. Sound Vib. 244(3), 505-534
(2001) (0.8216a, due to Norris & Sheng 1989, and the frequency-dependent |R|, Δ(ka)
approximations of its p. 509; those were seen only as quoted in secondary sources, not read
in the paper, and their check values were computed from the formulas as quoted).
"""

from __future__ import annotations

import numpy as np
import pytest

from compiler.acoustics.radiation import (
    END_CORRECTION_MODELS,
    RADIATION_MODELS,
    end_correction,
    flanged_end_correction_ratio,
    radiation_impedance,
    thick_wall_end_correction,
    unflanged_end_correction_ratio,
    unflanged_reflection_magnitude,
)

A = 0.0095  # a 19 mm bore, metres


def test_model_names_are_the_published_set() -> None:
    assert END_CORRECTION_MODELS == ("rule-of-thumb", "unflanged", "flanged", "frequency-dependent")
    assert set(END_CORRECTION_MODELS) < set(RADIATION_MODELS)


def test_low_frequency_limits() -> None:
    # Levine & Schwinger (1948): "the exact value of the end correction turns out to be 0.6133".
    assert end_correction("unflanged", A) == pytest.approx(0.6133 * A, rel=1e-12)
    # Infinite flange: 0.8216a (Norris & Sheng 1989, quoted by Dalmont et al. 2001).
    assert end_correction("flanged", A) == pytest.approx(0.8216 * A, rel=1e-12)
    # Rule of thumb k·d, k = 0.3 per open end (common practice).
    assert end_correction("rule-of-thumb", A) == pytest.approx(0.3 * 2 * A, rel=1e-12)
    assert end_correction("rule-of-thumb", A, k=0.4) == pytest.approx(0.4 * 2 * A, rel=1e-12)


@pytest.mark.parametrize(
    ("ka", "r_mag", "delta_ratio"),
    # Check values computed from the Dalmont, Nederveen & Joly (2001, p. 509) formulas as
    # quoted in a secondary source (not read in the paper).
    [
        (0.01, 1.0000, 0.6133),
        (0.1, 0.9951, 0.6119),
        (0.5, 0.8962, 0.5832),
        (1.0, 0.6906, 0.5279),
        (1.5, 0.4969, 0.4719),
    ],
)
def test_dalmont_2001_unflanged_table(ka: float, r_mag: float, delta_ratio: float) -> None:
    assert float(unflanged_reflection_magnitude(ka)) == pytest.approx(r_mag, abs=6e-5)
    assert float(unflanged_end_correction_ratio(ka)) == pytest.approx(delta_ratio, abs=6e-5)
    got = end_correction("frequency-dependent", A, ka=ka)
    assert got == pytest.approx(delta_ratio * A, abs=6e-5 * A)


def test_frequency_dependent_models_tend_to_their_limits() -> None:
    # ka → 0: 0.6133 (Levine & Schwinger 1948) and 0.8216 (flanged: Norris & Sheng 1989, quoted
    # by Dalmont, Nederveen & Joly 2001).
    assert end_correction("frequency-dependent", A) == pytest.approx(0.6133 * A)
    assert float(unflanged_end_correction_ratio(1e-6)) == pytest.approx(0.6133, abs=1e-9)
    assert float(flanged_end_correction_ratio(1e-9)) == pytest.approx(0.8216, abs=1e-7)
    # The commonly quoted flanged form Δ/a = 0.8216/(1 + (0.77ka)²/(1 + 0.77ka)), attributed to
    # Norris & Sheng 1989 and Silva et al. 2009 (J. Sound Vib. 322, 255-263): from memory, not
    # verified. It decreases with ka, as the unflanged one does.
    ratios = flanged_end_correction_ratio(np.array([0.1, 0.5, 1.0]))
    assert np.all(np.diff(ratios) < 0)


def test_frequency_dependent_impedance_low_frequency_limit() -> None:
    # Zr/Zc ≈ 0.25 (ka)^2 + j 0.6133 ka as ka → 0 (Levine & Schwinger 1948; also the low-frequency
    # limit of the Dalmont, Nederveen & Joly 2001 form).
    ka = np.array([0.005, 0.01, 0.02])
    k = ka / A
    zr = radiation_impedance("frequency-dependent", A, k, 1.0)
    np.testing.assert_allclose(zr.imag, 0.6133 * ka, rtol=1e-3)
    np.testing.assert_allclose(zr.real, 0.25 * ka**2, rtol=2e-2)


def test_frequency_dependent_impedance_reproduces_reflection_magnitude() -> None:
    # Zr = Zc (1+R)/(1-R) inverts to R = (Zr - Zc)/(Zr + Zc); |R| must be Dalmont's (2001).
    ka = np.array([0.3, 1.0, 2.0])
    zc = 4.2e6
    zr = radiation_impedance("frequency-dependent", A, ka / A, zc)
    refl = (zr - zc) / (zr + zc)
    np.testing.assert_allclose(np.abs(refl), unflanged_reflection_magnitude(ka), rtol=1e-12)
    # phase: R = -|R| exp(-2jkΔ) with Δ from the same paper
    np.testing.assert_allclose(
        np.angle(-refl), -2 * ka * unflanged_end_correction_ratio(ka), rtol=1e-12
    )


@pytest.mark.parametrize("model", RADIATION_MODELS)
def test_radiation_is_a_mass_with_positive_resistance(model: str) -> None:
    # e^{+jωt}: an open end is inertive (positive reactance) and absorbs power (Re > 0).
    k = np.linspace(1.0, 60.0, 20)
    zr = radiation_impedance(model, A, k, 1.0)
    assert np.all(zr.imag > 0)
    assert np.all(zr.real > 0)
    # low-frequency reactance kΔ with the model's own end correction
    np.testing.assert_allclose(zr.imag[0], 1.0 * end_correction(model, A, ka=k[0] * A), rtol=2e-3)


def test_unknown_model_and_bad_radius_are_refused() -> None:
    with pytest.raises(ValueError, match="unknown end-correction model"):
        end_correction("baffled", A)
    with pytest.raises(ValueError, match="positive radius"):
        end_correction("unflanged", 0.0)


def test_thick_wall_end_correction_limits_and_trend() -> None:
    # Dalmont, Nederveen & Joly (2001), J. Sound Vib. 244(3): the interpolation runs from the
    # thin-wall value 0.6133a (Levine & Schwinger 1948) at b = a to the infinite-flange value
    # 0.8216a (Norris & Sheng 1989) as the outer radius b grows (formula from memory).
    assert float(thick_wall_end_correction(A, A)) == pytest.approx(0.6133 * A, rel=1e-12)
    assert float(thick_wall_end_correction(A, 1e4 * A)) == pytest.approx(0.8216 * A, rel=1e-4)
    ratios = thick_wall_end_correction(A, A * np.array([1.0, 1.05, 1.21, 2.0, 5.0])) / A
    assert np.all(np.diff(ratios) > 0)
    # Values at b/a = 1.05 and 1.21 from the formula as recalled, to 4 digits (computed here):
    # 0.8216 - 0.2083/1.05 + 0.057/1.05 (1 - 1.05^-5) = 0.6350; the same at 1.21: 0.6784.
    assert ratios[1] == pytest.approx(0.6350, abs=1e-4)
    assert ratios[2] == pytest.approx(0.6784, abs=1e-4)


@pytest.mark.parametrize("model", ["unflanged", "frequency-dependent"])
def test_a_wall_lengthens_the_end_correction(model: str) -> None:
    # At low ka the end's reactance is zc·k·Δ with Δ the finite-wall correction of Dalmont,
    # Nederveen & Joly (2001) (formula from memory); a wall as thin as nothing (outer radius =
    # inner) gives the thin-wall Levine & Schwinger value 0.6133a back.
    ka = np.array([0.005, 0.01])
    k = ka / A
    thin = radiation_impedance(model, A, k, 1.0, A)
    np.testing.assert_allclose(thin.imag, 0.6133 * ka, rtol=1e-3)
    walled = radiation_impedance(model, A, k, 1.0, 1.21 * A)
    np.testing.assert_allclose(walled.imag / k, thick_wall_end_correction(A, 1.21 * A),
                               rtol=1e-3)
    # flanged ends already have their flange: the wall changes nothing
    np.testing.assert_allclose(radiation_impedance("flanged", A, k, 1.0, 1.21 * A),
                               radiation_impedance("flanged", A, k, 1.0))
