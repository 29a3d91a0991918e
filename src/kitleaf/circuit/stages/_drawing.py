"""Drawing the single-transistor stages (common emitter, emitter follower, JFET common source).

One layout serves them all: input cap and bias on the left, the transistor in the middle, its
collector (drain) load above and emitter (source) network below, the output to the right.
A PNP or P-channel part is drawn mirror-image, emitter (source) up towards VCC, which is how
it is wired.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

from kitleaf.circuit.drawing import GROUND_Y, RAIL_Y, SIGNAL_Y, Point, Sheet
from kitleaf.circuit.parts import Part

BASE_X = 3.4  # the bias node
DEVICE_X = 4.6  # where the base or gate lead ends
UPPER_Y = 7.4  # collector (drain) node, before mirroring
LOWER_Y = 2.6  # emitter (source) node, before mirroring
DIVIDER_Y = 3.0  # a gate divider's node, before mirroring
DIVIDER_SIDE_X = 1.0  # where the divider's side resistor ends


@dataclass(frozen=True)
class TransistorDrawing:
    """The parts of a one-transistor stage in drawing order; ``output_from`` is upper/lower."""

    family: str
    device: Part
    input_cap: Part
    bias_top: Part | None
    bias_bottom: Part | None
    upper: Part | None
    lower: Part | None
    bypass: Sequence[Part]
    output_from: str
    output_cap: Part
    volume: Part | None
    pulldown: Part | None = None
    # (gate resistor, top, bottom): the gate resistor returns to a divider's node, not a rail
    divider: tuple[Part, Part, Part] | None = None
    output_resistor: Part | None = None  # in series with the OUT port

    @property
    def mirrored(self) -> bool:
        return self.family in ("pnp", "pjf")

    def y(self, y: float) -> float:
        """A height in the transistor's column, mirrored for PNP and P-channel parts."""
        return RAIL_Y + GROUND_Y - y if self.mirrored else y


def draw_transistor_stage(sheet: Sheet, d: TransistorDrawing) -> None:
    """Draw the whole stage on ``sheet``."""
    _draw_input(sheet, d)
    pins = sheet.transistor(d.device, d.family, (DEVICE_X, SIGNAL_Y), mirror=d.mirrored)
    top_pin, bottom_pin = _column_pins(d, pins)
    x = top_pin[0]
    upper, lower = (x, d.y(UPPER_Y)), (x, d.y(LOWER_Y))
    sheet.wire(top_pin, upper)
    sheet.wire(bottom_pin, lower)
    _to_end(sheet, d.upper, upper, (x, d.y(RAIL_Y)), "left")
    _to_end(sheet, d.lower, lower, (x, d.y(GROUND_Y)), "left")
    _draw_bypass(sheet, d, lower)
    _draw_output(sheet, d, upper if d.output_from == "upper" else lower)


def _column_pins(d: TransistorDrawing, pins: dict[str, Point]) -> tuple[Point, Point]:
    """The (collector or drain, emitter or source) pins, in unmirrored order."""
    if d.family in ("npn", "pnp"):
        return pins["collector"], pins["emitter"]
    return pins["drain"], pins["source"]


def _draw_input(sheet: Sheet, d: TransistorDrawing) -> None:
    sheet.port((0.0, SIGNAL_Y), "IN", "left")
    sheet.part(d.input_cap, (0.0, SIGNAL_Y), (2.2, SIGNAL_Y), plus=(2.2, SIGNAL_Y))  # biased side
    node = (BASE_X, SIGNAL_Y)
    sheet.wire((2.2, SIGNAL_Y), node, (DEVICE_X, SIGNAL_Y))
    if d.divider is not None:
        sheet.dot(node)
        _draw_divider(sheet, d, node)
        return
    if d.bias_top is not None:
        sheet.part(d.bias_top, node, (BASE_X, RAIL_Y), side="left")
        sheet.terminal((BASE_X, RAIL_Y))
    if d.bias_bottom is not None:
        sheet.part(d.bias_bottom, node, (BASE_X, GROUND_Y), side="left")
        sheet.terminal((BASE_X, GROUND_Y))
    if d.bias_top is not None or d.bias_bottom is not None:
        sheet.dot(node)


