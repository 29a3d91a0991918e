"""The unused half of a dual op-amp, made quiet: wired as a follower, its + input tied to a
stated node, so it neither floats nor oscillates, and drawing its quiescent current as the
chip does (common practice, no source: tie an unused section as a follower to mid-supply).
"""

from __future__ import annotations

from kitleaf.circuit.drawing import GROUND_Y, SIGNAL_Y, Sheet
from kitleaf.circuit.kind import Option, Role, Stage, StageKind, TestPoint
from kitleaf.circuit.stages import register
from kitleaf.circuit.stages._shared import check_family, opamp_pins, opamp_test_points
from kitleaf.errors import CircuitError

# Where the + input may be tied, and the local node that stands for it.
TIES = {"vref": "vref", "ground": "0"}


@register
class OpampSpare(StageKind):
    name = "opamp-spare"
    summary = "the unused half of a dual op-amp, a follower with its + input tied to a node"
    roles = (Role("opamp", ("opamp",),
                  help="the unused section, e.g. U1B TL072 beside a stage using U1A"),)
    options = (Option("tie", tuple(TIES), "",
                      help="the node its + input is tied to (required): vref, the mid-rail "
                           "reference, keeps it in its input range on a single supply; ground "
                           "suits only an op-amp whose inputs reach the negative rail"),)
    signal = False

    def check(self, stage: Stage) -> None:
        check_family(stage, "opamp", ("opamp",))
        if not stage.options["tie"]:
            raise CircuitError(f"stage '{stage.id}' (opamp-spare) must say where the unused "
                               f"inputs are tied: add 'tie: vref' (or 'tie: ground')",
                               stage.span)

    def build(self, stage: Stage, wiring) -> None:
        wiring.place(stage.part("opamp"), TIES[stage.options["tie"]], "o", "o", "vcc", "0")

    def test_points(self, stage: Stage) -> tuple[TestPoint, ...]:
        return opamp_test_points(stage.part("opamp"), TIES[stage.options["tie"]], "o", "o")

    def draw(self, stage: Stage, sheet: Sheet) -> None:
        opamp = stage.part("opamp")
        plus = (2.0, SIGNAL_Y)
        pins = sheet.opamp(opamp, plus, opamp_pins(opamp))
        minus, out = pins["inv"], pins["out"]
        loop_y = minus[1] - 1.2
        sheet.wire(minus, (minus[0], loop_y), (out[0] + 0.6, loop_y), (out[0] + 0.6, out[1]),
                   out)
        if stage.options["tie"] == "vref":
            sheet.wire(plus, (0.6, plus[1]))
            sheet.net_label((0.6, plus[1]), "vref", "left")
        else:
            sheet.wire(plus, (0.6, plus[1]), (0.6, GROUND_Y))
            sheet.ground((0.6, GROUND_Y))
