"""The one options object, frozen and passed explicitly from the command line down."""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class BuildOptions:
    """Choices of the command line that override or add to the spec's ``fabrication``.

    ``None`` means "as the spec says".
    """

    paper: str | None = None
    """``a4`` or ``letter`` for the build sheet."""
    dxf_version: str | None = None
    """``r2010`` or ``r12``."""
    part_files: bool | None = None
    """Also write one DXF per part."""
    strict: bool = False
    """Warnings are errors."""
