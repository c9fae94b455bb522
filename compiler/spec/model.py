"""The typed spec: what the rest of the compiler reads instead of YAML.

Every quantity is in SI units (m, Hz, K, Pa, fractions); notes are MIDI numbers.
Each element keeps its source position, and ``where`` maps field names to the
positions of individual values, so a later stage can point at the exact line.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field
from types import MappingProxyType

from compiler.errors import Position


def _frozen(mapping: Mapping[str, Position] | None = None) -> Mapping[str, Position]:
    return MappingProxyType(dict(mapping or {}))


@dataclass(frozen=True)
class Environment:
    """Air values given in the spec; ``None`` means "the family's default"."""

    temperature_k: float | None = None
    humidity: float | None = None
    pressure_pa: float | None = None
    co2: float | None = None
    sound_speed: str | None = None
    """A model name (``cramer-1993``, ``ideal-gas``, ``linear``) or ``measured``."""
    sound_speed_m_s: float | None = None
    """The measured speed when ``sound_speed`` is ``measured``."""
    where: Mapping[str, Position] = field(default_factory=_frozen)


@dataclass(frozen=True)
class Tuning:
    a4_hz: float = 440.0
    temperament: str = "equal"
    tonic_pc: int = 0
    custom_cents: tuple[float, ...] | None = None
    offsets: tuple[tuple[int, float], ...] = ()
    """Per-note cents, as (MIDI note, cents) pairs sorted by note."""
    where: Mapping[str, Position] = field(default_factory=_frozen)


@dataclass(frozen=True)
class Stock:
    """One kind of stock: ``kind`` is ``tube``, ``sheet`` or ``board``."""

    name: str
    kind: str
    material: str
    thickness_m: float
    """Wall thickness of a tube, thickness of a sheet or board."""
    outside_diameter_m: float | None = None
    inside_diameter_m: float | None = None
    length_m: float | None = None
    """Length of one stock tube, or the sheet's length."""
    width_m: float | None = None
    """Width of the sheet or board panel."""
    position: Position = Position("<spec>", 0, 0)


@dataclass(frozen=True)
class Fabrication:
    sheet_length_m: float = 1.2
    sheet_width_m: float = 0.6
    kerf_m: float = 0.0002
    tube_kerf_m: float | None = None
    """Saw cut when stock tube is cut to length; None: ``kerf_m``."""
    spacing_m: float = 0.005
    allowance_fraction: float = 0.0
    allowance_m: float = 0.0
    precision_m: float = 0.0001
    seam_allowance_m: float = 0.006
    drills_m: tuple[float, ...] = ()
    paper: str = "a4"
    dxf_version: str = "r2010"
    part_files: bool = False
    where: Mapping[str, Position] = field(default_factory=_frozen)


@dataclass(frozen=True)
class Measurement:
    note: int
    frequency_hz: float
    temperature_k: float
    length_m: float | None
    position: Position
    fingering: tuple[bool, ...] | None = None
    """Flutes: the fingering played (True = closed), where the note has more than one."""


@dataclass(frozen=True)
class EndCorrection:
    model: str = "unflanged"
    k: float = 0.3


@dataclass(frozen=True)
class Override:
    note: int
    diameter_m: float | None = None
    width_m: float | None = None
    depth_m: float | None = None
    mouth_width: float | None = None
    cutup: float | None = None
    stock: str | None = None
    frequency_hz: float | None = None
    position: Position = Position("<spec>", 0, 0)


@dataclass(frozen=True)
class Scale:
    """Cross-section rule: a reference pipe and a halving interval, and/or a table.

    Table entries are (note, diameter_or_width_m, depth_m or None).
    """

    reference_note: int | None = None
    diameter_m: float | None = None
    width_m: float | None = None
    depth_m: float | None = None
    halving_interval: float = 16.0
    table: tuple[tuple[int, float, float | None], ...] = ()


@dataclass(frozen=True)
class Mouth:
    width: float | None = None
    cutup: float | None = None
    lip_thickness_m: float | None = None


@dataclass(frozen=True)
class Foot:
    length_m: float | None = None
    toe: float | None = None


@dataclass(frozen=True)
class Stopper:
    length_m: float | None = None
    travel_m: float | None = None


@dataclass(frozen=True)
class Holder:
    stock: str
    spacing_m: float = 0.012
    margin_m: float = 0.015
    clearance_m: float = 0.0005


@dataclass(frozen=True)
class Rank:
    """A rank of flue pipes: family ``open-flue`` or ``stopped-flue``."""

    id: str
    family: str
    construction: str
    stock: str
    notes: tuple[int, ...]
    harmonic: int
    scale: Scale
    mouth: Mouth
    foot: Foot
    stopper: Stopper
    end_correction: EndCorrection
    overrides: tuple[Override, ...]
    measured: tuple[Measurement, ...]
    position: Position
    where: Mapping[str, Position] = field(default_factory=_frozen)
    losses: str = "keefe"
    """Wall-loss model along the pipes: ``keefe`` or ``none``."""


