"""Pinouts of the common semiconductor types by package, for finding the right way round.

Each row says where it comes from: "datasheet" (checked against the maker's data sheet) or
"from memory" (to be checked against one; the parts list tells the builder so). Packages vary
between makers of the same type, so every pinout on a page comes with the advice to check the
supplier's data sheet.

How pins are read (``Pinout.view``): a TO-92 transistor with its flat face toward you and
the leads down, left to right; a DIP chip from above with the notch at the top, pin 1 at the
top left, counting down that side and up the other; a diode from anode to cathode.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from types import MappingProxyType

TO92_VIEW = "flat face toward you, leads down, left to right"
DIP_VIEW = "from above, notch at the top: pin 1 top left, counting down, then up the right"
DIODE_VIEW = "the band marks the cathode"


@dataclass(frozen=True)
class Pinout:
    """The package of a device type and its pins in the order ``view`` reads them."""

    package: str
    pins: tuple[str, ...]
    view: str
    provenance: str  # "datasheet" or "from memory"

    @property
    def pin_count(self) -> int:
        return len(self.pins)

    def labelled(self) -> str:
        """The pins as one line, ``1 E, 2 B, 3 C``."""
        return ", ".join(f"{i} {name}" for i, name in enumerate(self.pins, start=1))


def _to92(*pins: str) -> Pinout:
    return Pinout("TO-92", pins, TO92_VIEW, "from memory")


def _dip8(*pins: str) -> Pinout:
    return Pinout("DIP-8", pins, DIP_VIEW, "from memory")


def _axial(package: str) -> Pinout:
    return Pinout(package, ("anode", "cathode"), DIODE_VIEW, "from memory")


_DUAL_OPAMP = ("OUT A", "IN A-", "IN A+", "V-", "IN B+", "IN B-", "OUT B", "V+")
_SINGLE_OPAMP = ("offset null", "IN-", "IN+", "V-", "offset null", "OUT", "V+", "n.c.")

# Device type -> pinout. All rows from memory of the usual makers' data sheets.
PINOUTS: Mapping[str, Pinout] = MappingProxyType(
    {
        "2N3904": _to92("E", "B", "C"),
        "2N3906": _to92("E", "B", "C"),
        "2N5088": _to92("E", "B", "C"),
        "2N5089": _to92("E", "B", "C"),
        "BC549C": _to92("C", "B", "E"),
        "BC550C": _to92("C", "B", "E"),
        "2N5457": _to92("D", "S", "G"),
        "J201": _to92("D", "S", "G"),
        "2N5460": _to92("D", "S", "G"),
        "2N7000": _to92("S", "G", "D"),
        "TL072": _dip8(*_DUAL_OPAMP),
        "NE5532": _dip8(*_DUAL_OPAMP),
        "LM358": _dip8(*_DUAL_OPAMP[:3], "GND", *_DUAL_OPAMP[4:]),
        "RC4558": _dip8(*_DUAL_OPAMP),
        "TL071": _dip8(*_SINGLE_OPAMP),
        "1N4148": _axial("DO-35"),
        "1N914": _axial("DO-35"),
        "1N4001": _axial("DO-41"),
        "1N5817": _axial("DO-41"),
        "1N34A": _axial("DO-7"),
        "BAT41": _axial("DO-35"),
    }
)


def pinout_for(model: str | None) -> Pinout | None:
    """The pinout of device type ``model``; a maker's suffix (TL072CP, 2N3904BU) is ignored."""
    if not model:
        return None
    name = model.upper()
    for length in range(len(name), 0, -1):
        if name[:length] in PINOUTS:
            return PINOUTS[name[:length]]
    return None
