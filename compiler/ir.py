"""The resolved model (the IR): what every backend reads, and nothing else.

Frozen dataclasses, SI units (metres, Hz, K converted to °C for display only where the
field name says so). Lengths along a pipe use explicit datums, named in each field:

- Flue pipes (``open-flue``, ``stopped-flue``): the *speaking length* runs from the lower
  lip (the languid's level, the top of the foot or block) to the open top, or to the
  underside of the stopper. The body is cut ``cut_length_m`` long (speaking length plus the
  tuning allowance; for wood, plus the block below the mouth and the stopper above).
- Tubes (``stopped-tube``, ``open-tube``): the speaking length is the air column; a stopped
  tube's cut length adds the plug.
- Flutes and surveys: hole positions are given from the top end (the head end) and from the
  bottom end.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

from compiler.errors import Note as Note  # the IR's warnings; defined with the errors
from compiler.errors import Position

NOT_IN_JSON = {"json": False}
"""Field metadata: the field stays out of ``resolved.json`` (spec positions the output
contract does not carry; they serve the errors of later stages)."""


def spec_position() -> Any:
    """A field for the spec position an element came from, kept out of ``resolved.json``."""
    return field(default=None, metadata=NOT_IN_JSON)


@dataclass(frozen=True)
class AirReport:
    """The air a group was resolved for; ``defaults`` names the values not given in the spec."""

    preset: str
    """``room`` (organ pipes, tubes) or ``breath`` (flutes): where the defaults came from."""
    temperature_c: float
    humidity_percent: float
    pressure_pa: float
    co2_ppm: float
    sound_speed_model: str
    speed_m_s: float
    density_kg_m3: float
    defaults: tuple[str, ...]
    sound_speed_formula: str = ""
    """The rule behind ``speed_m_s`` with its coefficients (``c = 331.3 + 0.606·t m/s ...``),
    or the measured value and its temperature."""


@dataclass(frozen=True)
class TuningReport:
    a4_hz: float
    temperament: str
    tonic: str


@dataclass(frozen=True)
class StockItem:
    name: str
    kind: str
    """``tube``, ``sheet`` or ``board``."""
    material: str
    thickness_m: float
    outside_diameter_m: float | None
    inside_diameter_m: float | None
    length_m: float | None
    width_m: float | None


CHLORINATED, LEAD, WOOD_DUST, METAL = "chlorinated", "lead", "wood-dust", "metal"
"""The shop hazards of a material (``Material.hazards``)."""


@dataclass(frozen=True)
class Material:
    """A material the build uses, with the shop hazards its name shows
    (``compiler.resolve.materials``)."""

    name: str
    """As the spec writes it."""
    hazards: tuple[str, ...]
    """``chlorinated`` (PVC, vinyl: never laser cut), ``lead`` (lead-bearing metal),
    ``wood-dust``, ``metal`` (edges and burrs), in that order; empty for none."""


@dataclass(frozen=True)
class FabricationReport:
    sheet_length_m: float
    sheet_width_m: float
    kerf_m: float
    spacing_m: float
    precision_m: float
    seam_allowance_m: float
    tuning_allowance: str
    """As written: ``3 %`` or ``10 mm`` (shown on the build sheet)."""
    paper: str
    dxf_version: str
    part_files: bool
    units: str
    """The spec's length unit; the PDF shows inches beside mm when it is ``in`` or ``ft``."""
    tube_kerf_m: float | None = None
    """Saw cut when stock tube is cut to length (the stock plan); None: ``kerf_m``."""


@dataclass(frozen=True)
class Residual:
    note: str
    error_cents: float
    """Measured minus predicted, after the fit."""


@dataclass(frozen=True)
class Fitted:
    """A further parameter a calibration fitted (a flute's lip cover), by name."""

    name: str
    value: float


@dataclass(frozen=True)
class Calibration:
    calibrated: bool
    parameter: str
    """What was fitted, in words (e.g. ``end correction scale``)."""
    value: float
    residuals: tuple[Residual, ...]
    rms_cents: float
    more: tuple[Fitted, ...] = ()
    """Further fitted parameters (a side-blown flute's lip cover beside its embouchure
    correction)."""
    unit: str = ""
    """The unit of ``value`` (``mm`` for a flute head's extra length; empty for a factor)."""


