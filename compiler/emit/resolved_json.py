"""``resolved.json``: the resolved model as deterministic JSON (the output contract).

Every quantity's key ends with its unit. The IR is in SI; here lengths become millimetres:
a field ``x_m`` is written as ``x_mm``. Numbers are rounded once, here, to the resolution
a maker can use (0.01 mm, 0.01 Hz, 0.01 cent); the PDF prints the same roundings. Fields
marked ``ir.NOT_IN_JSON`` (the spec positions of holes, fingerings and groups) are left out.
"""

from __future__ import annotations

import dataclasses
import json
from pathlib import Path
from typing import Any

from compiler.cache import Cache
from compiler.errors import Position
from compiler.geometry.model import Parts
from compiler.ir import Resolved
from compiler.options import BuildOptions

NAME = "json"
FORMAT = "boresmith-resolved"
FORMAT_VERSION = 1

# Suffix of an IR field -> (suffix in JSON, factor, decimals).
_RULES: tuple[tuple[str, str, float, int], ...] = (
    ("_m_s", "_m_s", 1.0, 3),
    ("_kg_m3", "_kg_m3", 1.0, 4),
    ("_m", "_mm", 1000.0, 2),
    ("_hz", "_hz", 1.0, 2),
    ("_cents", "_cents", 1.0, 2),
    ("cents_per_mm", "cents_per_mm", 1.0, 3),
    ("cents_per_c", "cents_per_c", 1.0, 3),
    ("_c", "_c", 1.0, 2),
    ("_pa", "_pa", 1.0, 1),
    ("_percent", "_percent", 1.0, 2),
    ("_ppm", "_ppm", 1.0, 1),
    ("_deg", "_deg", 1.0, 2),
    ("_fraction", "_fraction", 1.0, 4),
)


def _rule(name: str) -> tuple[str, float, int] | None:
    for suffix, new_suffix, factor, decimals in _RULES:
        if name.endswith(suffix):
            return name[: len(name) - len(suffix)] + new_suffix, factor, decimals
    return None


def _number(value: float, factor: float, decimals: int) -> float:
    result = round(value * factor, decimals)
    return 0.0 if result == 0 else result


def _convert(name: str, value: Any) -> tuple[str, Any]:
    rule = _rule(name)
    if rule is not None and value is not None:
        new_name, factor, decimals = rule
        if isinstance(value, tuple | list):
            return new_name, [_number(float(v), factor, decimals) for v in value]
        if isinstance(value, float | int) and not isinstance(value, bool):
            return new_name, _number(float(value), factor, decimals)
    if rule is not None and value is None:
        return rule[0], None
    return name, _plain(value)


def _plain(value: Any) -> Any:
    if isinstance(value, Position):
        return value.shown()
    if dataclasses.is_dataclass(value) and not isinstance(value, type):
        out = {}
        for f in dataclasses.fields(value):
            if not f.metadata.get("json", True):  # ``ir.NOT_IN_JSON``: not in the contract
                continue
            key, converted = _convert(f.name, getattr(value, f.name))
            out[key] = converted
        return out
    if isinstance(value, tuple | list):
        return [_plain(v) for v in value]
    if isinstance(value, float):
        return round(value, 6)
    return value


def _curve(curve: Any) -> dict[str, Any]:
    return {"label": curve.label, "quantity": curve.quantity,
            "frequencies_hz": [round(f, 2) for f in curve.frequencies_hz],
            "values": [float(f"{v:.6g}") for v in curve.values]}


def to_dict(resolved: Resolved) -> dict[str, Any]:
    """The contract's JSON object for ``resolved``."""
    data: dict[str, Any] = _plain(resolved)
    data["format"] = FORMAT
    data["format_version"] = FORMAT_VERSION
    for pipe, source in zip(data["pipes"], resolved.pipes, strict=True):
        pipe["curves"] = [_curve(c) for c in source.curves]
    return data


def dumps(resolved: Resolved) -> str:
    """Deterministic text: sorted keys, two-space indent, a final newline."""
    return json.dumps(to_dict(resolved), indent=2, sort_keys=True, ensure_ascii=False) + "\n"


def write(resolved: Resolved, parts: Parts, options: BuildOptions, out_dir: Path,
          cache: Cache | None = None) -> list[Path]:
    path = out_dir / "resolved.json"
    path.write_text(dumps(resolved), encoding="utf-8")
    return [path]
