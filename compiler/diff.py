"""``boresmith diff OLD NEW``: what changed between two specs, in resolved dimensions.

Both specs are resolved, turned into the ``resolved.json`` contract (``to_dict``: lengths in
mm, rounded as in the file), and compared field by field:

- pipes are matched by id; every scalar field that differs is a change, nested ones included
  (``mouth.cutup_mm``, ``stopper.position_mm``); holes are matched by hole number
  (``holes[3]`` is hole number 3, counted from the head, not a list index), fingerings by note
  and register (``fingerings[E6 r2]``; a survey's by pattern and register,
  ``fingerings[xxxooo r1]``), plain number lists by index (``harmonics_hz[1]``);
- pipes only in one spec are added or removed;
- groups (ranks, tube sets, flutes) are matched by id: their air (speed of sound,
  temperature...), calibration and holder;
- instrument-wide settings: the name, tuning, fabrication and stock (by name).

Not compared: positions in the spec file (any edit moves them), the spec's file name and
hash, plot samples and warnings (each spec's warnings are reported as every command
reports them, through ``run_diff``'s ``warn``). Differences below the JSON rounding vanish
in the rounding.
A length's change is given in mm, a frequency's in cents: 1200·log2(new/old) (A. J. Ellis,
1885, the definition of the cent).

The report leads with what to do at the bench, a line per pipe (``actions``): trim (only
shorter), re-cut (parts change, or longer than cut), re-drill (holes move or change),
re-set (only the stopper or plug moves), make (new) or drop (removed). ``as_json`` gives
the same for ``--json``.

The comparison and the report are pure; ``read_spec_arg`` reads a file or, for
``FILE@REV``, the file as it was at a git revision.
"""

from __future__ import annotations

import dataclasses
import json
import math
import subprocess
from collections.abc import Callable, Iterator
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from compiler.display import Inches, in_inches, inches_for
from compiler.emit.resolved_json import to_dict
from compiler.errors import Note, in_order, refuse_if_strict
from compiler.ir import Resolved
from compiler.spec.loader import SpecFileError, read_spec_file

Value = float | int | str | bool | None

EXIT_SAME, EXIT_CHANGED = 0, 1

_IGNORED = frozenset({"id", "source", "curves", "pipe_ids"})
_INSTRUMENT_KEYS = ("instrument", "tuning", "fabrication", "stock")


class DiffInputError(Exception):
    """An OLD or NEW argument cannot be read: no such file, not in git, unknown revision."""


@dataclass(frozen=True)
class Change:
    """One difference between the old and the new resolved model.

    ``scope`` is ``pipe``, ``group`` or ``instrument``; ``owner`` the pipe or group id (empty
    for the instrument). ``status`` is ``changed``, ``added`` or ``removed``; a whole pipe or
    group added or removed has an empty ``field`` and a one-line summary as its value.
    ``delta`` is new − old in ``unit`` for numbers: mm for lengths, cents for frequencies
    (1200·log2(new/old)) and for cents; the field's own unit otherwise.
    """

    scope: str
    owner: str
    status: str
    field: str
    old: Value
    new: Value
    delta: float | None = None
    unit: str = ""

    @property
    def delta_mm(self) -> float | None:
        return self.delta if self.unit == "mm" else None

    @property
    def delta_cents(self) -> float | None:
        return self.delta if self.unit == "cents" else None


# ---------------------------------------------------------------------------------------------
# Reading OLD and NEW


def read_spec_arg(arg: str, cwd: Path) -> tuple[bytes, str]:
    """The bytes of a spec and the name to report it by.

    ``arg`` is a path (relative to ``cwd``) or ``PATH@REV``: the file as committed at git
    revision ``REV`` (anything ``git rev-parse`` accepts: ``HEAD``, ``HEAD~2``, a tag, a
    hash). A path that exists as a file is read as it is, even if it contains ``@``.
    Raises ``DiffInputError`` with a message for the maker.
    """
    if not arg:
        raise DiffInputError("an empty file name")
    plain = cwd / arg
    if plain.is_file() or "@" not in arg:
        return _read_file(plain, arg), arg
    path, rev = _split_revision(arg, cwd)
    return _git_show(cwd / path, rev, arg), arg


