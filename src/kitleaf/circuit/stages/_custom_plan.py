"""Where a custom stage's parts and nodes go on its schematic: the rows' order and heights,
each part's column, and what cannot be placed (then the stage is drawn as a text box).

Sizes of the symbols are the drawing's (schemdraw's BJT, JFET and op-amp at the sheet's
scale); the drawing checker fails if a symbol outgrows them.
"""

from __future__ import annotations

from collections import deque
from collections.abc import Mapping
from dataclasses import dataclass, replace

from kitleaf.circuit.drawing import Sheet
from kitleaf.circuit.kind import Stage
from kitleaf.circuit.parts import Part
from kitleaf.circuit.stages._shared import family, opamp_pins
from kitleaf.circuit.stages.custom import aliases, part_nodes

MAX_PARTS = 40  # past this, a stage is too wide to read as one drawing
RAILS = ("vcc", "vref", "0")
LEVELS = {"vcc": 1.0, "vref": 0.5, "0": 0.0}  # the DC level a rail fixes, as a fraction of VCC
MARGIN = 0.3  # from a column's left edge to its first wire
AIR = 0.4  # between a column's label and the next column
LEAD = 0.3  # from a row to the top of a device hanging from it
BODY = 1.6  # a two-terminal part's or a pot's length
BODY_HEIGHT = BODY + 0.6  # with air below it
WIPER_COLUMN = 1.0  # right of a pot's axis: where its wiper's wire runs to its row
LED_ARROWS = 0.8  # an LED's light arrows reach this far from its axis
ROW_GAP = 1.2  # the least height between two rows
# From a BJT's base (a JFET's gate) up to its upper pin and down to its lower one, by family
# and whether it is turned upside down; and across to the other pins.
DEVICE_REACH = {("npn", False): (0.70, 0.70), ("npn", True): (0.70, 0.70),
                ("pnp", False): (0.70, 0.70), ("pnp", True): (0.70, 0.70),
                ("njf", False): (0.92, 0.42), ("njf", True): (0.42, 0.92),
                ("pjf", False): (0.92, 0.42), ("pjf", True): (0.42, 0.92)}
DEVICE_ACROSS = {"npn": 0.75, "pnp": 0.75, "njf": 0.92, "pjf": 0.92}
# An op-amp's + input below its row (room for the VCC symbol and name above it), its whole
# height with the ground symbol below, and from its + input across to its output pin.
OPAMP_HEIGHT = (1.75, 4.6)
OPAMP_ACROSS = 1.0 + 3.42


@dataclass(frozen=True)
class Item:
    """One part placed: its shape, its nodes in pin order, its column's first wire ``x``."""

    part: Part
    shape: str  # two, pot, device, opamp
    nodes: tuple[str, ...]
    x: float = 0.0
    family: str = ""
    pin_numbers: Mapping[str, str] | None = None
    out_column: float = 0.0  # an op-amp's: where its output runs to its row, from ``x``


@dataclass(frozen=True)
class Plan:
    rows: tuple[str, ...]  # top to bottom
    y: Mapping[str, float]
    items: tuple[Item, ...]  # left to right


def placed_nodes(stage: Stage, part: Part) -> tuple[str, ...]:
    """The part's nodes in pin order, chain names for aliased nodes, an op-amp's supply pins
    to VCC and ground when the line leaves them out."""
    alias = aliases(stage)
    nodes = tuple(alias.get(n, n) for n in part_nodes(part))
    return nodes + ("vcc", "0") if part.type == "opamp" and len(nodes) == 3 else nodes


def layout_problem(stage: Stage) -> str | None:
    """Why the stage's netlist cannot be placed as a schematic, or None."""
    parts = stage.parts.get("part", ())
    if len(parts) > MAX_PARTS:
        return f"it has {len(parts)} parts, more than the {MAX_PARTS} one drawing can show"
    for part in parts:
        nodes = placed_nodes(stage, part)
        why = _part_problem(part, nodes)
        if why:
            return f"{part.designator} {why}"
    return None


def _part_problem(part: Part, nodes: tuple[str, ...]) -> str | None:
    if part.type == "switch":
        return "is a switch, which the automatic placement does not draw"
    if part.type == "opamp" and nodes[3:] != ("vcc", "0"):
        return f"takes its supply from {nodes[3]} and {nodes[4]}, not VCC and ground"
    if part.type in ("bjt", "jfet") and nodes[0] == nodes[2]:
        return "has both ends of its channel on one node"
    if len(nodes) == 3 and part.type in ("pot", "trimmer") and nodes[0] == nodes[2]:
        return "has both ends of its track on one node"
    return None


def plan(stage: Stage, sheet: Sheet) -> Plan:
    items = [_item(stage, part) for part in stage.parts.get("part", ())]
    rows = row_order(items)
    ordered = flow_order(items)
    placed, left = [], 1.0
    for item in ordered:
        item, width = _column(item, left, sheet)
        placed.append(item)
        left += width
    return Plan(rows, row_heights(rows, placed), tuple(placed))


