"""Bore elements: characteristic impedance, propagation constant and transfer matrices.

Plane-wave acoustics in SI units with the e^{+jωt} convention. Pressure P (Pa) and volume
velocity U (m³/s, positive in the direction of increasing position) at the two ends of an
element are related by

    [P1]   [A  B] [P2]
    [U1] = [C  D] [U2]

(the standard transfer-matrix form, e.g. Chaigne & Kergomard 2016, Acoustics of Musical
Instruments, ch. 7, from memory), input (1) at the smaller position. Every function here is
vectorised: the radius, length and angular frequency arguments broadcast against each other
and the four entries come back as separate arrays of the broadcast shape. All elements are
reciprocal, AD − BC = 1; a reversed element (input at the larger position) has the matrix
[[D, B], [C, A]].

Frequencies must be positive: the loss model divides by sqrt(ω).
"""

from __future__ import annotations

from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from compiler.acoustics.air import Air

LOSS_MODELS: tuple[str, ...] = ("keefe", "none")
"""Wall-loss models: Keefe's (1984) large-rv series, or lossless."""

Complex = NDArray[np.complex128]
Matrix = tuple[Complex, Complex, Complex, Complex]

# Keefe 1984, J. Acoust. Soc. Am. 75(1), 58–62: large-rv series coefficients as published for
# air at 300 K (all six reproduced to 3 digits from the exact Zwikker–Kosten solution).
# The first-order ones are (1 ∓ (γ−1)/ν)/√2; at 20 °C they would read 1.0446 and 0.3693,
# a 0.04 % change of a loss term that is itself under 1 %, so the published constants are used.
_ZC_1, _ZC_2, _ZC_3 = 0.369, 1.149, 0.303
_G_1, _G_2, _G_3 = 1.045, 1.080, 0.750


def shear_number(air: Air, radius_m: ArrayLike, omega: ArrayLike) -> NDArray[np.float64]:
    """rv = a·sqrt(ρω/η): the radius over the viscous boundary-layer thickness (Keefe 1984)."""
    a = np.asarray(radius_m, dtype=np.float64)
    w = np.asarray(omega, dtype=np.float64)
    return np.asarray(shear(air, a, w), dtype=np.float64)


def shear(air: Air, radius: Any, omega: Any) -> Any:
    """``shear_number`` for a float (a fast path for the closed form) or an array alike."""
    return radius * (air.density_kg_m3 * omega / air.viscosity_pa_s) ** 0.5


def characteristic(
    air: Air, radius_m: ArrayLike, omega: ArrayLike, losses: str = "keefe"
) -> tuple[Complex, Complex]:
    """Characteristic impedance Zc (Pa·s/m³) and propagation constant Γ (1/m) of a cylinder.

    Waves travel as exp(−Γx), Γ = α + jω/v_p. Lossless: Zc = ρc/(πa²), Γ = jk, k = ω/c.
    ``losses="keefe"``: D. H. Keefe, "Acoustical wave propagation in cylindrical ducts:
    transmission line parameter approximations for isothermal and nonisothermal boundary
    conditions", JASA 75(1), 58–62 (1984), large-rv series (within 1 % for rv ≳ 10):

        Zc = Z0·[1 + 0.369/rv − j(0.369/rv + 1.149/rv² + 0.303/rv³)]
        Γ  = k·[1.045/rv + 1.080/rv² + 0.750/rv³ + j(1 + 1.045/rv)]

    with rv from ``shear_number``. Below rv ≈ 10 (a 1 mm radius under ~50 Hz) the series is
    outside its stated range; flute bores and holes at audio frequencies stay above it.
    """
    if losses not in LOSS_MODELS:
        raise ValueError(f"unknown loss model {losses!r}; expected one of {', '.join(LOSS_MODELS)}")
    a = np.asarray(radius_m, dtype=np.float64)
    w = np.asarray(omega, dtype=np.float64)
    z0 = air.density_kg_m3 * air.speed_m_s / (np.pi * a * a)
    k = w / air.speed_m_s
    if losses == "none":
        return np.asarray(z0 + 0j, dtype=np.complex128), np.asarray(1j * k, dtype=np.complex128)
    zc_ratio, gamma_ratio = keefe_series(1.0 / shear_number(air, a, w))
    return (np.asarray(z0 * zc_ratio, dtype=np.complex128),
            np.asarray(k * gamma_ratio, dtype=np.complex128))


