"""``boresmith new FAMILY [FILE]``: a commented starter spec for each instrument family.

Each starter is valid as written and resolves: a small set (a few pipes, one flute or one
measured instrument) in an
invented scenario, with every key explained by a short comment. Optional keys are shown
commented out, at their place and indentation, so deleting the ``# `` turns them on. The
first line is the schema modeline for editors that read JSON Schema; it names the schema
file beside the spec, which ``boresmith new`` writes there with the starter (and
``boresmith schema --write DIR`` writes or refreshes).
"""

from __future__ import annotations

import os
from collections.abc import Mapping
from pathlib import Path
from types import MappingProxyType

EXIT_OK, EXIT_USAGE = 0, 2

_OPEN_FLUE = """\
#
# Starter: an open flue rank, organ pipes open at the top, rolled from metal sheet.
# Invented scenario: a one-octave practice rank for the Thornbury Lane workshop.
# Edit the values, then run `boresmith check FILE`, `boresmith resolve FILE` and
# `boresmith build FILE`. Every key is explained; a line like `# key: value` is optional:
# delete the `# ` to use it.
boresmith: 1                      # version of the spec language; this file is version 1
instrument: Thornbury Lane practice rank, open 2 ft   # names the output folder
units: mm                         # unit of bare numbers in lengths: mm, cm, m, in or ft

environment:                      # the air where the pipes will sound
  temperature: 20 C               # also `68 F` or `293.15 K`
  humidity: 50 %                  # relative humidity
  sound_speed: cramer-1993        # speed-of-sound model: cramer-1993, ideal-gas or linear
  # pressure: 101.3 kPa           # barometric pressure (default: sea level)

tuning:                           # the pitch every note is tuned to
  a4: 440 Hz                      # reference pitch
  temperament: equal              # also quarter-comma-meantone, werckmeister-3, vallotti...
  # tonic: C                      # the pitch class an unequal temperament is built on
  # offsets: {A4: 2}              # cents added to single notes

stock:                            # what is on the shelf, each under a name of your own
  zinc-07:
    material: zinc                # plain words; the build sheet adds the cautions that apply
    sheet:                        # flat sheet, rolled into pipes
      thickness: 0.7 mm           # how thick it is
      size: 1000 x 500 mm         # one sheet, length x width

fabrication:                      # how the parts are made and printed
  sheet: 1000 x 500 mm            # the sheet the flat patterns are nested on
  kerf: 0.2 mm                    # width of material the cutter removes
  spacing: 5 mm                   # clear space between parts on the sheet
  tuning_allowance: 3 %           # extra body length, trimmed or coned when tuning
  precision: 0.1 mm               # dimensions are rounded to this step
  paper: a4                       # paper of the build sheet: a4 or letter

ranks:                            # ranks of flue pipes, one pipe per note
  - id: open-2ft                  # names the output files: letters, digits, - _ .
    family: open-flue             # open at the top
    construction: rolled-sheet    # round pipes rolled from sheet, with a conical foot
    stock: zinc-07                # a sheet from `stock`
    notes: C4..C5                 # every semitone from C4 to C5, both included: 13 pipes
    harmonic: 1                   # the pipes speak on their fundamental
    scale:                        # how the diameter changes from pipe to pipe
      reference: {note: C4, diameter: 55 mm}   # inside diameter of the C4 pipe
      halving_interval: 16        # the diameter halves over 16 semitones
    mouth:                        # the opening where the wind meets the upper lip
      width: 1/4                  # mouth width, as a fraction of the circumference
      cutup: 1/4                  # mouth height, as a fraction of the mouth width
    foot: {toe: 1/4}              # toe hole diameter, as a fraction of the body diameter
    end_correction: {model: unflanged}   # how the open top's end correction is figured
    # overrides:                  # change single pipes
    #   - {note: C5, cutup: 1/3}
    # measured:                   # pitches of built prototypes: the resolver fits to them
    #   - {note: G4, frequency: 392.4 Hz, temperature: 19 C}
"""

