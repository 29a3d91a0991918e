"""Drawing the soft-clip drive's diode network under its feedback rows: the diode stacks, the
series resistor and, when the pair is switched, the switch choosing between the pairs.

Every stack is one row between the - input's column on the left and a bus on the right (the
knee, where the stacks' first diodes meet); a series resistor joins the output's column to the
knee. With a switch, each pair has its own bus, and the switch's common takes the knee.
"""

from __future__ import annotations

from collections.abc import Sequence

from kitleaf.circuit.drawing import Point, Sheet
from kitleaf.circuit.parts import Part
from kitleaf.circuit.stages._opamp import ROW_GAP
from kitleaf.circuit.switches import form_of

Stack = tuple[tuple[Part, ...], bool]  # the diodes, first at the knee; anode towards the knee
STEP = 2.2  # a diode's length along its row
THROW_GAP = 1.2  # the switch's rows above and below its common, between the pairs
COMMON = 2.0  # from the buses to the switch's common: room for its label
LED_GAP = 2.2  # between rows holding LEDs: their light arrows stand out of the row


def clip_width(groups: Sequence[Sequence[Stack]], series: Part | None, switched: bool) -> float:
    """How wide the network is, from the - input's column to the output's."""
    longest = max(len(parts) for group in groups for parts, _ in group)
    return STEP * longest + (COMMON + 0.6 if switched else 0.0) + (STEP + 0.2 if series else 0.0)


def draw_clip_network(sheet: Sheet, groups: Sequence[Sequence[Stack]], series: Part | None,
                      switch: Part | None, top: Point, right: float) -> float:
    """The network below the feedback rows: ``top`` is the - input's lowest feedback
    junction, ``right`` the output's column. Returns the height of the lowest row."""
    left, y0 = top
    longest = max(len(parts) for group in groups for parts, _ in group)
    bus = left + STEP * longest
    sheet.dot(top)
    sheet.dot((right, y0))
    if switch is None:
        knee_y = y0 - _gap(groups[0])
        ys = _group(sheet, groups[0], left, bus, knee_y, knee_y)
        _knee(sheet, series, (right, y0), (right, knee_y), bus)
        if len(ys) > 1:  # the knee: the top row, the bus down and the way in from the output
            sheet.dot((bus, knee_y))
    else:
        ys = _switched(sheet, groups, series, switch, (left, y0), bus, right)
    sheet.wire(top, (left, ys[-1]))
    for y in ys[:-1]:
        sheet.dot((left, y))
    return ys[-1]


def _switched(sheet: Sheet, groups, series, switch: Part, top: Point, bus: float,
              right: float) -> list[float]:
    """Both pairs, each on its own bus, the switch between them; returns every row's height."""
    left, y0 = top
    first = _rows(groups[0], y0 - _gap(groups[0]))
    common = (bus + COMMON, first[-1] - THROW_GAP)
    throws: list[Point | None] = [None] * form_of(switch).throw_count
    throws[0] = (bus, common[1] + 0.5)
    ys = _group(sheet, groups[0], left, bus, first[0], throws[0][1])
    if len(groups) > 1 and groups[1]:
        second_top = common[1] - max(THROW_GAP, _gap(groups[1]) - 0.4)
        throws[1] = (bus, common[1] - 0.5)
        ys += _group(sheet, groups[1], left, bus, second_top, throws[1][1])
    sheet.switch(switch, 1, common, throws)
    _knee(sheet, series, (right, y0), (right, common[1]), common[0])
    return ys


def _gap(stacks: Sequence[Stack]) -> float:
    """Between the rows of a group: wider where an LED's arrows stand out."""
    return LED_GAP if any(p.type == "led" for parts, _ in stacks for p in parts) else ROW_GAP


def _rows(stacks: Sequence[Stack], first: float) -> list[float]:
    return [first - _gap(stacks) * i for i in range(len(stacks))]


def _group(sheet: Sheet, stacks: Sequence[Stack], left: float, bus: float, first: float,
           end: float) -> list[float]:
    """One pair's stacks, a row each from ``first`` down, and their bus on to ``end``."""
    ys = _rows(stacks, first)
    for (parts, anode_right), y in zip(stacks, ys, strict=True):
        step = (bus - left) / len(parts)
        # an LED drawn right to left has its arrows below: its label goes above
        side = "above" if anode_right and any(p.type == "led" for p in parts) else "below"
        for i, diode in enumerate(parts):  # the first diode of a stack at the knee's end
            a, b = (bus - step * (i + 1), y), (bus - step * i, y)
            sheet.part(diode, *((b, a) if anode_right else (a, b)), side=side)
    reach = [y for y in (ys[0], ys[-1], end)]
    if max(reach) > min(reach):
        sheet.wire((bus, max(reach)), (bus, min(reach)))
    for y in ys:
        if min(reach) < y < max(reach):
            sheet.dot((bus, y))
    return ys


def _knee(sheet: Sheet, series: Part | None, corner: Point, low: Point, knee_x: float) -> None:
    """Down the output's column from ``corner`` to ``low``, then left to the knee, through the
    series resistor when there is one."""
    sheet.wire(corner, low)
    x, y = low
    if series is None:
        if knee_x != x:
            sheet.wire(low, (knee_x, y))
        return
    sheet.part(series, low, (x - STEP, y), side="below")
    sheet.wire((x - STEP, y), (knee_x, y))
