"""Air: speed of sound models, vapour pressure, density and the Benade/Keefe properties.

Check values were computed from the published formulas: O. Cramer, JASA 93(5), 2510-2516
(1993), p. 2514 (coefficients as quoted identically by three independent secondary
sources); R. S. Davis, Metrologia 29, 67-70 (1992); P. Giacomo, Metrologia 18, 33-40 (1982);
A. H. Benade, JASA 44(2), 616-623 (1968), as used by D. H. Keefe, JASA 75(1), 58-62 (1984);
the linear rule (common practice) and the ideal-gas law (standard physics texts).
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Mapping

import pytest

from compiler.acoustics.air import (
    BREATH_AIR,
    LINEAR_SLOPE,
    LINEAR_SPEED_0C,
    MEASURED,
    ROOM_AIR,
    SOUND_SPEED_MODELS,
    Air,
    air_state,
    cramer_in_range,
    density,
    enhancement_factor,
    formula,
    gamma,
    prandtl,
    saturation_vapour_pressure,
    speed_cramer,
    speed_from_measurement,
    speed_ideal_gas,
    speed_linear,
    vapour_mole_fraction,
    viscosity,
)

P0 = 101325.0


@pytest.mark.parametrize(("t_c", "c"), [(0.0, 331.30), (20.0, 343.42), (25.0, 346.45)])
def test_speed_linear(t_c: float, c: float) -> None:
    # c = 331.3 + 0.606 t, common practice (standard physics texts); check values computed from it.
    assert speed_linear(t_c) == pytest.approx(c, abs=0.005)


@pytest.mark.parametrize(("t_c", "c"), [(20.0, 343.215), (25.0, 346.129), (-10.0, 325.179)])
def test_speed_ideal_gas(t_c: float, c: float) -> None:
    # c = 331.3 sqrt(1 + t/273.15), the ideal-gas law; ISO 9613-1 Annex A (formula A.5) gives the
    # same law as 343.2 sqrt(T/293.15) (seen quoted). Check values computed from it.
    assert speed_ideal_gas(t_c) == pytest.approx(c, abs=5e-4)


def test_linear_is_tangent_of_ideal_gas_at_zero() -> None:
    # The linear rule is the Taylor expansion of the ideal-gas law at 0 degrees C
    # (331.3/(2·273.15) = 0.6064, exact calculus): same value, slope 0.606 against the
    # numerical derivative.
    assert speed_linear(0.0) == speed_ideal_gas(0.0)
    h = 1e-4
    slope = (speed_ideal_gas(h) - speed_ideal_gas(-h)) / (2 * h)
    assert slope == pytest.approx(0.606, abs=5e-4)


@pytest.mark.parametrize(
    ("t_c", "rh", "xc", "xw", "c"),
    [
        # Check values computed from Cramer (1993, JASA 93(5), p. 2514) with the Davis (1992,
        # Metrologia 29) psv and the Giacomo (1982) enhancement factor, p = 101325 Pa.
        (0.0, 0.0, 0.000314, 0.0, 331.455),
        (20.0, 0.0, 0.000314, 0.0, 343.367),
        (0.0, 0.0, 0.0004, 0.0, 331.448),
        (20.0, 0.0, 0.0004, 0.0, 343.359),
        (20.0, 0.5, 0.0004, 0.011589, 343.987),
        (25.0, 0.5, 0.0004, 0.015706, 347.127),
        (30.0, 1.0, 0.0004, 0.042093, 351.470),
    ],
)
def test_cramer_table(t_c: float, rh: float, xc: float, xw: float, c: float) -> None:
    got_xw = vapour_mole_fraction(rh, t_c, P0)
    assert got_xw == pytest.approx(xw, abs=5e-7)
    assert speed_cramer(t_c, P0, got_xw, xc) == pytest.approx(c, abs=1e-3)
    air = air_state(t_c + 273.15, P0, rh, xc, "cramer-1993")
    assert air.speed_m_s == pytest.approx(c, abs=1e-3)


def test_npl_figure() -> None:
    # The NPL online calculator (Cramer + Davis, xc = 0.0004) is widely reported to give about
    # 343.99 m/s at 20 degrees C, 50 % RH, 101.325 kPa (from memory; it agrees with 343.987
    # computed above from Cramer 1993 and Davis 1992).
    assert air_state(293.15).speed_m_s == pytest.approx(343.99, abs=0.01)


@pytest.mark.parametrize(("t_c", "psv"), [(20.0, 2339.16), (0.0, 611.21), (25.0, 3169.76)])
def test_saturation_vapour_pressure(t_c: float, psv: float) -> None:
    # Check values computed from the Davis (1992, Metrologia 29, 67-70) / Giacomo (1982,
    # Metrologia 18, 33-40) saturation vapour pressure formula.
    assert saturation_vapour_pressure(t_c + 273.15) == pytest.approx(psv, abs=0.005)


def test_saturation_vapour_pressure_boiling_point() -> None:
    # Water boils at 100 degrees C under 101.325 kPa (definition of the normal boiling point).
    # The fit is made for room temperatures, so allow 0.5 %.
    assert saturation_vapour_pressure(373.15) == pytest.approx(P0, rel=5e-3)


def test_enhancement_factor() -> None:
    # f = 1.00062 + 3.14e-8 p + 5.6e-7 t^2 as published (Giacomo 1982; Davis 1992).
    for p, t in ((P0, 20.0), (75e3, 0.0), (102e3, 30.0)):
        assert enhancement_factor(p, t) == pytest.approx(1.00062 + 3.14e-8 * p + 5.6e-7 * t * t)


@pytest.mark.parametrize(
    ("t_c", "eta", "gam", "nu"),
    [
        # Check values computed from the Benade (1968, JASA 44(2)) linearisation, as used by
        # Keefe (1984), at 20 degrees C.
        (20.0, 1.81439e-5, 1.40189, 0.84215),
        # At 300 K the linearisation returns its constants (Benade 1968).
        (26.85, 1.846e-5, 1.4017, 0.8410),
    ],
)
def test_benade_keefe_properties(t_c: float, eta: float, gam: float, nu: float) -> None:
    t_k = t_c + 273.15
    assert viscosity(t_k) == pytest.approx(eta, rel=5e-6)
    assert gamma(t_k) == pytest.approx(gam, abs=5e-6)
    assert math.sqrt(prandtl(t_k)) == pytest.approx(nu, abs=5e-6)
    assert air_state(t_k).nu == pytest.approx(nu, abs=5e-6)


def test_density_dry_air() -> None:
    # Dry air at 20 degrees C, 101.325 kPa: 1.2041 kg/m^3 (encyclopedia "Density of air" table,
    # ideal gas with R_specific = 287.058 J/(kg K); seen via liquisearch.com).
    assert density(293.15, P0, 0.0, 0.0004) == pytest.approx(1.2041, abs=1e-4)
    # ICAO / ISO 2533 standard atmosphere at sea level, 15 degrees C: 1.2250 kg/m^3.
    assert density(288.15, P0, 0.0, 0.0004) == pytest.approx(1.2250, abs=1e-4)
    # Benade (1968) rho = 1.1769 (1 - 0.00335 dT) gives 1.20391 at 20 degrees C (computed here);
    # its constants are rounded, so agree to 0.05 %.
    assert density(293.15, P0, 0.0, 0.0004) == pytest.approx(1.20391, rel=5e-4)


def test_density_moist_air_is_dalton_mixture() -> None:
    # Dalton's law: rho = (p_dry M_dry + p_vapour M_water) / (R T), the mixture of ideal gases.
    t_k, xw, r = 303.15, 0.03, 8.314462618
    p_v = xw * P0
    m_dry = (28.96546 + 12.011 * (0.0004 - 0.0004)) * 1e-3  # CIPM-2007 (Picard et al. 2008)
    expected = ((P0 - p_v) * m_dry + p_v * 18.01528e-3) / (r * t_k)
    assert density(t_k, P0, xw, 0.0004) == pytest.approx(expected, rel=1e-12)
    # Humid air is lighter than dry air at the same T and p (water 18 g/mol < air 29 g/mol).
    assert density(t_k, P0, xw, 0.0004) < density(t_k, P0, 0.0, 0.0004)
    # CO2 (44 g/mol) makes air heavier.
    assert density(t_k, P0, 0.0, 0.01) > density(t_k, P0, 0.0, 0.0004)


def test_cramer_in_range() -> None:
    # Validity of Cramer's (1993) fit: 0..30 degrees C, 75..102 kPa, xw <= 0.06, xc <= 0.01 (as
    # stated where the formula is quoted).
    assert cramer_in_range(20.0, P0, 0.0116, 0.0004)
    assert cramer_in_range(0.0, 75e3, 0.06, 0.01)
    assert not cramer_in_range(-1.0, P0, 0.0, 0.0004)
    assert not cramer_in_range(31.0, P0, 0.0, 0.0004)
    assert not cramer_in_range(20.0, 74e3, 0.0, 0.0004)
    assert not cramer_in_range(20.0, 103e3, 0.0, 0.0004)
    assert not cramer_in_range(20.0, P0, 0.07, 0.0004)
    assert not cramer_in_range(20.0, P0, 0.0, 0.02)


@pytest.mark.parametrize("defaults", [ROOM_AIR, BREATH_AIR])
def test_default_airs_inside_cramer_range(defaults: Mapping[str, float]) -> None:
    # The room and breath defaults must lie inside the validity range of Cramer's (1993) fit.
    t_c = defaults["temperature_k"] - 273.15
    xw = vapour_mole_fraction(defaults["humidity"], t_c, defaults["pressure_pa"])
    assert cramer_in_range(t_c, defaults["pressure_pa"], xw, defaults["co2"])
    assert isinstance(air_state(**defaults), Air)


def test_air_state_picks_named_model() -> None:
    t_k = 298.15
    by_model = {m: air_state(t_k, P0, 0.5, 0.0004, m) for m in SOUND_SPEED_MODELS}
    # Check values at 25 degrees C computed from: the linear rule (common practice); the ideal-gas
    # law; Cramer (1993) with Davis (1992) psv at 50 % RH, 400 ppm CO2, 101.325 kPa.
    assert by_model["linear"].speed_m_s == pytest.approx(346.45, abs=0.005)
    assert by_model["ideal-gas"].speed_m_s == pytest.approx(346.129, abs=5e-4)
    assert by_model["cramer-1993"].speed_m_s == pytest.approx(347.127, abs=1e-3)
    for model, air in by_model.items():
        assert air.model == model
        # The other properties do not depend on the speed model.
        assert dataclasses.replace(air, model="x", speed_m_s=0.0) == dataclasses.replace(
            by_model["cramer-1993"], model="x", speed_m_s=0.0
        )


def test_dry_air_laws_ignore_humidity_pressure_co2() -> None:
    # The linear rule and the ideal-gas law depend on temperature only (by their formulas).
    for model in ("linear", "ideal-gas"):
        a = air_state(293.15, P0, 0.0, 0.0004, model)
        b = air_state(293.15, 90e3, 1.0, 0.01, model)
        assert a.speed_m_s == b.speed_m_s
    a = air_state(293.15, P0, 0.0, 0.0004)
    b = air_state(293.15, P0, 1.0, 0.0004)
    # Cramer (1993): water vapour (18 g/mol) lightens the air and speeds sound up.
    assert b.speed_m_s > a.speed_m_s


def test_air_state_errors() -> None:
    with pytest.raises(ValueError, match="cramer-1993"):
        air_state(293.15, model="cramer")
    with pytest.raises(ValueError):
        air_state(0.0)
    with pytest.raises(ValueError):
        air_state(293.15, humidity=1.2)
    with pytest.raises(ValueError):
        air_state(293.15, pressure_pa=-1.0)


def test_air_is_frozen() -> None:
    air = air_state(293.15)
    with pytest.raises(dataclasses.FrozenInstanceError):
        air.speed_m_s = 1.0  # type: ignore[misc]
    assert air.temperature_c == pytest.approx(20.0)


def test_measured_speed_follows_the_ideal_gas_law_with_temperature() -> None:
    # The ideal-gas law c ∝ sqrt(T) (standard physics texts; ISO 9613-1 Annex A writes it as
    # c = 343.2·sqrt(T/293.15)): check values 343.215 m/s at 20 °C and 346.129 m/s at 25 °C,
    # computed from c = 331.3·sqrt(T/273.15).
    assert speed_from_measurement(343.215, 293.15, 298.15) == pytest.approx(346.129, abs=1e-3)
    air = air_state(291.15, P0, 0.55, 0.0004, MEASURED, 344.1)
    assert air.model == MEASURED and air.speed_m_s == 344.1
    # Density and the loss properties still come from the state of the air.
    assert air.density_kg_m3 == air_state(291.15, P0, 0.55, 0.0004).density_kg_m3
    with pytest.raises(ValueError, match="measured"):
        air_state(291.15, model=MEASURED)


def test_formulas_show_their_coefficients() -> None:
    # The linear rule c = 331.3 + 0.606 t (common practice) is shown with its coefficients,
    # so a maker can check the number by hand.
    assert formula("linear") == "c = 331.3 + 0.606·t m/s (t in °C), dry air"
    assert "331.3" in formula("ideal-gas") and "273.15" in formula("ideal-gas")
    assert "Cramer (1993)" in formula("cramer-1993")
    assert formula(MEASURED, 344.1, 18.0).startswith("measured 344.10 m/s at 18.0 °C")
    assert speed_linear(20.0) == LINEAR_SPEED_0C + 20 * LINEAR_SLOPE