_STOPPED_FLUE = """\
#
# Starter: a stopped flue rank, square wooden pipes closed at the top by a stopper. A
# stopped pipe sounds an octave below an open pipe of the same length.
# Invented scenario: a small stopped rank for the Quarry Hill village hall organ.
# Edit the values, then run `boresmith check FILE`, `boresmith resolve FILE` and
# `boresmith build FILE`. Every key is explained; a line like `# key: value` is optional:
# delete the `# ` to use it.
boresmith: 1                      # version of the spec language; this file is version 1
instrument: Quarry Hill village hall, stopped wood 8 ft   # names the output folder
units: mm                         # unit of bare numbers in lengths: mm, cm, m, in or ft

environment:                      # the air where the pipes will sound
  temperature: 16 C               # a cool hall; also `61 F` or `289.15 K`
  humidity: 60 %                  # relative humidity
  sound_speed: cramer-1993        # speed-of-sound model: cramer-1993, ideal-gas or linear

tuning:                           # the pitch every note is tuned to
  a4: 440 Hz                      # reference pitch
  temperament: werckmeister-3     # an unequal temperament, built on the tonic below
  tonic: C                        # the pitch class the temperament starts from

stock:                            # what is on the shelf, each under a name of your own
  pine-10:
    material: pine                # plain words; the build sheet adds the cautions that apply
    board:                        # planed boards, grain along the length
      thickness: 10 mm            # how thick it is
      size: 1200 x 200 mm         # one board, length x width

fabrication:                      # how the parts are made and printed
  sheet: 1200 x 200 mm            # the board the parts are laid out on
  kerf: 3 mm                      # a saw blade's width
  spacing: 5 mm                   # clear space between parts
  precision: 0.5 mm               # dimensions are rounded to this step

ranks:                            # ranks of flue pipes, one pipe per note
  - id: stopped-wood              # names the output files: letters, digits, - _ .
    family: stopped-flue          # closed at the top: odd harmonics only
    construction: boards          # square pipes glued up from boards, with a block and cap
    stock: pine-10                # a board from `stock`
    notes: C3..G3                 # every semitone from C3 to G3: 8 pipes
    scale:                        # how the cross-section changes from pipe to pipe
      reference: {note: C3, width: 45 mm, depth: 56 mm}   # inside: mouth side, then depth
      halving_interval: 18        # width and depth halve over 18 semitones
    mouth:                        # the opening where the wind meets the upper lip
      width: 1                    # mouth width, as a fraction of the inside width
      cutup: 0.4                  # mouth height, as a fraction of the mouth width
      # lip_thickness: 2 mm       # the upper lip's edge, after bevelling
    stopper: {travel: 20 mm}      # room to move the stopper for tuning, each way
    end_correction: {model: unflanged}   # how the mouth's end correction is figured
    # measured:                   # pitches of built prototypes: the resolver fits to them
    #   - {note: E3, frequency: 164.2 Hz, temperature: 17 C}
"""

_STOPPED_TUBE = """\
#
# Starter: a set of stopped tubes, closed at the bottom and blown across the open top
# (pan pipes). Invented scenario: a six-tube set for the Birchfield summer school.
# Edit the values, then run `boresmith check FILE`, `boresmith resolve FILE` and
# `boresmith build FILE`. Every key is explained; a line like `# key: value` is optional:
# delete the `# ` to use it.
boresmith: 1                      # version of the spec language; this file is version 1
instrument: Birchfield summer school pan pipes   # names the output folder
units: mm                         # unit of bare numbers in lengths: mm, cm, m, in or ft

environment:                      # the air where the tubes will sound
  temperature: 22 C               # also `72 F` or `295.15 K`
  sound_speed: cramer-1993        # humidity and CO2 left out: room-air defaults

tuning:                           # the pitch every note is tuned to
  a4: 440 Hz                      # reference pitch
  temperament: equal              # equal temperament

stock:                            # what is on the shelf, each under a name of your own
  copper-15:
    material: copper              # plain words; the build sheet adds the cautions that apply
    tube:                         # round tube: give two of the three sizes across it
      outside_diameter: 15 mm     # across the outside
      wall: 0.7 mm                # or inside_diameter
      length: 3000 mm             # one stock length, for the cut list
  ply-4:
    material: birch-ply           # plywood: a caution on wood dust follows
    sheet: {thickness: 4 mm, size: 300 x 200 mm}   # for the holder plate, length x width

fabrication:                      # how the parts are made and printed
  sheet: 300 x 200 mm             # the sheet the holder is cut from
  kerf: 0.15 mm                   # width of material the cutter removes
  tuning_allowance: 2 mm          # cut long, then file down to pitch
  precision: 0.1 mm               # dimensions are rounded to this step

tube_sets:                        # sets of tubes cut to length, one per note
  - id: pan-g                     # names the output files: letters, digits, - _ .
    family: stopped-tube          # closed at the bottom: sounds on odd harmonics only
    stock: copper-15              # one tube from `stock`, or a list to choose from per note
    notes: {scale: major, tonic: G4, count: 6}   # G4 A4 B4 C5 D5 E5
    end_correction: {model: unflanged}   # how the open top's end correction is figured
    plug: {length: 10 mm}         # the plug (cork, dowel) that closes the bottom
    holder:                       # a plate with one opening per tube
      stock: ply-4                # a sheet or board from `stock`
      spacing: 4 mm               # clear space between neighbouring tubes
      margin: 10 mm               # from the outer tubes to the plate's edge
      clearance: 0.4 mm           # openings this much wider than the tube
    # overrides:                  # change single tubes
    #   - {note: E5, frequency: 660 Hz}
"""

