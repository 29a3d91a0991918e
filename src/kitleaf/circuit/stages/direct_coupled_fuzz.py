"""The two-transistor direct-coupled fuzz: two gain stages in a row with one DC feedback loop.

The first transistor's emitter goes straight to ground and its collector straight to the
second transistor's base, with no coupling cap between them. A resistor from the second
transistor's emitter back to the first one's base closes the loop: if the current rises, the
second emitter climbs, the first base gets more current, the first collector pulls the second
base down again. So the loop, not a divider, sets both operating points. For the signal, the
cap (through the gain pot) from the second emitter to ground lifts the second stage's gain,
and both stages overdrive into a square-ish fuzz. The output is taken from the second
collector. A PNP pair is wired mirror-image on the same positive rail.
"""

from __future__ import annotations

from kitleaf.circuit.drawing import GROUND_Y, RAIL_Y, Point, Sheet
from kitleaf.circuit.kind import Role, Stage, StageKind, TestPoint
from kitleaf.circuit.stages import register
from kitleaf.circuit.stages._shared import (
    FAMILY_NAMES,
    OUTPUT_COUPLING,
    capacitor_role,
    check_family,
    check_output,
    family,
    is_flipped,
    output_roles,
    place_output,
    resistor_role,
    series,
    transistor_test_points,
)
from kitleaf.circuit.stages.common_emitter import transistor_rails
from kitleaf.errors import CircuitError

ROLES = (
    capacitor_role("input-cap", "coupling capacitor from the stage input to the first base"),
    Role("input-transistor", ("bjt",), help="the first transistor, emitter to ground"),
    resistor_role("input-collector", "first collector's load, VCC to the first collector "
                  "(which is the second base)"),
    Role("output-transistor", ("bjt",), help="the second transistor, of the same polarity"),
    resistor_role("output-collector", "second collector's load; the output is taken here"),
    resistor_role("output-emitter", "second emitter resistor to ground"),
    resistor_role("feedback", "from the second emitter back to the first base: sets the bias"),
    Role("gain", ("pot",), required=False,
         help="pot in series with the bypass cap, wired so clockwise gives more gain"),
    capacitor_role("bypass-cap", "from the second emitter to ground: raises the gain",
                   required=False),
    *output_roles("the second collector"),
)


@register
class DirectCoupledFuzz(StageKind):
    name = "direct-coupled-fuzz"
    summary = "two-transistor fuzz: direct-coupled pair, DC feedback from the second emitter"
    roles = ROLES
    options = (OUTPUT_COUPLING,)
    clips = True

    def build(self, stage: Stage, wiring) -> None:
        collector_rail, emitter_rail = transistor_rails(is_flipped(stage, "input-transistor"))
        part = stage.part
        wiring.place(part("input-cap"), "in", "b1")
        wiring.place(part("input-transistor"), "c1", "b1", emitter_rail)
        wiring.place(part("input-collector"), collector_rail, "c1")
        wiring.place(part("output-transistor"), "c2", "c1", "e2")
        wiring.place(part("output-collector"), collector_rail, "c2")
        wiring.place(part("output-emitter"), "e2", emitter_rail)
        wiring.place(part("feedback"), "e2", "b1")
        if part("bypass-cap") is not None:
            series(wiring, [(part("gain"), False), (part("bypass-cap"), True)], "e2",
                   emitter_rail, "by")
        place_output(stage, wiring, "c2")

    def check(self, stage: Stage) -> None:
        check_family(stage, "input-transistor", ("npn", "pnp"))
        check_family(stage, "output-transistor", ("npn", "pnp"))
        check_output(stage, self.name)
        first, second = stage.part("input-transistor"), stage.part("output-transistor")
        if family(first) != family(second):
            raise CircuitError(
                f"stage '{stage.id}', role 'output-transistor': {second.designator} is a "
                f"{FAMILY_NAMES[family(second)]} but {first.designator} is a "
                f"{FAMILY_NAMES[family(first)]}; this kind takes two of the same polarity",
                second.span)
        if stage.part("gain") is not None and stage.part("bypass-cap") is None:
            raise CircuitError(
                f"stage '{stage.id}', role 'gain': {stage.part('gain').designator} works "
                "through the bypass cap; add a line 'bypass-cap: ...'", stage.part("gain").span)

    def test_points(self, stage: Stage) -> tuple[TestPoint, ...]:
        emitter_rail = transistor_rails(is_flipped(stage, "input-transistor"))[1]
        return (transistor_test_points(stage.part("input-transistor"),
                                       {"base": "b1", "collector": "c1",
                                        "emitter": emitter_rail})
                + transistor_test_points(stage.part("output-transistor"),
                                         {"base": "c1", "collector": "c2", "emitter": "e2"}))

    def draw(self, stage: Stage, sheet: Sheet) -> None:
        FuzzDrawing(stage, sheet, is_flipped(stage, "input-transistor")).draw()


