"""An independent check of a two-register flute design: a small transfer-matrix model, written
here from the published formulas, plays the solver's flute in both registers.

The model (lossless, e^{+jωt}), each piece from its source:

- cylinder: [[cos kL, jZc sin kL], [j sin kL / Zc, cos kL]] (standard transmission line;
  J. Woodhouse, Euphonics §11.1.3, there in e^{-iωt});
- open foot and open holes' outer openings: the low-frequency radiation impedance of an
  unflanged pipe, Zr/Zc = (ka)²/4 + j·0.6133·ka (H. Levine & J. Schwinger, Phys. Rev. 73(4),
  383-406, 1948);
- tone hole: the symmetric T-network [[1 + Za/2Zs, Za(1 + Za/4Zs)], [1/Zs, 1 + Za/2Zs]]
  (D. H. Keefe, JASA 88(1), 35-51, 1990; V. Dubos et al., Acta Acustica 85, 153-169, 1999;
  standard form, from memory), with the shunt jZh·k·t_i plus the chimney (height t + t_m, a
  cylinder of the hole's radius) closed by the finger or open to the radiation above; the
  inner length t_i with its frequency dependence and the series lengths t_a of A. Lefebvre &
  G. P. Scavone, JASA 131(4), 3153-3163 (2012) (coefficients from memory or secondary sources),
  the matching length t_m = bδ(1 + 0.207δ³)/8 (Nederveen, Jansen & van Hassel, Acustica 84,
  1998, from memory);
- embouchure hole: an open side hole of the lip-uncovered area between the jet and the
  junction (N. H. Fletcher & T. D. Rossing, The Physics of Musical Instruments, 1998, ch. 16;
  C. J. Nederveen, Acoustical Aspects of Woodwind Instruments, 1969: from memory), and above
  the junction the cork's cavity, a closed stub −jZc·cot(kℓ).

The flute plays where the reactance the jet sees crosses zero upward (the admittance peaks);
each register's crossing is found with scipy's brentq, a reference root finder. The design
goals (2 cents in the first register, 10 in the second) are boresmith's own, not published
figures; the comparison with the engine checks that both compute the same physics to within a
few hundredths of a cent, and that the solver's flute really plays both registers in tune.
The flute is invented.
"""

from __future__ import annotations

import numpy as np
import pytest
from reference_air import AIR
from scipy.optimize import brentq

from compiler.acoustics.impedance import Bore, Head
from compiler.acoustics.solve import GOAL_CENTS, CorkRange, HoleConstraints, design_holes

RHO, C = AIR.density_kg_m3, AIR.speed_m_s
A = 0.0095  # bore radius, m
WALL = 0.0009
DRILLS = tuple(np.round(np.arange(3.0, 12.01, 0.5), 1) / 1000)


def et(midi: int) -> float:
    # 12-TET from A4 = 440 Hz (ISO 16:1975, standard number and year from memory).
    return float(440.0 * 2 ** ((midi - 69) / 12))


def cyl(k: float, length: float, zc: float) -> np.ndarray:
    return np.array([[np.cos(k * length), 1j * zc * np.sin(k * length)],
                     [1j * np.sin(k * length) / zc, np.cos(k * length)]])


def radiation(k: float, radius: float) -> complex:
    zc = RHO * C / (np.pi * radius**2)
    return complex(zc * (0.25 * (k * radius) ** 2 + 1j * 0.6133 * k * radius))


def inner(b: float, a: float, k: float) -> float:
    d = min(b / a, 1.0)
    t0 = b * (0.822 - 0.095 * d - 1.566 * d**2 + 2.138 * d**3 - 1.640 * d**4 + 0.502 * d**5)
    ka = min(k * a, 1.5)
    growth = 0.17 * ka + 0.92 * ka**2 + 0.16 * ka**3 - 0.29 * ka**4
    return float(t0 * (1 + (1 - 4.56 * d + 6.55 * d**2) * growth))


def matching(b: float, a: float) -> float:
    d = min(b / a, 1.0)
    return b * d * (1 + 0.207 * d**3) / 8


def load(z_end: complex, k: float, length: float, zc: float) -> complex:
    """The impedance of a cylinder of ``length`` ended by ``z_end``."""
    m = cyl(k, length, zc)
    return complex((m[0, 0] * z_end + m[0, 1]) / (m[1, 0] * z_end + m[1, 1]))


