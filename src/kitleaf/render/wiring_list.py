"""The wiring list: every wire of the harness as a line of text a builder ticks off, numbered as
the drawing numbers it."""

from __future__ import annotations

from dataclasses import dataclass

from kitleaf.circuit.harness import BOARD, Harness
from kitleaf.circuit.offboard import Lug

# What a wire carries, in the builder's words.
CARRIES = {"signal": "signal", "bypass": "signal, effect off", "ground": "ground",
           "battery": "battery negative", "supply": "supply positive", "led": "LED"}


@dataclass(frozen=True)
class WiringRow:
    """One wire as the list shows it."""

    number: int
    start: str
    end: str
    carries: str
    note: str


def lug_words(lug: Lug, harness: Harness) -> str:
    """A lug as a builder names it: 'J1 tip', 'SW1 lug 4', 'board pad IN'."""
    if lug.owner == BOARD:
        return f"board pad {lug.name}"
    piece = next((p for p in harness.pieces if p.designator == lug.owner), None)
    if piece is not None and piece.role == "footswitch":
        return f"{lug.owner} lug {lug.name}"
    return str(lug)


def wiring_rows(harness: Harness) -> tuple[WiringRow, ...]:
    return tuple(WiringRow(n, lug_words(w.a, harness), lug_words(w.b, harness),
                           CARRIES[w.carries], w.note)
                 for n, w in enumerate(harness.wires, start=1))


def wires_by_part(harness: Harness | None) -> dict[str, tuple[int, ...]]:
    """The numbers of the wires soldered to each off-board piece (and the LED), by designator,
    so its parts-list line can point at them."""
    found: dict[str, list[int]] = {}
    for number, wire in enumerate(harness.wires if harness else (), start=1):
        for owner in dict.fromkeys((wire.a.owner, wire.b.owner)):
            if owner != BOARD:
                found.setdefault(owner, []).append(number)
    return {owner: tuple(numbers) for owner, numbers in sorted(found.items())}