@dataclass(frozen=True)
class Mouth:
    width_m: float
    cutup_m: float
    lip_thickness_m: float
    width_fraction: float
    cutup_fraction: float
    correction_m: float
    """Mouth end correction, as an extra acoustic length."""
    band_percent: float = 0.0
    """± relative uncertainty of ``correction_m`` (8 %, or 16 % outside the fitted range)."""
    band_m: float = 0.0
    """± uncertainty of ``correction_m`` as a length."""
    band_sharp_cents: float = 0.0
    """The pipe's pitch as cut to its speaking length if the mouth term is smaller by the band."""
    band_flat_cents: float = 0.0
    """The same if the mouth term is larger by the band (negative: flat)."""
    cutup_cents_per_mm: float = 0.0
    """Pitch change for 1 mm more cut-up (voicing raises the cut-up: the pipe goes sharp)."""
    in_fitted_range: bool = True
    """The mouth's proportions lie inside the range its correction was fitted over."""


@dataclass(frozen=True)
class Foot:
    """Conical foot of a metal flue pipe: from the toe (small end) to the languid."""

    length_m: float
    top_diameter_m: float
    """Inside diameter at the languid (= the body's)."""
    toe_diameter_m: float
    """Inside diameter at the toe tip."""
    toe_hole_m: float
    """Diameter of the toe hole that admits the wind."""


@dataclass(frozen=True)
class Stopper:
    """Stopper of a stopped wooden pipe, or the plug of a stopped tube."""

    position_m: float
    """From the lower lip (tube: from the open top) to the stopper's face inside the pipe."""
    length_m: float
    travel_m: float
    """Tuning range each way from ``position_m``."""


@dataclass(frozen=True)
class Block:
    """Wooden flue pipe: the block below the mouth and the cap forming the windway."""

    length_m: float
    flue_m: float
    """Windway (flue) height between block and cap."""


@dataclass(frozen=True)
class Head:
    """The exciting end of a flute."""

    kind: str
    """``duct`` (window and labium) or ``embouchure``."""
    window_length_m: float | None
    window_width_m: float | None
    duct_height_m: float | None
    labium_from_top_m: float | None
    """Duct flute: from the top end to the labium edge (the block fills the tube above it)."""
    embouchure_diameter_m: float | None
    embouchure_from_top_m: float | None
    cork_m: float | None
    """Side-blown: from the embouchure centre up to the cork (solved unless the spec fixes it)."""
    resonance_hz: float | None = None
    """The head's own resonance: the mouth opening against the closed cavity above it (cork or
    block), the bore blocked. Second-register notes near or above it lose their octaves."""


@dataclass(frozen=True)
class Hole:
    number: int
    """1 is nearest the head."""
    label: str
    position_from_top_m: float
    position_from_bottom_m: float
    diameter_m: float
    angle_deg: float
    chimney_m: float
    undercut_m: float
    fixed: bool
    """True when the spec fixed both position and diameter."""
    source: Position | None = spec_position()
    """Where the spec lists the hole (None: made without a spec)."""


@dataclass(frozen=True)
class Fingering:
    note: str
    closed: tuple[bool, ...]
    register: int
    target_hz: float
    predicted_hz: float
    error_cents: float
    nearest_note: str | None = None
    """Surveys: the note of the spec's tuning nearest the prediction (None: not reported)."""
    nearest_cents: float | None = None
    """Surveys: predicted minus ``nearest_note``."""
    cents_per_c: float | None = None
    """Surveys: this fingering's pitch change for 1 °C warmer air."""
    resonance: str = "clear"
    """How the model's resonance for this register looks: ``clear``; ``weak`` (an admittance
    peak too small for the jet to hold) or ``split`` (two resonances close together): then
    ``error_cents`` is no pitch to trust, and the build sheet says so instead of a number."""
    cutoff_hz: float | None = None
    """The tone-hole lattice cutoff of this fingering's open holes (None: fewer than two open
    holes below the first open one)."""
    model_band_cents: tuple[float, float] | None = None
    """How far the prediction could move with the open tone holes' radiation length anywhere
    between the unflanged and the infinite-flange limits (``playing.hole_model_band``), and
    the design's own model: (low, high) in cents from ``predicted_hz``, low ≤ 0 ≤ high. None
    where no tone hole is open (their model cannot matter) or the resonance is not ``clear``."""
    source: Position | None = spec_position()
    """Where the spec lists the fingering (a survey without a table: its `holes`)."""


@dataclass(frozen=True)
class Curve:
    """Samples for a plot (input admittance magnitude of one fingering, for example)."""

    label: str
    frequencies_hz: tuple[float, ...]
    values: tuple[float, ...]
    quantity: str = "admittance"
    """``admittance`` (|Y|: flue-blown and open ends play at its peaks) or ``impedance``
    (|Z|: a closed, reed-driven end plays at its peaks)."""