_OPEN_TUBE = """\
#
# Starter: a set of open tubes, open at both ends, tuned to a chosen harmonic
# (resonators, sound sculpture). Invented scenario: five tubes in a pentatonic scale for a
# garden sound sculpture at the Ashgrove allotments.
# Edit the values, then run `boresmith check FILE`, `boresmith resolve FILE` and
# `boresmith build FILE`. Every key is explained; a line like `# key: value` is optional:
# delete the `# ` to use it.
boresmith: 1                      # version of the spec language; this file is version 1
instrument: Ashgrove allotments sound sculpture   # names the output folder
units: mm                         # unit of bare numbers in lengths: mm, cm, m, in or ft

environment:                      # the air where the tubes will sound
  temperature: 15 C               # outdoors; also `59 F` or `288.15 K`
  humidity: 70 %                  # relative humidity
  sound_speed: cramer-1993        # speed-of-sound model: cramer-1993, ideal-gas or linear

tuning:                           # the pitch every note is tuned to
  a4: 440 Hz                      # reference pitch
  temperament: equal              # equal temperament

stock:                            # what is on the shelf, each under a name of your own
  alu-25:
    material: aluminium           # plain words; the build sheet adds the cautions that apply
    tube:                         # round tube: give two of the three sizes across it
      outside_diameter: 25 mm     # across the outside
      wall: 1.5 mm                # or inside_diameter
      length: 2000 mm             # one stock length, for the cut list

fabrication:                      # how the parts are made and printed
  kerf: 2 mm                      # a saw blade's width
  tuning_allowance: 0 mm          # cut to length; no trimming later
  precision: 0.5 mm               # dimensions are rounded to this step

tube_sets:                        # sets of tubes cut to length, one per note
  - id: pentatonic                # names the output files: letters, digits, - _ .
    family: open-tube             # open at both ends
    stock: alu-25                 # one tube from `stock`, or a list to choose from per note
    notes: {scale: [2, 2, 3, 2], tonic: C4, count: 5}   # steps in semitones: C4 D4 E4 G4 A4
    harmonic: 1                   # the note sounds on this harmonic (2: a tube twice as long)
    end_correction: {model: rule-of-thumb, k: 0.3}   # k x diameter at each open end
"""

