"""The treble-cut tone control: a series resistor, then a pot and a capacitor to ground.

With the pot at zero the cap shunts the highs through the series resistor (corner about
1 / (2 pi R C) with R the series resistor plus the source's impedance); turning the pot
clockwise adds resistance in series with the cap and brings the highs back.
"""

from __future__ import annotations

from kitleaf.circuit.drawing import GROUND_Y, SIGNAL_Y, Sheet
from kitleaf.circuit.kind import Role, Stage, StageKind
from kitleaf.circuit.stages import register
from kitleaf.circuit.stages._shared import capacitor_role, resistor_role, rheostat


@register
class ToneCut(StageKind):
    name = "tone-cut"
    summary = "treble-cut tone: series resistor, pot and capacitor to ground; clockwise is bright"
    roles = (
        resistor_role("series", "series resistor the cap works against, input to output"),
        Role("tone", ("pot",), help="the tone pot, wired as a variable resistor to the cap"),
        capacitor_role("cap", "the treble-cut capacitor, from the pot to ground"),
    )
    shapes_response = True

    def build(self, stage: Stage, wiring) -> None:
        wiring.place(stage.part("series"), "in", "out")
        rheostat(wiring, stage.part("tone"), "out", "t")  # more resistance clockwise
        wiring.place(stage.part("cap"), "t", "0")

    def draw(self, stage: Stage, sheet: Sheet) -> None:
        sheet.port((0.0, SIGNAL_Y), "IN", "left")
        sheet.part(stage.part("series"), (0.0, SIGNAL_Y), (2.4, SIGNAL_Y))
        node = (3.4, SIGNAL_Y)
        sheet.wire((2.4, SIGNAL_Y), node, (5.4, SIGNAL_Y))
        sheet.dot(node)
        sheet.rheostat(stage.part("tone"), node, (3.4, 2.2), side="right")
        sheet.part(stage.part("cap"), (3.4, 2.2), (3.4, GROUND_Y), side="right")
        sheet.ground((3.4, GROUND_Y))
        sheet.port((5.4, SIGNAL_Y), "OUT", "right")
