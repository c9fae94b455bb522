"""One flat error hierarchy: every known problem carries a spec position and a hint.

A ``SpecError`` prints as ``FILE:LINE:COL: error: MESSAGE`` followed by its hint.
Anything that is not a ``SpecError`` is a bug in boresmith and may show a traceback.
"""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True, order=True)
class Position:
    """Where a value came from: file, 1-based line and 1-based column."""

    file: str
    line: int
    col: int

    def __str__(self) -> str:
        return f"{self.file}:{self.line}:{self.col}"

    def shown(self) -> str:
        """``FILE:LINE:COL`` with the file's name only, for output files: a build's
        outputs never carry the folder the spec was read from."""
        name = self.file.replace("\\", "/").rsplit("/", 1)[-1]
        return f"{name}:{self.line}:{self.col}"


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
