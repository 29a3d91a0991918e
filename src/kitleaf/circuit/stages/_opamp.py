"""What the op-amp kinds share: the biased + input, the output network and the feedback-loop
drawing."""

from __future__ import annotations

from collections.abc import Sequence

from kitleaf.circuit.drawing import GROUND_Y, Sheet
from kitleaf.circuit.kind import Role, Stage, StageKind
from kitleaf.circuit.parts import Part
from kitleaf.circuit.stages._shared import (
    OUTPUT_COUPLING,
    capacitor_role,
    check_family,
    check_output,
    opamp_pins,
    resistor_role,
)


class OpampKind(StageKind):
    """What both op-amp kinds are: a section of an op-amp swinging about the mid-rail
    reference, with a gain pot and a volume pot a player may turn."""

    needs_reference = True
    options = (OUTPUT_COUPLING,)

    def check(self, stage: Stage) -> None:
        check_family(stage, "opamp", ("opamp",))
        check_output(stage, self.name)


# The + input biased to the reference: what every non-inverting op-amp kind starts with.
BIASED_INPUT_ROLES = (
    capacitor_role("input-cap", "coupling capacitor from the stage input to the + input"),
    resistor_role("bias", "from the + input to the reference VREF; sets the input impedance"),
    Role("opamp", ("opamp",), help="one section of the op-amp: U1A TL072 (pins 1-3) or U1B"),
)


def place_biased_input(stage: Stage, wiring, minus: str = "m", device: str = "opamp") -> None:
    """Input cap to the + input ``p``, its bias resistor to VREF, and the op-amp (the part in
    role ``device``) from ``p`` and ``minus`` to its output ``o``."""
    wiring.place(stage.part("input-cap"), "in", "p")
    wiring.place(stage.part("bias"), "p", "vref")
    wiring.place(stage.part(device), "p", minus, "o", "vcc", "0")


def draw_biased_input(sheet: Sheet, stage: Stage) -> None:
    """The IN port, the input cap and the bias resistor down to VREF, up to the + input."""
    sheet.port((0.0, PLUS_Y), "IN", "left")
    sheet.part(stage.part("input-cap"), (0.0, PLUS_Y), (2.2, PLUS_Y), plus=(2.2, PLUS_Y))
    node = (3.2, PLUS_Y)
    sheet.wire((2.2, PLUS_Y), node, (4.6, PLUS_Y))
    sheet.dot(node)
    sheet.part(stage.part("bias"), node, (3.2, PLUS_Y - 2.6), side="left")
    sheet.net_label((3.2, PLUS_Y - 2.6), "vref", "below")


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
                    leg_to: str = "0", min_width: float = 2.4) -> tuple[dict, tuple]:
    """The op-amp, its feedback ``rows`` below it, and the ``leg`` from the - input to ground
    (``leg_to`` "vref": to the reference); the rows span ``min_width`` at least (room for
    networks a kind draws below them).

    Returns the op-amp pins and the output node, where the output network starts.
    """
    opamp = stage.part("opamp")
    pins = sheet.opamp(opamp, (4.6, PLUS_Y), _shown_pins(opamp))
    minus = pins["inv"]
    width = max(min_width, 2.2 * max(len(r) for r in rows))
    right = max(pins["out"][0] + 0.6, minus[0] + width)
    for i, row in enumerate(rows):
        y = row_y(pins, i)
        ends = ((minus[0], y), (right, y))
        # drawn as the kinds wire them: resistor and pot from the - input, the cap from the output
        _row(sheet, row, *(ends[::-1] if row[0].type == "capacitor" else ends))
    bottom_y = row_y(pins, len(rows) - 1)
    sheet.wire(minus, (minus[0], bottom_y))
    sheet.wire(pins["out"], (right, pins["out"][1]), (right, bottom_y))
    for i in range(len(rows) - 1):
        sheet.dot((minus[0], row_y(pins, i)))
        sheet.dot((right, row_y(pins, i)))
    if leg:
        sheet.dot((minus[0], bottom_y))
        draw_leg(sheet, leg, (minus[0], bottom_y), (minus[0], GROUND_Y), leg_to)
    node = (right, pins["out"][1])
    sheet.dot(node)
    return pins, node


def row_y(pins: dict, i: int) -> float:
    """The height of feedback row ``i`` (0 is the top row, just under the - input)."""
    return pins["inv"][1] - 1.7 - ROW_GAP * i


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
