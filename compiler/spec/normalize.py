"""Turn validated spec data into the typed ``Spec``: units to SI, notes to numbers.

Every problem (a missing unit, an unknown note, a stock name that does not exist) is
collected with its position, and all are raised together as one ``UnitError``.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from typing import Any, TypeVar

from compiler.display import INCH_PRECISION_M, INCH_UNITS
from compiler.errors import Position, Problem, UnitError
from compiler.spec import model, notes, units
from compiler.spec.loader import Document, Path

T = TypeVar("T")

SOUND_SPEED_MODELS = ("cramer-1993", "ideal-gas", "linear")
"""The schema's names of speed-of-sound models (anything else is a measured speed)."""
SPEED_RANGE = (290.0, 410.0)
"""Speeds of sound a measurement in air can give, m/s: 290 m/s is dry air at about -63 C and
410 m/s at about +147 C (ideal-gas law c = 331.3·sqrt(T/273.15), standard physics)."""

PITCH_CLASS_KEYS = ("C", "C#", "D", "Eb", "E", "F", "F#", "G", "G#", "A", "Bb", "B")


class _Reader:
    """Reads values at paths, converting units and collecting problems."""

    def __init__(self, document: Document, refused: Sequence[Path] = ()) -> None:
        self.doc = document
        self.problems: list[Problem] = []
        self.refused = tuple(refused)
        """Paths whose values the schema refused: read as absent, never judged again."""
        self.units = str(document.data.get("units", "mm"))
        self.rejected: set[str] = set()
        """Stock names given but refused (already reported): not reported again as missing."""

    def _refused(self, path: Path) -> bool:
        return any(path[: len(r)] == r for r in self.refused)

    def get(self, path: Path) -> Any:
        if self.refused and self._refused(path):
            return None
        node: Any = self.doc.data
        for part in path:
            if isinstance(node, dict) and isinstance(part, str):
                node = node.get(part)
            elif isinstance(node, list) and isinstance(part, int) and part < len(node):
                node = node[part]
            else:
                return None
        return node

    def fail(self, path: Path, message: str, hint: str = "") -> None:
        if self.refused and self._refused(path):
            return  # the schema's problem there says it already
        self.problems.append(Problem(self.doc.at(path), message, hint, "units"))

    def convert(self, path: Path, parse: Callable[[Any], T], default: T) -> T:
        value = self.get(path)
        if value is None:
            return default
        try:
            return parse(value)
        except (units.UnitParseError, notes.NoteError) as exc:
            self.fail(path, f"{_name(path)}: {exc.message}", exc.hint)
            return default

    def length(self, path: Path, *, positive: bool = True) -> float | None:
        parse = units.parse_positive_length if positive else units.parse_nonnegative_length
        return self.convert(path, lambda v: parse(v, self.units), None)

    def ratio(self, path: Path) -> float | None:
        return self.convert(path, units.parse_ratio, None)

    def frequency(self, path: Path) -> float | None:
        return self.convert(path, units.parse_frequency, None)

    def temperature(self, path: Path) -> float | None:
        return self.convert(path, units.parse_temperature, None)

    def note(self, path: Path) -> int | None:
        return self.convert(path, notes.parse_note, None)

    def key_note(self, path: Path, label: str) -> int | None:
        """The note named by the last key of ``path`` (a per-note table), or None."""
        try:
            return notes.parse_note(str(path[-1]))
        except notes.NoteError as exc:
            self.problems.append(Problem(self.doc.key_at(path), f"{label}: {exc.message}",
                                         exc.hint, "units"))
            return None

    def at(self, path: Path) -> Position:
        return self.doc.at(path)

    def where(self, base: Path, *names: str) -> dict[str, Position]:
        found = {}
        for name in names:
            path = (*base, *name.split("."))
            if self.get(path) is not None:
                found[name] = self.doc.at(path)
        return found


def _name(path: Path) -> str:
    from compiler.spec.validate import dotted

    return dotted(path)


def normalize(document: Document) -> model.Spec:
    """Build the typed ``Spec``; raise ``UnitError`` listing every problem."""
    r = _Reader(document)
    spec = _build(r, document)
    if r.problems:
        raise UnitError(r.problems)
    return spec


