"""Read a spec's ``flutes`` (and the heads and fingerings surveys share with them) into the
typed ``Flute``, with the reader and helpers of ``normalize``."""

from __future__ import annotations

from compiler.spec import model, units
from compiler.spec.loader import Path
from compiler.spec.normalize import _environment, _measured, _name, _Reader


def read_head(r: _Reader, h: Path) -> model.Head:
    """The blowing end at ``h`` (a flute's or a survey's ``head``)."""
    return model.Head(
        window_length_m=r.length((*h, "window", "length")),
        window_width_m=r.length((*h, "window", "width")),
        window_from_top_m=r.length((*h, "window", "from_top")),
        duct_height_m=r.length((*h, "duct", "height")),
        duct_width_m=r.length((*h, "duct", "width")),
        embouchure_diameter_m=r.length((*h, "embouchure", "diameter")),
        embouchure_from_top_m=r.length((*h, "embouchure", "from_top")),
        lip_cover=r.ratio((*h, "embouchure", "lip_cover")),
        cork_m=r.length((*h, "cork")),
    )


def read_closed(r: _Reader, p: Path, holes: int, what: str) -> tuple[bool, ...]:
    """A fingering's ``closed`` pattern: one `x` (closed) or `o` (open) per hole."""
    pattern = "".join(ch for ch in str(r.get((*p, "closed"))) if ch in "xXoO")
    if len(pattern) != holes:
        r.fail((*p, "closed"), f"{_name((*p, 'closed'))}: `{r.get((*p, 'closed'))}` gives "
               f"{len(pattern)} holes, but the {what} has {holes}",
               "write one `x` (closed) or `o` (open) per hole, from the head down")
    return tuple(ch in "xX" for ch in pattern)


def read_second_register(r: _Reader, p: Path) -> int | None:
    """A fingering's ``second_register``: a note, ``NO_SECOND_REGISTER`` or None."""
    if r.get((*p, "second_register")) == "none":
        return model.NO_SECOND_REGISTER
    return r.note((*p, "second_register"))


def read_flute(r: _Reader, i: int) -> model.Flute:
    """The flute at ``flutes[i]``: its head, holes, fingerings and design limits."""
    base: Path = ("flutes", i)
    head = read_head(r, (*base, "head"))
    raw_holes = r.get((*base, "holes"))
    holes = []
    if isinstance(raw_holes, int):
        for _ in range(raw_holes):
            holes.append(model.HoleSpec(None, None, None, 0.0, 0.0, r.at((*base, "holes"))))
    else:
        for j, _ in enumerate(raw_holes or []):
            p = (*base, "holes", j)
            label = r.get((*p, "label"))
            holes.append(model.HoleSpec(
                label=str(label) if label is not None else None,
                position_m=r.length((*p, "position")),
                diameter_m=r.length((*p, "diameter")),
                angle_deg=r.convert((*p, "angle"), units.parse_angle, 0.0),
                undercut_m=r.length((*p, "undercut"), positive=False) or 0.0,
                position=r.at(p)))
    fingerings = []
    for j, _ in enumerate(r.get((*base, "fingerings")) or []):
        p = (*base, "fingerings", j)
        closed = read_closed(r, p, len(holes), "flute")
        note = r.note((*p, "note"))
        if note is None:
            continue
        fingerings.append(model.FingeringSpec(
            note=note, closed=closed, frequency_hz=r.frequency((*p, "frequency")),
            second_register=read_second_register(r, p), position=r.at(p)))
    weight = r.ratio((*base, "second_register_weight"))
    if weight is not None and not 0.5 <= weight <= 1.0:
        r.fail((*base, "second_register_weight"), f"second_register_weight: {weight:g} is "
               "outside 1/2 to 1", "give 1/2 (the first register comes first) up to 1 (both "
               "registers count alike)")
        weight = None
    c = (*base, "constraints")
    smallest, largest = r.length((*c, "min_diameter")), r.length((*c, "max_diameter"))
    if smallest is not None and largest is not None and smallest > largest:
        r.fail((*c, "min_diameter"), f"{_name((*c, 'min_diameter'))}: "
               f"{smallest * 1000:g} mm is larger than max_diameter ({largest * 1000:g} mm)",
               "the smallest hole allowed must not be larger than the largest")
    closest, widest = r.length((*c, "min_span"), positive=False), r.length((*c, "max_span"))
    if closest is not None and widest is not None and closest > widest:
        r.fail((*c, "min_span"), f"{_name((*c, 'min_span'))}: {closest * 1000:g} mm is larger "
               f"than max_span ({widest * 1000:g} mm)",
               "the least distance between neighbouring fingers' holes must not be larger than "
               "the largest")
    return model.Flute(
        id=str(r.get((*base, "id"))),
        family=str(r.get((*base, "family"))),
        stock=str(r.get((*base, "stock"))),
        head=head,
        holes=tuple(holes),
        fingerings=tuple(fingerings),
        constraints=model.Constraints(
            min_diameter_m=smallest,
            max_diameter_m=largest,
            max_ratio=r.ratio((*c, "max_ratio")),
            min_web_m=r.length((*c, "min_web"), positive=False),
            max_span_m=widest,
            min_span_m=closest),
        length_m=r.length((*base, "length")),
        losses=r.get((*base, "losses")) or "keefe",
        radiation=r.get((*base, "radiation")) or "frequency-dependent",
        environment=_environment(r, (*base, "environment")),
        measured=_measured(r, base),
        position=r.at(base),
        second_register_weight=weight,
        jig=r.get((*base, "jig")),
        where=model._frozen(r.where(base, "id", "family", "stock", "head", "holes",
                                    "fingerings", "constraints", "length", "measured", "jig",
                                    "constraints.max_span", "constraints.min_span",
                                    "head.cork", "head.embouchure.diameter",
                                    "head.embouchure.from_top", "head.window.width",
                                    "head.window.length", "head.window.from_top",
                                    "head.duct.height")),
    )
