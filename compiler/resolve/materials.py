"""What the shop must know about the materials a build uses: their hazards, read from the
names the spec gives them, here where the resolver first meets every material (the stock,
each pipe, a flute's jig sheet, a tube set's holder).

The classes are plain shop safety (common practice, not a substitute for a material's
safety data sheet): chlorine-bearing plastics (PVC, vinyl) release hydrogen chloride when
laser cut; spotted metal, organ metal, pewter and other tin–lead alloys carry lead (fume
when laser or plasma cut, dust when sanded); wood and wood composites make fine dust;
metal tube and sheet leave sharp edges and burrs. A name is matched by the words it
contains, so ``spotted metal 20 %`` and ``birch-ply`` are classified as a maker writes them.
The build sheet's cautions page renders what is found here; it decides nothing itself.
"""

from __future__ import annotations

from collections.abc import Iterable

from compiler.ir import CHLORINATED, LEAD, METAL, WOOD_DUST, Group, Material, Pipe, StockItem

WORDS: tuple[tuple[str, tuple[str, ...]], ...] = (
    (CHLORINATED, ("pvc", "vinyl", "polyvinyl", "cpvc")),
    (LEAD, ("lead", "spotted", "organ-metal", "organ metal", "pewter", "tin-lead",
            "plain-metal")),
    (WOOD_DUST, ("mdf", "wood", "pine", "oak", "birch", "ply", "maple", "beech", "spruce",
                 "cedar", "walnut", "cherry", "poplar", "fir", "mahogany", "hardboard",
                 "particle", "bamboo")),
    (METAL, ("alumin", "brass", "copper", "steel", "bronze", "zinc", "nickel", "titanium")),
)
"""Each hazard and the words (lower case, matched anywhere in a name) that show it."""


def hazards(name: str) -> tuple[str, ...]:
    """The hazards of a material by its name, in the order of ``WORDS``."""
    lower = name.lower()
    return tuple(hazard for hazard, words in WORDS if any(w in lower for w in words))


def used(stock: Iterable[StockItem], pipes: Iterable[Pipe],
         groups: Iterable[Group]) -> tuple[Material, ...]:
    """Every material the build names (the stock list, the pipes, their jig sheets, the
    holders), once each as written, sorted, with its hazards."""
    names = {s.material for s in stock} | {p.material for p in pipes}
    names |= {p.jig.material for p in pipes if p.jig is not None}
    names |= {g.holder.material for g in groups if g.holder is not None}
    return tuple(Material(name, hazards(name)) for name in sorted(n for n in names if n))