def unit_problems(document: Document, refused: Sequence[Path]) -> list[Problem]:
    """The unit and reference problems of a spec the schema found problems in, leaving out
    the values it refused (``refused`` paths). The rest of the document is not sure to be
    well formed, so a value of an unexpected shape ends the search: what was found so far
    is returned."""
    r = _Reader(document, refused)
    try:
        _build(r, document)
    except (TypeError, ValueError, KeyError, AttributeError, IndexError):
        pass
    return r.problems


def _build(r: _Reader, document: Document) -> model.Spec:
    # These read with this module's helpers (its reader, environment, measurements).
    from compiler.spec.flutes import read_flute
    from compiler.spec.surveys import read_survey

    data = document.data
    stock = _stock(r)
    spec = model.Spec(
        file=document.file,
        sha256=document.sha256,
        format_version=int(data.get("boresmith", 1)),
        instrument=str(data.get("instrument", "")),
        units=r.units,
        environment=_environment(r, ("environment",)),
        tuning=_tuning(r),
        stock=stock,
        fabrication=_fabrication(r),
        ranks=tuple(_rank(r, i) for i in range(len(data.get("ranks", [])))),
        tube_sets=tuple(_tube_set(r, i) for i in range(len(data.get("tube_sets", [])))),
        flutes=tuple(read_flute(r, i) for i in range(len(data.get("flutes", [])))),
        surveys=tuple(read_survey(r, i) for i in range(len(data.get("surveys", [])))),
        where=model._frozen(r.where((), "instrument")),
    )
    _check_references(r, spec)
    return spec


def _environment(r: _Reader, base: Path) -> model.Environment:
    raw = r.get((*base, "sound_speed"))
    measured = None
    if raw is not None and raw not in SOUND_SPEED_MODELS:
        # Not a model's name: a measured speed (the schema lets only numbers through here).
        measured = r.convert((*base, "sound_speed"), units.parse_speed, None)
        if measured is not None and not SPEED_RANGE[0] <= measured <= SPEED_RANGE[1]:
            r.fail((*base, "sound_speed"), f"{_name((*base, 'sound_speed'))}: {measured:g} m/s "
                   "is not a speed of sound in air",
                   f"air carries sound at {SPEED_RANGE[0]:g} to {SPEED_RANGE[1]:g} m/s between "
                   "about -60 and +145 C; check the unit, or name a model such as "
                   "`cramer-1993`")
            measured = None
    return model.Environment(
        temperature_k=r.temperature((*base, "temperature")),
        humidity=r.convert((*base, "humidity"), units.parse_humidity, None),
        pressure_pa=r.convert((*base, "pressure"), units.parse_pressure, None),
        co2=r.convert((*base, "co2"), units.parse_co2, None),
        sound_speed="measured" if measured is not None else (
            raw if raw in SOUND_SPEED_MODELS else None),
        sound_speed_m_s=measured,
        where=model._frozen(r.where(base, "temperature", "humidity", "pressure", "co2",
                                    "sound_speed")),
    )


def _tuning(r: _Reader) -> model.Tuning:
    base: Path = ("tuning",)
    tonic_pc = r.convert((*base, "tonic"), lambda t: notes.parse_note(f"{t}4") % 12, 0)
    custom = None
    cents = r.get((*base, "cents"))
    if isinstance(cents, dict):
        custom = tuple(float(cents[k]) for k in PITCH_CLASS_KEYS if k in cents)
        if len(custom) != 12:
            custom = None
    offsets: list[tuple[int, float]] = []
    for key in sorted(r.get((*base, "offsets")) or {}):
        path = (*base, "offsets", key)
        note = r.key_note(path, "tuning.offsets")
        if note is None:
            continue
        offsets.append((note, r.convert(path, units.parse_cents, 0.0)))
    return model.Tuning(
        a4_hz=r.frequency((*base, "a4")) or 440.0,
        temperament=r.get((*base, "temperament")) or "equal",
        tonic_pc=tonic_pc,
        custom_cents=custom,
        offsets=tuple(sorted(offsets)),
        where=model._frozen(r.where(base, "a4", "temperament")),
    )


