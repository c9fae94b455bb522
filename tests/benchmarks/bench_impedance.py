"""Benchmark of the acoustic engine (a script, not collected by pytest).

Run: python tests/benchmarks/bench_impedance.py

Prints:
- impedance spectra per second for a six-hole flute, 2000 frequencies × 14 fingerings, in one
  vectorised evaluation;
- the same evaluation as a plain Python loop, one frequency and one fingering per call, and the
  speed ratio (the loop is timed on a subset and scaled; its values are checked against the
  vectorised ones);
- the full solve time of an eight-hole side-blown flute with two registers (9 fingerings, first
  register solved, second predicted), drill snapping included.
"""

from __future__ import annotations

import sys
import time
from collections.abc import Callable
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

from compiler.acoustics.air import Air  # noqa: E402
from compiler.acoustics.impedance import Bore, Head, Hole, Instrument, input_impedance  # noqa: E402
from compiler.acoustics.solve import (  # noqa: E402
    CorkRange,
    Design,
    HoleConstraints,
    design_holes,
)

AIR = Air(293.15, 101325.0, 0.5, 0.0004, "benade", 343.282, 1.20391, 1.81439e-5, 1.40189, 0.7092)


def best_of(n: int, fn: Callable[[], object]) -> float:
    times = []
    for _ in range(n):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return min(times)


def six_hole_flute() -> tuple[Instrument, np.ndarray]:
    holes = tuple(Hole(0.17 + 0.021 * i, 0.0036 + 0.0002 * i, 0.0013) for i in range(6))
    head = Head(
        "duct",
        mouth_position_m=0.025,
        window_length_m=0.006,
        window_width_m=0.011,
        window_thickness_m=0.0013,
        cavity_length_m=0.003,
    )
    flute = Instrument(Bore.cylinder(0.0095), holes, head, 0.33)
    rng = np.random.default_rng(1)
    scale = np.array([[True] * (6 - i) + [False] * i for i in range(7)])
    fingerings = np.vstack([scale, rng.random((7, 6)) < 0.5])  # 14 fingerings
    return flute, fingerings


def main() -> None:
    flute, fingerings = six_hole_flute()
    freqs = np.linspace(50.0, 4000.0, 2000)
    vec = best_of(5, lambda: input_impedance(flute, AIR, freqs, fingerings))
    n_spectra = fingerings.shape[0]
    print(
        f"vectorised: 2000 frequencies x {n_spectra} fingerings in {vec * 1e3:.1f} ms "
        f"= {n_spectra / vec:.0f} spectra/s, {freqs.size * n_spectra / vec / 1e6:.2f} M points/s"
    )

    subset = freqs[::20]  # 100 frequencies, scaled up to 2000 below
    z_ref = input_impedance(flute, AIR, subset, fingerings)

    def loop() -> np.ndarray:
        out = np.empty((n_spectra, subset.size), dtype=complex)
        for i in range(n_spectra):
            for j, f in enumerate(subset):
                out[i, j] = input_impedance(flute, AIR, [f], fingerings[i])[0, 0]
        return out

    assert np.allclose(loop(), z_ref, rtol=1e-12)
    per_loop = best_of(2, loop) * freqs.size / subset.size
    print(
        f"scalar loop: {per_loop:.2f} s for the same 2000 x {n_spectra} "
        f"(timed on {subset.size} frequencies); ratio {per_loop / vec:.0f}x"
    )

    def et(m: int) -> float:
        return 440.0 * 2 ** ((m - 69) / 12)

    notes = (72, 74, 76, 77, 79, 81, 83, 84, 86)
    scale = np.array([[True] * (8 - i) + [False] * i for i in range(9)])
    table = np.vstack([scale, scale[:5]])  # C5 ... G5 overblown as well
    targets = [et(m) for m in notes] + [et(m + 12) for m in notes[:5]]
    regs = [1] * 9 + [2] * 5
    head = Head(
        "embouchure",
        mouth_position_m=0.03,
        embouchure_radius_m=0.0045,
        embouchure_chimney_m=0.0035,
        cavity_length_m=0.017,
    )
    drills = tuple(np.arange(2.0, 13.01, 0.5) / 1000)
    limits = HoleConstraints(max_diameter_m=0.010)
    bore_d = 0.01905 - 2 * 0.00124
    cork = CorkRange(0.25 * bore_d, 1.2 * bore_d, bore_d)

    def solve() -> Design:
        return design_holes(
            Bore.cylinder(bore_d / 2),
            0.00124,
            head,
            table,
            targets,
            AIR,
            registers=regs,
            drills_m=drills,
            constraints=limits,
            cork=cork,
        )

    t_solve = best_of(5, solve)
    design = solve()
    worst = [max(abs(r) for r, g in zip(design.residual_cents, regs, strict=True) if g == reg)
             for reg in (1, 2)]
    print(
        f"eight-hole two-register solve (cork free): {t_solve * 1e3:.0f} ms (best of 5), "
        f"{design.iterations} Gauss-Newton iterations, worst error after drill snapping "
        f"{worst[0]:.2f} cents (first register), {worst[1]:.2f} cents (second)"
    )


if __name__ == "__main__":
    main()
