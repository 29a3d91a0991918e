"""Multi-pin devices on a schematic: transistors and op-amps, labelled, pins left as probe spots.

Each is placed by one pin through :meth:`SchematicSheet.device
<kitleaf.render.schematic.SchematicSheet.device>`,
which draws the symbol and gives back its pins by our names; what a builder reads beside it
(designator and value, an op-amp's package pin numbers, its supply leads) is added here with
the sheet's own wires, rails and text.
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import TYPE_CHECKING

from kitleaf.circuit.drawing import Point
from kitleaf.circuit.parts import Part
from kitleaf.render.schematic_text import FONT_SIZE, part_label

if TYPE_CHECKING:
    from kitleaf.render.schematic import SchematicSheet

SUPPLY_LEAD = 0.5  # from an op-amp's supply pin to its rail or ground symbol
PIN_NUMBER_SIZE = FONT_SIZE * 0.8


def draw_transistor(sheet: SchematicSheet, part: Part, family: str, base: Point, mirror: bool
                    ) -> dict[str, Point]:
    """A BJT or JFET with its base or gate at ``base`` (flipped top to bottom if ``mirror``),
    labelled to the right of its pins; every pin is a probe spot."""
    pins, centre = sheet.device(family, base, flip=mirror)
    sheet.record.part(part.designator, family, pins)
    sheet.spots.update({(part.designator, name): at for name, at in pins.items()})
    sheet.label(part_label(part), (max(p[0] for p in pins.values()) + 0.5, centre[1]), "right")
    return pins


def draw_opamp(sheet: SchematicSheet, part: Part, non_inv: Point, pin_numbers: Mapping[str, str]
               ) -> dict[str, Point]:
    """An op-amp with its + input at ``non_inv``, its supply pins led to VCC and to ground (or
    the negative rail the sheet names), and the package pin number from ``pin_numbers`` beside
    each named pin (each a probe spot)."""
    pins, _ = sheet.device("opamp", non_inv, pin="non_inv")
    sheet.record.part(part.designator, "opamp", pins)
    top, bottom = pins["vpos"], pins["vneg"]
    sheet.wire(top, (top[0], top[1] + SUPPLY_LEAD))
    sheet.rail((top[0], top[1] + SUPPLY_LEAD))
    sheet.wire(bottom, (bottom[0], bottom[1] - SUPPLY_LEAD))
    if sheet.vneg == "0":
        sheet.ground((bottom[0], bottom[1] - SUPPLY_LEAD))
    else:
        sheet.negative_rail((bottom[0], bottom[1] - SUPPLY_LEAD), sheet.vneg)
    sheet.label(part_label(part), (pins["out"][0] - 0.3, top[1] + 0.2), "right")
    for name, number in pin_numbers.items():
        point, side = pin_number_place(pins[name], name)
        sheet.text(number, point, size=PIN_NUMBER_SIZE, side=side)
        sheet.spots[(part.designator, number)] = pins[name]
    # the supply pin is probed on its lead to the rail, clear of the op-amp's body
    sheet.spots[(part.designator, pin_numbers.get("vpos", ""))] = (top[0], top[1] + 0.25)
    return pins


def pin_number_place(at: Point, name: str) -> tuple[Point, str]:
    """Where an op-amp's package pin number is written beside its pin ``name`` at ``at``, and
    on which side of that point: above or below the inputs' and output's leads, right of the
    supply leads."""
    x, y = at
    place = {"non_inv": ((x + 0.25, y + 0.05), "above"), "inv": ((x + 0.25, y - 0.15), "below"),
             "out": ((x - 0.25, y + 0.05), "above"), "vpos": ((x + 0.12, y + 0.25), "right"),
             "vneg": ((x + 0.12, y - 0.25), "right")}
    return place[name]