def _read_file(path: Path, shown: str) -> bytes:
    try:
        return read_spec_file(path, shown)
    except SpecFileError as exc:
        raise DiffInputError(str(exc)) from None


def _split_revision(arg: str, cwd: Path) -> tuple[str, str]:
    """``PATH@REV`` -> (PATH, REV); the first ``@`` after an existing file wins, else the first.

    Revisions may contain ``@`` themselves (``HEAD@{1}``), paths rarely do.
    """
    cuts = [i for i, ch in enumerate(arg) if ch == "@"]
    cut = next((i for i in cuts if (cwd / arg[:i]).is_file()), cuts[0])
    path, rev = arg[:cut], arg[cut + 1:]
    if not path:
        raise DiffInputError(f"{arg}: write the file before the revision, as `FILE@REV`")
    if not rev:
        raise DiffInputError(f"{arg}: no revision after `@` (for example `{path}@HEAD`)")
    return path, rev


def _git(args: list[str], where: Path) -> subprocess.CompletedProcess[bytes]:
    try:
        return subprocess.run(["git", "-C", str(where), *args], capture_output=True,
                              check=False)
    except FileNotFoundError:
        raise DiffInputError("`FILE@REV` needs git, and git was not found") from None


def _git_show(path: Path, rev: str, shown: str) -> bytes:
    folder = path.parent
    while not folder.is_dir() and folder != folder.parent:
        folder = folder.parent
    top = _git(["rev-parse", "--show-toplevel"], folder)
    if top.returncode != 0:
        raise DiffInputError(f"{shown}: {folder} is not in a git repository")
    root = Path(top.stdout.decode("utf-8", "replace").strip()).resolve()
    full = path.parent.resolve() / path.name
    try:
        inside = full.relative_to(root).as_posix()
    except ValueError:
        raise DiffInputError(f"{shown}: the file is outside the repository {root}") from None
    if rev.startswith("-") or _git(["rev-parse", "--verify", "--quiet", "--end-of-options",
                                    f"{rev}^{{commit}}"], root).returncode != 0:
        raise DiffInputError(f"{shown}: unknown revision `{rev}`")
    kind = _git(["cat-file", "-t", f"{rev}:{inside}"], root)
    if kind.returncode != 0:
        raise DiffInputError(f"{shown}: `{inside}` does not exist at revision `{rev}`")
    if kind.stdout.strip() != b"blob":
        raise DiffInputError(f"{shown}: `{inside}` is not a file at revision `{rev}`")
    shown_file = _git(["show", f"{rev}:{inside}"], root)
    if shown_file.returncode != 0:
        message = shown_file.stderr.decode("utf-8", "replace").strip()
        raise DiffInputError(f"{shown}: git could not read it ({message})")
    return shown_file.stdout


# ---------------------------------------------------------------------------------------------
# Comparing


def _unit(name: str) -> str:
    """The unit a field's change is reported in, from its JSON name."""
    if "cents_per_" in name:  # a sensitivity (``cents_per_mm``, ``cutup_cents_per_mm``)
        return ""
    for suffix, unit in (("_mm", "mm"), ("_hz", "cents"), ("_cents", "cents"),
                         ("_m_s", "m/s"), ("_kg_m3", "kg/m3"), ("_c", "C"), ("_pa", "Pa"),
                         ("_percent", "%"), ("_ppm", "ppm"), ("_deg", "deg")):
        if name.endswith(suffix):
            return unit
    return ""


def _is_number(value: object) -> bool:
    return isinstance(value, int | float) and not isinstance(value, bool)


def _delta(name: str, old: Value, new: Value) -> tuple[float | None, str]:
    if not (_is_number(old) and _is_number(new)):
        return None, ""
    assert isinstance(old, int | float) and isinstance(new, int | float)
    unit = _unit(name)
    if name.endswith("_hz"):
        if old <= 0 or new <= 0:
            return None, ""
        return round(1200.0 * math.log2(new / old), 6), unit
    return round(new - old, 6), unit