def keefe_series(x: Any) -> tuple[Any, Any]:
    """Zc/Z0 and Γ/k of Keefe's (1984) series for x = 1/rv (see ``characteristic``).

    Works alike on a float (a fast path for the closed form, one frequency at a time) and on
    a numpy array.
    """
    zc = 1.0 + _ZC_1 * x - 1j * (x * (_ZC_1 + x * (_ZC_2 + x * _ZC_3)))
    gamma = x * (_G_1 + x * (_G_2 + x * _G_3)) + 1j * (1.0 + _G_1 * x)
    return zc, gamma


def phase_speed(
    air: Air, radius_m: ArrayLike, omega: ArrayLike, losses: str = "keefe"
) -> NDArray[np.float64]:
    """Phase velocity v_p = ω / Im Γ (m/s) of plane waves in a cylinder of radius ``radius_m``.

    From ``characteristic``: with Keefe's (1984) series Im Γ = k·(1 + 1.045/rv), so
    v_p = c / (1 + 1.045/rv): the wall's boundary layers slow sound down, the more the
    narrower the pipe and the lower the frequency (a = 9.5 mm, 440 Hz, 20 °C: v_p/c = 0.99194,
    about 14 cents). Lossless: v_p = c.
    """
    w = np.asarray(omega, dtype=np.float64)
    _, gamma = characteristic(air, radius_m, w, losses)
    return np.asarray(w / gamma.imag, dtype=np.float64)


def cylinder_matrix(length_m: ArrayLike, zc: ArrayLike, gamma: ArrayLike) -> Matrix:
    """Transfer matrix of a cylinder of length L (standard transmission-line form; the lossless
    case is eq. (3) of Woodhouse, Euphonics §11.1.3, there in the e^{−iωt} convention).

    A = D = cosh ΓL, B = Zc sinh ΓL, C = sinh ΓL / Zc. Lossless (Γ = jk): cos kL, jZc sin kL,
    j sin kL / Zc.
    """
    gl = np.asarray(gamma) * np.asarray(length_m, dtype=np.float64)
    ch = np.cosh(gl)
    sh = np.sinh(gl)
    z = np.asarray(zc)
    return ch, z * sh, sh / z, ch


def equivalent_radius(r1: ArrayLike, r2: ArrayLike) -> NDArray[np.float64]:
    """Radius at which a frustum's losses are evaluated: the logarithmic mean (r2 − r1)/ln(r2/r1).

    The leading loss terms scale as 1/rv ∝ 1/a, so a uniform loss at the radius
    L/∫dx/a(x) = the logarithmic mean reproduces the frustum's first-order attenuation and
    dispersion exactly (our choice; the "equivalent radius" practice is discussed by Grothe,
    Baumgart & Nederveen 2023, arXiv:2303.12750). Equal radii give that radius.
    """
    a1 = np.asarray(r1, dtype=np.float64)
    a2 = np.asarray(r2, dtype=np.float64)
    same = np.abs(a2 - a1) <= 1e-9 * np.maximum(a1, a2)
    ratio = np.where(same, 2.0, a2 / a1)
    return np.asarray(np.where(same, 0.5 * (a1 + a2), (a2 - a1) / np.log(ratio)), dtype=np.float64)


