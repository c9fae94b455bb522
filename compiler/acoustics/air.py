"""Air: speed of sound by named models, and the properties loss models need.

Speed of sound, three named models (``SOUND_SPEED_MODELS``) or a measured value:

- ``linear``: 331.3 + 0.606 t, dry air (common practice);
- ``ideal-gas``: 331.3 sqrt(1 + t/273.15), dry air;
- ``cramer-1993``: Cramer's fit in temperature, pressure, water vapour and CO2
  (O. Cramer, J. Acoust. Soc. Am. 93(5), 2510-2516, 1993, p. 2514), with the water-vapour
  mole fraction from relative humidity after Davis (1992) / Giacomo (1982);
- ``measured`` (``MEASURED``): a speed the maker measured in the room at a known temperature,
  carried to other temperatures as c ∝ √T (``speed_from_measurement``).

Density comes from the ideal-gas law with the molar mass of moist air; viscosity, the ratio
of specific heats and the Prandtl number from the Benade (1968) / Keefe (1984) linearisation
about 300 K. Everything is SI: K or degrees Celsius as the parameter name says, Pa, mole fractions.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass
from types import MappingProxyType

SOUND_SPEED_MODELS = ("linear", "ideal-gas", "cramer-1993")
MEASURED = "measured"
"""The model name of a speed given as a measurement rather than computed."""

LINEAR_SPEED_0C = 331.3
"""The linear rule's speed at 0 degrees C, m/s (common practice; gamma = 1.4 exactly)."""
LINEAR_SLOPE = 0.606
"""The linear rule's slope, m/s per degree C: 331.3 / (2 * 273.15) rounded (common practice)."""

ZERO_CELSIUS_K = 273.15
MOLAR_GAS_CONSTANT = 8.314462618
"""R in J/(mol K), CODATA 2018 (exact since the 2019 SI)."""
MOLAR_MASS_WATER = 18.01528e-3
"""M_w in kg/mol (as used in CIPM-2007, Picard et al., Metrologia 45, 149-155, 2008)."""

# Cramer (1993) p. 2514, a0..a15; t in degrees C, p in Pa, xw and xc mole fractions.
_CRAMER = (
    331.5024, 0.603055, -0.000528,
    51.471935, 0.1495874, -0.000782,
    -1.82e-7, 3.73e-8, -2.93e-10,
    -85.20931, -0.228525, 5.91e-5,
    -2.835149, -2.15e-13, 29.179762, 0.000486,
)  # fmt: skip

# Benade (1968) / Keefe (1984) linearisation point.
_T_BENADE_K = 300.0


@dataclass(frozen=True)
class Air:
    """The state of the air in a pipe, SI units throughout.

    temperature_k, pressure_pa, humidity (relative, 0..1), co2 (mole fraction),
    model (one of SOUND_SPEED_MODELS), speed_m_s, density_kg_m3, viscosity_pa_s
    (shear viscosity), gamma (ratio of specific heats), prandtl (Prandtl number).
    """

    temperature_k: float
    pressure_pa: float
    humidity: float
    co2: float
    model: str
    speed_m_s: float
    density_kg_m3: float
    viscosity_pa_s: float
    gamma: float
    prandtl: float

    @property
    def temperature_c(self) -> float:
        return self.temperature_k - 273.15

    @property
    def nu(self) -> float:
        """sqrt(Prandtl number), the ratio of thermal to viscous boundary-layer parameters."""
        return math.sqrt(self.prandtl)


ROOM_AIR: Mapping[str, float] = MappingProxyType(
    {"temperature_k": 293.15, "pressure_pa": 101325.0, "humidity": 0.5, "co2": 0.0004}
)
"""Default air for organ pipes and tubes: 20 degrees C, 1 atm, 50 % RH, 400 ppm CO2.

Read-only; use ``air_state(**ROOM_AIR)`` or ``{**ROOM_AIR, "temperature_k": ...}``.
"""

BREATH_AIR: Mapping[str, float] = MappingProxyType(
    {"temperature_k": 303.15, "pressure_pa": 101325.0, "humidity": 0.9, "co2": 0.01}
)
"""Default air inside a breath-blown flute: warm, humid and CO2-rich.

30 degrees C and 90 % RH: breath leaves the mouth near body temperature and saturated, and
cools in the bore (physiology figures from memory). CO2 1 %: exhaled air holds about 4 %
(from memory), but it mixes with room air in the bore, and 1 % is the top of the validity
range of Cramer's fit, so the default stays inside it.
"""


