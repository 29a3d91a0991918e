"""The non-inverting op-amp on a single supply: the + input biased to the mid-rail reference.

Gain at mid band is 1 + Rf / (Rg + pot); the gain cap in the ground leg keeps the DC gain at
one, so the output sits at the reference. With ``gain-return: vref`` the leg ends at the
reference instead, which already holds the output there: the gain cap is then optional (the
reference then carries the leg's signal current, so it wants its smoothing cap).
"""

from __future__ import annotations

from kitleaf.circuit.drawing import Sheet
from kitleaf.circuit.kind import Option, Role, Stage, TestPoint
from kitleaf.circuit.stages import register
from kitleaf.circuit.stages._opamp import (
    BIASED_INPUT_ROLES,
    OpampKind,
    draw_biased_input,
    draw_opamp_core,
    draw_output,
    feedback_rows,
    place_biased_input,
)
from kitleaf.circuit.stages._shared import (
    capacitor_role,
    opamp_test_points,
    output_roles,
    place_output,
    resistor_role,
    series,
)
from kitleaf.errors import CircuitError

# Where the gain leg (Rg, the gain pot, the gain cap) ends.
GAIN_RETURN = Option(
    "gain-return", ("ground", "vref"), "ground",
    help="ground: the leg ends at ground through the gain cap; vref: at the mid-rail "
         "reference, which holds the output there without a gain cap")

ROLES = (
    *BIASED_INPUT_ROLES,
    resistor_role("feedback", "feedback resistor Rf, output to - input"),
    capacitor_role("feedback-cap", "across Rf: rolls off the highs", required=False),
    resistor_role("gain-resistor", "Rg, from the - input towards ground; sets the top gain"),
    Role("gain", ("pot",), required=False,
         help="pot in series with Rg, wired so clockwise gives more gain"),
    capacitor_role("gain-cap", "in series with Rg to ground: unity gain at DC (optional with "
                   "'gain-return: vref')", required=False),
    *output_roles("the op-amp output"),
)


@register
class OpampNonInverting(OpampKind):
    name = "opamp-non-inverting"
    summary = "op-amp gain stage, gain 1 + Rf/Rg, on a single supply with a mid-rail reference"
    roles = ROLES
    options = (*OpampKind.options, GAIN_RETURN)

    def check(self, stage: Stage) -> None:
        super().check(stage)
        if stage.options["gain-return"] == "ground" and stage.part("gain-cap") is None:
            raise CircuitError(
                f"stage '{stage.id}' ({self.name}) is missing its 'gain-cap' part (in series "
                "with Rg to ground: unity gain at DC); add a line 'gain-cap: ...', or return "
                "the leg to the reference with 'gain-return: vref'", stage.span)

    def build(self, stage: Stage, wiring) -> None:
        part = stage.part
        place_biased_input(stage, wiring)
        wiring.place(part("feedback"), "o", "m")
        wiring.place(part("feedback-cap"), "o", "m")
        chain = [(part("gain-resistor"), True), (part("gain"), False), (part("gain-cap"), True)]
        end = "vref" if stage.options["gain-return"] == "vref" else "0"
        series(wiring, chain, "m", end, "leg")  # the gain pot: less resistance clockwise
        place_output(stage, wiring, "o")

    def test_points(self, stage: Stage) -> tuple[TestPoint, ...]:
        return opamp_test_points(stage.part("opamp"), "p", "m", "o")

    def draw(self, stage: Stage, sheet: Sheet) -> None:
        part = stage.part
        draw_biased_input(sheet, stage)
        leg = [p for p in (part("gain-resistor"), part("gain"), part("gain-cap")) if p]
        _, out = draw_opamp_core(sheet, stage, feedback_rows(stage, False), leg,
                                 "vref" if stage.options["gain-return"] == "vref" else "0")
        draw_output(sheet, stage, out)
