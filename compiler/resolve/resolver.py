"""Spec -> resolved model: one function that hands each group to its family's resolver."""

from __future__ import annotations

import re
import unicodedata

from compiler.resolve import flue, tubes
from compiler.resolve.model import (
    FabricationReport,
    Group,
    Note,
    Pipe,
    Resolved,
    StockItem,
    TuningReport,
)
from compiler.resolve.targets import tonic_name
from compiler.spec import model as spec_model


def slug(name: str) -> str:
    """A folder name from the instrument's name: lower case ASCII words joined by ``-``."""
    text = unicodedata.normalize("NFKD", name).encode("ascii", "ignore").decode("ascii")
    text = re.sub(r"[^a-z0-9]+", "-", text.lower()).strip("-")
    return text[:80].strip("-") or "instrument"


def _allowance_text(fab: spec_model.Fabrication) -> str:
    if fab.allowance_fraction:
        return f"{fab.allowance_fraction * 100:g} %"
    return f"{fab.allowance_m * 1000:g} mm"


def resolve(spec: spec_model.Spec) -> Resolved:
    """Resolve every rank, tube set and flute of ``spec``; raise ``SpecError`` if impossible."""
    from compiler.resolve import flutes  # numpy-heavy engine, loaded only when needed

    groups: list[Group] = []
    pipes: list[Pipe] = []
    warnings: list[Note] = []
    for rank in spec.ranks:
        group, made, notes = flue.resolve_rank(rank, spec)
        groups.append(group)
        pipes.extend(made)
        warnings.extend(notes)
    for tube_set in spec.tube_sets:
        group, made, notes = tubes.resolve_tube_set(tube_set, spec)
        groups.append(group)
        pipes.extend(made)
        warnings.extend(notes)
    for flute in spec.flutes:
        group, made, notes = flutes.resolve_flute(flute, spec)
        groups.append(group)
        pipes.extend(made)
        warnings.extend(notes)
    fab = spec.fabrication
    return Resolved(
        instrument=spec.instrument,
        slug=slug(spec.instrument),
        spec_file=spec.file.replace("\\", "/").rsplit("/", 1)[-1],
        spec_sha256=spec.sha256,
        tuning=TuningReport(spec.tuning.a4_hz, spec.tuning.temperament, tonic_name(spec.tuning)),
        fabrication=FabricationReport(
            sheet_length_m=fab.sheet_length_m, sheet_width_m=fab.sheet_width_m,
            kerf_m=fab.kerf_m, spacing_m=fab.spacing_m, precision_m=fab.precision_m,
            seam_allowance_m=fab.seam_allowance_m, tuning_allowance=_allowance_text(fab),
            paper=fab.paper, dxf_version=fab.dxf_version, part_files=fab.part_files,
            units=spec.units),
        stock=tuple(StockItem(s.name, s.kind, s.material, s.thickness_m, s.outside_diameter_m,
                              s.inside_diameter_m, s.length_m, s.width_m) for s in spec.stock),
        groups=tuple(groups),
        pipes=tuple(pipes),
        warnings=tuple(sorted(set(warnings), key=lambda n: (n.position, n.message))),
    )