def _stock(r: _Reader) -> tuple[model.Stock, ...]:
    items = []
    for name in sorted(r.get(("stock",)) or {}):
        base: Path = ("stock", name)
        entry = r.get(base) or {}
        material = str(entry.get("material", ""))
        if "tube" in entry:
            t = (*base, "tube")
            before = len(r.problems)
            od = r.length((*t, "outside_diameter"))
            inner = r.length((*t, "inside_diameter"))
            wall = r.length((*t, "wall"))
            given = sum(v is not None for v in (od, inner, wall))
            if len(r.problems) > before:  # a size that could not be read: said already
                r.rejected.add(name)
                continue
            if given != 2:
                r.fail(t, f"stock `{name}`: give two of `outside_diameter`, `inside_diameter` and "
                       "`wall`", "for example `{outside_diameter: 22 mm, wall: 1 mm}`")
                r.rejected.add(name)
                continue
            if wall is None and od is not None and inner is not None:
                wall = (od - inner) / 2
            if od is None and inner is not None and wall is not None:
                od = inner + 2 * wall
            if inner is None and od is not None and wall is not None:
                inner = od - 2 * wall
            assert od is not None and inner is not None and wall is not None
            if inner <= 0 or wall <= 0:
                r.fail(t, f"stock `{name}`: the wall leaves no bore "
                       f"(outside {od * 1000:g} mm, wall {wall * 1000:g} mm)",
                       "check the outside diameter and the wall thickness")
                r.rejected.add(name)
                continue
            items.append(model.Stock(name, "tube", material, wall, od, inner,
                                     r.length((*t, "length")), None, r.at(base)))
            continue
        kind = "sheet" if "sheet" in entry else "board"
        k = (*base, kind)
        size = r.convert((*k, "size"), lambda v: units.parse_size2(v, r.units), None)
        thickness = r.length((*k, "thickness")) or 0.001
        items.append(model.Stock(name, kind, material, thickness, None, None,
                                 size[0] if size else None, size[1] if size else None,
                                 r.at(base)))
    return tuple(items)


def _allowance(r: _Reader, path: Path) -> tuple[float, float]:
    """A tuning allowance: a share of the speaking length (``3 %``), a length (``10 mm``), or
    both added (``3 % + 5 mm``: short pipes still keep a few millimetres)."""
    raw = r.get(path)
    if raw is None:
        return 0.0, 0.0
    parts = raw.split("+") if isinstance(raw, str) and "+" in raw.strip()[1:] else [raw]
    fraction = length = None
    for part in parts:
        text = part.strip() if isinstance(part, str) else part
        share = isinstance(text, str) and text.endswith("%")
        if (fraction if share else length) is not None:
            r.fail(path, f"{_name(path)}: `{raw}` gives the {'share' if share else 'length'} "
                   "twice", "write a share, a length, or one of each: `3 % + 5 mm`")
            return 0.0, 0.0
        try:
            if share:
                fraction = units.parse_ratio(text)
            else:
                length = units.parse_nonnegative_length(text, r.units)
        except units.UnitParseError as exc:
            r.fail(path, f"{_name(path)}: {exc.message}", exc.hint)
            return 0.0, 0.0
    return fraction or 0.0, length or 0.0


def _fabrication(r: _Reader) -> model.Fabrication:
    base: Path = ("fabrication",)
    default = model.Fabrication()
    size = r.convert((*base, "sheet"), lambda v: units.parse_size2(v, r.units), None)
    allowance_fraction, allowance_m = _allowance(r, (*base, "tuning_allowance"))
    kerf = r.length((*base, "kerf"), positive=False)
    spacing = r.length((*base, "spacing"), positive=False)
    precision = r.length((*base, "precision"))
    seam = r.length((*base, "seam_allowance"), positive=False)
    return model.Fabrication(
        sheet_length_m=max(size) if size else default.sheet_length_m,
        sheet_width_m=min(size) if size else default.sheet_width_m,
        kerf_m=default.kerf_m if kerf is None else kerf,
        tube_kerf_m=r.length((*base, "tube_kerf"), positive=False),
        spacing_m=default.spacing_m if spacing is None else spacing,
        allowance_fraction=allowance_fraction,
        allowance_m=allowance_m,
        # a spec in inches works to a rule's 1/32 in unless it says otherwise
        precision_m=precision or (INCH_PRECISION_M if r.units in INCH_UNITS
                                  else default.precision_m),
        seam_allowance_m=default.seam_allowance_m if seam is None else seam,
        drills_m=_drills(r, (*base, "drills")),
        paper=r.get((*base, "paper")) or "a4",
        dxf_version=r.get((*base, "dxf_version")) or "r2010",
        part_files=bool(r.get((*base, "part_files"))),
        where=model._frozen(r.where(base, "sheet", "kerf", "spacing", "drills",
                                    "tuning_allowance")),
    )


