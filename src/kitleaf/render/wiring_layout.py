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
    # A unit vector, or None: straight towards the wire's other end (also the way for a wire
    # to a lug level with this one).
    exit: Point | None
    label: str
    label_at: Point  # where the lug's name starts, ends or is centred (``anchor``)
    anchor: str


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
    anchor = "end" if exit[0] > 0 else "start"  # the name inside the piece
    return {piece.lug(name): LugSpot(piece.lug(name), (x, top + LUG_STEP * i), exit,
                                     words.get(name, name),
                                     (x - exit[0] * 10.0, top + LUG_STEP * i + 4.0), anchor)
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
    commons in the middle and the bypass row on top, whose wires leave sideways, clear of
    the lugs below them."""
    left, top, width, height = box
    spots = {}
    for i, name in enumerate(piece.lugs):
        row, column = divmod(i, piece.poles)
        x = left + width * (column + 0.5) / piece.poles
        y = top + height - 20.0 - row * (height - 66.0) / 2
        outward = (-1.0, 0.0) if column < (piece.poles - 1) / 2 else (1.0, 0.0)
        exit = outward if row == 2 else None
        spots[piece.lug(name)] = LugSpot(piece.lug(name), (x, y), exit, name,
                                         (x + 8.0, y + 15.0), "start")
    return spots


def _led_spots(designator: str, box) -> dict[Lug, LugSpot]:
    """An LED standing with its cathode up (towards the footswitch), its anode down."""
    left, top, width, height = box
    x = left + width / 2
    cathode, anode = Lug(designator, "cathode"), Lug(designator, "anode")
    return {cathode: LugSpot(cathode, (x, top), None, "cathode (-)", (x + 8.0, top + 4.0),
                             "start"),
            anode: LugSpot(anode, (x, top + height), None, "anode (+)",
                           (x + 8.0, top + height + 4.0), "start")}


def _pad_spots(harness: Harness, box) -> dict[Lug, LugSpot]:
    left, top, width, _ = box
    pads = sorted(harness.pads, key=_pad_rank)
    step = width / len(pads)
    spots = {}
    for i, pad in enumerate(pads):
        x = left + step * (i + 0.5)
        spots[Lug(BOARD, pad)] = LugSpot(Lug(BOARD, pad), (x, top), (0.0, -1.0), pad,
                                         (x, top + 20.0), "middle")
    return spots


def _pad_rank(pad: str) -> int:
    """Along the board's edge: the signal pads, ground, the LED's, the supply (nearest the DC
    jack)."""
    if pad in ("IN", "OUT"):
        return ("IN", "OUT").index(pad)
    return 2 if pad.endswith(" OUT") else 3 if pad == "GND" else 5 if pad.startswith("+") else 4


_PLACERS = {"input-jack": _jack_spots, "output-jack": _jack_spots, "dc-jack": _dc_spots,
            "battery": _battery_spots, "footswitch": _switch_spots}
