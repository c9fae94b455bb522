"""Material hazards are classified by the resolver, from the names the spec gives; the build
sheet only words them."""

from __future__ import annotations

from pathlib import Path

import pytest

from compiler.build import compile_text
from compiler.emit import resolved_json
from compiler.ir import CHLORINATED, LEAD, METAL, WOOD_DUST
from compiler.options import Overrides
from compiler.resolve.materials import hazards

EXAMPLES = Path(__file__).resolve().parents[2] / "specs_examples"


@pytest.mark.parametrize(("name", "expected"), [
    # Laser cutting chlorine-bearing plastics releases hydrogen chloride (common practice:
    # every laser-shop material list bans PVC and vinyl).
    ("PVC", (CHLORINATED,)), ("grey pvc-u 40", (CHLORINATED,)), ("vinyl sheet", (CHLORINATED,)),
    # Spotted metal and organ metal are tin-lead alloys; old pewter carries lead (trade fact,
    # common practice).
    ("spotted-metal", (LEAD,)), ("Organ metal 30 %", (LEAD,)), ("pewter", (LEAD,)),
    ("MDF", (WOOD_DUST,)), ("birch-ply", (WOOD_DUST,)), ("pine", (WOOD_DUST,)),
    ("aluminium", (METAL,)), ("brass", (METAL,)), ("stainless steel", (METAL,)),
    # acrylic is laser-cut every day (common practice); a survey's "as measured" says nothing
    ("acrylic", ()), ("as measured", ()),
])
def test_hazards_by_name(name: str, expected: tuple[str, ...]) -> None:
    assert hazards(name) == expected


@pytest.mark.parametrize("spec", sorted(p.name for p in EXAMPLES.glob("*.yaml")
                                        if not p.name.startswith("practice-organ")))
def test_every_material_the_parts_are_cut_from_is_classified(spec: str) -> None:
    path = EXAMPLES / spec
    compiled = compile_text(path.read_bytes(), str(path), Overrides())
    named = {m.name for m in compiled.resolved.materials}
    cut = {p.material for p in compiled.parts.parts if p.kind != "template"}
    assert cut <= named
    assert {s.material for s in compiled.resolved.stock} <= named
    assert all(m.hazards == hazards(m.name) for m in compiled.resolved.materials)


def test_the_metal_rank_is_flagged_for_lead() -> None:
    path = EXAMPLES / "house-organ-principal.yaml"
    resolved = compile_text(path.read_bytes(), str(path), Overrides()).resolved
    assert [m.name for m in resolved.materials if LEAD in m.hazards] == ["spotted-metal"]
    assert "materials" not in resolved_json.to_dict(resolved)  # not in the output contract