def _drills(r: _Reader, path: Path) -> tuple[float, ...]:
    raw = r.get(path)
    if raw is None:
        # Common practice: a metric jobber set, 1 mm to 13 mm in 0.5 mm steps.
        return tuple(round(0.001 + 0.0005 * i, 7) for i in range(25))
    if isinstance(raw, list):
        sizes = [r.length((*path, i)) for i in range(len(raw))]
        return tuple(sorted({round(s, 9) for s in sizes if s}))
    start, stop, step = r.length((*path, "from")), r.length((*path, "to")), r.length(
        (*path, "step"))
    if not (start and stop and step):
        return ()
    if stop < start:
        r.fail(path, "drills: `to` is smaller than `from`", "swap the two sizes")
        return ()
    count = int((stop - start) / step + 1e-6) + 1
    if count > 2000:
        r.fail((*path, "step"), f"drills: the step gives {count} sizes", "use a coarser step")
        return ()
    return tuple(round(start + i * step, 9) for i in range(count))


def _notes(r: _Reader, path: Path) -> tuple[int, ...]:
    raw = r.get(path)
    try:
        if isinstance(raw, str):
            if ".." in raw:
                return tuple(notes.parse_note_range(raw))
            return (notes.parse_note(raw),)
        if isinstance(raw, list):
            found = []
            for i, _ in enumerate(raw):
                note = r.note((*path, i))
                if note is not None:
                    found.append(note)
            return tuple(found)
        if isinstance(raw, dict):
            tonic = r.note((*path, "tonic"))
            if tonic is None:
                return ()
            return tuple(notes.scale_notes(tonic, raw["scale"], int(raw["count"])))
    except notes.NoteError as exc:
        r.fail(path, f"{_name(path)}: {exc.message}", exc.hint)
    return ()


def _check_duplicates(r: _Reader, path: Path, midis: tuple[int, ...]) -> None:
    seen: set[int] = set()
    said: set[int] = set()
    for note in midis:
        if note in seen and note not in said:
            r.fail(path, f"{_name(path)}: the note {notes.note_name(note)} is listed twice",
                   "each note makes one pipe; remove the repeat")
            said.add(note)
        seen.add(note)


def _end_correction(r: _Reader, base: Path) -> model.EndCorrection:
    path = (*base, "end_correction")
    k = r.ratio((*path, "k"))
    return model.EndCorrection(
        model=r.get((*path, "model")) or "unflanged",
        k=0.3 if k is None else k,  # an explicit 0 means no correction, not the default
    )


def _measured(r: _Reader, base: Path) -> tuple[model.Measurement, ...]:
    items = []
    for i, _ in enumerate(r.get((*base, "measured")) or []):
        m = (*base, "measured", i)
        note, freq, temp = r.note((*m, "note")), r.frequency((*m, "frequency")), r.temperature(
            (*m, "temperature"))
        if note is None or freq is None or temp is None:
            continue
        played = r.get((*m, "fingering"))
        fingering = (tuple(ch in "xX" for ch in str(played) if ch in "xXoO")
                     if played is not None else None)
        items.append(model.Measurement(note, freq, temp, r.length((*m, "length")), r.at(m),
                                       fingering))
    return tuple(items)


def _overrides(r: _Reader, base: Path) -> tuple[model.Override, ...]:
    items = []
    for i, _ in enumerate(r.get((*base, "overrides")) or []):
        o = (*base, "overrides", i)
        note = r.note((*o, "note"))
        if note is None:
            continue
        items.append(model.Override(
            note=note, diameter_m=r.length((*o, "diameter")), width_m=r.length((*o, "width")),
            depth_m=r.length((*o, "depth")), mouth_width=r.ratio((*o, "mouth_width")),
            cutup=r.ratio((*o, "cutup")), stock=r.get((*o, "stock")),
            frequency_hz=r.frequency((*o, "frequency")), position=r.at(o)))
    return tuple(items)


