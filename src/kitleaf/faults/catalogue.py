"""The fault catalogue of a kit: what builders get wrong, made from the kit's own parts."""

from __future__ import annotations

from collections.abc import Callable

from kitleaf.circuit.chain import KitCircuit
from kitleaf.circuit.parts import Part
from kitleaf.engine.elements import POT_END_RESISTANCE, Resistor
from kitleaf.faults.board import R_OPEN, Board
from kitleaf.faults.misreads import capacitor_misreads, resistor_misreads
from kitleaf.faults.model import Bridge, Fault, Leak, Pins, Supply, Value, Wire
from kitleaf.faults.packages import Package
from kitleaf.values import format_value

DEFAULT_RESISTOR_TOLERANCE = 0.05


def _resistor(part: Part, board: Board) -> list[Fault]:
    d, ohms = part.designator, part.value
    shown = format_value(ohms, "resistance")
    out = [Fault(f"{d}:open", d, "open", f"{d} ({shown}) open: a dry joint or a lead not "
                 "soldered", (Value(d, R_OPEN / ohms),))]
    tolerance = part.tolerance or DEFAULT_RESISTOR_TOLERANCE
    for value, how in resistor_misreads(ohms, tolerance):
        wrong = format_value(value, "resistance")
        out.append(Fault(f"{d}:as:{wrong}", d, "misread", f"{d} is {wrong} instead of "
                         f"{shown} ({how})", (Value(d, value / ohms),)))
    return out


def _capacitor(part: Part, board: Board) -> list[Fault]:
    d = part.designator
    out = []
    if part.dielectric == "electrolytic":
        out.append(Fault(f"{d}:reversed", d, "reversed", f"{d} (electrolytic) fitted the "
                         "wrong way round: it leaks", (Leak(d),)))
        return out
    shown = format_value(part.value, "capacitance")
    for value, how in capacitor_misreads(part.value):
        wrong = format_value(value, "capacitance")
        out.append(Fault(f"{d}:as:{wrong}", d, "misread", f"{d} is {wrong} instead of {shown} "
                         f"({how}); no DC reading shows it", (Value(d, value / part.value),),
                         dc_visible=False))
    return out


def _trimmer(part: Part, board: Board) -> list[Fault]:
    """A trimmer in a resistor's place: its wiper off the track (open), or never set up, left
    at either end of its travel. One wired as a divider (a custom stage's) has none listed."""
    d = part.designator
    element = board.circuit.element(d)
    if not isinstance(element, Resistor):
        return []
    set_to = element.value
    out = [Fault(f"{d}:open", d, "open", f"{d} (trimmer) open: a dry joint, or its wiper off "
                 "the track", (Value(d, R_OPEN / set_to),))]
    for end, ohms, words in (("ccw", POT_END_RESISTANCE, "anticlockwise"),
                             ("cw", part.value, "clockwise")):
        out.append(Fault(f"{d}:at:{end}", d, "unset", f"{d} not set up: left fully {words} "
                         f"({format_value(ohms, 'resistance')})", (Value(d, ohms / set_to),)))
    return out


def _package(package: Package) -> list[Fault]:
    out = []
    two_pins = len(package.pins) == 2
    for fit in package.fits:
        if two_pins:
            kind, text = "reversed", f"{package.name} fitted the wrong way round"
        elif len(package.pins) == 8:
            kind, text = "turned", f"{package.name} turned round in its socket (pin 1 at pin 5)"
        else:
            seen = package.seen_as(fit)
            kind = "reversed" if package.turned(fit) else "pinout"
            text = (f"{package.name} turned round ({seen} where the board has "
                    f"{'-'.join(package.pins)})" if kind == "reversed" else
                    f"{package.name} in the pin order {seen} (the board has "
                    f"{'-'.join(package.pins)})")
        out.append(Fault(f"{package.name}:fit:{package.seen_as(fit)}", package.name, kind,
                         text, (Pins(package.name, fit),)))
    for a, b in package.neighbours:
        if package.pads[a] != package.pads[b]:
            out.append(Fault(f"{package.name}:bridge:{a + 1}-{b + 1}", package.name, "bridge",
                             f"solder bridge on {package.name} between pin {package.pins[a]} "
                             f"and pin {package.pins[b]}", (Bridge(package.name, a, b),)))
    return out


def _wiring(kit: KitCircuit, board: Board) -> list[Fault]:
    out = [
        Fault("wire:ground", "", "wiring", "the ground wire from the battery clip or DC jack "
              "to the board is missing or not soldered", (Wire("ground"),)),
        Fault("wire:supply", "", "wiring", "the supply wire from the battery clip or DC jack "
              "to the board is missing or not soldered", (Wire("supply"),)),
        Fault("supply:flat", "", "supply", "a flat battery (7 V)", (Supply("flat"),)),
    ]
    if _blocks_reversal(kit):
        out.append(Fault("supply:reversed", "", "supply", "an adapter of the wrong polarity "
                         "(the series protection diode blocks it)", (Supply("reversed"),)))
    return out


def _blocks_reversal(kit: KitCircuit) -> bool:
    """A reversed adapter is safe to list only behind a series protection diode; a shunt
    diode leaves the outcome to the adapter's fuse or current limit."""
    return any(s.kind == "power" and s.part("reverse-diode") is not None
               and s.options.get("reverse-protection", "series") == "series"
               for s in kit.stages)


_BY_TYPE: dict[str, Callable[[Part, Board], list[Fault]]] = {
    "resistor": _resistor, "capacitor": _capacitor, "trimmer": _trimmer,
}


def catalogue(kit: KitCircuit, board: Board) -> tuple[Fault, ...]:
    """Every single fault of the kit, in a stable order: parts by designator order on the
    board, then the semiconductor packages, then wiring and supply."""
    faults: list[Fault] = []
    for part in kit.parts():
        maker = _BY_TYPE.get(part.type)
        if maker is not None and part.value is not None:
            faults += maker(part, board)
    for package in board.packages:
        faults += _package(package)
    faults += _wiring(kit, board)
    return tuple(faults)
