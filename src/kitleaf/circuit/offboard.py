"""The off-board pieces the wiring diagram draws, recognised from the kit block's hardware lines.

A hardware line says what it is in its first words ("J1 input jack, 6.35 mm stereo"); the
pieces wired to the board are the input and output jacks, the DC jack, the footswitch and the
battery clip. Each gets its lugs, named as a builder finds them on the part. Other hardware
(the enclosure, the knobs) is not wired and is left to the parts list.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

from kitleaf.circuit.parts import Part
from kitleaf.errors import CircuitError, SourceSpan

# The first words of a hardware line -> the piece it is (lower case, spaces or hyphens).
ROLE_WORDS = (
    ("input jack", "input-jack"),
    ("output jack", "output-jack"),
    ("dc jack", "dc-jack"),
    ("power jack", "dc-jack"),
    ("footswitch", "footswitch"),
    ("battery clip", "battery"),
    ("battery snap", "battery"),
)
# Pole counts by the trade's names for a switch (single to four pole, double throw).
_POLES = {"spdt": 1, "dpdt": 2, "3pdt": 3, "4pdt": 4}
_POLE_WORD = re.compile(r"\b(spdt|dpdt|3pdt|4pdt)\b")
_CENTRE = re.compile(r"\bcent(?:re|er)[ -](negative|positive)\b")
_STEREO = re.compile(r"\b(stereo|trs)\b")
# Designator letters of an indicator (DS, LED): its resistor belongs with it on the board.
_INDICATOR = re.compile(r"^(DS|LED)\d")


@dataclass(frozen=True)
class Lug:
    """One solder point: a lug of an off-board piece, or a pad of the board (owner "board")."""

    owner: str
    name: str

    def __str__(self) -> str:
        return f"{self.owner} {self.name}"


@dataclass(frozen=True)
class Piece:
    """An off-board piece that is wired: its designator, what it is and its lugs."""

    designator: str
    role: str
    lugs: tuple[str, ...]
    span: SourceSpan
    description: str
    poles: int = 0  # a footswitch's
    centre: str = ""  # a DC jack's centre pin: "negative" or "positive"

    def lug(self, name: str) -> Lug:
        assert name in self.lugs, (self.designator, name)
        return Lug(self.designator, name)

    @property
    def stereo(self) -> bool:
        return "ring" in self.lugs


def read_pieces(hardware: tuple[Part, ...]) -> dict[str, Piece]:
    """The wired pieces by role; a role given twice or an unreadable piece is a located error."""
    pieces: dict[str, Piece] = {}
    for part in hardware:
        _refuse_indicator(part)
        role = role_of(part.text)
        if role is None:
            continue
        if role in pieces:
            raise CircuitError(
                f"{part.designator} is a second {role.replace('-', ' ')} (the first is "
                f"{pieces[role].designator}, line {pieces[role].span.line}); the wiring "
                "diagram draws one, so keep one line", part.span)
        pieces[role] = _READERS[role](part, role)
    return pieces


def role_of(description: str) -> str | None:
    words = description.lower().replace("-", " ")
    return next((role for start, role in ROLE_WORDS if words.startswith(start)), None)


def _refuse_indicator(part: Part) -> None:
    if _INDICATOR.match(part.designator):
        raise CircuitError(
            f"{part.designator} is an indicator LED among the hardware; put it in the power "
            "stage as 'led: LED1 red' with its 'led-resistor: R10 4k7', so its resistor is on "
            "the board and the wiring diagram and the current draw count it", part.span)


def _jack(part: Part, role: str) -> Piece:
    stereo = _STEREO.search(part.text.lower()) is not None
    lugs = ("tip", "ring", "sleeve") if stereo else ("tip", "sleeve")
    return Piece(part.designator, role, lugs, part.span, part.text)


def _dc_jack(part: Part, role: str) -> Piece:
    found = _CENTRE.search(part.text.lower())
    if found is None:
        raise CircuitError(
            f"{part.designator} does not say its polarity; write 'centre negative' (common "
            "practice for pedals) or 'centre positive' in its hardware line, as the adapter "
            "is marked", part.span)
    return Piece(part.designator, role, ("centre pin", "switched lug", "sleeve"), part.span,
                 part.text,
                 centre=found[1])


def _footswitch(part: Part, role: str) -> Piece:
    found = _POLE_WORD.search(part.text.lower())
    if found is None:
        raise CircuitError(
            f"{part.designator} does not say its poles; write '3PDT' (three poles, the usual "
            "footswitch for true bypass with an LED), 'DPDT' or 'SPDT' in its hardware line",
            part.span)
    poles = _POLES[found[1]]
    lugs = tuple(str(n) for n in range(1, 3 * poles + 1))
    return Piece(part.designator, role, lugs, part.span, part.text, poles=poles)


def _battery(part: Part, role: str) -> Piece:
    return Piece(part.designator, role, ("red lead +", "black lead -"), part.span, part.text)


_READERS = {"input-jack": _jack, "output-jack": _jack, "dc-jack": _dc_jack,
            "footswitch": _footswitch, "battery": _battery}


def switch_lug(switch: Piece, pole: int, row: str) -> Lug:
    """The lug of pole ``pole`` (0-based) in ``row``: "on" (the effect in), "common" or
    "bypass". Lugs are numbered row by row from the lug side, the commons in the middle row."""
    offset = {"on": 0, "common": 1, "bypass": 2}[row] * switch.poles
    return switch.lug(str(offset + pole + 1))
