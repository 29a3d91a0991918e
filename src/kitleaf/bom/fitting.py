"""Which way round each polarised capacitor goes, in words for its BOM line: the + lead to the
side the solved kit's DC puts higher (specs/polarity.py, the same the schematic marks)."""

from __future__ import annotations

from collections.abc import Iterable, Mapping
from dataclasses import replace
from typing import TYPE_CHECKING

from kitleaf.specs.polarity import NEAR_ZERO, Orientation
from kitleaf.values import format_value

if TYPE_CHECKING:
    from kitleaf.bom.lines import BomLine

HALF_WAY = "knobs at half way"  # the setting words of specs.rules._context for the nominal state


def fitting_text(orientation: Orientation) -> str:
    """``C3: + lead to the 0.83 V side, - lead to the 0 V side``, with the knob setting the
    voltages are taken at when it is not the knobs at half way."""
    o = orientation
    plus, minus = format_value(o.plus_v, "voltage"), format_value(o.minus_v, "voltage")
    where = "" if o.setting == HALF_WAY else f" (with {o.setting}, where it is least)"
    if not o.settled:
        return (f"{o.designator}: under {format_value(NEAR_ZERO, 'voltage')} DC across it at "
                "every knob setting, so neither way round is set by the circuit; see the "
                "design-rule findings")
    return f"{o.designator}: + lead to the {plus} side, − lead to the {minus} side{where}"


def fitting_notes(lines: Iterable[BomLine], orientations: Mapping[str, Orientation]
                  ) -> tuple[BomLine, ...]:
    """``lines`` with the way round of each polarised capacitor the specs oriented
    (``Checks.orientations``)."""
    return tuple(
        replace(line, fitting=tuple(fitting_text(orientations[d]) for d in line.designators
                                    if d in orientations))
        for line in lines)
