"""Where each piece of the off-board wiring stands on the drawing and where its lugs are.

Coordinates are CSS pixels at the drawing's natural size (y grows downwards): the jacks at the
sides, the footswitch between them as seen from its lugs, the DC jack and the battery clip
below the jacks, the LED beside the footswitch and the board along the bottom with its pads
on its top edge. Every lug has the direction a wire leaves it in.
"""

from __future__ import annotations

from dataclasses import dataclass

from kitleaf.circuit.harness import BOARD, Harness
from kitleaf.circuit.offboard import Lug, Piece

Point = tuple[float, float]

WIDTH, HEIGHT = 760.0, 586.0
# The box of each piece by role: left, top, width, height.
BOXES = {
    "input-jack": (20.0, 60.0, 120.0, 120.0),
    "output-jack": (620.0, 60.0, 120.0, 120.0),
    "footswitch": (240.0, 50.0, 250.0, 190.0),
    "dc-jack": (620.0, 330.0, 120.0, 120.0),
    "battery": (20.0, 300.0, 120.0, 100.0),
    "led": (525.0, 220.0, 50.0, 80.0),
    BOARD: (60.0, 490.0, 640.0, 66.0),
}
LUG_STEP = 34.0


@dataclass(frozen=True)
class LugSpot:
    """A lug placed on the drawing: where it is, the way its wire leaves and its label's side."""

    lug: Lug
    at: Point
    exit: Point | None  # a unit vector, or None: straight towards the wire's other end
    label: str


@dataclass(frozen=True)
class PieceBox:
    """A piece's outline on the drawing with its title lines."""

    role: str
    designator: str
    box: tuple[float, float, float, float]
    title: tuple[str, ...]


def lay_out(harness: Harness) -> tuple[tuple[PieceBox, ...], dict[Lug, LugSpot]]:
    """The boxes of the pieces and every lug's spot, for each piece the harness wires."""
    boxes, spots = [], {}
    for piece in harness.pieces:
        boxes.append(PieceBox(piece.role, piece.designator, BOXES[piece.role], _title(piece)))
        spots.update(_PLACERS[piece.role](piece, BOXES[piece.role]))
    if harness.led is not None:
        led = harness.led
        boxes.append(PieceBox("led", led.designator, BOXES["led"], (led.designator, led.text)))
        spots.update(_led_spots(led.designator, BOXES["led"]))
    boxes.append(PieceBox(BOARD, BOARD, BOXES[BOARD], ("The board: pads as the schematic "
                                                       "names them",)))
    spots.update(_pad_spots(harness, BOXES[BOARD]))
    return tuple(boxes), spots


def _title(piece: Piece) -> tuple[str, ...]:
    what = {"input-jack": "input jack", "output-jack": "output jack", "dc-jack": "DC jack",
            "footswitch": f"footswitch, {piece.poles} poles", "battery": "battery clip"}
    extra = {"dc-jack": f"centre {piece.centre}",
             "input-jack": "stereo" if piece.stereo else "mono",
             "output-jack": "stereo" if piece.stereo else "mono",
             "footswitch": "seen from the lugs; bottom row: effect on"}
    return (f"{piece.designator} {what[piece.role]}", extra.get(piece.role, ""))


def _column(piece: Piece, x: float, top: float, exit: Point, words: dict[str, str]
            ) -> dict[Lug, LugSpot]:
    """The lugs of a piece in a column at ``x``, one step apart from ``top`` down."""
    return {piece.lug(name): LugSpot(piece.lug(name), (x, top + LUG_STEP * i), exit,
                                     words.get(name, name))
            for i, name in enumerate(piece.lugs)}


def _jack_spots(piece: Piece, box) -> dict[Lug, LugSpot]:
    left, top, width, _ = box
    right_side = piece.role == "input-jack"
    x = left + width if right_side else left
    return _column(piece, x, top + 40.0, (1.0, 0.0) if right_side else (-1.0, 0.0), {})


def _dc_spots(piece: Piece, box) -> dict[Lug, LugSpot]:
    left, top, _, _ = box
    return _column(piece, left, top + 40.0, (-1.0, 0.0), {})


def _battery_spots(piece: Piece, box) -> dict[Lug, LugSpot]:
    left, top, width, _ = box
    return _column(piece, left + width, top + 46.0, (1.0, 0.0), {"red lead +": "red +",
                                                                  "black lead -": "black -"})


def _switch_spots(piece: Piece, box) -> dict[Lug, LugSpot]:
    """Lugs by pole in columns, the effect-on row at the bottom (towards the board), the
    commons in the middle and the bypass row on top, whose wires leave upwards."""
    left, top, width, height = box
    spots = {}
    for i, name in enumerate(piece.lugs):
        row, column = divmod(i, piece.poles)
        x = left + width * (column + 0.5) / piece.poles
        y = top + height - 20.0 - row * (height - 66.0) / 2
        exit = (0.0, -1.0) if row == 2 else None
        spots[piece.lug(name)] = LugSpot(piece.lug(name), (x, y), exit, name)
    return spots


def _led_spots(designator: str, box) -> dict[Lug, LugSpot]:
    """An LED standing with its cathode up (towards the footswitch), its anode down."""
    left, top, width, height = box
    x = left + width / 2
    cathode, anode = Lug(designator, "cathode"), Lug(designator, "anode")
    return {cathode: LugSpot(cathode, (x, top), (0.0, -1.0), "cathode (-)"),
            anode: LugSpot(anode, (x, top + height), (0.0, 1.0), "anode (+)")}


def _pad_spots(harness: Harness, box) -> dict[Lug, LugSpot]:
    left, top, width, _ = box
    pads = sorted(harness.pads, key=_pad_rank)
    step = width / len(pads)
    return {Lug(BOARD, p): LugSpot(Lug(BOARD, p), (left + step * (i + 0.5), top), (0.0, -1.0), p)
            for i, p in enumerate(pads)}


def _pad_rank(pad: str) -> int:
    """Along the board's edge: the signal pads, ground, the supply, the LED's."""
    if pad in ("IN", "OUT"):
        return ("IN", "OUT").index(pad)
    return 2 if pad.endswith(" OUT") else 3 if pad == "GND" else 4 if pad.startswith("+") else 5


_PLACERS = {"input-jack": _jack_spots, "output-jack": _jack_spots, "dc-jack": _dc_spots,
            "battery": _battery_spots, "footswitch": _switch_spots}
