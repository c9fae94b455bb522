"""The air the acoustics tests share: 20 °C from the linearised constants of Benade, JASA
44(2), 616-623 (1968), also used by Keefe, JASA 75(1), 58-62 (1984); values computed from
those formulas (c 343.282 m/s, rho 1.20391 kg/m³, eta 1.81439e-5 Pa·s, gamma 1.40189,
nu 0.84215)."""

from __future__ import annotations

from compiler.acoustics.air import Air

AIR = Air(
    293.15, 101325.0, 0.0, 0.0004, "benade", 343.282, 1.20391, 1.81439e-5, 1.40189, 0.84215**2
)