_DUCT_FLUTE = """\
#
# Starter: a duct flute (whistle type), a block with a windway blowing onto a labium,
# and six finger holes that boresmith places and sizes.
# Invented scenario: a whistle in C for the Larkfield youth club.
# Edit the values, then run `boresmith check FILE`, `boresmith resolve FILE` and
# `boresmith build FILE`. Every key is explained; a line like `# key: value` is optional:
# delete the `# ` to use it.
boresmith: 1                      # version of the spec language; this file is version 1
instrument: Larkfield whistle in C   # names the output folder
units: mm                         # unit of bare numbers in lengths: mm, cm, m, in or ft

environment:                      # the air inside the flute: warm, humid breath
  temperature: 30 C               # left out, flutes take 30 C, 90 % and 1 % CO2
  humidity: 90 %                  # relative humidity
  co2: 1 %                        # breath carries CO2; also `400 ppm`

tuning:                           # the pitch every note is tuned to
  a4: 440 Hz                      # reference pitch
  temperament: equal              # equal temperament

stock:                            # what is on the shelf, each under a name of your own
  alu-16:
    material: aluminium           # plain words; the build sheet adds the cautions that apply
    tube:                         # round tube: give two of the three sizes across it
      outside_diameter: 16 mm     # across the outside
      wall: 1 mm                  # or inside_diameter
      length: 1000 mm             # one stock length, for the cut list

fabrication:                      # how the parts are made and printed
  drills: {from: 2 mm, to: 10 mm, step: 0.5 mm}   # the drills you have; holes snap to them
  precision: 0.1 mm               # dimensions are rounded to this step
  paper: a4                       # paper of the build sheet and drilling template

flutes:                           # tubes with tone holes
  - id: whistle-c                 # names the output files: letters, digits, - _ .
    family: duct-flute            # blown through a duct onto a labium
    stock: alu-16                 # a tube from `stock`
    head:                         # the blowing end
      window:                     # the opening between the duct's exit and the labium
        length: 5 mm              # along the tube
        width: 9 mm               # across the tube
        from_top: 32 mm           # from the top end to the labium edge
      duct: {height: 1.2 mm}      # the windway through the block: its height
    holes: 6                      # how many finger holes to place and size
    fingerings:                   # x closed, o open, from the head down; spaces group them
      - {note: C5, closed: xxx xxx}   # all closed: sets the tube's length
      - {note: D5, closed: xxx xxo}
      - {note: E5, closed: xxx xoo}
      - {note: F5, closed: xxx ooo}
      - {note: G5, closed: xxo ooo}
      - {note: A5, closed: xoo ooo}
      - {note: B5, closed: ooo ooo}
    constraints:                  # limits for the hole solver
      min_diameter: 3 mm          # smallest hole
      max_diameter: 9 mm          # largest hole
      min_web: 3 mm               # material left between neighbouring holes
      min_span: 17 mm             # room for two fingers side by side (default 15 mm)
      max_span: 30 mm             # comfortable reach between adjacent fingers
    losses: keefe                 # wall losses (Keefe 1984), or `none`
    radiation: frequency-dependent   # how the open end and open holes radiate
    # length: 340 mm              # fix the tube's length instead of solving it
"""

_SIDE_BLOWN_FLUTE = """\
#
# Starter: a side-blown flute, blown across an embouchure hole, with a closed head cavity
# above it and six finger holes that boresmith places and sizes.
# Invented scenario: a six-hole fife in D for the Sedgebrook folk school.
# Edit the values, then run `boresmith check FILE`, `boresmith resolve FILE` and
# `boresmith build FILE`. Every key is explained; a line like `# key: value` is optional:
# delete the `# ` to use it.
boresmith: 1                      # version of the spec language; this file is version 1
instrument: Sedgebrook fife in D   # names the output folder
units: mm                         # unit of bare numbers in lengths: mm, cm, m, in or ft

environment:                      # the air inside the flute
  temperature: 28 C               # humidity and CO2 left out: warm-breath defaults

tuning:                           # the pitch every note is tuned to
  a4: 440 Hz                      # reference pitch
  temperament: equal              # equal temperament

stock:                            # what is on the shelf, each under a name of your own
  brass-16:
    material: brass               # plain words; the build sheet adds the cautions that apply
    tube:                         # round tube: give two of the three sizes across it
      outside_diameter: 16 mm     # across the outside
      wall: 0.8 mm                # or inside_diameter
      length: 1000 mm             # one stock length, for the cut list

fabrication:                      # how the parts are made and printed
  drills: {from: 3 mm, to: 12 mm, step: 0.5 mm}   # the drills you have; holes snap to them
  precision: 0.1 mm               # dimensions are rounded to this step
  paper: a4                       # paper of the build sheet and drilling template

flutes:                           # tubes with tone holes
  - id: fife-d                    # names the output files: letters, digits, - _ .
    family: side-blown-flute      # blown across the embouchure hole
    stock: brass-16               # a tube from `stock`
    head:                         # the blowing end
      embouchure:                 # the hole blown across
        diameter: 8 mm            # an oval hole: its mean diameter
        from_top: 35 mm           # from the top end of the tube to the hole's centre
        lip_cover: 1/4            # how much of the hole the player's lip covers
      # cork: 14 mm               # fix the cork (from the embouchure centre up); left out,
                                  # boresmith places it so that both registers play in tune
    holes:                        # one entry per hole from the head down, solved unless
                                  # it gives {position: 150 mm, diameter: 6 mm}
      - {label: L1}               # a label printed on the template
      - {label: L2}
      - {label: L3}
      - {label: R1}
      - {label: R2}
      - {label: R3, angle: 0 deg}   # angle around the tube; 180 deg puts it at the back
    fingerings:                   # x closed, o open, from the head down
      - {note: D5, closed: xxx xxx}   # all closed: sets the tube's length
      - {note: E5, closed: xxx xxo}
      - {note: F#5, closed: xxx xoo}
      - {note: G5, closed: xxx ooo}
      - {note: A5, closed: xxo ooo, second_register: none}   # not overblown: the upper
      - {note: B5, closed: xoo ooo, second_register: none}   # octave takes cross-fingerings
      - {note: C#6, closed: ooo ooo, second_register: none}
    constraints:                  # limits for the hole solver
      min_diameter: 4 mm          # smallest hole
      max_diameter: 10 mm         # largest hole
      min_web: 4 mm               # material left between neighbouring holes
      min_span: 17 mm             # room for two fingers side by side (default 15 mm)
      max_span: 35 mm             # comfortable reach between adjacent fingers
    losses: keefe                 # wall losses (Keefe 1984), or `none`
    radiation: frequency-dependent   # how the open end and open holes radiate
"""

