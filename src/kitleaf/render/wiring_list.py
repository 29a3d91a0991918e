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
