"""The inverting op-amp on a single supply: + input at the reference, gain -Rf / Rin."""

from __future__ import annotations

from kitleaf.circuit.drawing import Sheet
from kitleaf.circuit.kind import Role, Stage, TestPoint
from kitleaf.circuit.stages import register
from kitleaf.circuit.stages._opamp import (
    PLUS_Y,
    OpampKind,
    draw_opamp_core,
    draw_output,
    feedback_rows,
)
from kitleaf.circuit.stages._shared import (
    capacitor_role,
    opamp_test_points,
    output_roles,
    place_output,
    resistor_role,
    series,
)

ROLES = (
    capacitor_role("input-cap", "coupling capacitor in front of the input resistor"),
    resistor_role("input", "input resistor Rin to the - input; sets the input impedance"),
    Role("opamp", ("opamp",), help="one section of the op-amp: U1A TL072 (pins 1-3) or U1B"),
    resistor_role("feedback", "feedback resistor Rf, output to - input"),
    Role("gain", ("pot",), required=False,
         help="pot in series with Rf, wired so clockwise gives more gain"),
    capacitor_role("feedback-cap", "across the feedback path: rolls off the highs",
                   required=False),
    *output_roles("the op-amp output"),
)


@register
class OpampInverting(OpampKind):
    name = "opamp-inverting"
    summary = "inverting op-amp stage, gain -Rf/Rin, + input held at the mid-rail reference"
    roles = ROLES

    def build(self, stage: Stage, wiring) -> None:
        part = stage.part
        wiring.place(part("input-cap"), "in", "i")
        wiring.place(part("input"), "i", "m")
        wiring.place(part("opamp"), "vref", "m", "o", "vcc", "0")
        series(wiring, [(part("feedback"), True), (part("gain"), True)], "m", "o", "fb")
        cap = part("feedback-cap")
        wiring.place(cap, "o", "m")
        place_output(stage, wiring, "o")

    def test_points(self, stage: Stage) -> tuple[TestPoint, ...]:
        return opamp_test_points(stage.part("opamp"), "vref", "m", "o")

    def draw(self, stage: Stage, sheet: Sheet) -> None:
        part = stage.part
        plus = (4.6, PLUS_Y)
        sheet.wire(plus, (3.6, PLUS_Y))
        sheet.net_label((3.6, PLUS_Y), "vref", "left")
        _, out = draw_opamp_core(sheet, stage, feedback_rows(stage, True), ())
        minus_y = PLUS_Y - 1.25
        sheet.port((-2.2, minus_y), "IN", "left")
        sheet.part(part("input-cap"), (-2.2, minus_y), (0.0, minus_y), plus=(0.0, minus_y))
        sheet.part(part("input"), (0.0, minus_y), (2.6, minus_y), side="below")
        sheet.wire((2.6, minus_y), (4.6, minus_y))
        draw_output(sheet, stage, out)