def _scalar(key: str, value: Any) -> Value:
    """A list of strings or flags compared as one value (``closed`` as ``xxo``)."""
    if isinstance(value, list):
        if key == "closed":
            return "".join("x" if v else "o" for v in value)
        return ", ".join(str(v) for v in value)
    if value is None or isinstance(value, str | bool | int | float):
        return value
    return str(value)


_Key = Callable[[dict[str, Any]], str]
_KEYED: dict[str, _Key] = {
    "holes": lambda h: str(h["number"]),
    # A survey's fingering keeps its pattern when its predicted note moves: match on that.
    "fingerings": lambda f: (f"{f['note']} r{f['register']}" if f.get("nearest_note") is None
                             else "".join("x" if c else "o" for c in f["closed"])
                             + f" r{f['register']}"),
    "residuals": lambda r: str(r["note"]),
    # A group's trim advice, one per measured pipe: ``trims[G3].change_mm``.
    "trims": lambda t: str(t["note"]),
    "stock": lambda s: str(s["name"]),
}


def _leaves(old: Any, new: Any, path: str, name: str) -> Iterator[tuple[str, str, Value, Value]]:
    """(field path, field name, old, new) for every scalar that differs."""
    if isinstance(old, dict) or isinstance(new, dict):
        o = old if isinstance(old, dict) else {}
        n = new if isinstance(new, dict) else {}
        for key in sorted(set(o) | set(n)):
            if key not in _IGNORED:
                yield from _leaves(o.get(key), n.get(key), f"{path}.{key}" if path else key, key)
        return
    lists = [v for v in (old, new) if isinstance(v, list)]
    items = [item for v in lists for item in v]
    if lists and name in _KEYED and all(isinstance(i, dict) for i in items):
        key = _KEYED[name]
        o_map = {key(i): i for i in (old or [])}
        n_map = {key(i): i for i in (new or [])}
        order = list(o_map) + [k for k in n_map if k not in o_map]
        for k in order:
            yield from _leaves(o_map.get(k), n_map.get(k), f"{path}[{k}]", name)
        return
    if lists and items and all(isinstance(i, dict) for i in items):
        # Records of no known key: field by field, by position (never a repr of the dict).
        o_list, n_list = old or [], new or []
        for i in range(max(len(o_list), len(n_list))):
            a = o_list[i] if i < len(o_list) else None
            b = n_list[i] if i < len(n_list) else None
            yield from _leaves(a, b, f"{path}[{i}]", name)
        return
    if lists and items and all(_is_number(i) for i in items):
        o_list, n_list = old or [], new or []
        for i in range(max(len(o_list), len(n_list))):
            a = o_list[i] if i < len(o_list) else None
            b = n_list[i] if i < len(n_list) else None
            if a != b:
                yield f"{path}[{i}]", name, a, b
        return
    a, b = _scalar(name, old), _scalar(name, new)
    if a != b:
        yield path, name, a, b


_FIRST = ("cut_length_mm", "speaking_length_mm", "predicted_hz", "target_hz", "error_cents")
"""What a maker looks for first; the other fields keep their order (a stable sort)."""


def _field_order(change: Change) -> int:
    return _FIRST.index(change.field) if change.field in _FIRST else len(_FIRST)


def _changes(scope: str, owner: str, old: Any, new: Any) -> list[Change]:
    found = []
    for path, name, a, b in _leaves(old, new, "", ""):
        delta, unit = _delta(name, a, b)
        found.append(Change(scope, owner, "changed", path, a, b, delta, unit))
    return sorted(found, key=_field_order)


def _pipe_summary(pipe: dict[str, Any]) -> str:
    return (f"{pipe['note']}, {_number(pipe['target_hz'])} Hz, "
            f"cut length {_number(pipe['cut_length_mm'])} mm")


def _group_summary(group: dict[str, Any]) -> str:
    return f"{group['kind']}, {group['family']}, {len(group['pipe_ids'])} pipes"


