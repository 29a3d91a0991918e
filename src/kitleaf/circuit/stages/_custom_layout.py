"""Drawing a custom stage's netlist as a schematic, placed automatically.

Each node is a horizontal line (its row): VCC on top, ground at the bottom, the other nodes
between them in the order their DC level is likely to take (a relaxation over the parts that
carry DC). Each part stands in a column of its own, hanging from the highest row it joins,
and its other pins run down (or, for a device's control pin, up) to their rows; wires that
cross are not joined. The columns follow the signal from IN, left to right, so parts across
the same two nodes stand side by side. A transistor is turned so the pin on the higher row
is on top; a pot's wiper goes to the right. Named connections (IN, VCC, VREF, ground) sit at
the left edge, OUT at the right.
"""

from __future__ import annotations

from kitleaf.circuit.drawing import Sheet
from kitleaf.circuit.kind import Stage
from kitleaf.circuit.stages._custom_plan import (
    BODY,
    DEVICE_REACH,
    LEAD,
    OPAMP_HEIGHT,
    WIPER_COLUMN,
    Item,
    plan,
)

EDGE = 0.0  # the left edge, where named connections sit
RAIL_STUB = 0.5  # from VCC's line up to its rail symbol


def draw_netlist(stage: Stage, sheet: Sheet) -> None:
    """The stage's parts placed and wired, its rows drawn, its connections named."""
    laid = plan(stage, sheet)
    reach: dict[str, list[float]] = {node: [] for node in laid.rows}
    for item in laid.items:
        for node, x in DRAWERS[item.shape](sheet, item, laid.y):
            reach[node].append(x)
    right = max((x for xs in reach.values() for x in xs), default=1.0) + 1.0
    for node, xs in reach.items():
        _draw_row(sheet, node, laid.y[node], xs, right)


def _draw_row(sheet: Sheet, node: str, y: float, xs: list[float], right: float) -> None:
    """A node's line through every column that joins it, with its name where it has one."""
    named = {"in": EDGE, "vcc": EDGE, "0": EDGE, "vref": EDGE, "out": right}
    ends = sorted(xs + ([named[node]] if node in named else []))
    if not ends:
        return
    if ends[0] != ends[-1]:
        sheet.wire((ends[0], y), (ends[-1], y))
    at = (named.get(node, ends[0]), y)
    if node == "in":
        sheet.port(at, "IN", "left")
    elif node == "out":
        sheet.port(at, "OUT", "right")
    elif node == "vcc":  # on a stub, so the rail's bar does not lie along the line
        sheet.wire(at, (at[0], y + RAIL_STUB))
        sheet.rail((at[0], y + RAIL_STUB))
    elif node == "0":
        sheet.ground(at)
    elif node == "vref":
        sheet.net_label(at, "vref", "left")
    else:
        sheet.probe(at, node)


def _two_terminal(sheet: Sheet, item: Item, y: dict[str, float]) -> list[tuple[str, float]]:
    """Body down from the higher row, pin 1 at ``a``; a wire on to the lower row."""
    first, second = item.nodes
    x = item.x
    top = max(y[first], y[second])
    high, low = (first, second) if y[first] >= y[second] else (second, first)
    ends = {high: (x, top), low: (x, top - BODY)}
    sheet.part(item.part, ends[first], ends[second], side="right")
    sheet.wire((x, top - BODY), (x, y[low]))
    return [(first, x), (second, x)]


def _pot(sheet: Sheet, item: Item, y: dict[str, float]) -> list[tuple[str, float]]:
    """A pot standing between its ends' rows, its wiper to the right and on to its row."""
    ccw, wiper_node, cw = item.nodes
    x = item.x
    top = max(y[ccw], y[cw])
    cw_up = y[cw] >= y[ccw]
    cw_at, ccw_at = ((x, top), (x, top - BODY)) if cw_up else ((x, top - BODY), (x, top))
    wiper = sheet.pot(item.part, ccw_at, cw_at, side="left", wiper_right=cw_up)
    column = x + WIPER_COLUMN
    sheet.wire(wiper, (column, wiper[1]), (column, y[wiper_node]))
    low = ccw if cw_up else cw
    sheet.wire((x, top - BODY), (x, y[low]))
    return [(ccw, x), (cw, x), (wiper_node, column)]


def _transistor(sheet: Sheet, item: Item, y: dict[str, float]) -> list[tuple[str, float]]:
    """A BJT or JFET hanging from the higher of its collector's (drain's) and emitter's
    (source's) rows, turned so that pin is on top; its base (gate) led left to its row."""
    upper, control, lower = item.nodes  # collector, base, emitter (drain, gate, source)
    mirror = y[lower] > y[upper]
    top_node, bottom_node = (lower, upper) if mirror else (upper, lower)
    reach_up = DEVICE_REACH[(item.family, mirror)][0]
    base = (item.x + 0.5, y[top_node] - LEAD - reach_up)
    pins = sheet.transistor(item.part, item.family, base, mirror=mirror)
    names = ("collector", "base", "emitter") if item.family in ("npn", "pnp") \
        else ("drain", "gate", "source")
    top_pin, bottom_pin = (pins[names[2]], pins[names[0]]) if mirror \
        else (pins[names[0]], pins[names[2]])
    sheet.wire(top_pin, (top_pin[0], y[top_node]))
    sheet.wire(bottom_pin, (bottom_pin[0], y[bottom_node]))
    sheet.wire(pins[names[1]], (item.x, base[1]), (item.x, y[control]))
    return [(top_node, top_pin[0]), (bottom_node, bottom_pin[0]), (control, item.x)]


def _opamp(sheet: Sheet, item: Item, y: dict[str, float]) -> list[tuple[str, float]]:
    """An op-amp hanging from the highest row of its inputs and output, its supply pins led to
    VCC and ground, each input led left and its output right to their rows."""
    plus, minus, out = item.nodes[:3]
    top = max(y[plus], y[minus], y[out])
    non_inv = (item.x + 1.0, top - OPAMP_HEIGHT[0])
    pins = sheet.opamp(item.part, non_inv, item.pin_numbers)
    plus_x, minus_x, out_x = item.x, item.x + 0.4, item.x + item.out_column
    sheet.wire(pins["non_inv"], (plus_x, non_inv[1]), (plus_x, y[plus]))
    sheet.wire(pins["inv"], (minus_x, pins["inv"][1]), (minus_x, y[minus]))
    sheet.wire(pins["out"], (out_x, pins["out"][1]), (out_x, y[out]))
    return [(plus, plus_x), (minus, minus_x), (out, out_x)]


DRAWERS = {"two": _two_terminal, "pot": _pot, "device": _transistor, "opamp": _opamp}

