"""The example flutes as resolved.json gives them, played by a lossy transfer-matrix model of
our own: both registers of every fingering within a few cents of the engine's prediction.

The model is written here from the papers, and on purpose with other published fits than the
engine's wherever the literature offers two (e^{+jωt}):

- bore: a lossy transmission line, Zc and Γ from D. H. Keefe, JASA 75(1), 58-62 (1984),
  large-rv series; air viscosity η = 1.846e-5·(1 + 0.0025·(T − 300 K)) Pa·s (A. H. Benade,
  JASA 44(2), 616-623, 1968, from memory); speed and density as resolved.json gives them;
- open foot: Levine & Schwinger's unflanged pipe (Phys. Rev. 73(4), 383-406, 1948), end
  correction 0.6133a − 0.1168a(ka)² and resistance (ka)²/4 (low-ka form, from memory), with
  no allowance for the wall (the engine adds Dalmont, Nederveen & Joly 2001's finite wall);
- tone holes: D. H. Keefe's T-network (JASA 88(1), 35-51, 1990) with his series length
  t_a = 0.47bδ⁴/(tanh(1.84t/b) + 0.62δ² + 0.64δ) referred to the hole, a closed hole a stub of
  the chimney plus his matching length bδ(1 + 0.172δ²)/8 (both from memory); an open hole's
  length from its inner face out: the inner length of V. Dubos et al., Acta Acustica 85,
  153-169 (1999), t_i = b(0.82 − 1.4δ² + 0.75δ^2.7) (from memory), with no frequency
  dependence (the engine uses Lefebvre & Scavone 2012's fit, with it), the chimney, and the
  outer radiation length of a hole in a cylinder b(0.8216 − 0.47(b/(a + w))^0.8) (Dalmont et
  al. 2002, from memory, the one term shared with the engine);
- head: the window, or the embouchure hole less the lip's cover, as an open hole of the same
  area in series with the bore and, in parallel, the closed cavity above it (N. H. Fletcher &
  T. D. Rossing, The Physics of Musical Instruments, 1998, ch. 16, from memory);
- a register plays where the reactance the jet sees crosses zero upward, found with scipy's
  brentq (a reference root finder).

Published fits of a hole's lengths differ by tenths of a millimetre, a few cents on these
flutes: the agreement asked is 6 cents (found: within 2.5 cents in the first register, and up
to 4.3 at the top of the whistle's second register, near 2.2 kHz, where the inner length's
frequency dependence left out here counts most). Keefe's 1990 open-hole length
b(1.40 − 0.58δ²) would put both flutes 7 to 23 cents flatter: the spread a calibration on a
prototype takes up.
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest
from scipy.optimize import brentq

from compiler.emit.resolved_json import dumps
from compiler.resolve.resolver import resolve
from compiler.spec import load_spec

EXAMPLES = Path(__file__).resolve().parents[2] / "specs_examples"


class Flute:
    """One pipe of resolved.json, in metres."""

    def __init__(self, resolved: dict) -> None:  # type: ignore[type-arg]
        pipe = resolved["pipes"][0]
        air = resolved["groups"][0]["air"]
        self.c, self.rho = air["speed_m_s"], air["density_kg_m3"]
        self.eta = 1.846e-5 * (1 + 0.0025 * (air["temperature_c"] + 273.15 - 300.0))
        self.a = pipe["inside_diameter_mm"] / 2000
        self.wall = pipe["wall_mm"] / 1000
        self.length = pipe["cut_length_mm"] / 1000
        self.holes = [(h["position_from_top_mm"] / 1000, h["diameter_mm"] / 2000,
                       h["chimney_mm"] / 1000) for h in pipe["holes"]]
        head = pipe["head"]
        if head["kind"] == "embouchure":
            self.mouth = head["embouchure_from_top_mm"] / 1000
            self.b = head["embouchure_diameter_mm"] / 2000 * np.sqrt(1 - 0.25)  # lip cover 1/4
            self.cavity = head["cork_mm"] / 1000
        else:  # the window, its area as a circle; the block's face at its upper edge
            self.mouth = (head["labium_from_top_mm"] - head["window_length_mm"] / 2) / 1000
            self.b = np.sqrt(head["window_length_mm"] * head["window_width_mm"] / np.pi) / 1000
            self.cavity = head["window_length_mm"] / 2000
        self.fingerings = pipe["fingerings"]

    def line(self, w: float, length: float) -> np.ndarray:
        k, a = w / self.c, self.a
        rv = a * np.sqrt(w * self.rho / self.eta)
        zc = self.rho * self.c / (np.pi * a * a) * (
            1 + 0.369 / rv - 1j * (0.369 / rv + 1.149 / rv**2 + 0.303 / rv**3))
        g = k * (1.045 / rv + 1.080 / rv**2 + 0.750 / rv**3) + 1j * k * (1 + 1.045 / rv)
        return np.array([[np.cosh(g * length), zc * np.sinh(g * length)],
                         [np.sinh(g * length) / zc, np.cosh(g * length)]])

    def open_impedance(self, k: float, b: float, t: float) -> complex:
        """An open hole (or the mouth) seen from the bore: Dubos's inner length, the chimney
        with the matching length, the radiation length and resistance of its outer end."""
        d = b / self.a
        t_i = b * (0.82 - 1.4 * d**2 + 0.75 * d**2.7)
        t_m = b * d * (1 + 0.172 * d**2) / 8
        t_r = b * (0.8216 - 0.47 * (b / (self.a + self.wall)) ** 0.8)
        zh = self.rho * self.c / (np.pi * b * b)
        return complex(zh * (1j * (k * t_i + np.tan(k * (t + t_m)) + k * t_r)
                             + 0.25 * (k * b) ** 2))

    def hole(self, k: float, b: float, t: float, opened: bool) -> np.ndarray:
        d = b / self.a
        zh = self.rho * self.c / (np.pi * b * b)
        height = t + b * d * (1 + 0.172 * d**2) / 8
        if opened:
            zs = self.open_impedance(k, b, t)
            t_a = 0.47 * b * d**4 / (np.tanh(1.84 * height / b) + 0.62 * d**2 + 0.64 * d)
        else:
            zs = -1j * zh / np.tan(k * height)
            t_a = 0.47 * b * d**4 / (1 / np.tanh(1.84 * height / b) + 0.62 * d**2 + 0.64 * d)
        za = -1j * zh * k * t_a
        return np.array([[1 + za / (2 * zs), za * (1 + za / (4 * zs))],
                         [1 / zs, 1 + za / (2 * zs)]])

    def reactance(self, f: float, closed: list[bool]) -> float:
        w = 2 * np.pi * f
        k = w / self.c
        chain = np.eye(2, dtype=complex)
        edges = [self.mouth, *(h[0] for h in self.holes), self.length]
        for i in range(len(edges) - 1):
            chain = chain @ self.line(w, edges[i + 1] - edges[i])
            if i < len(self.holes):
                chain = chain @ self.hole(k, self.holes[i][1], self.holes[i][2], not closed[i])
        zc = self.rho * self.c / (np.pi * self.a**2)
        ka = k * self.a
        foot = zc * (0.25 * ka**2 + 1j * np.tan(k * self.a * (0.6133 - 0.1168 * ka**2)))
        down = (chain[0, 0] * foot + chain[0, 1]) / (chain[1, 0] * foot + chain[1, 1])
        cavity = self.line(w, self.cavity)  # closed at its far end: Y = C/A
        junction = 1 / (1 / down + cavity[1, 0] / cavity[0, 0])
        return float((junction + self.open_impedance(k, self.b, self.wall)).imag)

    def plays(self, target: float, register: int, closed: list[bool]) -> float:
        """The register's upward reactance crossing: scan from well below at 10 cents, then
        brentq."""
        low = target / (2.5 * register)
        grid = low * 2 ** (np.arange(0, 1200 * np.log2(1.3 * target / low), 10.0) / 1200)
        x = [self.reactance(f, closed) for f in grid]
        ups = [i for i in range(len(grid) - 1) if x[i] < 0 <= x[i + 1]]
        i = ups[register - 1]
        return float(brentq(lambda f: self.reactance(f, closed), grid[i], grid[i + 1],
                            xtol=1e-9))


@pytest.mark.parametrize("name", ["side-blown-flute-c", "duct-flute-d"])
def test_an_independent_lossy_model_plays_the_examples_as_predicted(name: str) -> None:
    text = (EXAMPLES / f"{name}.yaml").read_text()
    flute = Flute(json.loads(dumps(resolve(load_spec(text, f"{name}.yaml")))))
    registers = {f["register"] for f in flute.fingerings}
    assert registers == {1, 2}
    for f in flute.fingerings:
        assert f["resonance"] == "clear"
        got = flute.plays(f["target_hz"], f["register"], f["closed"])
        cents = 1200 * np.log2(got / f["predicted_hz"])
        assert abs(cents) <= 6.0, (f["note"], f["register"], round(cents, 2))
