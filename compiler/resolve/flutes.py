"""Flutes (duct and side-blown): wired to the transfer-matrix engine (in progress)."""

from __future__ import annotations

from compiler.errors import PhysicsError
from compiler.resolve.model import Group, Note, Pipe
from compiler.spec import model as spec_model


def resolve_flute(flute: spec_model.Flute, spec: spec_model.Spec) -> tuple[
        Group, list[Pipe], list[Note]]:
    raise PhysicsError.at(flute.position, "flutes are not resolved yet", "")
