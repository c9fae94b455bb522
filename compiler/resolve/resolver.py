"""Spec -> resolved model: one function that hands each group to its family's resolver."""

from __future__ import annotations

import dataclasses
import hashlib
import re
import unicodedata
from collections.abc import Callable
from functools import partial
from typing import Any

from compiler.display import in_inches, inches_for
from compiler.errors import SpecError, in_order
from compiler.ir import (
    FabricationReport,
    Group,
    Note,
    Pipe,
    Resolved,
    StockItem,
    TuningReport,
)
from compiler.resolve import flue, materials, plain, tubes
from compiler.resolve.inputs import G, GroupInputs, group_inputs
from compiler.resolve.targets import tonic_name
from compiler.spec import model as spec_model

TRANSLITERATION = str.maketrans({
    "ß": "ss", "ẞ": "ss", "Ł": "L", "ł": "l", "Đ": "D", "đ": "d", "Ø": "O", "ø": "o",
    "Æ": "AE", "æ": "ae", "Œ": "OE", "œ": "oe", "Þ": "TH", "þ": "th", "Ð": "D", "ð": "d",
    "ı": "i", "Ħ": "H", "ħ": "h", "Ŧ": "T", "ŧ": "t", "Ŋ": "NG", "ŋ": "ng",
    # Cyrillic after ICAO Doc 9303 (machine-readable travel documents), Part 3, from memory;
    # Й and Ё reach this table as И and Е, their marks split off by NFKD.
    **{c: t for pair in (
        "аa бb вv гg дd еe жzh зz иi кk лl мm нn оo пp рr сs тt уu фf хkh цts чch шsh "
        "щshch ъie ыy ь эe юiu яia єie іi ґg ђd ѓg ѕdz јj љlj њnj ћc ќk џdz").split()
        for c, t in ((pair[0], pair[1:]), (pair[0].upper(), pair[1:].capitalize()))},
    # Greek after ELOT 743 (ISO 843) in its simple form, from memory; tonos and dialytika
    # are split off by NFKD.
    **{c: t for pair in (
        "αa βv γg δd εe ζz ηi θth ιi κk λl μm νn ξx οo πp ρr σs ςs τt υy φf χch ψps ωo"
        ).split() for c, t in ((pair[0], pair[1:]), (pair[0].upper(), pair[1:].capitalize()))},
})
"""Letters that NFKD does not turn into a plain Latin letter and accents: Latin letters without
a decomposition, Cyrillic and Greek; every other accented Latin letter loses its accent by
NFKD decomposition (Dvořák → dvorak)."""


def slug(name: str) -> str:
    """A folder name from the instrument's name: lower case ASCII words joined by ``-``;
    letters are transliterated (Große → grosse, Łódź → lodz, Орган → organ), other characters
    dropped. Where a letter has no transliteration here (Chinese, Arabic, ...), eight hex
    digits of the name's SHA-256 follow, so two such names never share a folder."""
    text = unicodedata.normalize("NFKD", name).translate(TRANSLITERATION)
    lost = any(c.isalpha() and not c.isascii() for c in text)
    text = text.encode("ascii", "ignore").decode("ascii")
    text = re.sub(r"[^a-z0-9]+", "-", text.lower()).strip("-")[:80].strip("-")
    if lost:
        digest = hashlib.sha256(name.encode("utf-8")).hexdigest()[:8]
        return f"{text}-{digest}" if text else f"instrument-{digest}"
    return text or "instrument"


Memo = Callable[[Any, Callable[[], Any]], Any]
USUAL_A4_HZ = (380.0, 480.0)
"""Pitch standards run from about 392 Hz (low baroque) to about 466 Hz (high historical
pitch); ISO 16 sets 440 Hz (common practice, from memory)."""


Resolution = tuple[Group, list[Pipe], list[Note]]
"""A group, its pipes and its warnings."""


def _job(spec: spec_model.Spec, group: G,
         resolve_group: Callable[[GroupInputs[G]], Resolution]
         ) -> tuple[GroupInputs[G], Callable[[], Resolution]]:
    """A group's inputs (its cache key) and the resolution of exactly those."""
    inputs = group_inputs(spec, group)
    return inputs, partial(resolve_group, inputs)


