"""Passive first-order filters: the RC high-pass and the RC low-pass.

Standalone corner: f = 1 / (2 pi R C); in a kit, R is in parallel with the next stage's input
impedance (high-pass) or in series with the previous stage's output impedance (low-pass).
"""

from __future__ import annotations

from kitleaf.circuit.drawing import SIGNAL_Y, Sheet
from kitleaf.circuit.kind import Stage, StageKind, TestPoint
from kitleaf.circuit.stages import register
from kitleaf.circuit.stages._shared import capacitor_role, resistor_role


def draw_l_section(sheet: Sheet, series, shunt) -> None:
    """IN, the series part across, the shunt part down to ground, OUT."""
    sheet.port((0.0, SIGNAL_Y), "IN", "left")
    sheet.part(series, (0.0, SIGNAL_Y), (2.4, SIGNAL_Y))
    node = (3.4, SIGNAL_Y)
    sheet.wire((2.4, SIGNAL_Y), node, (5.0, SIGNAL_Y))
    sheet.dot(node)
    sheet.part(shunt, node, (3.4, SIGNAL_Y - 3.0))
    sheet.ground((3.4, SIGNAL_Y - 3.0))
    sheet.port((5.0, SIGNAL_Y), "OUT", "right")


@register
class HighPass(StageKind):
    name = "high-pass"
    summary = "RC high-pass: series capacitor, resistor to ground"
    roles = (
        capacitor_role("series-cap", "series capacitor, stage input to output"),
        resistor_role("shunt-resistor", "resistor from the output to ground"),
    )

    def build(self, stage: Stage, wiring) -> None:
        wiring.place(stage.part("series-cap"), "in", "out")
        wiring.place(stage.part("shunt-resistor"), "out", "0")

    def test_points(self, stage: Stage) -> tuple[TestPoint, ...]:
        return (TestPoint("output (0 V DC)", "out"),)

    def draw(self, stage: Stage, sheet: Sheet) -> None:
        draw_l_section(sheet, stage.part("series-cap"), stage.part("shunt-resistor"))


@register
class LowPass(StageKind):
    name = "low-pass"
    summary = "RC low-pass: series resistor, capacitor to ground"
    roles = (
        resistor_role("series-resistor", "series resistor, stage input to output"),
        capacitor_role("shunt-cap", "capacitor from the output to ground"),
    )

    def build(self, stage: Stage, wiring) -> None:
        wiring.place(stage.part("series-resistor"), "in", "out")
        wiring.place(stage.part("shunt-cap"), "out", "0")

    def draw(self, stage: Stage, sheet: Sheet) -> None:
        draw_l_section(sheet, stage.part("series-resistor"), stage.part("shunt-cap"))
