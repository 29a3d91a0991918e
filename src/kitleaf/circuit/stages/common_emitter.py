"""The common-emitter BJT amplifier: divider bias, emitter resistor, optional bypass and volume.

A PNP part is wired mirror-image on the same positive rail: its emitter resistor goes to VCC
and its collector resistor to ground, so a positive-ground original runs from the kit's
ordinary negative-ground supply (the ground of the original is our VCC).
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
    series,
    transistor_test_points,
)

ROLES = (
    capacitor_role("input-cap", "coupling capacitor from the stage input to the base"),
    resistor_role("bias-top", "upper bias resistor, VCC to base"),
    resistor_role("bias-bottom", "lower bias resistor, base to ground"),
    Role("transistor", ("bjt",), help="the NPN or PNP transistor, e.g. Q1 2N5089"),
    resistor_role("collector", "collector load resistor"),
    resistor_role("emitter", "emitter resistor (sets the DC bias current)"),
    capacitor_role("bypass-cap", "emitter bypass capacitor: raises the gain", required=False),
    resistor_role("bypass-resistor", "in series with the bypass cap: a partial bypass",
                  required=False),
    Role("gain", ("pot",), required=False,
         help="pot in series with the bypass cap, wired so clockwise gives more gain"),
    *output_roles("the collector"),
)


def transistor_rails(flipped: bool) -> tuple[str, str]:
    """The nets the collector and the emitter sides return to (mirrored for PNP)."""
    return ("0", "vcc") if flipped else ("vcc", "0")


@register
class CommonEmitter(StageKind):
    name = "common-emitter"
    summary = "BJT gain stage: divider bias, emitter degeneration, optional bypass and volume"
    roles = ROLES
    options = (OUTPUT_COUPLING,)

    def build(self, stage: Stage, wiring) -> None:
        collector_rail, emitter_rail = transistor_rails(is_flipped(stage, "transistor"))
        part = stage.part
        wiring.place(part("input-cap"), "in", "b")
        wiring.place(part("bias-top"), "vcc", "b")
        wiring.place(part("bias-bottom"), "b", "0")
        wiring.place(part("transistor"), "c", "b", "e")
        wiring.place(part("collector"), collector_rail, "c")
        wiring.place(part("emitter"), "e", emitter_rail)
        self._bypass(stage, wiring, emitter_rail)
        place_output(stage, wiring, "c")

    def _bypass(self, stage: Stage, wiring, rail: str) -> None:
        if stage.part("bypass-cap") is None:
            return
        chain = [(stage.part("bypass-resistor"), True), (stage.part("gain"), False),
                 (stage.part("bypass-cap"), True)]
        series(wiring, chain, "e", rail, "bypass")  # the gain pot: less resistance clockwise

    def check(self, stage: Stage) -> None:
        check_family(stage, "transistor", ("npn", "pnp"))
        check_output(stage, self.name)
        require_together(stage, "bypass-resistor", "bypass-cap")
        require_together(stage, "gain", "bypass-cap")

    def test_points(self, stage: Stage) -> tuple[TestPoint, ...]:
        return transistor_test_points(stage.part("transistor"),
                                      {"base": "b", "collector": "c", "emitter": "e"})

    def draw(self, stage: Stage, sheet: Sheet) -> None:
        from kitleaf.circuit.stages._drawing import TransistorDrawing, draw_transistor_stage

        part = stage.part
        bypass = tuple(p for p in (part("bypass-resistor"), part("gain"), part("bypass-cap")) if p)
        device = part("transistor")
        draw_transistor_stage(sheet, TransistorDrawing(
            ("pnp" if is_flipped(stage, "transistor") else "npn"), device,
            part("input-cap"), part("bias-top"), part("bias-bottom"), part("collector"),
            part("emitter"), bypass, "upper", part("output-cap"), part("volume"), part("pulldown")))
