"""The cautions page: general shop safety, then the materials this build actually uses.

These are plain shop-safety notes (common practice), not a substitute for the materials'
safety data sheets, the tools' manuals, local regulations or the shop's own rules, and the
page says so.
"""

from __future__ import annotations

from compiler.emit.pdf.document import Block, Heading, Page, Paragraph, Spacer, flow_pages
from compiler.emit.pdf.style import GREY, MM, WARN, Frame
from compiler.geometry.model import Parts
from compiler.ir import Resolved

SECTION = "Cautions"

CHLORINATED = ("pvc", "vinyl", "polyvinyl", "cpvc")
LEADED = ("lead", "spotted", "organ-metal", "organ metal", "pewter", "tin-lead", "plain-metal")
WOODS = ("mdf", "wood", "pine", "oak", "birch", "ply", "maple", "beech", "spruce", "cedar",
         "walnut", "cherry", "poplar", "fir", "mahogany", "hardboard", "particle", "bamboo")
METALS = ("alumin", "brass", "copper", "steel", "bronze", "zinc", "nickel", "titanium")

GENERAL = (
    ("PVC and vinyl: never laser cut", "Never cut or engrave PVC, vinyl or any other "
     "chlorine-containing plastic with a laser: the beam releases hydrogen chloride and other "
     "chlorine compounds that harm the lungs and corrode the machine. Saw or knife them by "
     "hand, with ventilation, and keep the dust off skin and out of lungs."),
    ("Lead-bearing metal: never laser or plasma cut", "Never cut spotted metal, organ "
     "metal or any other lead-bearing sheet with a laser or a plasma cutter: the heat gives "
     "off lead fume, which is poisonous to breathe and settles as dust. Cut it cold: with "
     "shears, a knife or a waterjet (the DXF files drive a knife plotter or a waterjet as "
     "well, or print them at 1:1 as templates)."),
    ("Lead-bearing pipe metal", "Spotted metal, organ metal, some pewter and old solders "
     "contain lead. Do not eat, drink or smoke at the bench; wash your hands before breaks; "
     "never sand, grind or blow lead dust about; collect scraps and filings for proper "
     "disposal; keep children and anyone pregnant away from the work; melt or cast only with "
     "fume extraction."),
    ("Wood and MDF dust", "Fine wood dust irritates the lungs and some hardwood dusts cause "
     "cancer; MDF dust also carries its resin binder. Saw, rout and sand with dust extraction "
     "and a fine-dust respirator. Laser-cut wood smokes and can flare up: never leave a "
     "running laser alone."),
    ("Solder and flux fumes", "Solder only with good ventilation or fume extraction: rosin "
     "flux fumes can cause asthma, acid fluxes burn skin and eyes. Rest hot irons in a stand "
     "and let joints cool before handling."),
    ("Eyes and ears", "Wear safety glasses when drilling, sawing, turning, soldering or "
     "handling sprung sheet metal; wear hearing protection near saws and routers, and when "
     "voicing loud pipes for long stretches."),
    ("Check the calibration bar", "Before cutting or drilling from a template, measure the "
     "printed 100 mm and 4 in bars. If either is off, reprint at 100 % (actual size, no "
     "scaling): a template at the wrong scale puts holes in the wrong place and the pipe out "
     "of tune."),
    ("Local codes and shop rules come first", "These notes do not replace your local "
     "regulations, the safety data sheets of your materials, the manuals of your tools or the "
     "rules of the shop you work in; where they differ, those come first."),
)


def materials(resolved: Resolved, parts: Parts) -> list[str]:
    """Every material named in the build, lower case, sorted."""
    found = {s.material for s in resolved.stock} | {p.material for p in resolved.pipes}
    found |= {p.material for p in parts.parts if p.kind != "template"}
    found |= {g.holder.material for g in resolved.groups if g.holder is not None}
    return sorted(m.lower() for m in found if m)


def _matching(names: list[str], words: tuple[str, ...]) -> list[str]:
    return [m for m in names if any(w in m for w in words)]


def specific(resolved: Resolved, parts: Parts) -> list[Block]:
    """Warnings for the materials this build uses; the chlorinated ones boxed in red."""
    names = materials(resolved, parts)
    out: list[Block] = []
    pvc = _matching(names, CHLORINATED)
    if pvc:
        out.append(Paragraph(f"This build uses {', '.join(pvc)}. NEVER cut or engrave it with "
                             "a laser: it releases chlorine compounds (hydrogen chloride). Cut "
                             "it by saw or knife, with ventilation.", 11, bold=True,
                             colour=WARN, boxed=True))
    lead = _matching(names, LEADED)
    if lead:
        out.append(Paragraph(f"This build uses {', '.join(lead)}, which contains lead. NEVER "
                             "cut it with a laser or a plasma cutter (lead fume): use shears, "
                             "a knife or a waterjet. Follow the lead notes below at every "
                             "step, and keep the offcuts for proper recycling.", 10,
                             bold=True, colour=WARN, boxed=True))
    wood = _matching(names, WOODS)
    if wood:
        out.append(Paragraph(f"Wood in this build ({', '.join(wood)}): extract the dust; "
                             "wear a fine-dust respirator when sanding or routing, especially "
                             "MDF and hardwoods.", 9.5, bold=True))
    metal = _matching(names, METALS)
    if metal:
        out.append(Paragraph(f"Metal tube and sheet ({', '.join(metal)}): clamp the work when "
                             "drilling, deburr every hole and cut end, and handle sheet edges "
                             "with gloves.", 9.5, bold=True))
    return out


def pages(resolved: Resolved, parts: Parts, frame: Frame) -> list[Page]:
    blocks: list[Block] = [Heading("Cautions: read before you start", 15)]
    found = specific(resolved, parts)
    if found:
        blocks += [Heading("The materials of this build", 11), *found, Spacer(2 * MM)]
    blocks.append(Heading("In every build", 11))
    for title, text in GENERAL:
        blocks.append(Paragraph(title, 10.5, bold=True))
        blocks.append(Paragraph(text, 9.5, indent=4 * MM))
    blocks.append(Spacer(3 * MM))
    blocks.append(Paragraph("These are general shop practice, written for this build sheet; "
                            "they are not a complete safety assessment.", 8.5, colour=GREY))
    return flow_pages(SECTION, blocks, frame, "Cautions")
