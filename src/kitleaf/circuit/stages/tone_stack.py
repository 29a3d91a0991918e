"""The passive three-knob tone stack: treble, mid and bass pots around three capacitors.

The input feeds two paths. The small treble cap drives the top of the treble pot, whose wiper
is the output. The slope resistor drives the bass cap (to the bottom of the treble pot) and
the mid cap (to the mid pot's wiper); the bass pot, a variable resistor, joins the treble pot's
bottom to the top of the mid pot, whose other end is grounded. With every knob at half way the
stack scoops the middle of the band and loses 10 to 20 dB; it wants a low-impedance driver
and a high-impedance load. A fixed resistor under the mid pot keeps the scoop from its full
depth; without a mid pot, the resistor is the whole mid control (a two-knob stack).
"""

from __future__ import annotations

from kitleaf.circuit.drawing import GROUND_Y, Point, Sheet
from kitleaf.circuit.kind import Role, Stage, StageKind, TestPoint
from kitleaf.circuit.stages import register
from kitleaf.circuit.stages._shared import capacitor_role, resistor_role, rheostat
from kitleaf.errors import CircuitError

ROLES = (
    capacitor_role("treble-cap", "small cap from the input to the top (cw end) of the treble pot"),
    resistor_role("slope", "slope resistor from the input to the bass and mid caps"),
    Role("treble", ("pot",), help="treble pot: cw end to the treble cap, wiper is the output"),
    capacitor_role("bass-cap", "from the slope resistor to the bottom of the treble pot"),
    Role("bass", ("pot",), help="bass pot, a variable resistor from the bottom of the treble pot "
                                "to the mid control; more bass clockwise"),
    capacitor_role("mid-cap", "from the slope resistor to the mid pot's wiper"),
    Role("mid", ("pot",), required=False,
         help="mid pot: cw end to the bass pot, wiper to the mid cap, ccw end to ground (or "
              "to the mid resistor)"),
    resistor_role("mid-resistor", "fixed resistor to ground: under the mid pot it limits the "
                                  "scoop; without one it is the whole mid control",
                  required=False),
)

# Drawing columns and rows, in grid units.
LEFT_X, POT_X = 1.2, 6.0
TOP_Y, JOIN_Y, MID_TOP_Y, MID_FOOT_Y = 12.0, 8.2, 5.0, 2.4


@register
class ToneStack(StageKind):
    name = "tone-stack"
    summary = "passive three-knob tone stack: treble, mid and bass"
    roles = ROLES
    shapes_response = True
    passband = False

    def build(self, stage: Stage, wiring) -> None:
        part = stage.part
        wiring.place(part("treble-cap"), "in", "t")
        wiring.place(part("treble"), "b", "out", "t")  # ccw, wiper, cw
        wiring.place(part("slope"), "in", "a")
        wiring.place(part("bass-cap"), "a", "b")
        rheostat(wiring, part("bass"), "b", "m")  # more resistance, more bass, clockwise
        fixed = part("mid-resistor")
        if part("mid") is not None:
            foot = "f" if fixed else "0"
            wiring.place(part("mid"), foot, "w", "m")
            wiring.place(fixed, foot, "0")
            wiring.place(part("mid-cap"), "a", "w")
        else:
            wiring.place(fixed, "m", "0")
            wiring.place(part("mid-cap"), "a", "m")

    def check(self, stage: Stage) -> None:
        if stage.part("mid") is None and stage.part("mid-resistor") is None:
            raise CircuitError(
                f"stage '{stage.id}' (tone-stack) has no mid control; add a pot "
                "'mid: VR3 B25k' or a fixed resistor 'mid-resistor: R5 10k'", stage.span)

    def test_points(self, stage: Stage) -> tuple[TestPoint, ...]:
        return (TestPoint("stack output (0 V DC)", "out"),)

    def draw(self, stage: Stage, sheet: Sheet) -> None:
        part = stage.part
        node_in, node_a = (LEFT_X, TOP_Y), (LEFT_X, JOIN_Y)
        sheet.port((0.0, TOP_Y), "IN", "left")
        sheet.wire((0.0, TOP_Y), node_in)
        sheet.dot(node_in)
        sheet.part(part("treble-cap"), node_in, (4.2, TOP_Y))
        sheet.wire((4.2, TOP_Y), (POT_X, TOP_Y))
        wiper = sheet.pot(part("treble"), (POT_X, JOIN_Y + 0.8), (POT_X, TOP_Y), side="left",
                          wiper_right=True)
        sheet.wire(wiper, (POT_X + 1.8, wiper[1]))
        sheet.port((POT_X + 1.8, wiper[1]), "OUT", "right")
        sheet.part(part("slope"), node_in, node_a, side="left")
        node_b = (POT_X, JOIN_Y)
        sheet.wire((POT_X, JOIN_Y + 0.8), node_b)
        sheet.part(part("bass-cap"), node_a, (4.2, JOIN_Y))
        sheet.wire((4.2, JOIN_Y), node_b)
        sheet.dot(node_b)
        sheet.rheostat(part("bass"), node_b, (POT_X, MID_TOP_Y), side="right")
        self._draw_mid(stage, sheet, node_a)

    def _draw_mid(self, stage: Stage, sheet: Sheet, node_a: Point) -> None:
        """The mid pot (or resistor) from the bass pot down to ground, the mid cap into it."""
        top, bottom = (POT_X, MID_TOP_Y), (POT_X, GROUND_Y)
        sheet.dot(top)  # the bass pot, its wiper's tie and the mid control meet here
        pot, fixed = stage.part("mid"), stage.part("mid-resistor")
        if pot is not None:
            foot = (POT_X, MID_FOOT_Y) if fixed else bottom
            into = sheet.pot(pot, foot, top, side="right")
            sheet.part(fixed, foot, bottom, side="right")
        else:  # the mid cap joins below the tie, so the two wires do not run together
            into = (POT_X, MID_TOP_Y - 0.8)
            sheet.wire(top, into)
            sheet.dot(into)
            sheet.part(fixed, into, bottom, side="right")
        sheet.ground(bottom)
        sheet.dot(node_a)
        sheet.wire(node_a, (LEFT_X, into[1]))
        sheet.part(stage.part("mid-cap"), (LEFT_X, into[1]), (4.2, into[1]))
        sheet.wire((4.2, into[1]), into)
