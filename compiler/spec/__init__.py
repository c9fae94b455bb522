"""Stage 1: load the YAML with positions, validate it against the schema, normalise units.

``load_spec(text, filename)`` returns a typed ``Spec`` (SI units, every element with its
source position) or raises ``SpecError`` listing every problem found.
"""

from __future__ import annotations

from compiler.spec.loader import Document, load_document
from compiler.spec.model import Spec
from compiler.spec.normalize import normalize
from compiler.spec.validate import validate_document


def load_spec(text: str | bytes, filename: str = "<spec>") -> Spec:
    """Load, validate and normalise one spec; raise ``SpecError`` with all problems at once."""
    document = load_document(text, filename)
    validate_document(document)
    return normalize(document)


__all__ = ["Document", "Spec", "load_document", "load_spec", "normalize", "validate_document"]