def _matched(scope: str, old: list[dict[str, Any]], new: list[dict[str, Any]],
             summary: Callable[[dict[str, Any]], str]) -> list[Change]:
    old_by_id = {item["id"]: item for item in old}
    new_by_id = {item["id"]: item for item in new}
    found: list[Change] = []
    for ident, item in new_by_id.items():
        if ident in old_by_id:
            found.extend(_changes(scope, ident, old_by_id[ident], item))
        else:
            found.append(Change(scope, ident, "added", "", None, summary(item)))
    for ident, item in old_by_id.items():
        if ident not in new_by_id:
            found.append(Change(scope, ident, "removed", "", summary(item), None))
    return found


def compare(old: Resolved, new: Resolved) -> list[Change]:
    """Every difference from ``old`` to ``new``: instrument settings, groups, then pipes.

    Pipes keep the new spec's order (removed ones follow); within a pipe, cut length,
    speaking length, pitch and error come first, then the other fields: keys in
    alphabetical order, holes by number, fingerings in the order of the old table.
    """
    a, b = to_dict(old), to_dict(new)
    found = _changes("instrument", "", {k: a[k] for k in _INSTRUMENT_KEYS},
                     {k: b[k] for k in _INSTRUMENT_KEYS})
    found.extend(_matched("group", a["groups"], b["groups"], _group_summary))
    found.extend(_matched("pipe", a["pipes"], b["pipes"], _pipe_summary))
    return found


# ---------------------------------------------------------------------------------------------
# Reporting


def _decimals(*values: Value) -> int:
    """Decimals to show: at least two, as many as the JSON values carry (they are rounded)."""
    found = 2
    for value in values:
        if isinstance(value, float):
            text = repr(value)
            found = max(found, 6 if "e" in text else len(text.partition(".")[2]))
    return min(found, 6)


def _number(value: float | int, decimals: int | None = None) -> str:
    if isinstance(value, int):
        return str(value)
    return f"{value:.{decimals or _decimals(value)}f}"


def _value(value: Value, decimals: int) -> str:
    if value is None:
        return "none"
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, int | float):
        return _number(value, decimals)
    return value if value else '""'


def _label(change: Change) -> str:
    if change.scope == "pipe":
        return change.owner
    if change.scope == "group":
        return f"group {change.owner}"
    return "instrument"


def _row(change: Change) -> tuple[str, str, str, str]:
    if change.status == "added":
        return _label(change), "added", str(change.new), ""
    if change.status == "removed":
        return _label(change), "removed", str(change.old), ""
    decimals = _decimals(change.old, change.new)
    values = f"{_value(change.old, decimals)} -> {_value(change.new, decimals)}"
    delta = ""
    if change.delta is not None:
        digits = 2 if change.unit in ("mm", "cents") else decimals
        amount = f"{change.delta:+.{digits}f}"
        delta = f"({amount} {change.unit})" if change.unit else f"({amount})"
    return _label(change), change.field, values, delta


def _plural(count: int, word: str) -> str:
    return f"{count} {word}" + ("" if count == 1 else "s")


def summary(changes: list[Change]) -> str:
    """One line: ``3 pipes changed, 1 added, 0 removed`` (and groups or settings, if any)."""

    def owners(scope: str, status: str) -> int:
        return len({c.owner for c in changes if c.scope == scope and c.status == status})

    text = (f"{_plural(owners('pipe', 'changed'), 'pipe')} changed, "
            f"{owners('pipe', 'added')} added, {owners('pipe', 'removed')} removed")
    for status in ("changed", "added", "removed"):
        count = owners("group", status)
        if count:
            text += f"; {_plural(count, 'group')} {status}"
    if any(c.scope == "instrument" for c in changes):
        text += "; instrument settings changed"
    return text


_MODEL_ONLY = ("acoustic_length_mm", "end_correction_mm", "mouth.correction_mm",
               "mouth.band_mm")
"""Lengths of the model (the mouth term and its uncertainty), not of a part: they change
nothing to cut."""


@dataclass(frozen=True)
class PipeAction:
    """What a change means at the bench for one pipe: ``action`` is ``make`` (a new pipe),
    ``drop`` (removed), ``trim`` (only shorter: cut the difference off), ``re-cut`` (parts
    change: make them again), ``re-drill``, ``re-cut, re-drill``, ``re-set`` (only the
    stopper or plug moves) or ``none`` (predictions only); ``line`` says it in one line."""

    pipe: str
    action: str
    line: str


