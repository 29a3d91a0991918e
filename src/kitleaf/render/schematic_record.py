"""What a schematic sheet drew, kept as plain data while it draws: every part's pins, the
wires, junction dots, named connections, test-point leaders and words, in grid units.

The drawing checker (:mod:`kitleaf.render.schematic_check`) reads the nets off this record
instead of guessing them back from the SVG's strokes.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from kitleaf.circuit.drawing import Point

Box = tuple[float, float, float, float]  # x0, y0, x1, y1
PLACES = 3  # points are compared rounded to a thousandth of a grid unit
BODY_HALF = 0.5  # half a symbol's length along its axis (its leads stretch beyond)

# Which pins a part type's drawing has, in the engine's pin order (kitleaf.engine.elements).
PIN_ORDER = {
    "resistor": ("a", "b"), "capacitor": ("a", "b"), "inductor": ("a", "b"),
    "diode": ("anode", "cathode"), "led": ("anode", "cathode"), "pot": ("ccw", "wiper", "cw"),
    "trimmer": ("a", "b"),  # in a resistor's place: a variable resistor
    # a switch pole: its common, then each throw wired to something, in position order
    "pole": tuple(str(i) for i in range(16)),
    "npn": ("collector", "base", "emitter"), "pnp": ("collector", "base", "emitter"),
    "njf": ("drain", "gate", "source"), "pjf": ("drain", "gate", "source"),
    "opamp": ("non_inv", "inv", "out", "vpos", "vneg"),
    "pump": ("inp", "out", "ref"),
}
# Ports name the stage's own connections.
PORT_NETS = {"IN": "in", "OUT": "out"}


def snap(at: Point) -> Point:
    return (round(at[0], PLACES) + 0.0, round(at[1], PLACES) + 0.0)


@dataclass
class Leader:
    """A test point's marker: its node, where its leader leaves the drawing, and its ring."""

    node: str
    at: Point
    ring: Point


@dataclass
class SheetRecord:
    """Everything a sheet drew that carries meaning for the nets, in drawing order."""

    pins: dict[tuple[str, int], Point] = field(default_factory=dict)
    part_types: dict[str, str] = field(default_factory=dict)
    bodies: list[tuple[str, Point, Point]] = field(default_factory=list)  # two-terminal spans
    shapes: list[tuple[str, Box]] = field(default_factory=list)  # each symbol's box, no words
    wires: list[tuple[Point, Point]] = field(default_factory=list)
    dots: list[Point] = field(default_factory=list)
    names: list[tuple[Point, str]] = field(default_factory=list)  # ground, rails, labels, ports
    leaders: list[Leader] = field(default_factory=list)
    texts: list[tuple[str, Box]] = field(default_factory=list)
    blocks: list[Box] = field(default_factory=list)
    plus: dict[str, int] = field(default_factory=dict)  # a polarised cap's + pin
    levers: dict[str, tuple[Point, Point]] = field(default_factory=dict)  # pole: common, tip

    def part(self, designator: str, kind: str, pins: dict[str, Point]) -> None:
        """A part's pins by name (see :data:`PIN_ORDER`), kept by their index."""
        self.part_types[designator] = kind
        for index, name in enumerate(PIN_ORDER[kind]):
            if name in pins:
                self.pins[(designator, index)] = snap(pins[name])

    def shape(self, designator: str, box: Box, a: Point, b: Point) -> None:
        """A two-terminal part's or pot's symbol: its drawn ``box`` cut to the body's length
        about the middle of ``a``-``b`` (the leads beyond are lines, checked as such)."""
        mid = ((a[0] + b[0]) / 2, (a[1] + b[1]) / 2)
        if abs(a[1] - b[1]) < abs(a[0] - b[0]):  # level: cut along x
            box = (max(box[0], mid[0] - BODY_HALF), box[1], min(box[2], mid[0] + BODY_HALF),
                   box[3])
        else:
            box = (box[0], max(box[1], mid[1] - BODY_HALF), box[2],
                   min(box[3], mid[1] + BODY_HALF))
        self.shapes.append((designator, box))

    def body(self, designator: str, a: Point, b: Point) -> None:
        self.bodies.append((designator, snap(a), snap(b)))

    def wire(self, a: Point, b: Point) -> None:
        self.wires.append((snap(a), snap(b)))

    def dot(self, at: Point) -> None:
        self.dots.append(snap(at))

    def name(self, at: Point, net: str) -> None:
        self.names.append((snap(at), net))

    def leader(self, node: str, at: Point, ring: Point) -> None:
        self.leaders.append(Leader(node, snap(at), ring))
