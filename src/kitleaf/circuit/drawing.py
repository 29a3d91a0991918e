"""What a stage kind may ask of the schematic sheet it draws on: the drawing protocol.

The circuit layer owns this contract and the rendering layer implements it
(:class:`kitleaf.render.schematic.SchematicSheet`), so a kind describes its drawing without
importing the drawing code. Coordinates are grid units (one unit is half an inch at print
size); y grows upwards, so a kind puts ground on :data:`GROUND_Y`, the supply on
:data:`RAIL_Y` and the signal on :data:`SIGNAL_Y` between them, flowing left to right.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import Protocol

from kitleaf.circuit.parts import Part

Point = tuple[float, float]

# The rows of a stage drawing.
GROUND_Y = 0.0
SIGNAL_Y = 5.0
RAIL_Y = 10.0


class Sheet(Protocol):
    """A schematic being drawn: every element is added explicitly, in drawing order."""

    # -- parts ---------------------------------------------------------------------------------
    def part(self, part: Part | None, a: Point, b: Point, side: str | None = None,
             plus: Point | None = None) -> None:
        """A two-terminal part from ``a`` to ``b`` (a diode's anode at ``a``), labelled on
        ``side``; an electrolytic's + lead at ``a`` unless ``plus`` names ``b``. None: nothing."""

    def pot(self, part: Part, ccw: Point, cw: Point, side: str | None = None,
            wiper_right: bool = False) -> Point:
        """A pot from ``ccw`` to ``cw``; returns where its wiper arrow starts."""

    def rheostat(self, part: Part, a: Point, b: Point, side: str | None = None,
                 grows: bool = True) -> None:
        """A pot used as a variable resistor, its wiper tied to the ``b`` end: ccw at ``a``
        when its resistance ``grows`` clockwise, else at ``b`` (as the kind wires it)."""

    def switch(self, part: Part, pole: int, common: Point,
               throws: Sequence[Point | None]) -> None:
        """Pole ``pole`` (1, 2...) of a switch: open contacts at its common and at each throw
        (None: a throw wired to nothing), the lever resting where the switch's first position
        puts it; the first pole carries the label."""

    def transistor(self, part: Part, family: str, base: Point, mirror: bool = False
                   ) -> dict[str, Point]:
        """A BJT (npn/pnp) or JFET (njf/pjf) with its base or gate at ``base``; its pins by
        name. ``mirror`` flips it top to bottom (emitter or source towards the supply)."""

    def opamp(self, part: Part, non_inv: Point, pin_numbers: Mapping[str, str]
              ) -> dict[str, Point]:
        """An op-amp with its + input at ``non_inv``, the - input below; its pins by name, each
        shown with its package pin from ``pin_numbers``."""

    def block(self, lower_left: Point, width: float, height: float, lines: Sequence[str]) -> None:
        """A labelled rectangle, ``lines`` centred in it."""

    def chip(self, part: Part, lower_left: Point, width: float, height: float,
             pins: Mapping[str, Point], role: str) -> None:
        """A chip drawn as a rectangle with its designator, value and ``role`` in it, its
        pins by name at the given points on its edges (a charge pump: inp, out, ref)."""

    # -- connections ---------------------------------------------------------------------------
    def wire(self, *points: Point) -> None:
        """A wire through ``points``, drawn as straight segments."""

    def dot(self, at: Point) -> None:
        """A junction dot where three or more wires meet."""

    def terminal(self, at: Point) -> None:
        """Ground at or below :data:`GROUND_Y`, the VCC rail at or above :data:`RAIL_Y`."""

    def ground(self, at: Point) -> None:
        """A ground symbol."""

    def rail(self, at: Point, net: str = "vcc") -> None:
        """A supply connection pointing up, labelled with the net's name."""

    def net_label(self, at: Point, net: str, side: str = "below") -> None:
        """A net named at a wire's end (a reference fed from elsewhere)."""

    def port(self, at: Point, name: str, side: str = "left") -> None:
        """A connection to the previous or next stage ("IN", "OUT")."""

    def probe(self, at: Point, node: str) -> None:
        """Where a builder may probe the stage's own ``node`` (a custom stage's test point);
        nothing is drawn."""

    # -- words ---------------------------------------------------------------------------------
    def part_label(self, part: Part) -> str:
        """The words a part is labelled with (designator over value)."""

    def label_room(self, part: Part) -> float:
        """How far a part's label reaches from the part's axis, in grid units."""