def _mm(value: float) -> str:
    return f"{abs(value):.2f} mm"


def _part_change(c: Change) -> bool:
    if c.field.startswith(("holes", "fingerings", "harmonics")) or c.field in _MODEL_ONLY:
        return False
    return c.unit == "mm" or c.field in ("stock", "material", "section", "construction")


def _hole_words(c: Change) -> str:
    hole = c.field.split("]")[0].removeprefix("holes[")
    if c.status != "changed" or c.field.count(".") == 0:
        return f"hole {hole} {c.status}"
    name = c.field.rsplit(".", 1)[1]
    if name == "diameter_mm" and c.delta is not None:
        how = "enlarge" if c.delta > 0 else "smaller: a new tube"
        return f"hole {hole} ø {_value(c.old, 2)} mm -> {_value(c.new, 2)} mm ({how})"
    if name.startswith("position_from_top") and c.delta is not None:
        # in words, not a sign: 'moves -0.60 mm from the top' reads as a position
        where = "nearer the top" if c.delta < 0 else "further from the top"
        return f"hole {hole} moves {_mm(c.delta)} {where}"
    if name == "angle_deg" and c.delta is not None:
        return f"hole {hole} turns {c.delta:+.2f}°"
    return ""


def _action(pipe: str, mine: list[Change]) -> PipeAction:
    parts = [c for c in mine if _part_change(c)]
    holes = [c for c in mine if c.field.startswith("holes")
             and not c.field.endswith(("position_from_bottom_mm", "fixed", "label"))]
    pitch = next((c for c in mine if c.field == "predicted_hz"), None)
    tail = f"; predicted pitch {pitch.delta:+.2f} cents" if pitch and pitch.delta else ""
    cut = next((c for c in parts if c.field == "cut_length_mm"), None)
    others = [c for c in parts if c.field not in ("cut_length_mm", "speaking_length_mm")
              and not c.field.startswith("stopper.")]
    stopper = [c for c in parts if c.field.startswith("stopper.position")]
    words: list[str] = []
    if cut is not None and cut.delta is not None:
        if cut.delta < 0:
            words.append(f"cut length {_value(cut.old, 2)} mm -> {_value(cut.new, 2)} mm "
                         f"(trim {_mm(cut.delta)})")
        else:
            words.append(f"cut length {_value(cut.old, 2)} mm -> {_value(cut.new, 2)} mm "
                         f"({_mm(cut.delta)} longer: cut a new one)")
    unit = {c.field: " mm" if c.unit == "mm" else "" for c in others}
    words += [f"{c.field} {_value(c.old, 2)}{unit[c.field]} -> {_value(c.new, 2)}{unit[c.field]}"
              for c in others[:3]]
    if len(others) > 3:
        words.append(f"{len(others) - 3} more")
    if stopper and not words:
        c = stopper[0]
        words.append(f"stopper or plug {_mm(c.delta or 0.0)} "
                     + ("further in" if (c.delta or 0) < 0 else "further out"))
    drills = [w for w in (_hole_words(c) for c in holes) if w]
    if drills:
        words.append(", ".join(drills[:4]) + (f", {len(drills) - 4} more" if len(drills) > 4
                                               else ""))
    if holes and (cut is not None or others):
        action = "re-cut, re-drill"
    elif holes:
        action = "re-drill"
    elif others or (cut is not None and (cut.delta or 0) > 0):
        action = "re-cut"
    elif cut is not None:
        action = "trim"
    elif stopper:
        action = "re-set"
    else:
        return PipeAction(pipe, "none", "nothing to cut or drill" + tail)
    return PipeAction(pipe, action, f"{action}: " + "; ".join(words) + tail)


def actions(changes: list[Change]) -> list[PipeAction]:
    """One line per pipe that changed, was added or removed, in the order of ``changes``."""
    by_pipe: dict[str, list[Change]] = {}
    for c in changes:
        if c.scope == "pipe":
            by_pipe.setdefault(c.owner, []).append(c)
    found = []
    for pipe, mine in by_pipe.items():
        if mine[0].status == "added":
            found.append(PipeAction(pipe, "make", f"make: new pipe, {mine[0].new}"))
        elif mine[0].status == "removed":
            found.append(PipeAction(pipe, "drop", f"drop: no longer in the spec ({mine[0].old})"))
        else:
            found.append(_action(pipe, mine))
    return found