def frustum_matrix(
    air: Air,
    length_m: ArrayLike,
    r1_m: ArrayLike,
    r2_m: ArrayLike,
    omega: ArrayLike,
    losses: str = "keefe",
) -> Matrix:
    """Transfer matrix of a conical frustum from radius r1 (input) to r2 over axial length L.

    Exact lossless spherical-wave matrix (exact spherical-wave derivation from p = e^{∓jkx}/x,
    checked numerically; matches Chaigne & Kergomard 2016, Acoustics of Musical Instruments,
    ch. 7, from memory), with apex distances x1 = r1·L/(r2 − r1), x2 = x1 + L (signed:
    negative for a converging frustum, for which the same formula holds):

        A = (x2/x1) cos kL − sin kL/(k x1)
        B = j ρc/(π r1 r2) · sin kL
        C = j (π r1 r2)/(ρc) · [(1 + 1/(k² x1 x2)) sin kL − (1/(k x1) − 1/(k x2)) cos kL]
        D = (x1/x2) cos kL + sin kL/(k x2)

    With losses, jk → Γ and ρc → Zc·πa² at the ``equivalent_radius`` (common practice, cf.
    Grothe, Baumgart & Nederveen 2023, arXiv:2303.12750):
    A = (x2/x1) cosh ΓL − sinh ΓL/(Γx1), B = z sinh ΓL/(π r1 r2),
    C = (π r1 r2)/z·[(1 − 1/(Γ²x1x2)) sinh ΓL + L/(Γ x1 x2) cosh ΓL],
    D = (x1/x2) cosh ΓL + sinh ΓL/(Γx2), z = Zc(a_eq)·π a_eq². Nearly equal radii
    (|r2 − r1| ≤ 1e-9·r) use the cylinder matrix.
    """
    L = np.asarray(length_m, dtype=np.float64)
    a1 = np.asarray(r1_m, dtype=np.float64)
    a2 = np.asarray(r2_m, dtype=np.float64)
    w = np.asarray(omega, dtype=np.float64)
    dr = a2 - a1
    cyl = np.abs(dr) <= 1e-9 * np.maximum(a1, a2)
    if np.all(cyl):
        return cylinder_matrix(L, *characteristic(air, a1, w, losses))
    a_eq = equivalent_radius(a1, a2)
    zc, gamma = characteristic(air, a_eq, w, losses)
    z = zc * (np.pi * a_eq * a_eq)
    s12 = np.pi * a1 * a2
    # Dummy apex distances where the element is cylindrical, so that no branch divides by 0.
    x1 = np.where(cyl, 1.0, a1 * L / np.where(cyl, 1.0, dr))
    x1 = np.where(np.abs(x1) < 1e-300, 1.0, x1)
    x2 = x1 + L
    gl = gamma * L
    ch = np.cosh(gl)
    sh = np.sinh(gl)
    A = (x2 / x1) * ch - sh / (gamma * x1)
    B = z * sh / s12
    C = (s12 / z) * ((1.0 - 1.0 / (gamma * gamma * x1 * x2)) * sh + L / (gamma * x1 * x2) * ch)
    D = (x1 / x2) * ch + sh / (gamma * x2)
    if np.any(cyl):
        cA, cB, cC, cD = cylinder_matrix(L, zc, gamma)
        A, B, C, D = (
            np.where(cyl, cyl_v, cone_v) for cyl_v, cone_v in ((cA, A), (cB, B), (cC, C), (cD, D))
        )
    return (
        np.asarray(A, dtype=np.complex128),
        np.asarray(B, dtype=np.complex128),
        np.asarray(C, dtype=np.complex128),
        np.asarray(D, dtype=np.complex128),
    )


def input_impedance(matrix: Matrix, load: ArrayLike) -> Complex:
    """Impedance at the input of an element loaded by ``load``: (A·ZL + B)/(C·ZL + D)."""
    A, B, C, D = matrix
    zl = np.asarray(load)
    return np.asarray((A * zl + B) / (C * zl + D), dtype=np.complex128)