def speed_linear(t_c: float) -> float:
    """Speed of sound in dry air, linear rule: c = 331.3 + 0.606 t  (m/s, t in degrees C).

    Common practice; the first-order Taylor expansion of ``speed_ideal_gas`` about 0 degrees C
    (331.3 / (2 * 273.15) = 0.6064). Roughly valid from -20 to +40 degrees C.
    """
    return LINEAR_SPEED_0C + LINEAR_SLOPE * t_c


def speed_ideal_gas(t_c: float) -> float:
    """Speed of sound in dry air as an ideal gas: c = 331.3 sqrt(1 + t / 273.15)  (m/s).

    t in degrees C. 331.3 m/s at 0 degrees C follows from gamma = 1.4 (standard physics texts;
    ISO 9613-1 Annex A writes the same law as 343.2 sqrt(T / 293.15)).
    """
    if t_c <= -ZERO_CELSIUS_K:
        raise ValueError(f"temperature {t_c} degrees C is at or below absolute zero")
    return 331.3 * math.sqrt(1.0 + t_c / ZERO_CELSIUS_K)


def speed_from_measurement(speed_m_s: float, measured_at_k: float, temperature_k: float) -> float:
    """A measured speed of sound carried to another temperature: c = c_m·sqrt(T / T_m)  (m/s).

    The ideal-gas law at fixed composition: c = sqrt(gamma R T / M), so c ∝ sqrt(T) (standard
    physics texts). Temperatures in K. Used for sensitivities and for prototypes measured at
    another temperature than the one the speed was measured at.
    """
    if measured_at_k <= 0.0 or temperature_k <= 0.0:
        raise ValueError("temperatures must be above absolute zero")
    return speed_m_s * math.sqrt(temperature_k / measured_at_k)


def formula(model: str, speed_m_s: float = 0.0, temperature_c: float = 0.0) -> str:
    """The rule behind a speed of sound, in words and numbers, for the output.

    The linear and ideal-gas rules show their coefficients; a measured speed shows the value
    and the temperature it was measured at (``speed_m_s``, ``temperature_c``).
    """
    if model == "linear":
        return f"c = {LINEAR_SPEED_0C} + {LINEAR_SLOPE}·t m/s (t in °C), dry air"
    if model == "ideal-gas":
        return f"c = {LINEAR_SPEED_0C}·sqrt(1 + t/273.15) m/s (t in °C), dry air"
    if model == "cramer-1993":
        return ("Cramer (1993) in temperature, pressure, humidity and CO2, water vapour after "
                "Davis (1992)")
    if model == MEASURED:
        return (f"measured {speed_m_s:.2f} m/s at {temperature_c:.1f} °C, "
                "carried to other temperatures as c proportional to sqrt(T in K)")
    raise ValueError(f"unknown sound-speed model {model!r}")


def saturation_vapour_pressure(t_k: float) -> float:
    """Saturation vapour pressure of water over a plane surface, psv in Pa.

    psv = exp(A T^2 + B T + C + D / T), T in K, with A = 1.2378847e-5 K^-2,
    B = -1.9121316e-2 K^-1, C = 33.93711047, D = -6.3431645e3 K (Giacomo 1982,
    Metrologia 18, 33-40; Davis 1992, Metrologia 29, 67-70). psv(20 degrees C) = 2339.16 Pa.
    """
    if t_k <= 0.0:
        raise ValueError(f"temperature {t_k} K is at or below absolute zero")
    return math.exp(1.2378847e-5 * t_k**2 - 1.9121316e-2 * t_k + 33.93711047 - 6.3431645e3 / t_k)


def enhancement_factor(p_pa: float, t_c: float) -> float:
    """Enhancement factor of water vapour in air: f = 1.00062 + 3.14e-8 p + 5.6e-7 t^2.

    Dimensionless; p in Pa, t in degrees C (Giacomo 1982; Davis 1992).
    """
    return 1.00062 + 3.14e-8 * p_pa + 5.6e-7 * t_c**2


