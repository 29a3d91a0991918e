"""The output buffer: a follower that drives the cable and the amplifier from a low impedance.

Two variants, chosen by the part in the ``follower`` role: a transistor (an emitter follower,
its base biased by a divider across the supply) or an op-amp section (a unity-gain follower,
its + input biased to the mid-rail reference). Either ends in the output cap, an optional
pulldown and an optional series resistor, which keeps a long cable's capacitance or a shorted
jack from loading the follower itself.
"""

from __future__ import annotations

from types import MappingProxyType

from kitleaf.circuit.drawing import Sheet
from kitleaf.circuit.kind import Role, Stage, StageKind, TestPoint
from kitleaf.circuit.parts import Part
from kitleaf.circuit.stages import register
from kitleaf.circuit.stages._opamp import PLUS_Y, draw_biased_input, place_biased_input, row_y
from kitleaf.circuit.stages._shared import (
    capacitor_role,
    check_family,
    is_flipped,
    need_role,
    opamp_pins,
    opamp_test_points,
    refuse_role,
    resistor_role,
    transistor_test_points,
)
from kitleaf.circuit.stages.common_emitter import transistor_rails

ROLES = (
    capacitor_role("input-cap", "coupling capacitor from the stage input to the follower"),
    Role("follower", ("bjt", "opamp"),
         help="the follower: a transistor (Q5 2N3904, an emitter follower) or an op-amp "
              "section (U2B TL072, an op-amp follower)"),
    resistor_role("bias-top", "transistor follower: upper bias resistor, VCC to base",
                  required=False),
    resistor_role("bias-bottom", "transistor follower: lower bias resistor, base to ground",
                  required=False),
    resistor_role("emitter", "transistor follower: emitter load resistor", required=False),
    resistor_role("bias", "op-amp follower: from the + input to the reference VREF",
                  required=False),
    capacitor_role("output-cap", "coupling capacitor from the follower's output"),
    resistor_role("pulldown", "from the output cap to ground: keeps it charged, no pop",
                  required=False),
    resistor_role("output-resistor", "in series with the output jack: the follower stays "
                  "stable into a long cable and survives a shorted jack", required=False),
)


def is_opamp(stage: Stage) -> bool:
    return stage.part("follower").type == "opamp"


@register
class OutputBuffer(StageKind):
    name = "output-buffer"
    summary = "output buffer: an emitter follower or an op-amp follower, a series resistor"
    roles = ROLES
    variant_role = "follower"
    variant_roles = MappingProxyType({"bjt": ("bias-top", "bias-bottom", "emitter"),
                                      "opamp": ("bias",)})
    VARIANT_NAMES = MappingProxyType({"bjt": "a transistor follower",
                                      "opamp": "an op-amp follower"})

    def needs_reference_for(self, stage: Stage) -> bool:
        return is_opamp(stage)

    def build(self, stage: Stage, wiring) -> None:
        part = stage.part
        if is_opamp(stage):
            place_biased_input(stage, wiring, minus="o", device="follower")
            node = "o"
        else:
            collector, emitter_rail = transistor_rails(is_flipped(stage, "follower"))
            wiring.place(part("input-cap"), "in", "b")
            wiring.place(part("bias-top"), "vcc", "b")
            wiring.place(part("bias-bottom"), "b", "0")
            wiring.place(part("follower"), collector, "b", "e")
            wiring.place(part("emitter"), "e", emitter_rail)
            node = "e"
        after = "oc" if part("output-resistor") else "out"
        wiring.place(part("output-cap"), node, after)
        wiring.place(part("pulldown"), after, "0")
        wiring.place(part("output-resistor"), after, "out")

    def check(self, stage: Stage) -> None:
        check_family(stage, "follower", ("npn", "pnp", "opamp"))
        mine = stage.part("follower").type
        variant = self.VARIANT_NAMES[mine]
        for role in self.variant_roles[mine]:
            need_role(stage, role, f"as {variant}")
        for other, roles in self.variant_roles.items():
            for role in roles if other != mine else ():
                refuse_role(stage, role, f"{variant} has no '{role}'")

    def test_points(self, stage: Stage) -> tuple[TestPoint, ...]:
        device = stage.part("follower")
        if is_opamp(stage):
            return opamp_test_points(device, "p", "o", "o")
        collector = transistor_rails(is_flipped(stage, "follower"))[0]
        return transistor_test_points(device, {"base": "b", "collector": collector,
                                               "emitter": "e"})

    def draw(self, stage: Stage, sheet: Sheet) -> None:
        from kitleaf.circuit.stages._drawing import (
            TransistorDrawing,
            draw_transistor_stage,
            draw_volume_out,
        )

        part = stage.part
        if not is_opamp(stage):
            draw_transistor_stage(sheet, TransistorDrawing(
                "pnp" if is_flipped(stage, "follower") else "npn", part("follower"),
                part("input-cap"), part("bias-top"), part("bias-bottom"), None,
                part("emitter"), (), "lower", part("output-cap"), None, part("pulldown"),
                output_resistor=part("output-resistor")))
            return
        draw_biased_input(sheet, stage)
        x, y = draw_follower_loop(sheet, part("follower"))
        sheet.part(part("output-cap"), (x, y), (x + 2.2, y))
        draw_volume_out(sheet, None, (x + 2.2, y), x + 4.0, part("pulldown"),
                        series=part("output-resistor"))


def draw_follower_loop(sheet: Sheet, opamp: Part) -> tuple[float, float]:
    """The op-amp with its output wired back to its - input, under the body; returns the
    output node, where the output network starts."""
    pins = sheet.opamp(opamp, (4.6, PLUS_Y), opamp_pins(opamp))
    minus, out = pins["inv"], pins["out"]
    node = (out[0] + 0.8, out[1])
    below = row_y(pins, 0)
    sheet.wire(out, node)
    sheet.wire(minus, (minus[0], below), (node[0], below), node)
    sheet.dot(node)
    return node
