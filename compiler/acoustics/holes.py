"""Tone (finger) holes as series and shunt impedances, and the closed-form helpers around them.

A side hole of radius b in a bore of radius a (δ = b/a) with a chimney of height t is the
symmetric T-network of Keefe, "Woodwind air column models", JASA 88(1), 35–51 (1990) and
Dubos et al., Acta Acustica 85(2), 153–169 (1999) (standard form, from memory): a series
impedance Za split in two halves around a shunt impedance Zs,

    [1 + Za/(2Zs)   Za(1 + Za/(4Zs))]
    [1/Zs           1 + Za/(2Zs)    ]

with, in the e^{+jωt} convention and Zh = ρc/(πb²) (bore-side hole radius b):

- open:   Zs = jZh·k·t_i + Zchim(Zr), the chimney (height t + t_m) as a short duct loaded by the
          radiation impedance Zr of its outer opening (radiation length t_r); Za = jωρ·t_a(o)/(πa²);
- closed: Zs = jZh·k·t_i + Zchim(∞), the chimney as a stub closed by the finger
          (→ −jZh·cot(k(t + t_m)) for a cylinder); Za = jωρ·t_a(c)/(πa²).

Length corrections: inner length t_i and series lengths t_a from the finite-element fits of
A. Lefebvre & G. P. Scavone, "Characterization of woodwind instrument toneholes with the
finite element method", JASA 131(4), 3153–3163 (2012), the inner length with its frequency
dependence (their eqs. 31–32, seen quoted in secondary sources); matching-volume length t_m
from Nederveen, Jansen & van Hassel, Acustica 84, 957–966 (1998) / Dubos et al., Acta
Acustica 85, 153–169 (1999). These coefficients are from memory or secondary sources, not
verified against the primary papers (the t_i fit agrees with the 0.82b → 0.16b range stated
in the Nederveen 1998 abstract); treat them as provisional.

Radiation of an open hole's outer opening (``HOLE_RADIATION_MODELS``): the opening is cut
through the tube's wall, so what surrounds it is the tube's whole outer surface, flat along
the tube and curving away round it. That is not the geometry of Dalmont, Nederveen & Joly's
(2001) finite-wall formula (``radiation.thick_wall_end_correction``), which describes the end
of a pipe whose only flange is the annulus of its own wall: with the wall as flange, a hole in
a 1 mm wall would radiate nearly as an unflanged pipe end, although the tube's surface
stretches far beyond the wall's thickness on two sides. The ``"on-cylinder"`` fit is made
for exactly this geometry (a hole in a cylinder of outer radius a + t), so the flute models
use it; as a cross-check, Keefe's (1990) experimentally based open-hole length
b·(1.40 − 0.58δ²), less our t_i and t_m, leaves about 0.62b of radiation for δ ≈ 0.35, close
to the on-cylinder value (about 0.65b for a finger hole in a flute tube) and well below
0.8216b. ``"frequency-dependent"`` scales the on-cylinder length by the frequency dependence
of the unflanged end correction (Dalmont et al. 2001), a change under 1 % at finger-hole kb.

Chimney height t is the wall thickness at the hole axis. An undercut (``undercut_m`` = u) widens
the hole at the bore: the chimney becomes a frustum from radius b + u at the bore to b at the
outer surface, and the junction terms (t_i, t_m, t_a, Zh) use the bore-side radius b + u while the
radiation uses the outer radius b. Visco-thermal losses in the chimney follow the bore's loss
model at the chimney radius; the junction's own resistive terms are neglected.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

from compiler.acoustics.air import Air
from compiler.acoustics.bore import frustum_matrix
from compiler.acoustics.radiation import (
    FLANGED_RATIO,
    FLANGED_RESISTANCE,
    UNFLANGED_RATIO,
    UNFLANGED_RESISTANCE,
    lumped_radiation_impedance,
    unflanged_end_correction_ratio,
)

HOLE_RADIATION_MODELS: tuple[str, ...] = (
    "unflanged",
    "flanged",
    "on-cylinder",
    "frequency-dependent",
)
"""Radiation length of an open hole: 0.6133b, 0.8216b, the on-cylinder fit (from memory), or
the on-cylinder fit with the frequency dependence of Dalmont et al. (2001)."""

INNER_KA_MAX = 1.5
"""The frequency term of the inner length is a polynomial in ka fitted over the first
resonances of woodwinds; past ka ≈ 1.5 it turns over, so it is held at its value there (our
choice: flutes' first two registers stay below ka ≈ 0.8)."""

Float = NDArray[np.float64]
Complex = NDArray[np.complex128]


def _delta(b: ArrayLike, a: ArrayLike) -> Float:
    # The fits are made for 0 < δ ≤ 1; a wider opening (a large window) is evaluated at δ = 1.
    return np.asarray(
        np.minimum(np.asarray(b, dtype=np.float64) / np.asarray(a, dtype=np.float64), 1.0),
        dtype=np.float64,
    )


def inner_length(
    hole_radius_m: ArrayLike, bore_radius_m: ArrayLike, wavenumber: ArrayLike | None = None
) -> Float:
    """Inner (junction) length correction t_i of a side hole, metres (Lefebvre & Scavone 2012).

    Low frequency: t_i(0) = b·(0.822 − 0.095δ − 1.566δ² + 2.138δ³ − 1.640δ⁴ + 0.502δ⁵), δ = b/a ≤ 1
    (from memory, not verified against the primary paper; check value, computed from the
    formula as written: b = 4 mm, a = 9.5 mm → 2.476 mm).
    With ``wavenumber`` k (1/m): t_i = t_i(0)·(1 + H(δ)·I(ka)), H = 1 − 4.56δ + 6.55δ²,
    I = 0.17ka + 0.92(ka)² + 0.16(ka)³ − 0.29(ka)⁴ with a the bore radius (Lefebvre & Scavone
    2012, eqs. 31–32, seen quoted in secondary sources; ka held at ``INNER_KA_MAX``). Check
    value, computed from the formula as written: b 4 mm, a 9.5 mm, ka = 0.3 → t_i = 2.557 mm.
    """
    b = np.asarray(hole_radius_m, dtype=np.float64)
    d = _delta(b, bore_radius_m)
    poly = 0.822 + d * (-0.095 + d * (-1.566 + d * (2.138 + d * (-1.640 + d * 0.502))))
    t_i = b * poly
    if wavenumber is not None:
        ka = np.minimum(
            np.asarray(wavenumber, dtype=np.float64) * np.asarray(bore_radius_m, dtype=np.float64),
            INNER_KA_MAX,
        )
        growth = ka * (0.17 + ka * (0.92 + ka * (0.16 - 0.29 * ka)))
        t_i = t_i * (1.0 + (1.0 - 4.56 * d + 6.55 * d * d) * growth)
    return np.asarray(t_i, dtype=np.float64)


def matching_length(hole_radius_m: ArrayLike, bore_radius_m: ArrayLike) -> Float:
    """Matching-volume length t_m = b·δ·(1 + 0.207δ³)/8, metres (Nederveen et al. 1998).

    The extra chimney height that accounts for the saddle-shaped volume where a round hole meets
    a round bore; added to the wall thickness to give the chimney's acoustic height.
    """
    b = np.asarray(hole_radius_m, dtype=np.float64)
    d = _delta(b, bore_radius_m)
    return np.asarray(b * d * (1.0 + 0.207 * d**3) / 8.0, dtype=np.float64)


def series_length(
    hole_radius_m: ArrayLike, bore_radius_m: ArrayLike, chimney_m: ArrayLike, closed: bool
) -> Float:
    """Series length t_a of a side hole, metres, negative (Lefebvre & Scavone 2012, from memory).

    open:   t_a = (−0.35 + 0.06·tanh(2.7 t/b))·b·δ²
    closed: t_a = (−0.12 − 0.17·tanh(2.4 t/b))·b·δ²
    referred to the main bore: Za = jωρ·t_a/(πa²). Check values, computed from the formula as
    written: t/b = 1 gives t_a/(bδ²) = −0.2905 open, −0.2872 closed.
    """
    b = np.asarray(hole_radius_m, dtype=np.float64)
    d = _delta(b, bore_radius_m)
    tb = np.asarray(chimney_m, dtype=np.float64) / b
    coef = -0.12 - 0.17 * np.tanh(2.4 * tb) if closed else -0.35 + 0.06 * np.tanh(2.7 * tb)
    return np.asarray(coef * b * d * d, dtype=np.float64)


def radiation_length(
    model: str,
    hole_radius_m: ArrayLike,
    outer_radius_m: ArrayLike,
    wavenumber: ArrayLike | None = None,
) -> Float:
    """Radiation length t_r of an open hole's outer opening, metres.

    ``"unflanged"`` 0.6133·b (Levine & Schwinger 1948), ``"flanged"`` 0.8216·b (Norris & Sheng
    1989): the two limits quoted by Dalmont, Nederveen & Joly 2001, J. Sound Vib. 244(3),
    505–534. ``"on-cylinder"``: b·(0.8216 − 0.47·(b/(a+w))^0.8), a fit for a hole in a cylinder
    of outer radius a + w attributed to Dalmont et al., Acta Acustica 88, 567–575 (2002):
    recalled from memory, NOT VERIFIED. ``"frequency-dependent"``: the on-cylinder length times
    Δ(kb)/Δ(0) of the unflanged pipe (Dalmont, Nederveen & Joly 2001, quoted in secondary
    sources); without ``wavenumber`` (1/m) its low-frequency limit. See the module docstring
    for why a hole's opening is not treated with the finite-wall pipe-end formula.
    """
    b = np.asarray(hole_radius_m, dtype=np.float64)
    if model == "unflanged":
        return np.asarray(UNFLANGED_RATIO * b, dtype=np.float64)
    if model == "flanged":
        return np.asarray(FLANGED_RATIO * b, dtype=np.float64)
    if model in ("on-cylinder", "frequency-dependent"):
        ratio = np.minimum(b / np.asarray(outer_radius_m, dtype=np.float64), 1.0)
        t_r = b * (FLANGED_RATIO - 0.47 * ratio**0.8)
        if model == "frequency-dependent" and wavenumber is not None:
            kb = np.asarray(wavenumber, dtype=np.float64) * b
            t_r = t_r * unflanged_end_correction_ratio(kb) / UNFLANGED_RATIO
        return np.asarray(t_r, dtype=np.float64)
    raise ValueError(
        f"unknown hole radiation model {model!r}; expected one of {HOLE_RADIATION_MODELS}"
    )


def _radiation_resistance(model: str) -> float:
    return UNFLANGED_RESISTANCE if model == "unflanged" else FLANGED_RESISTANCE


def effective_length(
    hole_radius_m: ArrayLike,
    bore_radius_m: ArrayLike,
    chimney_m: ArrayLike,
    radiation: str = "unflanged",
    undercut_m: ArrayLike = 0.0,
) -> Float:
    """Low-frequency effective length t_e of an open hole, metres, referred to its bore-side area.

    t_e = t_i + (t + t_m)·(b_in/b) + t_r·(b_in/b)², b_in = b + undercut: the inertances of the
    junction, of the chimney (a frustum's inertance is ρt/(π b_in b)) and of the radiation, each
    expressed as a length of duct of the bore-side area (t_e ≈ t + t_i + t_r as in Dubos et al.
    1999 and Lefebvre & Scavone 2012, JASA 131(4), from memory; here with t_m added to the
    chimney). The outer radius for ``"on-cylinder"`` is a + t.
    """
    b = np.asarray(hole_radius_m, dtype=np.float64)
    b_in = b + np.asarray(undercut_m, dtype=np.float64)
    a = np.asarray(bore_radius_m, dtype=np.float64)
    t = np.asarray(chimney_m, dtype=np.float64)
    ratio = b_in / b
    t_r = radiation_length(radiation, b, a + t)
    height = t + matching_length(b_in, a)
    return np.asarray(inner_length(b_in, a) + height * ratio + t_r * ratio**2, dtype=np.float64)


def hole_elements(
    air: Air,
    omega: ArrayLike,
    bore_radius_m: ArrayLike,
    hole_radius_m: ArrayLike,
    chimney_m: ArrayLike,
    undercut_m: ArrayLike = 0.0,
    losses: str = "keefe",
    radiation: str = "unflanged",
) -> tuple[Complex, Complex, Complex, Complex]:
    """Series impedance and shunt admittance of a hole, open and closed: (Za_o, Ys_o, Za_c, Ys_c).

    Units Pa·s/m³ (Za) and m³/(Pa·s) (Ys = 1/Zs); arguments broadcast. See the module docstring
    for the model and its sources.
    """
    w = np.asarray(omega, dtype=np.float64)
    a = np.asarray(bore_radius_m, dtype=np.float64)
    b = np.asarray(hole_radius_m, dtype=np.float64)
    t = np.asarray(chimney_m, dtype=np.float64)
    b_in = b + np.asarray(undercut_m, dtype=np.float64)
    rho, c = air.density_kg_m3, air.speed_m_s
    k = w / c
    mass_in = 1j * w * rho * inner_length(b_in, a, k) / (np.pi * b_in * b_in)
    height = t + matching_length(b_in, a)
    A, B, C, D = frustum_matrix(air, height, b_in, b, w, losses)
    zr = lumped_radiation_impedance(
        k,
        b,
        radiation_length(radiation, b, a + t, k),
        _radiation_resistance(radiation),
        rho * c / (np.pi * b * b),
    )
    zs_open = mass_in + (A * zr + B) / (C * zr + D)
    ys_closed = C / (A + mass_in * C)
    series = 1j * w * rho / (np.pi * a * a)
    za_open = series * series_length(b_in, a, t, closed=False)
    za_closed = series * series_length(b_in, a, t, closed=True)
    return (
        np.asarray(za_open, dtype=np.complex128),
        np.asarray(1.0 / zs_open, dtype=np.complex128),
        np.asarray(za_closed, dtype=np.complex128),
        np.asarray(ys_closed, dtype=np.complex128),
    )


def end_distance(
    downstream_m: ArrayLike,
    bore_radius_m: ArrayLike,
    hole_radius_m: ArrayLike,
    effective_length_m: ArrayLike,
) -> Float:
    """Distance Δ beyond an open hole's centre at which the air column seems to end, metres.

    Low-frequency lumped form, a derived approximation (from Zh ∥ Zdown = jZc tan kΔ, the
    approach of Woodhouse, Euphonics §11.1.3; the idea is Nederveen's, Acoustical Aspects of
    Woodwind Instruments, 1969/1998, attribution from memory):
    Δ = L_d / (1 + L_d·Sh/(S·t_e)), with L_d the distance to the acoustic end below the hole
    (next open hole or foot, its own correction included), S = πa², Sh = πb².
    Check value: a 9.5 mm, b 4 mm, t_e 8.93 mm, L_d = 50 mm + 0.6133a → Δ = 26.48 mm.
    """
    ld = np.asarray(downstream_m, dtype=np.float64)
    q = (
        np.asarray(hole_radius_m, dtype=np.float64) / np.asarray(bore_radius_m, dtype=np.float64)
    ) ** 2
    return np.asarray(
        ld / (1.0 + ld * q / np.asarray(effective_length_m, dtype=np.float64)), dtype=np.float64
    )


def downstream_for_shortening(
    shortening_m: ArrayLike,
    bore_radius_m: ArrayLike,
    hole_radius_m: ArrayLike,
    effective_length_m: ArrayLike,
) -> Float:
    """Inverse of ``end_distance``: the L_d for which L_d − Δ(L_d) equals ``shortening_m``.

    From L_d²q/(1 + L_d q) = s with q = Sh/(S t_e): L_d = (sq + sqrt(s²q² + 4qs))/(2q).
    Used to place a hole so that the column ends a given distance s above its acoustic end below.
    """
    s = np.asarray(shortening_m, dtype=np.float64)
    q = (
        np.asarray(hole_radius_m, dtype=np.float64) / np.asarray(bore_radius_m, dtype=np.float64)
    ) ** 2
    q = q / np.asarray(effective_length_m, dtype=np.float64)
    return np.asarray((s * q + np.sqrt(s * s * q * q + 4.0 * q * s)) / (2.0 * q), dtype=np.float64)


def lattice_cutoff(
    speed_m_s: float,
    bore_radius_m: ArrayLike,
    hole_radius_m: ArrayLike,
    spacing_m: ArrayLike,
    effective_length_m: ArrayLike,
) -> Float:
    """Open tone-hole lattice cutoff frequency, Hz (Benade 1960, JASA 32, 1591–1608; §6e).

    f_c = (c/2π)·(b/a)/sqrt(2s·t_e), with 2s = ``spacing_m`` the centre-to-centre hole spacing:
    the resonance of one hole's inertance ρt_e/Sh with the compliance S·2s/(ρc²) of one cell.
    Check value: c 343.36, a 9.5 mm, b 5 mm, 2s 30 mm, t_e 8 mm → 1856.6 Hz.
    """
    ratio = np.asarray(hole_radius_m, dtype=np.float64) / np.asarray(
        bore_radius_m, dtype=np.float64
    )
    cell = np.asarray(spacing_m, dtype=np.float64) * np.asarray(
        effective_length_m, dtype=np.float64
    )
    return np.asarray(speed_m_s / (2.0 * np.pi) * ratio / np.sqrt(cell), dtype=np.float64)
