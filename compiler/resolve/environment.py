"""The air each group is resolved for: the family's defaults, overridden by the spec."""

from __future__ import annotations

from dataclasses import dataclass

from compiler.acoustics import air as airmod
from compiler.ir import AirReport, Note
from compiler.spec import model as spec_model

BREATH_FAMILIES = ("duct-flute", "side-blown-flute")


@dataclass(frozen=True)
class GroupAir:
    """The air state for physics, its report for the output, and any warnings."""

    state: airmod.Air
    report: AirReport
    warnings: tuple[Note, ...]

    def at_temperature(self, temperature_k: float) -> airmod.Air:
        """The same air at another temperature (for sensitivities and calibration); a measured
        speed is carried there as c ∝ √T."""
        s = self.state
        speed = None
        if s.model == airmod.MEASURED:
            speed = airmod.speed_from_measurement(s.speed_m_s, s.temperature_k, temperature_k)
        return airmod.air_state(temperature_k, s.pressure_pa, s.humidity, s.co2, s.model, speed)


def group_air(family: str, *layers: spec_model.Environment,
              preset: str | None = None) -> GroupAir:
    """Room air for organ pipes and tubes, breath for flutes (or the ``preset`` named:
    ``room`` or ``breath``); later layers override."""
    preset = preset or ("breath" if family in BREATH_FAMILIES else "room")
    base = dict(airmod.BREATH_AIR if preset == "breath" else airmod.ROOM_AIR)
    values: dict[str, float | str] = {**base, "model": "cramer-1993"}
    # A measured speed belongs to the temperature of the environment it is written in (the
    # schema says so): a later layer that only changes the temperature (a flute's breath, a
    # survey's) carries it there as c ∝ √T, as it does for any other temperature.
    measured: tuple[float, float] | None = None
    given: set[str] = set()
    for env in layers:
        for field, key in (("temperature_k", "temperature_k"), ("humidity", "humidity"),
                           ("pressure_pa", "pressure_pa"), ("co2", "co2"),
                           ("sound_speed", "model")):
            value = getattr(env, field)
            if value is not None:
                values[key] = value
                given.add(key)
        if env.sound_speed is not None:
            measured = (None if env.sound_speed_m_s is None
                        else (env.sound_speed_m_s, float(values["temperature_k"])))
    temperature_k = float(values["temperature_k"])
    speed = (None if measured is None
             else airmod.speed_from_measurement(measured[0], measured[1], temperature_k))
    state = airmod.air_state(temperature_k, float(values["pressure_pa"]),
                             float(values["humidity"]), float(values["co2"]),
                             str(values["model"]), speed)
    names = {"temperature_k": "temperature", "humidity": "humidity", "pressure_pa": "pressure",
             "co2": "co2", "model": "sound_speed"}
    defaults = tuple(sorted(names[k] for k in names if k not in given))
    warnings: list[Note] = []
    if state.model == airmod.MEASURED:
        warnings += _check_measured(state, layers)
    if state.model == "cramer-1993":
        xw = airmod.vapour_mole_fraction(state.humidity, state.temperature_c, state.pressure_pa)
        if not airmod.cramer_in_range(state.temperature_c, state.pressure_pa, xw, state.co2):
            where = next((env.where.get("temperature") for env in layers
                          if env.where.get("temperature")), None)
            if where is not None:
                warnings.append(Note(where, "the air lies outside the range Cramer (1993) was "
                                     "fitted for (0-30 C, 75-102 kPa, CO2 up to 1 %)"))
    # The report names the speed as measured and where: 343.5 m/s at 20 °C, not the 349.3 m/s
    # it was carried to for a flute at 30 °C (the report's own speed_m_s).
    as_measured = ((measured[0], measured[1] - airmod.ZERO_CELSIUS_K) if measured is not None
                   else (state.speed_m_s, state.temperature_c))
    report = AirReport(
        preset=preset,
        temperature_c=state.temperature_c,
        humidity_percent=state.humidity * 100.0,
        pressure_pa=state.pressure_pa,
        co2_ppm=state.co2 * 1e6,
        sound_speed_model=state.model,
        speed_m_s=state.speed_m_s,
        density_kg_m3=state.density_kg_m3,
        defaults=defaults,
        sound_speed_formula=airmod.formula(state.model, *as_measured),
    )
    return GroupAir(state, report, tuple(warnings))


MEASURED_TOLERANCE = 0.01
"""A measured speed more than 1 % (about 17 cents) from Cramer's (1993) for the same air is
worth a second look: Cramer's fit is good to about 300 ppm, so the measurement, its unit or the
temperature is the likelier culprit. Our threshold."""


def _check_measured(state: airmod.Air, layers: tuple[spec_model.Environment, ...]
                    ) -> list[Note]:
    model = airmod.sound_speed("cramer-1993", state.temperature_k, state.pressure_pa,
                               state.humidity, state.co2)
    off = state.speed_m_s / model - 1.0
    if abs(off) <= MEASURED_TOLERANCE:
        return []
    where = next((env.where["sound_speed"] for env in reversed(layers)
                  if "sound_speed" in env.where), None)
    if where is None:
        return []
    return [Note(where, f"the measured speed of sound {state.speed_m_s:.1f} m/s is "
                 f"{100 * off:+.1f} % from Cramer (1993) for this air ({model:.1f} m/s at "
                 f"{state.temperature_c:.1f} C): check the measurement and the temperature")]
