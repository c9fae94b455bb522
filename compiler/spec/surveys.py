"""The ``surveys`` entries: instruments as measured, normalised to ``model.Survey``.

A survey's bore is a single diameter (a cylinder) or measured stations from the top end;
its holes are measured from the top end or from the bottom end (worked out here against the
survey's length). Problems a reader can see in the spec alone (a hole given from both ends or
from neither, a fingering with the wrong number of letters, stations out of order) are
collected like every other normalisation problem; what needs the physics (a hole beyond the
end, holes that overlap, a hole wider than the bore) is checked when the survey is resolved.
"""

from __future__ import annotations

from compiler.spec import model, units
from compiler.spec.flutes import read_closed, read_head, read_second_register
from compiler.spec.loader import Path
from compiler.spec.normalize import _environment, _name, _Reader


def read_survey(r: _Reader, i: int) -> model.Survey:
    base: Path = ("surveys", i)
    length = r.length((*base, "length")) or 0.0
    wall = r.length((*base, "wall")) or 0.0
    holes = tuple(_hole(r, (*base, "holes", j), length)
                  for j, _ in enumerate(r.get((*base, "holes")) or []))
    fingerings = []
    for j, _ in enumerate(r.get((*base, "fingerings")) or []):
        p = (*base, "fingerings", j)
        fingerings.append(model.SurveyFingering(
            closed=read_closed(r, p, len(holes), "survey"), note=r.note((*p, "note")),
            frequency_hz=r.frequency((*p, "frequency")),
            second_register=read_second_register(r, p), position=r.at(p)))
    stock = r.get((*base, "stock"))
    material = r.get((*base, "material"))
    return model.Survey(
        id=str(r.get((*base, "id"))),
        length_m=length,
        bore=_bore(r, (*base, "bore")),
        wall_m=wall,
        outside_diameter_m=r.length((*base, "outside_diameter")),
        stock=str(stock) if stock is not None else None,
        material=str(material) if material is not None else None,
        jig=str(jig) if (jig := r.get((*base, "jig"))) is not None else None,
        blowing_end=str(r.get((*base, "blowing_end"))),
        head=read_head(r, (*base, "head")),
        reed_length_m=r.length((*base, "reed", "extra_length"), positive=False) or 0.0,
        holes=holes,
        fingerings=tuple(fingerings),
        losses=r.get((*base, "losses")) or "keefe",
        radiation=r.get((*base, "radiation")) or "frequency-dependent",
        environment=_environment(r, (*base, "environment")),
        position=r.at(base),
        where=model._frozen(r.where(base, "id", "length", "bore", "wall", "outside_diameter",
                                    "stock", "jig", "blowing_end", "head", "reed", "holes",
                                    "fingerings", "head.cork", "head.embouchure",
                                    "head.embouchure.diameter", "head.embouchure.from_top",
                                    "head.window", "head.window.width",
                                    "head.window.length", "head.window.from_top",
                                    "head.duct.height")),
    )


def _bore(r: _Reader, path: Path) -> tuple[model.BoreStation, ...]:
    raw = r.get(path)
    if not isinstance(raw, list):
        diameter = r.length(path)
        return (model.BoreStation(0.0, diameter, r.at(path)),) if diameter else ()
    stations: list[model.BoreStation] = []
    for j, _ in enumerate(raw):
        p = (*path, j)
        at, diameter = r.length((*p, "from_top"), positive=False), r.length((*p, "diameter"))
        if at is None or diameter is None:
            continue
        if stations and at < stations[-1].from_top_m:
            r.fail((*p, "from_top"), f"{_name(p)}: {at * 1000:g} mm from the top comes after a "
                   f"station at {stations[-1].from_top_m * 1000:g} mm",
                   "list the stations from the top end down")
        elif len(stations) > 1 and at == stations[-1].from_top_m == stations[-2].from_top_m:
            r.fail((*p, "from_top"), f"{_name(p)}: a third station at "
                   f"{at * 1000:g} mm from the top",
                   "a step takes two stations at one place: the diameter above it and below it")
        stations.append(model.BoreStation(at, diameter, r.at(p)))
    return tuple(stations)


def _hole(r: _Reader, p: Path, length: float) -> model.SurveyHole:
    top, bottom = r.length((*p, "from_top"), positive=False), r.length(
        (*p, "from_bottom"), positive=False)
    if top is not None and bottom is not None:
        r.fail((*p, "from_bottom"), f"{_name(p)} gives both `from_top` and `from_bottom`",
               "keep the one you measured: a hole's place is given from one end")
    elif top is None and bottom is None and r.get(p) is not None:
        r.fail(p, f"{_name(p)} has no place along the tube",
               "add `from_top` (its centre from the top end) or `from_bottom` (from the foot)")
    label = r.get((*p, "label"))
    return model.SurveyHole(
        label=str(label) if label is not None else None,
        from_top_m=top if top is not None else length - (bottom or 0.0),
        measured_from="top" if top is not None or bottom is None else "bottom",
        diameter_m=r.length((*p, "diameter")) or 0.0,
        chimney_m=r.length((*p, "chimney"), positive=False),
        undercut_m=r.length((*p, "undercut"), positive=False) or 0.0,
        angle_deg=r.convert((*p, "angle"), units.parse_angle, 0.0),
        position=r.at(p),
        where=model._frozen(r.where(p, "from_top", "from_bottom", "diameter", "chimney",
                                    "undercut")),
    )
