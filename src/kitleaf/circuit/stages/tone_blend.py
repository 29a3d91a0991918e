"""The one-knob blend tone: a low-pass and a high-pass path, one pot fading from one to the other.

The input feeds an RC low-pass (series resistor, cap to ground) and an RC high-pass (series
cap, resistor to ground). The pot's ccw end takes the low-pass output, its cw end the
high-pass output, and its wiper is the stage's output, so clockwise is bright. Half way, the
two paths add with opposite phase shifts and the middle of the band dips between the two
corners: the familiar scoop of this control.
"""

from __future__ import annotations

from kitleaf.circuit.drawing import GROUND_Y, Sheet
from kitleaf.circuit.kind import Role, Stage, StageKind, TestPoint
from kitleaf.circuit.stages import register
from kitleaf.circuit.stages._shared import capacitor_role, resistor_role

ROLES = (
    resistor_role("low-resistor", "series resistor of the low-pass path, input to the pot's "
                                  "ccw end"),
    capacitor_role("low-cap", "from the pot's ccw end to ground: sets the low-pass corner"),
    capacitor_role("high-cap", "series cap of the high-pass path, input to the pot's cw end"),
    resistor_role("high-resistor", "from the pot's cw end to ground: sets the high-pass corner"),
    Role("tone", ("pot",), help="the blend pot: ccw end dark (low-pass), cw end bright "
                                "(high-pass), wiper is the output"),
)

# Drawing columns and rows, in grid units.
SPLIT_X, SHUNT_X, POT_X = 1.2, 4.6, 6.8
LOW_Y, HIGH_Y = 10.0, 5.0


@register
class ToneBlend(StageKind):
    name = "tone-blend"
    summary = "one-knob tone: the pot fades from a low-pass path to a high-pass path"
    roles = ROLES
    shapes_response = True
    passband = False

    def build(self, stage: Stage, wiring) -> None:
        part = stage.part
        wiring.place(part("low-resistor"), "in", "lo")
        wiring.place(part("low-cap"), "lo", "0")
        wiring.place(part("high-cap"), "in", "hi")
        wiring.place(part("high-resistor"), "hi", "0")
        wiring.place(part("tone"), "lo", "out", "hi")  # ccw, wiper, cw

    def test_points(self, stage: Stage) -> tuple[TestPoint, ...]:
        return (TestPoint("tone output (0 V DC)", "out"),)

    def draw(self, stage: Stage, sheet: Sheet) -> None:
        part = stage.part
        split, low, high = (SPLIT_X, LOW_Y), (SHUNT_X, LOW_Y), (SHUNT_X, HIGH_Y)
        sheet.port((0.0, LOW_Y), "IN", "left")
        sheet.wire((0.0, LOW_Y), split)
        sheet.dot(split)
        sheet.part(part("low-resistor"), split, (3.6, LOW_Y))
        sheet.wire((3.6, LOW_Y), (POT_X, LOW_Y))
        sheet.dot(low)
        sheet.part(part("low-cap"), low, (SHUNT_X, LOW_Y - 2.4), side="left")  # clear of the pot
        sheet.ground((SHUNT_X, LOW_Y - 2.4))
        sheet.wire(split, (SPLIT_X, HIGH_Y))
        sheet.part(part("high-cap"), (SPLIT_X, HIGH_Y), (3.6, HIGH_Y))
        sheet.wire((3.6, HIGH_Y), (POT_X, HIGH_Y))
        sheet.dot(high)
        sheet.part(part("high-resistor"), high, (SHUNT_X, GROUND_Y + 1.6), side="right")
        sheet.ground((SHUNT_X, GROUND_Y + 1.6))
        # drawn downwards, ccw at the top: the wiper falls on the right, towards OUT
        wiper = sheet.pot(part("tone"), (POT_X, LOW_Y), (POT_X, HIGH_Y), side="left")
        sheet.wire(wiper, (POT_X + 1.8, wiper[1]))
        sheet.port((POT_X + 1.8, wiper[1]), "OUT", "right")