def _item(stage: Stage, part: Part) -> Item:
    nodes = placed_nodes(stage, part)
    if part.type in ("bjt", "jfet"):
        return Item(part, "device", nodes, family=family(part))
    if part.type == "opamp":
        return Item(part, "opamp", nodes, pin_numbers=opamp_pins(part))
    return Item(part, "pot" if len(nodes) == 3 else "two", nodes)


def row_order(items: list[Item]) -> tuple[str, ...]:
    """VCC, then the nodes from the likely highest DC level to the lowest, then ground."""
    level = dc_levels(items)
    middle = sorted((n for n in level if n not in ("vcc", "0")), key=lambda n: (-level[n], n))
    return tuple(n for n in ("vcc", *middle, "0") if n in level)


def dc_levels(items: list[Item]) -> dict[str, float]:
    """A guess at each node's DC level (a fraction of VCC): the rails fixed, every other node
    the mean of its neighbours through parts that carry DC, found by relaxation."""
    nodes = sorted({n for item in items for n in item.nodes})
    near: dict[str, list[str]] = {n: [] for n in nodes}
    for item in items:
        for a, b in _dc_pairs(item):
            near[a].append(b)
            near[b].append(a)
    level = {n: LEVELS.get(n, 0.5) for n in nodes}
    for _ in range(60):
        for n in nodes:
            if n not in LEVELS and near[n]:
                level[n] = sum(level[m] for m in near[n]) / len(near[n])
    return level


def _dc_pairs(item: Item) -> list[tuple[str, str]]:
    """The pins of a part between which DC flows: a resistor's, a pot's, a diode's ends, a
    transistor's base and emitter (gate and source), an op-amp's nothing."""
    nodes = item.nodes
    if item.shape == "device":
        return [(nodes[1], nodes[2])]
    if item.shape == "opamp" or item.part.type == "capacitor":
        return []
    return [(a, b) for i, a in enumerate(nodes) for b in nodes[i + 1:] if a != b]


def flow_order(items: list[Item]) -> list[Item]:
    """The parts in the order the signal reaches them from IN (through any part's pins, not
    through the rails), then in the guide's order."""
    distance = {"in": 0}
    queue = deque(["in"])
    while queue:
        node = queue.popleft()
        for item in items:
            if node in item.nodes:
                for other in item.nodes:
                    if other not in distance and other not in RAILS:
                        distance[other] = distance[node] + 1
                        queue.append(other)
    far = len(distance) + 1

    def reached(item: Item) -> int:
        return min((distance.get(n, far) for n in item.nodes if n not in RAILS), default=far)

    return sorted(items, key=lambda item: (reached(item), items.index(item)))


def _column(item: Item, left: float, sheet: Sheet) -> tuple[Item, float]:
    """The item with its ``x`` set in a column from ``left``, and the column's width."""
    room = sheet.label_room(item.part)
    x = left + MARGIN
    if item.shape == "two":
        # an LED's light arrows stand out on one side or the other, as it is turned
        arrows = LED_ARROWS if item.part.type == "led" else 0.0
        return _at(item, x + arrows), MARGIN + arrows + room + AIR
    if item.shape == "pot":
        return _at(item, x + room), MARGIN + room + WIPER_COLUMN + AIR
    if item.shape == "device":
        return _at(item, x), MARGIN + 0.5 + DEVICE_ACROSS[item.family] + room + AIR
    out_column = OPAMP_ACROSS + max(0.4, room + 0.1)
    return _at(item, x, out_column=out_column), MARGIN + out_column + AIR


def _at(item: Item, x: float, **more) -> Item:
    return replace(item, x=round(x, 3), **more)


def row_heights(rows: tuple[str, ...], items: list[Item]) -> dict[str, float]:
    """Each row's height, ground's at 0: below each row, room for the tallest thing hanging
    from it."""
    need = {row: ROW_GAP for row in rows}
    for item in items:
        top = min(rows.index(n) for n in hanging_from(item))
        need[rows[top]] = max(need[rows[top]], _height(item))
    heights, y = {}, 0.0
    for i in range(len(rows) - 1, -1, -1):
        heights[rows[i]] = y
        y += need[rows[i - 1]] if i > 0 else 0.0
    return heights


def hanging_from(item: Item) -> tuple[str, ...]:
    """The nodes whose highest row the item hangs from: a part's or a track's ends, a device's
    channel, an op-amp's inputs and output."""
    if item.shape == "two":
        return item.nodes
    return item.nodes[:3] if item.shape == "opamp" else (item.nodes[0], item.nodes[2])


def _height(item: Item) -> float:
    if item.shape == "device":
        up, down = DEVICE_REACH[(item.family, False)]
        return LEAD + up + down + 0.6
    if item.shape == "opamp":
        return OPAMP_HEIGHT[1]
    return BODY_HEIGHT
