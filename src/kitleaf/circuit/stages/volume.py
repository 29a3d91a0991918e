"""The output volume control: a pot as a divider, signal on the cw end, output on the wiper."""

from __future__ import annotations

from kitleaf.circuit.drawing import SIGNAL_Y, Sheet
from kitleaf.circuit.kind import Role, Stage, StageKind
from kitleaf.circuit.stages import register


@register
class Volume(StageKind):
    name = "volume"
    summary = "volume pot: input on the cw end, output on the wiper, ccw end to ground"
    roles = (Role("volume", ("pot",), help="the volume pot, log (A) taper as a rule"),)

    def build(self, stage: Stage, wiring) -> None:
        wiring.place(stage.part("volume"), "0", "out", "in")

    def draw(self, stage: Stage, sheet: Sheet) -> None:
        from kitleaf.circuit.stages._drawing import draw_volume_out
        sheet.port((0.0, SIGNAL_Y), "IN", "left")
        draw_volume_out(sheet, stage.part("volume"), (0.0, SIGNAL_Y), 2.0)
