"""The one place where the resolved model's metres become the geometry's millimetres.

Everything in ``compiler.geometry`` and the backends works in millimetres; the resolved
model (the IR) is in SI metres. Builders call :func:`mm` on every IR length they read and
nowhere else convert units.
"""

from __future__ import annotations

MM_PER_M = 1000.0

ROUND_DIGITS = 6
"""Coordinates are rounded to 1e-6 mm before they leave the geometry stage, so that float
noise from different operation orders cannot change the bytes of an output file."""


def mm(metres: float) -> float:
    """A length of the resolved model (metres) in millimetres."""
    return float(metres) * MM_PER_M


def mm_or(metres: float | None, default_mm: float) -> float:
    """Like :func:`mm`, with a default (already in mm) for an absent optional length."""
    return default_mm if metres is None else mm(metres)


def snap(value_mm: float) -> float:
    """Round a coordinate to 1e-6 mm; ``-0.0`` becomes ``0.0`` for stable text output."""
    value = round(float(value_mm), ROUND_DIGITS)
    return 0.0 if value == 0 else value


def snap_bulge(bulge: float) -> float:
    """Round a DXF bulge (tan of a quarter of the arc's angle) to 1e-12: coarser rounding
    would move a large arc's radius by more than the coordinates' 1e-6 mm."""
    value = round(float(bulge), 12)
    return 0.0 if value == 0 else value