def vapour_mole_fraction(humidity: float, t_c: float, p_pa: float) -> float:
    """Mole fraction of water vapour: xw = h f(p, t) psv(T) / p.

    humidity h is relative humidity as a fraction 0..1, t in degrees C, p in Pa
    (Giacomo 1982; Davis 1992; as used with Cramer 1993).
    """
    if not 0.0 <= humidity <= 1.0:
        raise ValueError(f"relative humidity {humidity} is outside 0..1")
    if p_pa <= 0.0:
        raise ValueError(f"pressure {p_pa} Pa is not positive")
    t_k = t_c + ZERO_CELSIUS_K
    return humidity * enhancement_factor(p_pa, t_c) * saturation_vapour_pressure(t_k) / p_pa


def speed_cramer(t_c: float, p_pa: float, xw: float, xc: float) -> float:
    """Zero-frequency speed of sound in humid air with CO2, Cramer (1993), in m/s.

    c = a0 + a1 t + a2 t^2 + (a3 + a4 t + a5 t^2) xw + (a6 + a7 t + a8 t^2) p
        + (a9 + a10 t + a11 t^2) xc + a12 xw^2 + a13 p^2 + a14 xc^2 + a15 xw p xc,
    t in degrees C, p in Pa, xw and xc mole fractions of water vapour and CO2.
    O. Cramer, J. Acoust. Soc. Am. 93(5), 2510-2516 (1993), p. 2514. Valid for 0..30 degrees C,
    75..102 kPa, xw <= 0.06, xc <= 0.01 (see ``cramer_in_range``); about 300 ppm accuracy.
    """
    a = _CRAMER
    t = t_c
    return (
        a[0] + a[1] * t + a[2] * t**2
        + (a[3] + a[4] * t + a[5] * t**2) * xw
        + (a[6] + a[7] * t + a[8] * t**2) * p_pa
        + (a[9] + a[10] * t + a[11] * t**2) * xc
        + a[12] * xw**2 + a[13] * p_pa**2 + a[14] * xc**2 + a[15] * xw * p_pa * xc
    )  # fmt: skip


def cramer_in_range(t_c: float, p_pa: float, xw: float, xc: float) -> bool:
    """True when (t, p, xw, xc) lies inside the validity range of Cramer's (1993) fit.

    0 <= t <= 30 degrees C, 75 kPa <= p <= 102 kPa, 0 <= xw <= 0.06, 0 <= xc <= 0.01.
    """
    return 0.0 <= t_c <= 30.0 and 75e3 <= p_pa <= 102e3 and 0.0 <= xw <= 0.06 and 0.0 <= xc <= 0.01


def dry_air_molar_mass(xc: float) -> float:
    """Molar mass of dry air holding a CO2 mole fraction xc, in kg/mol.

    M_a = [28.96546 + 12.011 (xc - 0.0004)] 1e-3 kg/mol (CIPM-2007 form: Picard et al.,
    Metrologia 45, 149-155, 2008): CO2 replaces O2, adding the mass of one carbon atom.
    """
    return (28.96546 + 12.011 * (xc - 0.0004)) * 1e-3


def density(t_k: float, p_pa: float, xw: float, xc: float) -> float:
    """Density of moist air as an ideal-gas mixture: rho = p M / (R T), in kg/m^3.

    M = (1 - xw) M_a(xc) + xw M_w, with M_a from ``dry_air_molar_mass`` (xc taken as the CO2
    fraction of the dry part), M_w = 18.01528 g/mol and R = 8.314462618 J/(mol K) (CODATA
    2018). The compressibility factor Z (about 0.9996 at room conditions, CIPM-2007) is
    neglected: an error of about 0.04 %, far below what pitch prediction needs.
    Dry air, 20 degrees C, 101325 Pa, 400 ppm CO2: 1.2041 kg/m^3.
    """
    if t_k <= 0.0:
        raise ValueError(f"temperature {t_k} K is at or below absolute zero")
    molar_mass = (1.0 - xw) * dry_air_molar_mass(xc) + xw * MOLAR_MASS_WATER
    return p_pa * molar_mass / (MOLAR_GAS_CONSTANT * t_k)


