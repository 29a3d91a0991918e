"""The JFET common-source amplifier: self bias through the source resistor, optional bypass.

A P-channel part is wired mirror-image on the same positive rail: its source resistor and its
gate resistor go to VCC and its drain resistor to ground.
"""

from __future__ import annotations

from kitleaf.circuit.drawing import Sheet
from kitleaf.circuit.kind import Role, Stage, StageKind, TestPoint
from kitleaf.circuit.stages import register
from kitleaf.circuit.stages._shared import (
    OUTPUT_COUPLING,
    capacitor_role,
    check_family,
    check_output,
    is_flipped,
    output_roles,
    place_output,
    resistor_role,
    transistor_test_points,
)
from kitleaf.circuit.stages.common_emitter import transistor_rails

ROLES = (
    capacitor_role("input-cap", "coupling capacitor from the stage input to the gate"),
    resistor_role("gate", "gate resistor to ground (to VCC for P-channel); sets the input "
                  "impedance"),
    Role("transistor", ("jfet",), help="the N- or P-channel JFET, e.g. Q1 J201"),
    resistor_role("drain", "drain load resistor"),
    resistor_role("source", "source resistor (self bias)"),
    capacitor_role("source-bypass", "source bypass capacitor: raises the gain", required=False),
    *output_roles("the drain"),
)


@register
class JfetCommonSource(StageKind):
    name = "jfet-common-source"
    summary = "JFET gain stage: self-biased, optional source bypass and volume"
    roles = ROLES
    options = (OUTPUT_COUPLING,)

    def build(self, stage: Stage, wiring) -> None:
        drain_rail, source_rail = transistor_rails(is_flipped(stage, "transistor"))
        part = stage.part
        wiring.place(part("input-cap"), "in", "g")
        wiring.place(part("gate"), "g", source_rail)  # the gate returns to the source's rail
        wiring.place(part("transistor"), "d", "g", "s")
        wiring.place(part("drain"), drain_rail, "d")
        wiring.place(part("source"), "s", source_rail)
        wiring.place(part("source-bypass"), "s", source_rail)
        place_output(stage, wiring, "d")

    def check(self, stage: Stage) -> None:
        check_family(stage, "transistor", ("njf", "pjf"))
        check_output(stage, self.name)

    def test_points(self, stage: Stage) -> tuple[TestPoint, ...]:
        return transistor_test_points(stage.part("transistor"),
                                      {"gate": "g", "drain": "d", "source": "s"})

    def draw(self, stage: Stage, sheet: Sheet) -> None:
        from kitleaf.circuit.stages._drawing import TransistorDrawing, draw_transistor_stage

        part = stage.part
        bypass = (part("source-bypass"),) if part("source-bypass") else ()
        flipped = is_flipped(stage, "transistor")
        gate_up, gate_down = (part("gate"), None) if flipped else (None, part("gate"))
        draw_transistor_stage(sheet, TransistorDrawing(
            "pjf" if flipped else "njf", part("transistor"),
            part("input-cap"), gate_up, gate_down, part("drain"),
            part("source"), bypass, "upper", part("output-cap"), part("volume"), part("pulldown")))
