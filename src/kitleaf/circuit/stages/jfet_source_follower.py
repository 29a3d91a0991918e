"""The JFET source follower: a buffer with a very high input impedance and gain just under one.

The gate resistor returns either to ground (self bias: the source sits at the few tenths of a
volt the JFET's own cutoff sets, which limits the swing) or to the node of a divider across
the supply (the source then sits a little above the divider's voltage, with room both ways).
The voltage gain is gm Rs / (1 + gm Rs) and the output impedance Rs parallel with 1/gm.
A P-channel part is wired mirror-image on the same positive rail: its source resistor goes to
VCC and its drain to ground, and a gate resistor without a divider returns to VCC.
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
    require_together,
    resistor_role,
    transistor_test_points,
)
from kitleaf.circuit.stages.common_emitter import transistor_rails

ROLES = (
    capacitor_role("input-cap", "coupling capacitor from the stage input to the gate"),
    resistor_role("gate", "gate resistor, to the divider's node when there is one, else to "
                  "ground (VCC for P-channel); sets the input impedance"),
    resistor_role("bias-top", "upper divider resistor, VCC to the gate resistor",
                  required=False),
    resistor_role("bias-bottom", "lower divider resistor, the gate resistor to ground",
                  required=False),
    Role("transistor", ("jfet",), help="the N- or P-channel JFET, e.g. Q1 2N5457"),
    resistor_role("drain", "small drain stopper resistor", required=False),
    resistor_role("source", "source load resistor; the output is taken here"),
    *output_roles("the source"),
)


@register
class JfetSourceFollower(StageKind):
    name = "jfet-source-follower"
    summary = "JFET buffer: very high input impedance, gain just under one"
    roles = ROLES
    options = (OUTPUT_COUPLING,)

    def build(self, stage: Stage, wiring) -> None:
        drain_rail, source_rail = transistor_rails(is_flipped(stage, "transistor"))
        part = stage.part
        wiring.place(part("input-cap"), "in", "g")
        divided = part("bias-top") is not None
        wiring.place(part("gate"), "g", "b" if divided else source_rail)
        wiring.place(part("bias-top"), "vcc", "b")
        wiring.place(part("bias-bottom"), "b", "0")
        wiring.place(part("drain"), drain_rail, "d")
        wiring.place(part("transistor"), "d" if part("drain") else drain_rail, "g", "s")
        wiring.place(part("source"), "s", source_rail)
        place_output(stage, wiring, "s")

    def check(self, stage: Stage) -> None:
        check_family(stage, "transistor", ("njf", "pjf"))
        check_output(stage, self.name)
        require_together(stage, "bias-top", "bias-bottom")
        require_together(stage, "bias-bottom", "bias-top")

    def test_points(self, stage: Stage) -> tuple[TestPoint, ...]:
        drain = "d" if stage.part("drain") else transistor_rails(
            is_flipped(stage, "transistor"))[0]
        return transistor_test_points(stage.part("transistor"),
                                      {"gate": "g", "drain": drain, "source": "s"})

    def draw(self, stage: Stage, sheet: Sheet) -> None:
        from kitleaf.circuit.stages._drawing import TransistorDrawing, draw_transistor_stage

        part = stage.part
        flipped = is_flipped(stage, "transistor")
        divider = (part("gate"), part("bias-top"), part("bias-bottom")) \
            if part("bias-top") else None
        gate_up, gate_down = (part("gate"), None) if flipped else (None, part("gate"))
        draw_transistor_stage(sheet, TransistorDrawing(
            "pjf" if flipped else "njf", part("transistor"), part("input-cap"), gate_up,
            gate_down, part("drain"), part("source"), (), "lower", part("output-cap"),
            part("volume"), part("pulldown"), divider=divider))