_SURVEY = """\
#
# Starter: a survey, an instrument as measured. boresmith predicts how it plays (each
# fingering's pitch, the nearest note and its error in cents, the second register, cents
# per degree C) and changes nothing; the build sheet carries a drilling template for a copy.
# Invented scenario: an old six-hole fife from the Ashcombe village band's cupboard.
# Edit the values, then run `boresmith check FILE`, `boresmith resolve FILE` and
# `boresmith build FILE`. Every key is explained; a line like `# key: value` is optional:
# delete the `# ` to use it.
boresmith: 1                      # version of the spec language; this file is version 1
instrument: Ashcombe band fife, as measured   # names the output folder
units: mm                         # unit of bare numbers in lengths: mm, cm, m, in or ft

environment:                      # the air inside the instrument
  temperature: 30 C               # left out, blown instruments take 30 C, 90 % and 1 % CO2

tuning:                           # the notes predictions are compared with
  a4: 440 Hz                      # reference pitch
  temperament: equal              # equal temperament

surveys:                          # instruments as measured
  - id: ashcombe-fife             # names the output files: letters, digits, - _ .
    length: 305 mm                # overall, from the top end to the foot
    bore:                         # one diameter for a cylinder, or stations from the top
      - {from_top: 0 mm, diameter: 12.2 mm}   # cones between stations
      - {from_top: 305 mm, diameter: 11.9 mm}
    wall: 3.4 mm                  # wall thickness: the holes' chimney unless they say
    blowing_end: embouchure       # duct, embouchure, reed, closed or open
    head:                         # the blowing end as measured
      embouchure:                 # the hole blown across
        diameter: 8.6 mm          # an oval hole: its mean diameter
        from_top: 38 mm           # from the top end to the hole's centre
        # lip_cover: 1/4          # how much of the hole the player's lip covers
      cork: 14 mm                 # from the embouchure centre up to the cork
    holes:                        # from the head down: from_top, or from_bottom (the foot)
      - {from_top: 153 mm, diameter: 5.5 mm}
      - {from_top: 175 mm, diameter: 6 mm}
      - {from_top: 195.5 mm, diameter: 6 mm}
      - {from_top: 222.5 mm, diameter: 6.5 mm, undercut: 0.3 mm}   # widened at the bore
      - {from_top: 238 mm, diameter: 8 mm}
      - {from_bottom: 42 mm, diameter: 7.5 mm, chimney: 3.6 mm}   # its own wall depth
    fingerings:                   # x closed, o open; `note` is what it should sound
      - {closed: xxx xxx, note: D5}
      - {closed: xxx xxo, note: E5}
      - {closed: xxx xoo}         # no note: compared with the nearest one
      - {closed: xxx ooo}
      - {closed: xxo ooo, second_register: none}   # not used overblown
    losses: keefe                 # wall losses (Keefe 1984), or `none` for lossless
    radiation: frequency-dependent   # how the open end and open holes radiate
    # outside_diameter: 19 mm     # for the drilling template (default: bore + 2 walls)
    # material: boxwood           # for the cut list
"""