@dataclass(frozen=True)
class BoreStation:
    """A surveyed bore's diameter at a distance from the top end (cones between stations)."""

    from_top_m: float
    diameter_m: float


@dataclass(frozen=True)
class Holder:
    """Holder plate for a tube set."""

    stock: str
    material: str
    thickness_m: float
    spacing_m: float
    margin_m: float
    clearance_m: float
    source: Position | None = None
    """Where the spec defines the holder (for errors about the plate)."""


@dataclass(frozen=True)
class Pipe:
    """One pipe, tube or flute, as it will be cut, with its predicted pitch."""

    id: str
    group: str
    family: str
    construction: str
    """``rolled-sheet``, ``boards`` or ``stock-tube``."""
    note: str
    harmonic: int
    stock: str
    material: str
    target_hz: float
    predicted_hz: float
    error_cents: float
    harmonics_hz: tuple[float, ...]
    cents_per_mm: float
    """Pitch change for 1 mm more speaking length (negative: longer is flatter)."""
    cents_per_c: float
    """Pitch change for 1 °C warmer air."""
    section: str
    """``round`` or ``rect``."""
    inside_diameter_m: float | None
    outside_diameter_m: float | None
    inside_width_m: float | None
    inside_depth_m: float | None
    wall_m: float
    acoustic_length_m: float
    end_correction_m: float
    speaking_length_m: float
    cut_length_m: float
    mouth: Mouth | None
    foot: Foot | None
    block: Block | None
    stopper: Stopper | None
    head: Head | None
    holes: tuple[Hole, ...]
    fingerings: tuple[Fingering, ...]
    curves: tuple[Curve, ...]
    source: Position
    bore: tuple[BoreStation, ...] = ()
    """Surveys: the measured bore from the top end down (empty: ``inside_diameter_m`` all
    along)."""
    jig: Jig | None = None
    """Flutes: the sheet their drilling jig and head gauges are cut from."""


@dataclass(frozen=True)
class Jig:
    """The sheet a flute's cutter parts (drilling strips, duct-block profile, window
    template) are cut from: a sheet or board of the spec's stock, or the default."""

    stock: str
    material: str
    thickness_m: float
    kind: str
    """``sheet`` or ``board``."""


@dataclass(frozen=True)
class Trim:
    """What to do to a measured pipe, as built, so it sounds its target in the spec's air."""

    pipe_id: str
    note: str
    measured_hz: float
    measured_temperature_c: float
    built_length_m: float
    """Speaking length as built: the ``measured`` entry's length, else as boresmith had it
    cut from the uncalibrated spec (an open pipe with its tuning allowance on)."""
    in_spec_air_hz: float
    """The measured pitch carried to the spec's air by the model."""
    target_hz: float
    off_cents: float
    """``in_spec_air_hz`` against the target: positive is sharp."""
    change_m: float
    """New minus built speaking length: negative shortens (cut off, or stopper in)."""
    new_length_m: float
    cents_per_mm: float
    """The model's own sensitivity at the built length, in the spec's air."""
    action: str
    """``cut``, ``lengthen``, ``stopper in``, ``stopper out``, ``plug in``, ``plug out``,
    ``cap down``, ``cap up`` or ``none`` (in tune within the precision)."""
    advice: str
    """In the maker's words, with the amount rounded to the spec's precision."""
    source: Position


@dataclass(frozen=True)
class Group:
    """A rank, a tube set or a flute, with what applies to all of its pipes."""

    id: str
    kind: str
    """``rank``, ``tube-set`` or ``flute``."""
    family: str
    construction: str
    air: AirReport
    end_correction_model: str
    calibration: Calibration
    holder: Holder | None
    pipe_ids: tuple[str, ...]
    trims: tuple[Trim, ...] = ()
    """Trim advice for each measured pipe (ranks and tube sets)."""
    losses: str | None = None
    """Wall-loss model the group was resolved with (``keefe`` or ``none``): a rank's or tube
    set's closed form, a flute's or survey's transfer-matrix model. None for a hand-built
    group that does not say."""
    source: Position | None = spec_position()
    """Where the spec defines the rank, tube set, flute or survey."""


@dataclass(frozen=True)
class Resolved:
    instrument: str
    slug: str
    spec_file: str
    spec_sha256: str
    tuning: TuningReport
    fabrication: FabricationReport
    stock: tuple[StockItem, ...]
    groups: tuple[Group, ...]
    pipes: tuple[Pipe, ...]
    warnings: tuple[Note, ...]
    materials: tuple[Material, ...] = field(metadata=NOT_IN_JSON)
    """Every material the stock, pipes, jigs and holders name, with its hazards (the build
    sheet's cautions render them)."""
