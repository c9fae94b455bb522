"""The one options object, frozen and passed explicitly: the command line's choices merged
once with the spec's fabrication settings, then handed to every stage."""

from __future__ import annotations

from dataclasses import dataclass

from compiler.ir import FabricationReport


@dataclass(frozen=True)
class BuildOptions:
    """What the stages and backends are told, every value settled (``Overrides.settle``):
    none of them looks at the spec's ``fabrication`` for these again."""

    paper: str = "a4"
    """``a4`` or ``letter`` for the build sheet."""
    dxf_version: str = "r2010"
    """``r2010`` or ``r12``."""
    part_files: bool = False
    """Also write one DXF per part."""
    strict: bool = False
    """Warnings are errors."""


@dataclass(frozen=True)
class Overrides:
    """The command line's choices; ``None`` means "as the spec's ``fabrication`` says"."""

    paper: str | None = None
    dxf_version: str | None = None
    part_files: bool | None = None
    strict: bool = False

    def settle(self, fabrication: FabricationReport) -> BuildOptions:
        """The options of a build: the command line's choice, else the spec's."""
        return BuildOptions(
            paper=(self.paper or fabrication.paper or "a4").lower(),
            dxf_version=(self.dxf_version or fabrication.dxf_version).lower(),
            part_files=fabrication.part_files if self.part_files is None else self.part_files,
            strict=self.strict)