def viscosity(t_k: float) -> float:
    """Shear viscosity of air, eta = 1.846e-5 (1 + 0.0025 dT) Pa s, dT = T - 300 K.

    Linearisation of Benade (1968), JASA 44(2), 616-623, also used by Keefe (1984);
    stated valid for |dT| <= 10 K.
    """
    return 1.846e-5 * (1.0 + 0.0025 * (t_k - _T_BENADE_K))


def gamma(t_k: float) -> float:
    """Ratio of specific heats of air, gamma = 1.4017 (1 - 0.00002 dT), dT = T - 300 K.

    Benade (1968) / Keefe (1984) linearisation.
    """
    return 1.4017 * (1.0 - 0.00002 * (t_k - _T_BENADE_K))


def prandtl(t_k: float) -> float:
    """Prandtl number of air, Pr = nu^2 with nu = 0.8410 (1 - 0.0002 dT), dT = T - 300 K.

    Benade (1968) / Keefe (1984) linearisation; Pr is about 0.709 at 20 degrees C.
    """
    nu = 0.8410 * (1.0 - 0.0002 * (t_k - _T_BENADE_K))
    return nu * nu


def sound_speed(
    model: str, temperature_k: float, pressure_pa: float, humidity: float, co2: float
) -> float:
    """Speed of sound in m/s by the named model (one of ``SOUND_SPEED_MODELS``).

    ``linear`` and ``ideal-gas`` are dry-air laws: they ignore pressure, humidity and CO2 by
    definition. ``cramer-1993`` uses all four, with xw from ``vapour_mole_fraction``.
    """
    t_c = temperature_k - ZERO_CELSIUS_K
    if model == "linear":
        return speed_linear(t_c)
    if model == "ideal-gas":
        return speed_ideal_gas(t_c)
    if model == "cramer-1993":
        xw = vapour_mole_fraction(humidity, t_c, pressure_pa)
        return speed_cramer(t_c, pressure_pa, xw, co2)
    names = ", ".join(SOUND_SPEED_MODELS)
    raise ValueError(f"unknown sound-speed model {model!r}; choose one of: {names}")


def air_state(
    temperature_k: float,
    pressure_pa: float = 101325.0,
    humidity: float = 0.5,
    co2: float = 0.0004,
    model: str = "cramer-1993",
    speed_m_s: float | None = None,
) -> Air:
    """The state of the air: speed by the named model, density, viscosity, gamma, Prandtl.

    temperature in K, pressure in Pa, humidity relative (0..1), co2 as a mole fraction.
    Speed from ``sound_speed``; density from ``density`` with the water-vapour fraction of
    ``vapour_mole_fraction`` (for every model: humidity does change the mass of the air);
    viscosity, gamma and Prandtl number from the Benade (1968) / Keefe (1984) linearisation.
    Raises ValueError for an unknown model or a non-physical state. Leaving Cramer's validity
    range is not an error here: callers check ``cramer_in_range`` and warn. ``model=MEASURED``
    takes the speed from ``speed_m_s`` (a measurement, m/s) instead of a model.
    """
    if model == MEASURED:
        if speed_m_s is None or not speed_m_s > 0.0:
            raise ValueError("a measured speed of sound needs a positive speed_m_s")
    elif model not in SOUND_SPEED_MODELS:
        names = ", ".join(SOUND_SPEED_MODELS)
        raise ValueError(f"unknown sound-speed model {model!r}; choose one of: {names}")
    if not temperature_k > 0.0:
        raise ValueError(f"temperature {temperature_k} K is at or below absolute zero")
    if not pressure_pa > 0.0:
        raise ValueError(f"pressure {pressure_pa} Pa is not positive")
    if not 0.0 <= co2 < 1.0:
        raise ValueError(f"CO2 mole fraction {co2} is outside 0..1")
    t_c = temperature_k - ZERO_CELSIUS_K
    xw = vapour_mole_fraction(humidity, t_c, pressure_pa)
    return Air(
        temperature_k=temperature_k,
        pressure_pa=pressure_pa,
        humidity=humidity,
        co2=co2,
        model=model,
        speed_m_s=(speed_m_s if model == MEASURED and speed_m_s is not None
                   else sound_speed(model, temperature_k, pressure_pa, humidity, co2)),
        density_kg_m3=density(temperature_k, pressure_pa, xw, co2),
        viscosity_pa_s=viscosity(temperature_k),
        gamma=gamma(temperature_k),
        prandtl=prandtl(temperature_k),
    )