class FuzzDrawing:
    """The pair side by side: the first transistor low on the left, the second higher on the
    right, the feedback resistor along the bottom from the second emitter to the first base,
    the bypass network right of the second emitter and the output network further right.
    Heights are given for an NPN pair; a PNP pair is drawn upside down (emitters to VCC)."""

    FIRST_BASE = (4.6, 4.0)
    SECOND_BASE_X = 7.0
    JOINT_Y = 6.6  # first collector, second base
    FEEDBACK_Y = 1.6

    def __init__(self, stage: Stage, sheet: Sheet, mirrored: bool) -> None:
        self.stage, self.sheet, self.mirrored = stage, sheet, mirrored
        self.family = "pnp" if mirrored else "npn"

    def y(self, y: float) -> float:
        return RAIL_Y + GROUND_Y - y if self.mirrored else y

    def at(self, x: float, y: float) -> Point:
        return (x, self.y(y))

    def draw(self) -> None:
        first = self._first()
        emitter = self._second()
        self._feedback(first, emitter)
        right = self._bypass(emitter)
        self._output(right)

    def _first(self) -> Point:
        """Input cap, first transistor; returns the first base's node."""
        sheet, part = self.sheet, self.stage.part
        y = self.FIRST_BASE[1]
        sheet.port(self.at(0.0, y), "IN", "left")
        sheet.part(part("input-cap"), self.at(0.0, y), self.at(2.2, y), plus=self.at(2.2, y))
        node = self.at(3.4, y)
        sheet.wire(self.at(2.2, y), node, self.at(*self.FIRST_BASE))
        sheet.dot(node)
        pins = sheet.transistor(part("input-transistor"), self.family,
                                self.at(*self.FIRST_BASE), mirror=self.mirrored)
        x = pins["emitter"][0]
        end = self.at(x, self.y(pins["emitter"][1]) - 0.4)
        sheet.wire(pins["emitter"], end)
        (sheet.rail if self.mirrored else sheet.ground)(end)
        joint = self.at(x, self.JOINT_Y)
        sheet.wire(pins["collector"], joint, self.at(self.SECOND_BASE_X, self.JOINT_Y))
        sheet.dot(joint)
        self._to_rail(part("input-collector"), joint)
        return node

    def _second(self) -> Point:
        """Second transistor and its collector load; returns its emitter node."""
        sheet, part = self.sheet, self.stage.part
        pins = sheet.transistor(part("output-transistor"), self.family,
                                self.at(self.SECOND_BASE_X, self.JOINT_Y), mirror=self.mirrored)
        x = pins["collector"][0]
        self.collector = self.at(x, 8.0)
        sheet.wire(pins["collector"], self.collector)
        sheet.dot(self.collector)
        self._to_rail(part("output-collector"), self.collector)
        emitter = self.at(x, 4.9)
        sheet.wire(pins["emitter"], emitter)
        sheet.dot(emitter)
        return emitter

    def _to_rail(self, resistor, start: Point) -> None:
        end = self.at(start[0], RAIL_Y)
        self.sheet.part(resistor, start, end, side="left")
        self.sheet.terminal(end)

    def _feedback(self, base: Point, emitter: Point) -> None:
        """Down from the second emitter, left under the first transistor, up to its base."""
        sheet = self.sheet
        low_right, low_left = self.at(emitter[0], self.FEEDBACK_Y), self.at(base[0],
                                                                            self.FEEDBACK_Y)
        sheet.wire(emitter, low_right, self.at(emitter[0] - 0.6, self.FEEDBACK_Y))
        sheet.part(self.stage.part("feedback"), self.at(emitter[0] - 0.6, self.FEEDBACK_Y),
                   self.at(base[0] + 1.2, self.FEEDBACK_Y),
                   side="above" if self.mirrored else "below")
        sheet.wire(self.at(base[0] + 1.2, self.FEEDBACK_Y), low_left, base)

    def _bypass(self, emitter: Point) -> float:
        """The emitter resistor, then the gain pot and bypass cap down to the emitter's
        return; returns the x right of them, where the output network may start."""
        sheet, part = self.sheet, self.stage.part
        column = emitter[0] + 1.6
        top = (column, emitter[1])
        sheet.wire(emitter, top)
        end = self.at(column, GROUND_Y)
        sheet.part(part("output-emitter"), top, end, side="right")
        sheet.terminal(end)
        chain = [p for p in (part("gain"), part("bypass-cap")) if p]
        if not chain:
            return column + 1.4
        sheet.dot(top)
        x = column + 2.2
        sheet.wire(top, (x, top[1]))
        step = (4.9 - GROUND_Y) / len(chain)
        for i, p in enumerate(chain):
            a, b = self.at(x, 4.9 - step * i), self.at(x, 4.9 - step * (i + 1))
            if p.type == "pot":
                sheet.rheostat(p, a, b, side="right", grows=False)  # clockwise, more gain
            else:
                sheet.part(p, a, b, side="right", plus=b if self.mirrored else a)
        sheet.terminal(self.at(x, GROUND_Y))
        return x + 1.6

    def _output(self, right: float) -> None:
        from kitleaf.circuit.stages._drawing import draw_volume_out

        part, (x, y) = self.stage.part, self.collector
        start = max(right, x + 1.0)
        self.sheet.wire(self.collector, (start, y))
        if part("output-cap") is None:  # a direct output
            self.sheet.wire((start, y), (start + 2.2, y))
        self.sheet.part(part("output-cap"), (start, y), (start + 2.2, y))
        draw_volume_out(self.sheet, part("volume"), (start + 2.2, y), start + 4.2,
                        part("pulldown"))
