"""The emitter follower (common collector): unity voltage gain, a low output impedance.

A PNP part is wired mirror-image on the same positive rail, as in the common-emitter kind:
its emitter resistor goes to VCC and its collector to ground.
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
    capacitor_role("input-cap", "coupling capacitor from the stage input to the base"),
    resistor_role("bias-top", "upper bias resistor, VCC to base"),
    resistor_role("bias-bottom", "lower bias resistor, base to ground"),
    Role("transistor", ("bjt",), help="the NPN or PNP transistor, e.g. Q2 2N3904"),
    resistor_role("emitter", "emitter load resistor; the output is taken here"),
    resistor_role("collector", "small collector stopper resistor", required=False),
    *output_roles("the emitter"),
)


@register
class EmitterFollower(StageKind):
    name = "emitter-follower"
    summary = "BJT buffer: gain just under one, low output impedance"
    roles = ROLES
    options = (OUTPUT_COUPLING,)

    def build(self, stage: Stage, wiring) -> None:
        collector_rail, emitter_rail = transistor_rails(is_flipped(stage, "transistor"))
        part = stage.part
        wiring.place(part("input-cap"), "in", "b")
        wiring.place(part("bias-top"), "vcc", "b")
        wiring.place(part("bias-bottom"), "b", "0")
        collector = "c" if part("collector") else collector_rail
        wiring.place(part("collector"), collector_rail, "c")
        wiring.place(part("transistor"), collector, "b", "e")
        wiring.place(part("emitter"), "e", emitter_rail)
        place_output(stage, wiring, "e")

    def check(self, stage: Stage) -> None:
        check_family(stage, "transistor", ("npn", "pnp"))
        check_output(stage, self.name)

    def test_points(self, stage: Stage) -> tuple[TestPoint, ...]:
        flipped = is_flipped(stage, "transistor")
        collector = "c" if stage.part("collector") else ("0" if flipped else "vcc")
        return transistor_test_points(stage.part("transistor"),
                                      {"base": "b", "collector": collector, "emitter": "e"})

    def draw(self, stage: Stage, sheet: Sheet) -> None:
        from kitleaf.circuit.stages._drawing import TransistorDrawing, draw_transistor_stage

        part = stage.part
        draw_transistor_stage(sheet, TransistorDrawing(
            "pnp" if is_flipped(stage, "transistor") else "npn", part("transistor"),
            part("input-cap"), part("bias-top"), part("bias-bottom"), part("collector"),
            part("emitter"), (), "lower", part("output-cap"), part("volume"), part("pulldown")))
