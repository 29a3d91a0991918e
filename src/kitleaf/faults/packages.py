"""Semiconductor packages on the board: which device pin sits in which pad, so a part can be
fitted the wrong way round, in another pin order, or turned in its socket."""

from __future__ import annotations

import itertools
import re
from dataclasses import dataclass

from kitleaf.bom.pinouts import pinout_for
from kitleaf.engine import elements as el

# Pinout tables' labels -> the engine element's field, and how a pin is shown.
_FIELDS = {"E": "e", "B": "b", "C": "c", "D": "d", "S": "s", "G": "g", "anode": "a",
           "cathode": "k"}
_OWN_ORDER = {el.Diode: ("anode", "cathode"), el.Bjt: ("E", "B", "C"), el.Jfet: ("D", "S", "G")}
# A dual op-amp in DIP-8, pin 1 first: (section, field); a supply pin serves both sections.
DUAL_PINS = (("A", "out"), ("A", "inn"), ("A", "inp"), ("AB", "vneg"), ("B", "inp"),
             ("B", "inn"), ("B", "out"), ("AB", "vpos"))
# TO-92 leads stand in a row; DIP-8 pins along each side: a bridge joins neighbours.
_ROW_NEIGHBOURS = ((0, 1), (1, 2))
_DIP8_NEIGHBOURS = ((0, 1), (1, 2), (2, 3), (4, 5), (5, 6), (6, 7))


@dataclass(frozen=True)
class Package:
    """A device (or a dual op-amp's two sections) and the pads its pins go in.

    ``pins`` name the pins in package order (E, B, C; 1..8); ``pads`` the board node each
    pad is wired to; ``wiring`` which element fields each pin drives; ``fits`` the other
    ways the part can go in (for each pin, the pad it lands in); ``neighbours`` the pad
    pairs solder can bridge."""

    name: str
    model: str
    pins: tuple[str, ...]
    pads: tuple[str, ...]
    wiring: tuple[tuple[tuple[str, str], ...], ...]
    fits: tuple[tuple[int, ...], ...]
    neighbours: tuple[tuple[int, int], ...]

    def seen_as(self, fit: tuple[int, ...]) -> str:
        """What the pads hold, in pad order: ``C-B-E``."""
        held = [""] * len(fit)
        for pin, pad in enumerate(fit):
            held[pad] = self.pins[pin]
        return "-".join(held)

    def turned(self, fit: tuple[int, ...]) -> bool:
        return all(pad == len(fit) - 1 - pin for pin, pad in enumerate(fit))


def device_package(element) -> Package:
    """A diode, transistor or JFET, its pins in its pinout's order (ours when none)."""
    pinout = pinout_for(element.model.name)
    pins = _OWN_ORDER[type(element)]
    if pinout is not None and set(pinout.pins) == set(pins):
        pins = pinout.pins
    order = tuple(range(len(pins)))
    return Package(element.name, element.model.name, pins,
                   tuple(getattr(element, _FIELDS[p]) for p in pins),
                   tuple(((element.name, _FIELDS[p]),) for p in pins),
                   tuple(p for p in itertools.permutations(order) if p != order),
                   _ROW_NEIGHBOURS if len(pins) == 3 else ())


def opamp_packages(opamps: list, spare: str) -> list[tuple[Package, tuple]]:
    """Dual op-amps by package (U1A and U1B share U1), each with its sections' elements;
    a section the kit leaves out is added as a follower of node ``spare`` (the usual way
    to park it). An op-amp whose type is not a dual DIP-8 is left out."""
    groups: dict[str, list] = {}
    for e in opamps:
        groups.setdefault(package_name(e.name), []).append(e)
    out = []
    for name, sections in sorted(groups.items()):
        pinout = pinout_for(sections[0].model.name)
        if pinout is None or pinout.pin_count != 8 or pinout.pins[6] != "OUT B":
            continue
        by_section = {_section(e.name): e for e in sections}
        first = sections[0]
        for missing in {"A", "B"} - set(by_section):
            park = f"{name}.spare"
            by_section[missing] = el.OpAmp(f"{name}{missing}", spare, park, park, first.vpos,
                                           first.vneg, first.model)
        wiring = tuple(tuple((by_section[s].name, field) for s in sections_of)
                       for sections_of, field in DUAL_PINS)
        pads = tuple(getattr(by_section[s[0]], field) for s, field in DUAL_PINS)
        turned = tuple((i + 4) % 8 for i in range(8))
        package = Package(name, first.model.name, tuple(str(i) for i in range(1, 9)), pads,
                          wiring, (turned,), _DIP8_NEIGHBOURS)
        out.append((package, (by_section["A"], by_section["B"])))
    return out


def package_name(designator: str) -> str:
    """U1A and U1B are sections of package U1."""
    return designator[:-1] if re.fullmatch(r".*\d[AB]", designator) else designator


def _section(designator: str) -> str:
    return designator[-1] if re.fullmatch(r".*\d[AB]", designator) else "A"
