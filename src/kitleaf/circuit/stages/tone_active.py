"""The active two-band tone control: bass and treble networks in the feedback of an inverting
op-amp, flat with both knobs at half way.

Two networks join the stage input to the op-amp output, each with its pot's wiper towards the
- input. In the bass network a resistor leads from each side to an end of the bass pot and a
capacitor bridges each half of the pot: at high frequencies the caps short the pot and the two
resistors alone set a gain of about one; at low frequencies the pot's halves add to them, so
the wiper's place sets the bass gain above or below one. In the treble network a resistor
leads from each side to an end of the treble pot, and a capacitor joins the wiper to the -
input: at low frequencies the capacitor is open and the network does nothing to the gain; at
high frequencies it lets the wiper's place set the treble gain. The + input sits at the
mid-rail reference.
"""

from __future__ import annotations

from kitleaf.circuit.drawing import Point, Sheet
from kitleaf.circuit.kind import Role, Stage, TestPoint
from kitleaf.circuit.stages import register
from kitleaf.circuit.stages._opamp import OpampKind, draw_output
from kitleaf.circuit.stages._shared import (
    capacitor_role,
    opamp_pins,
    opamp_test_points,
    output_roles,
    place_output,
    resistor_role,
)

ROLES = (
    capacitor_role("input-cap", "coupling capacitor from the stage input to both networks"),
    resistor_role("bass-in", "from the input to the bass pot's cw end"),
    Role("bass", ("pot",), help="bass pot: cw end towards the input, wiper to the - input; "
                                "more bass clockwise"),
    resistor_role("bass-out", "from the bass pot's ccw end to the op-amp output"),
    capacitor_role("bass-cap-in", "across the input half of the bass pot, cw end to wiper"),
    capacitor_role("bass-cap-out", "across the output half of the bass pot, wiper to ccw end"),
    resistor_role("treble-in", "from the input to the treble pot's cw end"),
    Role("treble", ("pot",), help="treble pot: cw end towards the input; more treble "
                                  "clockwise"),
    resistor_role("treble-out", "from the treble pot's ccw end to the op-amp output"),
    capacitor_role("treble-cap", "from the treble pot's wiper to the - input"),
    Role("opamp", ("opamp",), help="one section of the op-amp: U1A TL072 (pins 1-3) or U1B"),
    *output_roles("the op-amp output"),
)

# Drawing columns and rows, in grid units: the networks span from the input column to the
# output column, the bass row on top, the treble row at the bottom, the op-amp between them.
IN_X, END_X, BUS_X, OTHER_END_X, OUT_X = 0.6, 3.0, 5.4, 7.8, 12.4
BASS_Y, BRIDGE_Y, PLUS_Y, TREBLE_Y = 13.0, 11.2, 7.6, 2.6
OPAMP_X = 8.2


@register
class ToneActive(OpampKind):
    name = "tone-active"
    summary = "op-amp bass and treble control: two networks in the feedback, flat at half way"
    roles = ROLES

    def build(self, stage: Stage, wiring) -> None:
        part = stage.part
        wiring.place(part("input-cap"), "in", "i")
        wiring.place(part("bass-in"), "i", "a")
        wiring.place(part("bass"), "b", "m", "a")  # ccw, wiper, cw
        wiring.place(part("bass-out"), "b", "o")
        wiring.place(part("bass-cap-in"), "a", "m")
        wiring.place(part("bass-cap-out"), "m", "b")
        wiring.place(part("treble-in"), "i", "t")
        wiring.place(part("treble"), "u", "w", "t")
        wiring.place(part("treble-out"), "u", "o")
        wiring.place(part("treble-cap"), "w", "m")
        wiring.place(part("opamp"), "vref", "m", "o", "vcc", "0")
        place_output(stage, wiring, "o")

    def test_points(self, stage: Stage) -> tuple[TestPoint, ...]:
        return opamp_test_points(stage.part("opamp"), "vref", "m", "o")

    def draw(self, stage: Stage, sheet: Sheet) -> None:
        part = stage.part
        sheet.port((IN_X - 3.0, (BASS_Y + TREBLE_Y) / 2), "IN", "left")
        entry = (IN_X, (BASS_Y + TREBLE_Y) / 2)
        sheet.part(part("input-cap"), (IN_X - 3.0, entry[1]), entry, plus=entry)
        sheet.wire((IN_X, BASS_Y), (IN_X, TREBLE_Y))
        sheet.dot(entry)
        bass_wiper = self._row(sheet, stage, "bass", BASS_Y, "above")
        treble_wiper = self._row(sheet, stage, "treble", TREBLE_Y, "below")
        bridge = (BUS_X, BRIDGE_Y)
        sheet.part(part("bass-cap-in"), (END_X, BRIDGE_Y), bridge, side="below")
        sheet.part(part("bass-cap-out"), bridge, (OTHER_END_X, BRIDGE_Y), side="below")
        sheet.wire((END_X, BASS_Y), (END_X, BRIDGE_Y))
        sheet.wire((OTHER_END_X, BASS_Y), (OTHER_END_X, BRIDGE_Y))
        sheet.dot((END_X, BASS_Y))
        sheet.dot((OTHER_END_X, BASS_Y))
        sheet.wire(bass_wiper, bridge)
        sheet.dot(bridge)
        pins = sheet.opamp(part("opamp"), (OPAMP_X, PLUS_Y), opamp_pins(part("opamp")))
        sheet.wire(pins["non_inv"], (OPAMP_X - 0.8, PLUS_Y))
        sheet.net_label((OPAMP_X - 0.8, PLUS_Y), "vref", "left")
        minus = pins["inv"]
        join = (BUS_X, minus[1])
        sheet.wire(bridge, join, minus)
        sheet.dot(join)
        sheet.wire(treble_wiper, (BUS_X, TREBLE_Y + 1.2))
        sheet.part(part("treble-cap"), (BUS_X, TREBLE_Y + 1.2), join, side="left")
        out = (OUT_X, pins["out"][1])
        sheet.wire(pins["out"], out)
        sheet.wire((OUT_X, BASS_Y), (OUT_X, TREBLE_Y))
        sheet.dot(out)
        draw_output(sheet, stage, out)

    def _row(self, sheet: Sheet, stage: Stage, band: str, y: float, label_side: str) -> Point:
        """One network from the input column to the output column; returns its wiper point."""
        part = stage.part
        sheet.part(part(f"{band}-in"), (IN_X, y), (END_X, y), side=label_side)
        wiper = sheet.pot(part(band), (OTHER_END_X, y), (END_X, y), side=label_side,
                          wiper_right=label_side == "below")
        sheet.part(part(f"{band}-out"), (OTHER_END_X, y), (OUT_X, y), side=label_side)
        return wiper
