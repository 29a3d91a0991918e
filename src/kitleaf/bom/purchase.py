"""A batch order: the parts for several kits of one or more guides, merged, with spares.

Lines are the same part when they agree on type, value, model, tolerance, rating and buying
attributes (hardware: on its description too). Each merged line is needed per kit times the
number of kits; spares are that fraction of it, rounded up per line, so a line of one part
with 10 % spares orders one spare.
"""

from __future__ import annotations

import math
import re
from collections.abc import Iterable, Sequence
from dataclasses import dataclass

from kitleaf.bom.lines import BomLine
from kitleaf.errors import KitleafError


@dataclass(frozen=True)
class OrderLine:
    """One line to buy: what it is, how many the kits need, the spares and the total."""

    type: str
    value_text: str
    value_display: str
    attributes: tuple[str, ...]
    value: float | None
    per_kit: int  # one kit of each guide together
    needed: int
    spares: int
    group: str
    rank: int

    @property
    def quantity(self) -> int:
        return self.needed + self.spares


def parse_spares(text: str) -> float:
    """Spares per line as a fraction: "10%" -> 0.1, "0" or "0%" -> 0.0."""
    match = re.fullmatch(r"\s*(\d+(?:\.\d*)?|\.\d+)\s*(%?)\s*", text)
    if not match or (not match[2] and float(match[1]) != 0):
        shown = text if len(text) <= 40 else text[:40] + "..."
        raise KitleafError(f"--spares must be a percentage of 0% or more, such as 10%, "
                           f"got {shown!r}")
    return float(match[1]) / 100


def _check(kits: int, spares: float) -> None:
    if isinstance(kits, bool) or not isinstance(kits, int) or kits <= 0:
        raise KitleafError(f"the number of kits must be a whole number of 1 or more, got {kits!r}")
    if not (math.isfinite(spares) and spares >= 0):
        raise KitleafError(f"spares must be 0% or more, such as 10%, got {spares!r}")


def _merged(boms: Iterable[Sequence[BomLine]]) -> dict[tuple, tuple[BomLine, int]]:
    merged: dict[tuple, tuple[BomLine, int]] = {}
    for lines in boms:
        for line in lines:
            first, count = merged.get(line.key, (line, 0))
            if first.rating is None and line.rating is not None:  # shown as the line that
                # writes its rating out, if any
                first = line
            merged[line.key] = (first, count + line.quantity)
    return merged


def spares_for(needed: int, spares: float) -> int:
    """``spares`` (a fraction) of ``needed``, rounded up; 7 % of 300 is 21, not 22 (float noise)."""
    return math.ceil(round(needed * spares, 9))


def batch_order(boms: Sequence[Sequence[BomLine]], kits: int,
                spares: float = 0.0) -> tuple[OrderLine, ...]:
    """The order for ``kits`` of each guide whose lines are in ``boms``, with ``spares``.

    Sorted in build order, then by type, value and the trade's value text.
    """
    _check(kits, spares)
    order = []
    for line, per_kit in _merged(boms).values():
        needed = per_kit * kits
        order.append(OrderLine(
            line.type, line.value_text, line.value_display, line.attributes, line.value,
            per_kit, needed, spares_for(needed, spares), line.group, line.rank,
        ))
    order.sort(key=_order_key)
    return tuple(order)


def _order_key(line: OrderLine) -> tuple:
    value = (0, line.value) if line.value is not None else (1, 0.0)
    return (line.rank, line.type, value, line.value_text, line.attributes)
