"""The cautions page: general shop safety, then the materials this build actually uses.

These are plain shop-safety notes (common practice), not a substitute for the materials'
safety data sheets, the tools' manuals, local regulations or the shop's own rules, and the
page says so. Which material carries which hazard is decided upstream
(``compiler.resolve.materials``, in ``Resolved.materials``); this page only words it.
"""

from __future__ import annotations

from compiler.emit.pdf.document import Block, Heading, Page, Paragraph, Spacer, flow_pages
from compiler.emit.pdf.style import GREY, MM, WARN, Frame
from compiler.ir import CHLORINATED, LEAD, METAL, WOOD_DUST, Resolved

SECTION = "Cautions"

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


def with_hazard(resolved: Resolved, hazard: str) -> list[str]:
    """The build's materials with ``hazard``, lower case, sorted."""
    return sorted(m.name.lower() for m in resolved.materials if hazard in m.hazards)


def specific(resolved: Resolved) -> list[Block]:
    """Warnings for the materials this build uses; the chlorinated ones boxed in red."""
    out: list[Block] = []
    pvc = with_hazard(resolved, CHLORINATED)
    if pvc:
        out.append(Paragraph(f"This build uses {', '.join(pvc)}. NEVER cut or engrave it with "
                             "a laser: it releases chlorine compounds (hydrogen chloride). Cut "
                             "it by saw or knife, with ventilation.", 11, bold=True,
                             colour=WARN, boxed=True))
    lead = with_hazard(resolved, LEAD)
    if lead:
        out.append(Paragraph(f"This build uses {', '.join(lead)}, which contains lead. NEVER "
                             "cut it with a laser or a plasma cutter (lead fume): use shears, "
                             "a knife or a waterjet. Follow the lead notes below at every "
                             "step, and keep the offcuts for proper recycling.", 10,
                             bold=True, colour=WARN, boxed=True))
    wood = with_hazard(resolved, WOOD_DUST)
    if wood:
        out.append(Paragraph(f"Wood in this build ({', '.join(wood)}): extract the dust; "
                             "wear a fine-dust respirator when sanding or routing, especially "
                             "MDF and hardwoods.", 9.5, bold=True))
    metal = with_hazard(resolved, METAL)
    if metal:
        out.append(Paragraph(f"Metal tube and sheet ({', '.join(metal)}): clamp the work when "
                             "drilling, deburr every hole and cut end, and handle sheet edges "
                             "with gloves.", 9.5, bold=True))
    return out


def pages(resolved: Resolved, frame: Frame) -> list[Page]:
    blocks: list[Block] = [Heading("Cautions: read before you start", 15)]
    found = specific(resolved)
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