_BODIES: Mapping[str, str] = MappingProxyType({
    "open-flue": _OPEN_FLUE,
    "stopped-flue": _STOPPED_FLUE,
    "stopped-tube": _STOPPED_TUBE,
    "open-tube": _OPEN_TUBE,
    "duct-flute": _DUCT_FLUTE,
    "side-blown-flute": _SIDE_BLOWN_FLUTE,
    "survey": _SURVEY,
})

FAMILIES: tuple[str, ...] = tuple(_BODIES)
"""The instrument families, in the order the design lists them, then ``survey`` (an
instrument as measured, predicted rather than designed)."""


SCHEMAS: Mapping[str, str] = MappingProxyType({
    "spec": "boresmith-spec.schema.json",
    "resolved": "boresmith-resolved.schema.json",
})
"""``boresmith schema [WHICH]``: the spec language, or the shape of resolved.json."""

MODELINE = f"# yaml-language-server: $schema={SCHEMAS['spec']}"
"""The editor's schema line: the schema file beside the spec. A path into the installed
package would point into a virtual environment that moves or disappears; a copy beside
the specs (``boresmith schema --write DIR``) stays where the specs are, and is refreshed
the same way after an upgrade."""

_SCHEMA_NOTE = """\
# The line above lets an editor with a YAML language server complete keys and show help:
# it reads boresmith-spec.schema.json beside this file (`boresmith schema --write .`).
"""


def schema_text(which: str = "spec") -> str:
    """The text of a schema shipped with this boresmith; ``KeyError`` for an unknown one."""
    from compiler.spec.validate import schema_text as shipped

    return shipped(SCHEMAS[which])


def write_schema(folder: Path, which: str = "spec") -> Path:
    """Write (or refresh) ``folder/<schema file>``, atomically; return its path."""
    target = folder / SCHEMAS[which]
    temp = folder / f".{SCHEMAS[which]}.tmp-{os.getpid()}"
    try:
        temp.write_text(schema_text(which), encoding="utf-8", newline="\n")
        os.replace(temp, target)
    finally:
        temp.unlink(missing_ok=True)
    return target


def starter(family: str) -> str:
    """The starter spec for ``family`` (one of ``FAMILIES``); ``KeyError`` for another."""
    return f"{MODELINE}\n{_SCHEMA_NOTE}{_BODIES[family]}"


def run_new(family: str, file: Path | None) -> tuple[int, str]:
    """``boresmith new``: (exit code, text).

    Without ``file``: (0, the starter) for stdout. With ``file``: writes it, never over an
    existing file, and returns (0, a note) for stderr. Unknown family, existing file or
    unwritable place: (2, the message) for stderr.
    """
    if family not in _BODIES:
        return EXIT_USAGE, (f"unknown family `{family}`; choose one of: "
                            + ", ".join(FAMILIES))
    if file is None:
        return EXIT_OK, starter(family)
    text = starter(family)
    try:
        with file.open("x", encoding="utf-8", newline="\n") as out:
            out.write(text)
    except FileExistsError:
        return EXIT_USAGE, f"{file}: already exists; boresmith new does not overwrite files"
    except FileNotFoundError:
        return EXIT_USAGE, f"{file}: the folder {file.parent} does not exist"
    except OSError as exc:
        return EXIT_USAGE, f"{file}: cannot write ({exc.strerror})"
    article = "an" if family[0] in "aeiou" else "a"
    note = f"wrote {file}: {article} {family} starter; try `boresmith check {file}`"
    return EXIT_OK, note + _schema_beside(file.parent)


def _schema_beside(folder: Path) -> str:
    """Put the spec schema beside a new starter if none is there (the modeline names it)."""
    target = folder / SCHEMAS["spec"]
    if target.exists():
        try:
            same = target.read_text(encoding="utf-8") == schema_text()
        except (OSError, UnicodeDecodeError):
            same = False
        return "" if same else (f"\n{target} differs from this boresmith's schema; refresh "
                                f"it with `boresmith schema --write {folder}`")
    try:
        write_schema(folder)
    except OSError as exc:
        return f"\nthe schema could not be written beside it ({exc.strerror})"
    return f"\nwrote {target}: the schema your editor reads (named on the first line)"
