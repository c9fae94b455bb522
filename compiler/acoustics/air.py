"""Air: speed of sound by named models, and the properties loss models need.

(Being written: see the docstrings of each function for the formula and source.)
"""

from __future__ import annotations

import math
from dataclasses import dataclass

SOUND_SPEED_MODELS = ("linear", "ideal-gas", "cramer-1993")


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
