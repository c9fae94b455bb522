"""Stage 1: load the YAML with positions, validate it against the schema, normalise units.

``load_spec(text, filename)`` returns a typed ``Spec`` (SI units, every element with its
source position) or raises ``SpecError`` listing every problem found.
"""

from __future__ import annotations

from compiler.errors import Problem, SchemaError, SpecError, UnitError, YamlError
from compiler.spec.loader import Document, load_document
from compiler.spec.model import Spec
from compiler.spec.normalize import normalize, unit_problems
from compiler.spec.validate import schema_problems, validate_document


def load_spec(text: str | bytes, filename: str = "<spec>") -> Spec:
    """Load, validate and normalise one spec; raise ``SpecError`` with all problems at once.

    Every independent problem is reported in one run: YAML problems that do not stop the
    reading (a duplicate key), schema problems, and the unit and reference problems of the
    values the schema did not refuse (a value the schema refused is not judged again).
    """
    document = load_document(text, filename)
    problems = list(document.problems)
    try:
        schema, refused = schema_problems(document)
    except SchemaError as exc:  # not a mapping, or another format version: nothing more
        raise _error(problems + exc.problems) from None
    problems += schema
    if not problems:
        return normalize(document)
    problems += unit_problems(document, refused)
    raise _error(problems)


def _error(problems: list[Problem]) -> SpecError:
    """The error of the earliest stage that found a problem (each keeps its category)."""
    categories = {p.category for p in problems}
    kind = (YamlError if "yaml" in categories else SchemaError if "schema" in categories
            else UnitError)
    return kind(problems)


__all__ = ["Document", "Spec", "load_document", "load_spec", "normalize", "validate_document"]
