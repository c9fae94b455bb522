"""What resolving one group reads: a frozen object that is also the group's cache key.

A rank, tube set, flute or survey is resolved from its own spec block and a few shared
values: the air, the tuning, part of the fabrication block (``Workshop``) and the stock it
names. ``group_inputs`` picks exactly those out of the spec; the family resolvers take
nothing else, so a value they do not receive cannot change their result, and a value they
do receive is part of the key the build's cache stores the result under
(``compiler.cache``): reading one more value means adding it here, never a stale entry.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Generic, TypeVar

from compiler.errors import Position
from compiler.spec.model import Environment, Flute, Rank, Spec, Stock, Survey, TubeSet, Tuning

G = TypeVar("G", Rank, TubeSet, Flute, Survey)


@dataclass(frozen=True)
class Workshop:
    """What resolving reads of the spec's ``fabrication`` block (the sheet, kerf, spacing,
    paper and file options only matter to the parts and the outputs)."""

    precision_m: float
    """The step lengths are rounded to: the maker cannot cut finer."""
    allowance_fraction: float
    """The tuning allowance added to cut lengths: a share of the length ..."""
    allowance_m: float
    """... plus a length."""
    drills_m: tuple[float, ...]
    """The drills at hand (holes are snapped to them); empty: any size."""
    allowance_at: Position | None
    """Where the spec gives the tuning allowance (None: not given)."""


@dataclass(frozen=True)
class GroupInputs(Generic[G]):
    """Everything one group's resolution reads, and its cache key."""

    group: G
    environment: Environment
    tuning: Tuning
    fabrication: Workshop
    stock: tuple[Stock, ...]
    """The stock the group names (``stock_names``), in the spec's order."""

    def stock_named(self, name: str) -> Stock | None:
        """The named stock, which the group must name (anything else is a bug: the stock
        would be missing from the cache key)."""
        if name not in stock_names(self.group):
            raise LookupError(f"stock `{name}` is not among the inputs of `{self.group.id}`; "
                              "add it to compiler.resolve.inputs.stock_names")
        return next((s for s in self.stock if s.name == name), None)


RankInputs = GroupInputs[Rank]
TubeSetInputs = GroupInputs[TubeSet]
FluteInputs = GroupInputs[Flute]
SurveyInputs = GroupInputs[Survey]


def stock_names(group: Rank | TubeSet | Flute | Survey) -> tuple[str, ...]:
    """The names of the stock a group is made from or refers to."""
    if isinstance(group, Rank):
        return (group.stock,)
    if isinstance(group, TubeSet):
        return (*group.stock, *(o.stock for o in group.overrides if o.stock is not None),
                *((group.holder.stock,) if group.holder is not None else ()))
    return tuple(name for name in (group.stock, group.jig) if name is not None)


def workshop(spec: Spec) -> Workshop:
    fab = spec.fabrication
    return Workshop(fab.precision_m, fab.allowance_fraction, fab.allowance_m, fab.drills_m,
                    fab.where.get("tuning_allowance"))


def group_inputs(spec: Spec, group: G) -> GroupInputs[G]:
    """What resolving ``group`` reads of ``spec``."""
    names = set(stock_names(group))
    return GroupInputs(group, spec.environment, spec.tuning, workshop(spec),
                       tuple(s for s in spec.stock if s.name in names))