def hole(k: float, b: float, a: float, opened: bool) -> np.ndarray:
    zh = RHO * C / (np.pi * b * b)
    h = WALL + matching(b, a)
    if opened:
        shunt = 1j * zh * k * inner(b, a, k) + load(radiation(k, b), k, h, zh)
        t_a = (-0.35 + 0.06 * np.tanh(2.7 * WALL / b)) * b * (b / a) ** 2
    else:
        shunt = 1j * zh * k * inner(b, a, k) - 1j * zh / np.tan(k * h)
        t_a = (-0.12 - 0.17 * np.tanh(2.4 * WALL / b)) * b * (b / a) ** 2
    za = 1j * RHO * C * k * t_a / (np.pi * a * a)
    return np.array([[1 + za / (2 * shunt), za * (1 + za / (4 * shunt))],
                     [1 / shunt, 1 + za / (2 * shunt)]])


def jet_reactance(f: float, length: float, xs: list[float], ds: list[float], closed: list[bool],
                  mouth: float, emb_radius: float, lip: float, cork: float) -> float:
    k = 2 * np.pi * f / C
    zc = RHO * C / (np.pi * A * A)
    chain = np.eye(2, dtype=complex)
    edges = [mouth, *xs, length]
    for i in range(len(xs) + 1):
        chain = chain @ cyl(k, edges[i + 1] - edges[i], zc)
        if i < len(xs):
            chain = chain @ hole(k, ds[i] / 2, A, not closed[i])
    z_foot = radiation(k, A)
    z_down = (chain[0, 0] * z_foot + chain[0, 1]) / (chain[1, 0] * z_foot + chain[1, 1])
    y_cork = 1j * np.tan(k * cork) / zc  # closed stub: Z = -jZc cot(kℓ)
    z_junction = 1 / (1 / z_down + y_cork)
    b = emb_radius * np.sqrt(1 - lip)
    zb = RHO * C / (np.pi * b * b)
    z = z_junction + 1j * zb * k * inner(b, A, k)
    z = load(z, k, WALL + matching(b, A), zb) + radiation(k, b)
    return float(z.imag)


def register(n: int, target: float, **flute: object) -> float:
    """The n-th upward reactance crossing from well below the first register (the target over
    2.5n): scan at 10 cents, then brentq."""
    low = target / (2.5 * n)
    grid = low * 2 ** (np.arange(0, 1200 * np.log2(1.3 * target / low), 10.0) / 1200)
    values = [jet_reactance(f, **flute) for f in grid]  # type: ignore[arg-type]
    ups = [i for i in range(len(grid) - 1) if values[i] < 0 <= values[i + 1]]
    i = ups[n - 1]
    return float(brentq(lambda f: jet_reactance(f, **flute), grid[i], grid[i + 1],  # type: ignore[arg-type]
                        xtol=1e-10))


def test_a_two_register_design_plays_both_registers_in_an_independent_model() -> None:
    notes = (72, 74, 76, 77, 79, 81, 83, 84, 86)  # C5 ... D6, six holes and a thumb hole
    n_holes = len(notes) - 1
    table = np.array([[True] * (n_holes - i) + [False] * i for i in range(len(notes))])
    overblown = 5  # C5 ... G5 are also played an octave up
    closed = np.vstack([table, table[:overblown]])
    targets = [et(m) for m in notes] + [et(m + 12) for m in notes[:overblown]]
    registers = [1] * len(notes) + [2] * overblown
    head = Head("embouchure", mouth_position_m=0.04, embouchure_radius_m=0.0048,
                embouchure_chimney_m=WALL, cavity_length_m=0.019, lip_coverage=0.25)
    cork = CorkRange(0.25 * 2 * A, 1.2 * 2 * A, 2 * A)
    limits = HoleConstraints(min_diameter_m=0.004, max_diameter_m=0.011, min_web_m=0.004,
                             max_span_m=0.040)
    d = design_holes(Bore.cylinder(A), WALL, head, closed, targets, AIR, registers=registers,
                     constraints=limits, drills_m=DRILLS, losses="none", cork=cork)
    flute = {"length": d.length_m, "xs": list(d.hole_positions_m),
             "ds": list(d.hole_diameters_m), "mouth": 0.04, "emb_radius": 0.0048,
             "lip": 0.25, "cork": d.cork_m}
    for row, (target, reg) in enumerate(zip(targets, registers, strict=True)):
        got = register(reg, target, closed=list(closed[row]), **flute)
        # the engine and this model agree (the same physics, written twice)
        assert got == pytest.approx(d.predicted_hz[row][reg - 1], rel=2e-5)
        # and the flute plays the note within the design's goal for its register
        assert abs(1200 * np.log2(got / target)) <= GOAL_CENTS[reg]
    assert cork.low_m <= d.cork_m <= cork.high_m