@dataclass(frozen=True)
class TubeSet:
    """Tubes cut from stock: family ``stopped-tube`` or ``open-tube``."""

    id: str
    family: str
    stock: tuple[str, ...]
    notes: tuple[int, ...]
    harmonic: int
    end_correction: EndCorrection
    plug_length_m: float | None
    holder: Holder | None
    overrides: tuple[Override, ...]
    measured: tuple[Measurement, ...]
    position: Position
    where: Mapping[str, Position] = field(default_factory=_frozen)
    losses: str = "keefe"
    """Wall-loss model along the tubes: ``keefe`` or ``none``."""


@dataclass(frozen=True)
class HoleSpec:
    label: str | None
    position_m: float | None
    diameter_m: float | None
    angle_deg: float
    undercut_m: float
    position: Position


NO_SECOND_REGISTER = -1
"""``second_register: none``: the fingering is not used in the second register."""


@dataclass(frozen=True)
class FingeringSpec:
    note: int
    closed: tuple[bool, ...]
    frequency_hz: float | None
    second_register: int | None
    position: Position


@dataclass(frozen=True)
class Head:
    """Duct (window) or embouchure; unused fields are None."""

    window_length_m: float | None = None
    window_width_m: float | None = None
    window_from_top_m: float | None = None
    duct_height_m: float | None = None
    duct_width_m: float | None = None
    embouchure_diameter_m: float | None = None
    embouchure_from_top_m: float | None = None
    lip_cover: float | None = None
    cork_m: float | None = None


@dataclass(frozen=True)
class Constraints:
    min_diameter_m: float | None = None
    max_diameter_m: float | None = None
    max_ratio: float | None = None
    min_web_m: float | None = None
    max_span_m: float | None = None
    min_span_m: float | None = None


@dataclass(frozen=True)
class Flute:
    """A tube with tone holes: family ``duct-flute`` or ``side-blown-flute``."""

    id: str
    family: str
    stock: str
    head: Head
    holes: tuple[HoleSpec, ...]
    fingerings: tuple[FingeringSpec, ...]
    constraints: Constraints
    length_m: float | None
    losses: str
    radiation: str
    environment: Environment
    measured: tuple[Measurement, ...]
    position: Position
    where: Mapping[str, Position] = field(default_factory=_frozen)
    second_register_weight: float | None = None
    """Weight of second-register notes against the first register's in the hole solve
    (0.5–1; None: the solver's default)."""
    jig: str | None = None
    """The sheet or board stock the drilling jig and head gauges are cut from (None: the
    default sheet)."""


@dataclass(frozen=True)
class BoreStation:
    """A measured diameter of a surveyed bore, and where along it (from the top end)."""

    from_top_m: float
    diameter_m: float
    position: Position


@dataclass(frozen=True)
class SurveyHole:
    """A measured tone hole; ``from_top_m`` is worked out from ``from_bottom`` when the
    maker measured from the foot (``measured_from`` says which)."""

    label: str | None
    from_top_m: float
    measured_from: str
    """``top`` or ``bottom``."""
    diameter_m: float
    chimney_m: float | None
    """None: the survey's wall."""
    undercut_m: float
    angle_deg: float
    position: Position
    where: Mapping[str, Position] = field(default_factory=_frozen)


@dataclass(frozen=True)
class SurveyFingering:
    closed: tuple[bool, ...]
    note: int | None
    """None: compared with the nearest note."""
    frequency_hz: float | None
    second_register: int | None
    """A note, ``NO_SECOND_REGISTER``, or None (compared with the nearest note)."""
    position: Position


@dataclass(frozen=True)
class Survey:
    """An instrument as measured, to be predicted (never solved): its length, bore
    stations (one station: a cylinder), wall, blowing end and holes."""

    id: str
    length_m: float
    bore: tuple[BoreStation, ...]
    wall_m: float
    outside_diameter_m: float | None
    stock: str | None
    material: str | None
    jig: str | None
    """The sheet or board stock the copy's cutter parts are cut from (None: the default)."""
    blowing_end: str
    """``duct``, ``embouchure``, ``reed``, ``closed`` or ``open``."""
    head: Head
    reed_length_m: float
    holes: tuple[SurveyHole, ...]
    fingerings: tuple[SurveyFingering, ...]
    losses: str
    radiation: str
    environment: Environment
    position: Position
    where: Mapping[str, Position] = field(default_factory=_frozen)


@dataclass(frozen=True)
class Spec:
    """One normalised spec."""

    file: str
    sha256: str
    format_version: int
    instrument: str
    units: str
    environment: Environment
    tuning: Tuning
    stock: tuple[Stock, ...]
    fabrication: Fabrication
    ranks: tuple[Rank, ...]
    tube_sets: tuple[TubeSet, ...]
    flutes: tuple[Flute, ...]
    surveys: tuple[Survey, ...] = ()
    where: Mapping[str, Position] = field(default_factory=_frozen)
    """Positions of top-level values (``instrument``)."""

    def stock_named(self, name: str) -> Stock | None:
        return next((s for s in self.stock if s.name == name), None)