def _draw_divider(sheet: Sheet, d: TransistorDrawing, node: Point) -> None:
    """The gate resistor down to the divider's node (up, mirrored); from there the divider's
    lower resistor on to ground and its upper one off to the side, to a VCC arrow (mirrored:
    the upper one on to VCC and the lower one to the side, to ground)."""
    gate, top, bottom = d.divider
    x = node[0]
    joint = (x, d.y(DIVIDER_Y))
    sheet.part(gate, node, joint, side="left")
    sheet.dot(joint)
    column, aside = (top, bottom) if d.mirrored else (bottom, top)
    _to_end(sheet, column, joint, (x, d.y(GROUND_Y)), "left")
    end = (DIVIDER_SIDE_X, joint[1])
    sheet.part(aside, joint, end, side="above" if d.mirrored else "below")
    if d.mirrored:
        sheet.ground(end)
    else:
        sheet.rail(end)


def _to_end(sheet: Sheet, part: Part | None, start: Point, end: Point, side: str) -> None:
    """A part (or a plain wire when there is none) from ``start`` to a rail or ground."""
    if part is None:
        sheet.wire(start, end)
    else:
        sheet.part(part, start, end, side=side)
    sheet.terminal(end)


def _draw_bypass(sheet: Sheet, d: TransistorDrawing, lower: Point) -> None:
    """The bypass network: all but its last part across, the last one down to the return."""
    if not d.bypass:
        return
    sheet.dot(lower)
    x, y = lower
    for part in d.bypass[:-1]:
        _chain_part(sheet, part, (x, y), (x + 2.2, y), side="below")
        x += 2.2
    corner = (x + 1.6, y)
    sheet.wire((x, y), corner)
    end = (corner[0], d.y(GROUND_Y))
    _chain_part(sheet, d.bypass[-1], corner, end, side="right",
                plus=end if d.mirrored else corner)  # mirrored: the cap's + faces VCC
    sheet.terminal(end)


def _chain_part(sheet: Sheet, part: Part, a: Point, b: Point, side: str | None = None,
                plus: Point | None = None) -> None:
    if part.type == "pot":
        sheet.rheostat(part, a, b, side=side, grows=False)  # the gain pot: clockwise, more gain
    else:
        sheet.part(part, a, b, side=side, plus=plus)


def _draw_output(sheet: Sheet, d: TransistorDrawing, node: Point) -> None:
    x, y = node
    # the bypass network's last part and its label sit this far right of the emitter
    bypass_right = x + 2.2 * (len(d.bypass) - 1) + 1.6 + 2.0 if d.bypass else x
    start = x + 1.0
    sheet.dot(node)
    sheet.wire(node, (start, y))
    if d.output_cap is None:  # a direct output
        sheet.wire((start, y), (start + 2.2, y))
    sheet.part(d.output_cap, (start, y), (start + 2.2, y))
    # the pulldown runs down to ground, so it stands clear of the bypass network, not across it
    draw_volume_out(sheet, d.volume, (start + 2.2, y), max(start + 4.2, bypass_right + 1.4),
                    d.pulldown, pulldown_from=bypass_right + 0.4 if d.bypass else 0.0,
                    series=d.output_resistor)


def draw_volume_out(sheet: Sheet, volume: Part | None, at: Point, x: float,
                    pulldown: Part | None = None, pulldown_from: float = 0.0,
                    series: Part | None = None) -> None:
    """From ``at``, the optional pulldown (at ``pulldown_from`` or right of it), the volume pot
    at column ``x`` or a ``series`` resistor, and the OUT port."""
    if pulldown is not None:
        column = (max(at[0] + 0.8, pulldown_from), at[1])
        sheet.wire(at, column)
        sheet.dot(column)
        sheet.part(pulldown, column, (column[0], GROUND_Y), side="right")
        sheet.ground((column[0], GROUND_Y))
        # the volume pot's label (left of it) clear of the pulldown's (right of it)
        room = sheet.label_room(pulldown) + (sheet.label_room(volume) if volume else 0.0)
        at, x = column, max(x, column[0] + 2.4, column[0] + room + 0.4)
    if series is not None:
        sheet.wire(at, (at[0] + 0.4, at[1]))
        sheet.part(series, (at[0] + 0.4, at[1]), (at[0] + 2.6, at[1]))
        at, x = (at[0] + 2.6, at[1]), max(x, at[0] + 3.4)
    if volume is None:
        sheet.wire(at, (x, at[1]))
        sheet.port((x, at[1]), "OUT", "right")
        return
    sheet.wire(at, (x, at[1]))
    wiper = sheet.pot(volume, (x, GROUND_Y), (x, at[1]), side="left", wiper_right=True)
    sheet.ground((x, GROUND_Y))
    out = (x + 1.6, wiper[1])
    sheet.wire(wiper, out)
    sheet.port(out, "OUT", "right")