def _scale(r: _Reader, base: Path) -> model.Scale:
    s = (*base, "scale")
    ref = (*s, "reference")
    table: list[tuple[int, float, float | None]] = []
    for key in sorted(r.get((*s, "table")) or {}):
        path = (*s, "table", key)
        note = r.key_note(path, f"{_name(s)}.table")
        if note is None:
            continue
        value = r.get(path)
        if isinstance(value, str) and "x" in value.lower():
            size = r.convert(path, lambda v: units.parse_size2(v, r.units), None)
            if size:
                table.append((note, size[0], size[1]))
        else:
            d = r.length(path)
            if d:
                table.append((note, d, None))
    return model.Scale(
        reference_note=r.note((*ref, "note")),
        diameter_m=r.length((*ref, "diameter")),
        width_m=r.length((*ref, "width")),
        depth_m=r.length((*ref, "depth")),
        halving_interval=float(r.get((*s, "halving_interval")) or 16.0),
        table=tuple(sorted(table)),
    )


def _rank(r: _Reader, i: int) -> model.Rank:
    base: Path = ("ranks", i)
    midis = _notes(r, (*base, "notes"))
    _check_duplicates(r, (*base, "notes"), midis)
    return model.Rank(
        id=str(r.get((*base, "id"))),
        family=str(r.get((*base, "family"))),
        construction=str(r.get((*base, "construction"))),
        stock=str(r.get((*base, "stock"))),
        notes=midis,
        harmonic=int(r.get((*base, "harmonic")) or 1),
        scale=_scale(r, base),
        mouth=model.Mouth(r.ratio((*base, "mouth", "width")), r.ratio((*base, "mouth", "cutup")),
                          r.length((*base, "mouth", "lip_thickness"))),
        foot=model.Foot(r.length((*base, "foot", "length")), r.ratio((*base, "foot", "toe"))),
        stopper=model.Stopper(r.length((*base, "stopper", "length")),
                              r.length((*base, "stopper", "travel"))),
        end_correction=_end_correction(r, base),
        losses=r.get((*base, "losses")) or "keefe",
        overrides=_overrides(r, base),
        measured=_measured(r, base),
        position=r.at(base),
        where=model._frozen(r.where(base, "id", "family", "construction", "stock", "notes",
                                    "harmonic", "scale", "scale.reference", "mouth",
                                    "mouth.width", "mouth.cutup", "foot", "stopper",
                                    "end_correction", "measured")),
    )


def _tube_set(r: _Reader, i: int) -> model.TubeSet:
    base: Path = ("tube_sets", i)
    midis = _notes(r, (*base, "notes"))
    _check_duplicates(r, (*base, "notes"), midis)
    raw_stock = r.get((*base, "stock"))
    stock = tuple(raw_stock) if isinstance(raw_stock, list) else (str(raw_stock),)
    holder = None
    h = (*base, "holder")
    if r.get(h) is not None:
        default = model.Holder(stock="")
        spacing = r.length((*h, "spacing"), positive=False)
        margin = r.length((*h, "margin"), positive=False)
        clearance = r.length((*h, "clearance"), positive=False)
        holder = model.Holder(
            stock=str(r.get((*h, "stock"))),
            spacing_m=default.spacing_m if spacing is None else spacing,
            margin_m=default.margin_m if margin is None else margin,
            clearance_m=default.clearance_m if clearance is None else clearance,
        )
    return model.TubeSet(
        id=str(r.get((*base, "id"))),
        family=str(r.get((*base, "family"))),
        stock=stock,
        notes=midis,
        harmonic=int(r.get((*base, "harmonic")) or 1),
        end_correction=_end_correction(r, base),
        losses=r.get((*base, "losses")) or "keefe",
        plug_length_m=r.length((*base, "plug", "length")),
        holder=holder,
        overrides=_overrides(r, base),
        measured=_measured(r, base),
        position=r.at(base),
        where=model._frozen(r.where(base, "id", "family", "stock", "notes", "harmonic",
                                    "holder", "holder.stock", "plug", "end_correction",
                                    "measured")),
    )