def _actions_block(changes: list[Change], pipes_in_new: int,
                   inches: Inches | None = None) -> list[str]:
    found = actions(changes)
    if not found:
        return []
    width = max(len(a.pipe) for a in found)
    lines = ["what to re-cut or re-drill, one line per pipe:"]
    lines += [f"  {a.pipe.ljust(width)}  {in_inches(a.line, inches)}" for a in found]
    untouched = pipes_in_new - sum(1 for a in found if a.action != "drop")
    if untouched > 0:
        lines.append(f"  ({_plural(untouched, 'other pipe')} unchanged)")
    return lines + [""]


def render(changes: list[Change], pipes_in_new: int = 0, inches: Inches | None = None) -> str:
    """The report: what to re-cut or re-drill (a line per pipe), then every change in
    aligned columns, a blank line between pipes, then the summary; ``no changes`` when the
    list is empty. ``pipes_in_new`` counts the unchanged pipes; with ``inches`` (the new spec
    is in inches) the lines of what to do give their lengths in inches too."""
    if not changes:
        return "no changes\n"
    head = _actions_block(changes, pipes_in_new, inches)
    if head:
        head.append("every change:")
    rows = [_row(c) for c in changes]
    # Added and removed lines carry a summary in the values column: they set no width.
    aligned = [row for row, c in zip(rows, changes, strict=True) if c.status == "changed"]
    widths = [max(len(row[i]) for row in rows) for i in range(2)]
    widths.append(max((len(row[2]) for row in aligned), default=0))
    lines: list[str] = []
    previous: tuple[str, str] | None = None
    for change, row in zip(changes, rows, strict=True):
        owner = (change.scope, change.owner)
        if previous is not None and owner != previous:
            lines.append("")
        previous = owner
        cells = [row[i].ljust(widths[i]) for i in range(3)] + [row[3]]
        lines.append("  ".join(cells).rstrip())
    lines.append("")
    lines.append(summary(changes))
    return "\n".join(head + lines) + "\n"


def as_json(changes: list[Change]) -> dict[str, Any]:
    """``diff --json``: the summary, the line per pipe, and every change."""
    return {
        "changed": bool(changes),
        "summary": summary(changes) if changes else "no changes",
        "pipes": [dataclasses.asdict(a) for a in actions(changes)],
        "changes": [dataclasses.asdict(c) for c in changes],
    }


def run_diff(old_arg: str, new_arg: str, cwd: Path, json_output: bool = False,
             warn: Callable[[Note], None] | None = None, strict: bool = False
             ) -> tuple[int, str]:
    """Resolve both specs and report: (0, "no changes") or (1, the report); with
    ``json_output`` the report is ``as_json`` as text.

    The warnings of both specs, each at its own spec (``FILE@REV:LINE:COL`` for a
    revision), go to ``warn`` in order before the report is made; with ``strict`` they are
    errors instead.

    Raises ``DiffInputError`` when an argument cannot be read and ``SpecError`` when a spec
    is wrong; the command line turns both into exit code 2, as ``diff`` does on trouble.
    """
    from compiler.resolve.resolver import resolve
    from compiler.spec import load_spec

    old_bytes, old_name = read_spec_arg(old_arg, cwd)
    new_bytes, new_name = read_spec_arg(new_arg, cwd)
    old = resolve(load_spec(old_bytes, old_name))
    new = resolve(load_spec(new_bytes, new_name))
    notes = in_order([*old.warnings, *new.warnings])
    refuse_if_strict(notes, strict)
    if warn is not None:
        for note in notes:
            warn(note)
    changes = compare(old, new)
    code = EXIT_CHANGED if changes else EXIT_SAME
    if json_output:
        return code, json.dumps(as_json(changes), indent=2, sort_keys=True,
                                ensure_ascii=False) + "\n"
    return code, render(changes, len(new.pipes),
                        inches_for(new.fabrication.units, new.fabrication.precision_m))
