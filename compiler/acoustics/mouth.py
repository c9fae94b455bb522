"""End corrections of a flue pipe's mouth and of a wooden pipe's open top, SI units.

The mouth is an opening of area A = W·H (mouth width W, cut-up H) in the pipe's wall of
thickness ℓ. Its inertance, referred to the pipe's cross-section S, lengthens the air column
by Δm. The form is Rayleigh's orifice conductivity K = A / (ℓ + α·√A) taken as Δm = S/K
(Rayleigh 1896, The Theory of Sound §306–307; Fletcher & Rossing 1998, The Physics of Musical
Instruments, ch. 17, treat the mouth the same way):

    round pipes:   Δm = (S/A)·(ℓ + α·√A),  α = 1.0445 − 0.3035·W/D − 0.7333·H/D
    wooden pipes:  Δm = 0.482·(S/A)·ℓ + (0.6996 − 0.8198·H/W + 0.3234·depth/W)·S/√A
    wooden top:    Δ = (0.6133 + 0.45·board/W)·r_eq,  r_eq = √(W·depth/π)

(W the mouth's width, along the arc on a round pipe; D the diameter; depth the wooden pipe's
inside depth front to back; board the thickness of the boards at the top.)

What the coefficients are fitted to: a three-dimensional potential-flow (Laplace) model of a
passive pipe, with no jet in the mouth. That model reproduces Levine & Schwinger's 0.6133·a
for a thin-walled open end to about 1 %, and the organ builders' rule L = λ/2 − 5/3·D for an
open round pipe with a mouth of 1/4 of the circumference cut up 1/4 of its width (common
practice, quoted in secondary sources) to about 1 %. The fits reproduce the model's cases
with an RMS error of 1.3 %. A real pipe adds what the model leaves out (the jet, the languid's
and the ears' shapes, voicing), so every mouth term is reported with a band of ±8 % (``BAND``),
and ±16 % (``BAND_OUTSIDE``, our choice) outside the range the fits cover.

Fitted range: round pipes W/D 0.5–1.0 and H/D 0.1–0.4 (``ROUND_RANGE``). The wooden fit is
for a mouth as wide as the pipe and comes without a stated range: boresmith treats a
full-width mouth cut up 0.1–0.6 of its width, in a pipe 0.5–2 widths deep, as inside it
(``WOOD_RANGE``: our assumption, the usual proportions of wooden flue pipes). Outside its
range a fit is evaluated at the nearest edge of the range (its inputs clamped), so that it
never extrapolates to a negative correction.
"""

from __future__ import annotations

import math

BAND = 0.08
"""Relative uncertainty of a mouth term inside the fitted range (±)."""
BAND_OUTSIDE = 0.16
"""Relative uncertainty of a mouth term outside the fitted range (±): our choice, twice ``BAND``."""

ROUND_RANGE = {"width": (0.5, 1.0), "cutup": (0.1, 0.4)}
"""Fitted range of the round-pipe mouth: mouth width (arc) over diameter, cut-up over diameter."""
WOOD_RANGE = {"width": (0.999, 1.0), "cutup": (0.1, 0.6), "depth": (0.5, 2.0)}
"""Range in which the wooden fit is trusted: mouth width over the pipe's width (full width),
cut-up over mouth width, depth over width (our assumption, see the module docstring)."""

WOOD_LIP_FACTOR = 0.482
TOP_THIN = 0.6133
"""Δ/a of a thin-walled open end, Levine & Schwinger, Phys. Rev. 73(4), 383–406 (1948)."""


def _clamp(value: float, bounds: tuple[float, float]) -> float:
    return min(max(value, bounds[0]), bounds[1])


def _inside(value: float, bounds: tuple[float, float]) -> bool:
    return bounds[0] - 1e-9 <= value <= bounds[1] + 1e-9


def round_alpha(width_over_diameter: float, cutup_over_diameter: float) -> float:
    """α of a round pipe's mouth: 1.0445 − 0.3035·W/D − 0.7333·H/D (fit, module docstring).

    Outside ``ROUND_RANGE`` the ratios are clamped to its edges.
    """
    w = _clamp(width_over_diameter, ROUND_RANGE["width"])
    h = _clamp(cutup_over_diameter, ROUND_RANGE["cutup"])
    return 1.0445 - 0.3035 * w - 0.7333 * h


def round_in_range(width_over_diameter: float, cutup_over_diameter: float) -> bool:
    """True when a round pipe's mouth lies inside the fitted range (``ROUND_RANGE``)."""
    return (_inside(width_over_diameter, ROUND_RANGE["width"])
            and _inside(cutup_over_diameter, ROUND_RANGE["cutup"]))


def round_correction(diameter_m: float, width_m: float, cutup_m: float, lip_m: float) -> float:
    """Mouth correction Δm (m) of a round pipe: (S/A)·(ℓ + α·√A), S = πD²/4, A = W·H.

    diameter_m: inside diameter D; width_m: the mouth's width W along the circumference;
    cutup_m: its height H; lip_m: the upper lip's thickness ℓ (the sheet). Fit to a
    three-dimensional potential-flow model of a passive pipe (module docstring): ±8 % inside
    W/D 0.5–1.0, H/D 0.1–0.4.
    """
    area = width_m * cutup_m
    alpha = round_alpha(width_m / diameter_m, cutup_m / diameter_m)
    pipe_area = math.pi * diameter_m**2 / 4.0
    return pipe_area / area * (lip_m + alpha * math.sqrt(area))


def wood_in_range(pipe_width_m: float, depth_m: float, mouth_width_m: float,
                  cutup_m: float) -> bool:
    """True when a wooden pipe's mouth lies where the wooden fit is trusted (``WOOD_RANGE``)."""
    return (_inside(mouth_width_m / pipe_width_m, WOOD_RANGE["width"])
            and _inside(cutup_m / mouth_width_m, WOOD_RANGE["cutup"])
            and _inside(depth_m / pipe_width_m, WOOD_RANGE["depth"]))


def wood_correction(pipe_width_m: float, depth_m: float, mouth_width_m: float, cutup_m: float,
                    lip_m: float) -> float:
    """Mouth correction Δm (m) of a rectangular wooden pipe with the mouth on its width side.

    Δm = 0.482·(S/A)·ℓ + (0.6996 − 0.8198·H/W + 0.3234·depth/W)·S/√A, S = W·depth (inside),
    A = mouth width × cut-up H, ℓ the upper lip's thickness. Fit to a three-dimensional
    potential-flow model of a passive pipe with a full-width mouth (module docstring). For a
    narrower mouth (outside the fit) H/W is taken over the mouth's width and depth/W over the
    pipe's, both clamped to ``WOOD_RANGE``.
    """
    area = mouth_width_m * cutup_m
    pipe_area = pipe_width_m * depth_m
    h = _clamp(cutup_m / mouth_width_m, WOOD_RANGE["cutup"])
    d = _clamp(depth_m / pipe_width_m, WOOD_RANGE["depth"])
    shape = 0.6996 - 0.8198 * h + 0.3234 * d
    return WOOD_LIP_FACTOR * pipe_area / area * lip_m + shape * pipe_area / math.sqrt(area)


def wooden_top_ratio(board_m: float, width_m: float) -> float:
    """Δ/r_eq of a wooden pipe's open top: 0.6133 + 0.45·board/W.

    board_m: board thickness at the top; width_m: the inside width W. Multiply by the
    equal-area radius r_eq = √(W·depth/π). Fit to the same potential-flow model (module
    docstring); a board of no thickness gives Levine & Schwinger's 0.6133.
    """
    return TOP_THIN + 0.45 * board_m / width_m