def _check_references(r: _Reader, spec: model.Spec) -> None:
    """Stock names must exist and be of the right kind; group ids must be unique."""
    by_name = {s.name: s for s in spec.stock}
    given = r.doc.data.get("stock")
    # Names refused by the schema (a space, a letter outside ASCII) or as stock: their own
    # problem is reported at the stock, not again at every group that uses them.
    refused = r.rejected | (set(map(str, given)) - set(by_name) if isinstance(given, dict)
                            else set())

    def need(name: str, kinds: tuple[str, ...], path: Path, what: str) -> None:
        item = by_name.get(name)
        if item is None and name in refused:
            return  # its own problem is reported at the stock
        if item is None:
            known = ", ".join(f"`{n}`" for n in sorted(by_name)) or (
                "none usable yet (see the errors at `stock:`)" if refused else "none yet")
            r.fail(path, f"{what}: no stock named `{name}`",
                   f"add it under `stock:` or use one of: {known}")
        elif item.kind not in kinds:
            r.fail(path, f"{what}: stock `{name}` is a {item.kind}, but this needs "
                   + " or ".join(f"a {k}" for k in kinds),
                   "pick stock of the right kind")

    def called(kind: str, section: str, i: int, ident: str) -> str:
        """``rank `principal-8```, or ``rank 2`` (its place) where the id was refused."""
        return f"{kind} `{ident}`" if isinstance(r.get((section, i, "id")), str) else (
            f"{kind} {i + 1}")

    for i, rank in enumerate(spec.ranks):
        kinds = ("sheet",) if rank.construction == "rolled-sheet" else ("board", "sheet")
        need(rank.stock, kinds, ("ranks", i, "stock"), called("rank", "ranks", i, rank.id))
    for i, tubes in enumerate(spec.tube_sets):
        what = called("tube set", "tube_sets", i, tubes.id)
        for j, name in enumerate(tubes.stock):
            path: Path = ("tube_sets", i, "stock") + ((j,) if len(tubes.stock) > 1 else ())
            need(name, ("tube",), path, what)
        if tubes.holder is not None:
            need(tubes.holder.stock, ("sheet", "board"), ("tube_sets", i, "holder", "stock"),
                 f"holder of {what}")
        for j, o in enumerate(tubes.overrides):
            if o.stock is not None:
                need(o.stock, ("tube",), ("tube_sets", i, "overrides", j, "stock"), what)
    for i, flute in enumerate(spec.flutes):
        what = called("flute", "flutes", i, flute.id)
        need(flute.stock, ("tube",), ("flutes", i, "stock"), what)
        if flute.jig is not None:
            need(flute.jig, ("sheet", "board"), ("flutes", i, "jig"), f"jig of {what}")
    for i, survey in enumerate(spec.surveys):
        what = called("survey", "surveys", i, survey.id)
        if survey.stock is not None:
            need(survey.stock, ("tube",), ("surveys", i, "stock"), what)
        if survey.jig is not None:
            need(survey.jig, ("sheet", "board"), ("surveys", i, "jig"), f"jig of {what}")
    seen: dict[str, Path] = {}
    groups: list[tuple[str, Path]] = []
    groups += [(g.id, ("ranks", i, "id")) for i, g in enumerate(spec.ranks)]
    groups += [(g.id, ("tube_sets", i, "id")) for i, g in enumerate(spec.tube_sets)]
    groups += [(g.id, ("flutes", i, "id")) for i, g in enumerate(spec.flutes)]
    groups += [(g.id, ("surveys", i, "id")) for i, g in enumerate(spec.surveys)]
    for ident, path in groups:
        if not isinstance(r.get(path), str):
            continue  # a refused id: said at the id
        if ident in seen:
            r.fail(path, f"the id `{ident}` is used twice", "give each rank, set, flute or "
                   "survey its own id: it names the output files")
        seen[ident] = path
    if not groups:
        r.problems.append(Problem(r.at(()), "the spec has no pipes",
                                  "add `ranks:`, `tube_sets:`, `flutes:` or `surveys:`", "units"))
