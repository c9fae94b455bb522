"""Open-end corrections and radiation impedance of a pipe end, SI units.

Time convention e^{+jωt}: a mass-like (inertive) end has a positive reactance, Z = jωM.
The radiation impedance ``Zr`` is the acoustic impedance (Pa·s/m³) that the open end presents
to the air column; with the characteristic impedance ``zc = ρc/S`` of the pipe it reads
``Zr/zc = r + j·kΔ`` at low frequency, where Δ is the end correction and r the radiation
resistance.

Models (``RADIATION_MODELS``):

- ``"rule-of-thumb"``: Δ = k·d per open end with k = 0.3 by default (0.3·d = 0.6·a), common
  practice; resistance as unflanged.
- ``"unflanged"``: Δ = 0.6133·a, the exact low-frequency limit of Levine & Schwinger, "On the
  radiation of sound from an unflanged circular pipe", Phys. Rev. 73(4), 383–406 (1948);
  resistance (ka)²/4, the same paper's low-frequency limit.
- ``"flanged"``: Δ = 0.8216·a, pipe in an infinite flange (Norris & Sheng 1989, quoted in
  Dalmont, Nederveen & Joly, J. Sound Vib. 244(3), 505–534, 2001); resistance (ka)²/2, the
  low-frequency limit of a baffled piston.
- ``"frequency-dependent"``: unflanged pipe, Δ(ka) and |R|(ka) from the approximations of
  Dalmont, Nederveen & Joly (2001), p. 509 (seen only as quoted in secondary sources, not
  verified against the primary paper; valid for ka below about 3.5).
- ``"flanged-frequency-dependent"``: Δ(ka) = 0.8216·a / (1 + (0.77ka)²/(1 + 0.77ka)), a form
  commonly quoted for the flanged pipe (from memory): NOT VERIFIED against its primary source
  (Norris & Sheng 1989 / Silva, Guillemain, Kergomard, Mallaroni & Norris, J. Sound Vib.
  322(1–2), 255–263, 2009); resistance (ka)²/2 (low-frequency limit).

The low-frequency models are meant for ka ≲ 0.5, the regime of flutes' foot ends and holes.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

Float = NDArray[np.float64]

END_CORRECTION_MODELS: tuple[str, ...] = (
    "rule-of-thumb",
    "unflanged",
    "flanged",
    "frequency-dependent",
)
"""End-correction models accepted by ``end_correction`` (and by ``radiation_impedance``)."""

RADIATION_MODELS: tuple[str, ...] = END_CORRECTION_MODELS + ("flanged-frequency-dependent",)
"""All models accepted by ``end_correction`` and ``radiation_impedance``."""

UNFLANGED_RATIO = 0.6133
"""Δ/a of an unflanged thin-walled pipe, ka → 0 (Levine & Schwinger 1948)."""
FLANGED_RATIO = 0.8216
"""Δ/a of a pipe in an infinite flange, ka → 0 (Norris & Sheng 1989; Dalmont et al. 2001)."""

# Low-frequency radiation resistance r = coefficient · (ka)²: 1/4 unflanged (Levine &
# Schwinger 1948), 1/2 for a baffled piston (textbook, e.g. Kinsler & Frey).
UNFLANGED_RESISTANCE = 0.25
FLANGED_RESISTANCE = 0.5


def _check(model: str) -> None:
    if model not in RADIATION_MODELS:
        raise ValueError(
            f"unknown end-correction model {model!r}; expected one of {', '.join(RADIATION_MODELS)}"
        )


def unflanged_reflection_magnitude(ka: ArrayLike) -> NDArray[np.float64]:
    """|R| of an unflanged thin-walled pipe (Dalmont, Nederveen & Joly 2001, p. 509; V-sec).

    |R| = (1 + 0.2 ka − 0.084 (ka)²) / (1 + 0.2 ka + (0.5 − 0.084)(ka)²), for ka < ~3.5.
    At low ka, |R| ≈ 1 − (ka)²/2 (Levine & Schwinger 1948).
    """
    x = np.asarray(ka, dtype=np.float64)
    return np.asarray(
        (1.0 + 0.2 * x - 0.084 * x**2) / (1.0 + 0.2 * x + (0.5 - 0.084) * x**2), dtype=np.float64
    )


def unflanged_end_correction_ratio(ka: ArrayLike) -> NDArray[np.float64]:
    """Δ/a of an unflanged thin-walled pipe vs ka (Dalmont, Nederveen & Joly 2001; V-sec).

    Δ/a = 0.6133 · [(1 + 0.044 (ka)²)/(1 + 0.19 (ka)²) − 0.02 sin²(2ka)], for ka < ~3.8.
    """
    x = np.asarray(ka, dtype=np.float64)
    return np.asarray(
        UNFLANGED_RATIO
        * ((1.0 + 0.044 * x**2) / (1.0 + 0.19 * x**2) - 0.02 * np.sin(2.0 * x) ** 2),
        dtype=np.float64,
    )


def flanged_end_correction_ratio(ka: ArrayLike) -> NDArray[np.float64]:
    """Δ/a of a flanged pipe vs ka: 0.8216 / (1 + (0.77 ka)² / (1 + 0.77 ka)).

    A commonly quoted form (from memory) attributed to Norris & Sheng (1989) and Silva et al.
    (2009, J. Sound Vib. 322(1–2), 255–263). NOT VERIFIED against the primary sources; its
    ka → 0 limit 0.8216 is (Dalmont, Nederveen & Joly 2001, J. Sound Vib. 244(3), 505–534).
    """
    x = 0.77 * np.asarray(ka, dtype=np.float64)
    return np.asarray(FLANGED_RATIO / (1.0 + x**2 / (1.0 + x)), dtype=np.float64)


def thick_wall_end_correction(inner_radius_m: ArrayLike, outer_radius_m: ArrayLike) -> Float:
    """Low-frequency end correction Δ (m) of an unflanged pipe with a wall of finite thickness.

    Δ = Δ∞ + (a/b)·(Δ0 − Δ∞) + 0.057·(a/b)·[1 − (a/b)^5]·a, with inner radius a, outer radius b,
    Δ0 = 0.6133·a (thin wall, Levine & Schwinger 1948) and Δ∞ = 0.8216·a (infinite flange,
    Norris & Sheng 1989): the interpolation of Dalmont, Nederveen & Joly, "Radiation impedance of
    tubes with different flanges: numerical and experimental investigations", J. Sound Vib.
    244(3), 505–534 (2001). The formula is recalled from memory; it was checked numerically to
    about 0.5 % at b/a = 1.05 and 1.21, and its limits are exact: b = a gives 0.6133·a, b → ∞
    gives 0.8216·a. An outer radius below the inner one is treated as a thin wall.
    """
    a = np.asarray(inner_radius_m, dtype=np.float64)
    b = np.maximum(np.asarray(outer_radius_m, dtype=np.float64), a)
    if np.any(a <= 0.0):
        raise ValueError("an end correction needs a positive radius")
    q = a / b
    ratio = FLANGED_RATIO + q * (UNFLANGED_RATIO - FLANGED_RATIO) + 0.057 * q * (1.0 - q**5)
    return np.asarray(ratio * a, dtype=np.float64)


def end_correction(
    model: str, radius_m: ArrayLike, k: float = 0.3, ka: ArrayLike | None = None
) -> float | NDArray[np.float64]:
    """End correction Δ in metres of one open end of radius ``radius_m``.

    model: one of ``RADIATION_MODELS`` (``END_CORRECTION_MODELS`` are the ones a spec names).
    ``"rule-of-thumb"`` gives k·d = k·2a (k = 0.3 by default: common practice); ``"unflanged"``
    0.6133·a (Levine & Schwinger 1948); ``"flanged"`` 0.8216·a (Norris & Sheng 1989);
    ``"frequency-dependent"`` a·Δ(ka)/a of Dalmont et al. 2001 (unflanged); and
    ``"flanged-frequency-dependent"`` the unverified flanged form. For the two frequency-dependent
    models ``ka`` (dimensionless) is required for a frequency; ``ka=None`` gives their ka → 0
    limit. Returns a float for scalar input, else an array broadcast over radius and ka.
    """
    _check(model)
    a = np.asarray(radius_m, dtype=np.float64)
    if np.any(a <= 0.0):
        raise ValueError("an end correction needs a positive radius")
    if model == "rule-of-thumb":
        out = k * 2.0 * a
    elif model == "unflanged":
        out = UNFLANGED_RATIO * a
    elif model == "flanged":
        out = FLANGED_RATIO * a
    elif model == "frequency-dependent":
        out = a * (UNFLANGED_RATIO if ka is None else unflanged_end_correction_ratio(ka))
    else:
        out = a * (FLANGED_RATIO if ka is None else flanged_end_correction_ratio(ka))
    out = np.asarray(out, dtype=np.float64)
    return float(out) if out.ndim == 0 else out


def lumped_radiation_impedance(
    k_wave: ArrayLike, radius_m: ArrayLike, delta_m: ArrayLike, resistance: float, zc: ArrayLike
) -> NDArray[np.complex128]:
    """Low-frequency radiation impedance Zr = zc·(resistance·(ka)² + j·k·Δ) (e^{+jωt}).

    The standard low-frequency expansion of the radiation impedance of an open end: a mass
    (end correction Δ, metres) and a resistance growing as (ka)² (coefficient 1/4 unflanged,
    Levine & Schwinger 1948; 1/2 flanged, baffled piston). zc = ρc/S of the opening.
    """
    k = np.asarray(k_wave, dtype=np.float64)
    ka = k * np.asarray(radius_m, dtype=np.float64)
    z = np.asarray(zc) * (resistance * ka**2 + 1j * k * np.asarray(delta_m, dtype=np.float64))
    return np.asarray(z, dtype=np.complex128)


def radiation_impedance(
    model: str,
    radius_m: ArrayLike,
    k_wave: ArrayLike,
    zc: ArrayLike,
    outer_radius_m: ArrayLike | None = None,
) -> NDArray[np.complex128]:
    """Radiation impedance of an open pipe end of radius ``radius_m`` (Pa·s/m³, e^{+jωt}).

    k_wave: wavenumber ω/c (1/m, array); zc: characteristic impedance ρc/(πa²) of the pipe.
    ``"frequency-dependent"`` uses the reflection coefficient of Dalmont et al. (2001),
    R = −|R|·exp(−2jkΔ(ka)), Zr = zc·(1 + R)/(1 − R); at low ka this tends to
    zc·((ka)²/4 + j·0.6133·ka) (Levine & Schwinger 1948). The other models use the low-frequency
    form of ``lumped_radiation_impedance`` with their Δ (see the module docstring).

    ``outer_radius_m``: the pipe's outer radius at this end (None: a thin wall). A wall moves
    the unflanged end correction toward the flanged one (``thick_wall_end_correction``):
    ``"unflanged"`` takes that Δ; ``"frequency-dependent"`` keeps the shape of Δ(ka) and |R| of
    the thin pipe and scales Δ by Δ_wall(0)/Δ_thin(0) (our approximation: the wall's effect is
    a low-frequency one, and a flute's foot stays below ka ≈ 0.5). The flanged and rule-of-thumb
    models already stand for a given end and ignore it.
    """
    _check(model)
    k = np.asarray(k_wave, dtype=np.float64)
    a = np.asarray(radius_m, dtype=np.float64)
    ka = k * a
    wall: float | Float = 1.0
    if outer_radius_m is not None and model in ("unflanged", "frequency-dependent"):
        wall = thick_wall_end_correction(a, outer_radius_m) / (UNFLANGED_RATIO * a)
    if model == "frequency-dependent":
        refl = -unflanged_reflection_magnitude(ka) * np.exp(
            -2j * k * a * wall * unflanged_end_correction_ratio(ka)
        )
        return np.asarray(np.asarray(zc) * (1.0 + refl) / (1.0 - refl), dtype=np.complex128)
    if model == "flanged-frequency-dependent":
        return lumped_radiation_impedance(
            k, a, a * flanged_end_correction_ratio(ka), FLANGED_RESISTANCE, zc
        )
    resistance = FLANGED_RESISTANCE if model == "flanged" else UNFLANGED_RESISTANCE
    return lumped_radiation_impedance(k, a, wall * end_correction(model, a), resistance, zc)
