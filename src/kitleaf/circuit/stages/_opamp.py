"""What the two op-amp kinds share: the output network and the feedback-loop drawing."""

from __future__ import annotations

from collections.abc import Sequence

from kitleaf.circuit.drawing import GROUND_Y, Sheet
from kitleaf.circuit.kind import Stage, StageKind
from kitleaf.circuit.parts import Part
from kitleaf.circuit.stages._shared import (
    OUTPUT_COUPLING,
    check_family,
    check_output,
    opamp_pins,
)


class OpampKind(StageKind):
    """What both op-amp kinds are: a section of an op-amp swinging about the mid-rail
    reference, with a gain pot and a volume pot a player may turn."""

    needs_reference = True
    options = (OUTPUT_COUPLING,)

    def check(self, stage: Stage) -> None:
        check_family(stage, "opamp", ("opamp",))
        check_output(stage, self.name)

    def knob_roles(self) -> tuple[str, ...]:
        return ("gain", "volume")


PLUS_Y = 8.0  # the + input's row; the - input sits 1.25 below it
ROW_GAP = 1.6  # between the parallel rows of the feedback network
TIE_ROOM = 0.6  # between a pot's tied end and the wire down the row's end


def feedback_rows(stage: Stage, with_gain: bool) -> list[list[Part]]:
    """The feedback resistor (and the gain pot in series, if asked), then the feedback cap."""
    gain = stage.part("gain") if with_gain else None
    rows = [[p for p in (stage.part("feedback"), gain) if p]]
    if stage.part("feedback-cap"):
        rows.append([stage.part("feedback-cap")])
    return rows


def draw_opamp_core(sheet: Sheet, stage: Stage, rows: list[list[Part]], leg: Sequence[Part],
                    leg_to: str = "0") -> tuple[dict, tuple]:
    """The op-amp, its feedback ``rows`` below it, and the ``leg`` from the - input to ground
    (``leg_to`` "vref": to the reference).

    Returns the op-amp pins and the output node, where the output network starts.
    """
    opamp = stage.part("opamp")
    pins = sheet.opamp(opamp, (4.6, PLUS_Y), _shown_pins(opamp))
    minus = pins["inv"]
    width = max(2.4, 2.2 * max(len(r) for r in rows))
    right = max(pins["out"][0] + 0.6, minus[0] + width)
    top_y = minus[1] - 1.7
    for i, row in enumerate(rows):
        y = top_y - ROW_GAP * i
        ends = ((minus[0], y), (right, y))
        # drawn as the kinds wire them: resistor and pot from the - input, the cap from the output
        _row(sheet, row, *(ends[::-1] if row[0].type == "capacitor" else ends))
    bottom_y = top_y - ROW_GAP * (len(rows) - 1)
    sheet.wire(minus, (minus[0], bottom_y))
    sheet.wire(pins["out"], (right, pins["out"][1]), (right, bottom_y))
    for i in range(len(rows) - 1):
        sheet.dot((minus[0], top_y - ROW_GAP * i))
        sheet.dot((right, top_y - ROW_GAP * i))
    if leg:
        sheet.dot((minus[0], bottom_y))
        draw_leg(sheet, leg, (minus[0], bottom_y), (minus[0], GROUND_Y), leg_to)
    node = (right, pins["out"][1])
    sheet.dot(node)
    return pins, node


def _shown_pins(opamp: Part) -> dict[str, str]:
    return dict(opamp_pins(opamp))


def _row(sheet: Sheet, row: Sequence[Part], start, end) -> None:
    """Parts in series along one feedback row, labelled below so the op-amp stays clear.

    A pot ending the row stops short of its end, so its wiper's tie drops beside the wire
    that runs down there, not along it."""
    if row[-1].type == "pot":
        short = (end[0] - TIE_ROOM * (1 if end[0] > start[0] else -1), end[1])
        sheet.wire(short, end)
        end = short
    step = (end[0] - start[0]) / len(row)
    for i, part in enumerate(row):
        a, b = (start[0] + step * i, start[1]), (start[0] + step * (i + 1), start[1])
        if part.type == "pot":
            sheet.rheostat(part, a, b, side="below")
        else:
            sheet.part(part, a, b, side="below")


def draw_leg(sheet: Sheet, leg: Sequence[Part], top, bottom, to: str = "0") -> None:
    """Parts in series down a vertical leg to ground (``to`` "vref": to the reference),
    labelled on the right."""
    step = (top[1] - bottom[1]) / len(leg)
    for i, part in enumerate(leg):
        a, b = (top[0], top[1] - step * i), (top[0], top[1] - step * (i + 1))
        if part.type == "pot":
            sheet.rheostat(part, a, b, side="right", grows=False)  # clockwise, more gain
        else:
            sheet.part(part, a, b, side="right")
    if to == "vref":
        sheet.net_label(bottom, "vref", "below")
    else:
        sheet.ground(bottom)


def draw_output(sheet: Sheet, stage: Stage, node) -> None:
    """Output cap from the op-amp's output node, then the volume pot or the OUT port."""
    from kitleaf.circuit.stages._drawing import draw_volume_out

    x, y = node
    if stage.part("output-cap") is None:  # a direct output
        sheet.wire((x, y), (x + 2.2, y))
    sheet.part(stage.part("output-cap"), (x, y), (x + 2.2, y))
    draw_volume_out(sheet, stage.part("volume"), (x + 2.2, y), x + 4.0, stage.part("pulldown"))
