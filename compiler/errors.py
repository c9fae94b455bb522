"""One flat error hierarchy: every known problem carries a spec position and a hint; and
the one path for warnings.

A ``SpecError`` prints as ``FILE:LINE:COL: error: MESSAGE`` followed by its hint.
Anything that is not a ``SpecError`` is a bug in boresmith and may show a traceback.

A warning is a ``Note`` at its spec position, from whichever stage finds it (the resolvers,
the build replacing another spec's output). Every report of them goes the same way: each
once, in the order of ``in_order``; with ``--strict`` they are errors (``refuse_if_strict``);
otherwise printed as ``FILE:LINE:COL: warning: MESSAGE`` (``Note.format``) and kept in the
build's manifest as ``Note.shown`` gives them.
"""

from __future__ import annotations

import re
from collections.abc import Iterable
from dataclasses import dataclass


@dataclass(frozen=True, order=True)
class Position:
    """Where a value came from: file, 1-based line and 1-based column."""

    file: str
    line: int
    col: int

    def __str__(self) -> str:
        return f"{self.file}:{self.line}:{self.col}"

    @property
    def file_name(self) -> str:
        """The file's name without its folder."""
        return self.file.replace("\\", "/").rsplit("/", 1)[-1]

    def shown(self) -> str:
        """``FILE:LINE:COL`` with the file's name only, for output files: a build's
        outputs never carry the folder the spec was read from."""
        return f"{self.file_name}:{self.line}:{self.col}"


UNKNOWN = Position("<unknown>", 0, 0)


@dataclass(frozen=True)
class Problem:
    """One problem found in a spec; several are collected and reported at once."""

    position: Position
    message: str
    hint: str = ""
    category: str = "spec"
    severity: str = "error"

    def format(self) -> str:
        text = f"{self.position}: {self.severity}: {self.message}"
        if self.hint:
            text += f"\n    hint: {self.hint}"
        return text

    def as_dict(self) -> dict[str, object]:
        return {
            "file": self.position.file,
            "line": self.position.line,
            "col": self.position.col,
            "severity": self.severity,
            "category": self.category,
            "message": self.message,
            "hint": self.hint,
        }


class SpecError(Exception):
    """A problem in the spec: bad YAML, a schema violation, an impossible request.

    Holds one or more ``Problem`` records; ``str()`` gives the formatted report.
    """

    category = "spec"

    def __init__(self, problems: list[Problem] | Problem) -> None:
        if isinstance(problems, Problem):
            problems = [problems]
        self.problems = sorted(problems, key=lambda p: (p.position, p.message))
        super().__init__("\n".join(p.format() for p in self.problems))

    @classmethod
    def at(cls, position: Position, message: str, hint: str = "") -> SpecError:
        return cls([Problem(position, message, hint, cls.category)])


class YamlError(SpecError):
    """The file is not readable YAML, or breaks a loader limit."""

    category = "yaml"


class SchemaError(SpecError):
    """The YAML does not follow the spec language (schemas/boresmith-spec.schema.json)."""

    category = "schema"


class UnitError(SpecError):
    """A quantity has a missing, unknown or unsuitable unit."""

    category = "units"


class PhysicsError(SpecError):
    """The request is physically impossible (a length below zero, a note out of reach)."""

    category = "physics"


class GeometryError(SpecError):
    """The parts cannot be made (a part larger than the sheet, openings overlapping)."""

    category = "geometry"


@dataclass(frozen=True)
class Note:
    """A warning with its spec position (``--strict`` turns them into errors)."""

    position: Position
    message: str

    def format(self) -> str:
        """``FILE:LINE:COL: warning: MESSAGE``, for the terminal."""
        return f"{self.position}: warning: {self.message}"

    def shown(self) -> str:
        """The same with the spec file's name only, as output files keep it."""
        return f"{self.position.shown()}: warning: {self.message}"

    @classmethod
    def from_shown(cls, line: str, file: str) -> Note:
        """A warning kept as ``shown`` gave it, back at ``file`` (the path the user gave)."""
        name = Position(file, 0, 0).file_name
        found = re.fullmatch(re.escape(name) + r":(\d+):(\d+): warning: (.*)", line, re.S)
        if found is None:  # not a line of ours: keep all of it as the message
            return cls(Position(file, 0, 0), line)
        return cls(Position(file, int(found[1]), int(found[2])), found[3])


STRICT_HINT = "warnings are errors with --strict"


def in_order(notes: Iterable[Note]) -> tuple[Note, ...]:
    """Each warning once, by position and then message: the order of every report."""
    return tuple(sorted(set(notes), key=lambda n: (n.position, n.message)))


def refuse_if_strict(notes: Iterable[Note], strict: bool) -> None:
    """With ``strict``, warnings are errors: raise them all as one ``SpecError``."""
    found = in_order(notes)
    if strict and found:
        raise SpecError([Problem(n.position, n.message, STRICT_HINT) for n in found])
