"""The diode clipper to ground: a series resistor, then diode stacks from the output to ground.

Each stack conducts once the output reaches the sum of its diodes' forward drops (about 0.6 V
per silicon diode), so a ``clip-positive`` stack and a ``clip-negative`` stack of different
lengths clip asymmetrically.
"""

from __future__ import annotations

from kitleaf.circuit.drawing import GROUND_Y, SIGNAL_Y, Sheet
from kitleaf.circuit.kind import Role, Stage, StageKind, TestPoint
from kitleaf.circuit.stages import register
from kitleaf.circuit.stages._shared import (
    capacitor_role,
    check_diodes,
    diode_stack,
    resistor_role,
)

ROLES = (
    capacitor_role("input-cap", "blocks DC from the previous stage", required=False),
    resistor_role("series", "series resistor the diodes clip against"),
    Role("clip-positive", ("diode", "led"), required=False, many=True,
         help="diodes in series from the output to ground, anode towards the output"),
    Role("clip-negative", ("diode", "led"), required=False, many=True,
         help="diodes in series from the output to ground, cathode towards the output"),
)


@register
class DiodeClipper(StageKind):
    name = "diode-clipper"
    summary = "hard clipping: series resistor, diode stacks from the output to ground"
    roles = ROLES
    clips = True

    def build(self, stage: Stage, wiring) -> None:
        cap = stage.part("input-cap")
        wiring.place(cap, "in", "a")
        wiring.place(stage.part("series"), "a" if cap else "in", "out")
        diode_stack(wiring, stage.parts.get("clip-positive", ()), "out", "0", "pos", True)
        diode_stack(wiring, stage.parts.get("clip-negative", ()), "out", "0", "neg", False)

    def check(self, stage: Stage) -> None:
        check_diodes(stage, ("clip-positive", "clip-negative"))

    def test_points(self, stage: Stage) -> tuple[TestPoint, ...]:
        return (TestPoint("clipper output (0 V DC)", "out"),)

    def draw(self, stage: Stage, sheet: Sheet) -> None:
        sheet.port((0.0, SIGNAL_Y), "IN", "left")
        x = 0.0
        for part in (stage.part("input-cap"), stage.part("series")):
            if part is not None:
                sheet.part(part, (x, SIGNAL_Y), (x + 2.4, SIGNAL_Y))
                x += 2.4
        start = x
        for role, anode_up in (("clip-positive", True), ("clip-negative", False)):
            if stage.parts.get(role):
                x += 1.0
                _draw_stack(sheet, stage.parts[role], x, anode_up)
                sheet.dot((x, SIGNAL_Y))
                x += 1.4
        sheet.wire((start, SIGNAL_Y), (x + 0.6, SIGNAL_Y))
        sheet.port((x + 0.6, SIGNAL_Y), "OUT", "right")


def _draw_stack(sheet: Sheet, parts, x: float, anode_up: bool) -> None:
    step = (SIGNAL_Y - GROUND_Y) / len(parts)
    for i, part in enumerate(parts):
        top, bottom = (x, SIGNAL_Y - step * i), (x, SIGNAL_Y - step * (i + 1))
        sheet.part(part, *((top, bottom) if anode_up else (bottom, top)), side="right")
    sheet.ground((x, GROUND_Y))
