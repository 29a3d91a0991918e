"""The parsed guide: frozen records of the kit block, the stage blocks and their entry lines."""

from __future__ import annotations

import re
from dataclasses import dataclass

from kitleaf.errors import SourceSpan

# A designator as the trade writes it (R3, LED1, U1A, ENC1), of a length a silk screen holds.
DESIGNATOR = re.compile(r"^[A-Z]{1,6}[0-9]{1,5}[A-Z]?$")


@dataclass(frozen=True)
class Entry:
    """One ``key: value`` line of a block, with the line it was written on."""

    key: str
    value: str
    span: SourceSpan


@dataclass(frozen=True)
class Block:
    """A fenced block of ours: its info-string name, argument and entry lines."""

    name: str
    argument: str
    entries: tuple[Entry, ...]
    span: SourceSpan

    def all(self, key: str) -> tuple[Entry, ...]:
        return tuple(e for e in self.entries if e.key == key)

    def first(self, key: str) -> Entry | None:
        found = self.all(key)
        return found[0] if found else None


@dataclass(frozen=True)
class StageBlock:
    """A circuit stage as written: id, kind, title and its remaining entries (roles, options)."""

    id: str
    kind: str
    title: str
    entries: tuple[Entry, ...]
    span: SourceSpan
    kind_span: SourceSpan


@dataclass(frozen=True)
class HardwareLine:
    """An off-board part from the kit block: a designator and what it is."""

    designator: str
    description: str
    span: SourceSpan


@dataclass(frozen=True)
class Knob:
    """A knob on the enclosure, named for the builder, turning the pot ``designator``."""

    name: str
    designator: str
    span: SourceSpan


@dataclass(frozen=True)
class Switch:
    """A switch on the enclosure, named for the builder: its part and the maker's name for
    each of its positions, in the switch's own order; ``rest`` is the one it rests at while
    the rest of the kit is swept (the first unless the guide marks another)."""

    name: str
    designator: str
    positions: tuple[str, ...]
    span: SourceSpan
    rest: int = 0


@dataclass(frozen=True)
class KitBlock:
    """The kit block: what the kit is and what hangs off the board."""

    title: str
    code: str
    revision: str
    supply: str
    summary: str
    knobs: tuple[Knob, ...]
    hardware: tuple[HardwareLine, ...]
    cautions: tuple[str, ...]
    source: Entry | None
    load: Entry | None
    order: Entry | None
    extra: tuple[Entry, ...]
    span: SourceSpan
    supply_span: SourceSpan | None = None  # the 'supply:' line
    code_span: SourceSpan | None = None  # the 'code:' line
    switches: tuple[Switch, ...] = ()
    bypass: Entry | None = None  # how the footswitch wires the kit in and out of the signal
    sound_previews: bool = False  # whether the page plays the kit's sound previews


@dataclass(frozen=True)
class Guide:
    """One kit's guide: its source text, kit block, stage blocks in document order and its
    own device models (``device NAME`` blocks, read by :mod:`kitleaf.circuit.devices`)."""

    path: str
    slug: str
    text: str
    kit: KitBlock
    stages: tuple[StageBlock, ...]
    devices: tuple[Block, ...] = ()

    def stage(self, stage_id: str) -> StageBlock:
        return next(s for s in self.stages if s.id == stage_id)