def _no_memo(_inputs: Any, make: Callable[[], Any]) -> Any:
    return make()


def resolve(spec: spec_model.Spec, memo: Memo = _no_memo) -> Resolved:
    """Resolve every rank, tube set, flute and survey of ``spec``; raise ``SpecError`` if
    impossible.

    ``memo(inputs, make)`` may return a stored result for the same inputs (the build's
    cache); each group depends only on its ``GroupInputs``, its key. A spec written
    in inches gets its errors' and warnings' lengths in inches too.
    """
    inches = inches_for(spec.units, spec.fabrication.precision_m)
    try:
        resolved = _resolve(spec, memo)
    except SpecError as err:
        if inches is None:
            raise
        raise type(err)([dataclasses.replace(p, message=in_inches(p.message, inches),
                                             hint=in_inches(p.hint, inches))
                         for p in err.problems]) from err
    if inches is None:
        return resolved
    return dataclasses.replace(resolved, warnings=tuple(
        dataclasses.replace(n, message=in_inches(n.message, inches))
        for n in resolved.warnings))


def _resolve(spec: spec_model.Spec, memo: Memo) -> Resolved:
    from compiler.resolve import flutes, surveys  # numpy-heavy engine, loaded when needed

    # Each group is resolved from its inputs alone, which are also its cache key.
    work: list[tuple[object, Callable[[], Resolution]]] = [
        *(_job(spec, rank, flue.resolve_rank) for rank in spec.ranks),
        *(_job(spec, tube_set, tubes.resolve_tube_set) for tube_set in spec.tube_sets),
        *(_job(spec, flute, flutes.resolve_flute) for flute in spec.flutes),
        *(_job(spec, survey, surveys.resolve_survey) for survey in spec.surveys)]
    groups: list[Group] = []
    pipes: list[Pipe] = []
    warnings: list[Note] = []
    failed: list[SpecError] = []
    for inputs, make in work:
        # Groups are independent: a problem in one does not hide those of the others.
        try:
            group, made, notes = memo(inputs, make)
        except SpecError as exc:
            failed.append(exc)
            continue
        groups.append(group)
        pipes.extend(made)
        warnings.extend(notes)
    if failed:
        raise type(failed[0])([p for exc in failed for p in exc.problems])
    low, high = USUAL_A4_HZ
    if not low <= spec.tuning.a4_hz <= high and "a4" in spec.tuning.where:
        warnings.append(Note(spec.tuning.where["a4"],
                             f"A4 = {spec.tuning.a4_hz:g} Hz is far from any pitch standard in "
                             f"use ({low:g}-{high:g} Hz); check the value and its unit"))
    fab = spec.fabrication
    stock = tuple(StockItem(s.name, s.kind, s.material, s.thickness_m, s.outside_diameter_m,
                            s.inside_diameter_m, s.length_m, s.width_m) for s in spec.stock)
    allowance = plain.allowance_text(fab.allowance_fraction, fab.allowance_m)
    return Resolved(
        instrument=spec.instrument,
        slug=slug(spec.instrument),
        spec_file=spec.file.replace("\\", "/").rsplit("/", 1)[-1],
        spec_sha256=spec.sha256,
        tuning=TuningReport(spec.tuning.a4_hz, spec.tuning.temperament, tonic_name(spec.tuning)),
        fabrication=FabricationReport(
            sheet_length_m=fab.sheet_length_m, sheet_width_m=fab.sheet_width_m,
            kerf_m=fab.kerf_m, spacing_m=fab.spacing_m, precision_m=fab.precision_m,
            seam_allowance_m=fab.seam_allowance_m, tuning_allowance=allowance,
            paper=fab.paper, dxf_version=fab.dxf_version, part_files=fab.part_files,
            units=spec.units, tube_kerf_m=fab.tube_kerf_m),
        stock=stock,
        groups=tuple(groups),
        pipes=tuple(pipes),
        warnings=in_order(warnings),
        materials=materials.used(stock, pipes, groups),
    )
