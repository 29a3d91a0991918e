"""The build order: lowest parts first, so the board lies flat on the bench while soldering.

Resistors, diodes, IC sockets, small capacitors, transistors and chips, trimmers, inductors,
electrolytics, LEDs, then the off-board parts: pots, jacks, switches, other hardware
(common practice, no source).
"""

from __future__ import annotations

from collections.abc import Mapping
from types import MappingProxyType

from kitleaf.specs.ratings import POLARISED

# Build group -> its place in the order, and the heading a page or a text list gives it.
BUILD_ORDER: tuple[tuple[str, str], ...] = (
    ("resistor", "Resistors"),
    ("diode", "Diodes"),
    ("socket", "IC sockets"),
    ("capacitor", "Capacitors"),
    ("semiconductor", "Transistors and ICs"),
    ("trimmer", "Trimmers"),
    ("inductor", "Inductors"),
    ("polarised", "Electrolytic capacitors"),
    ("led", "LEDs"),
    ("pot", "Pots"),
    ("jack", "Jacks"),
    ("switch", "Switches"),
    ("hardware", "Hardware"),
)
_RANK: Mapping[str, int] = MappingProxyType({g: i for i, (g, _) in enumerate(BUILD_ORDER)})

# Part type -> build group, where the type alone decides it.
_TYPE_GROUP: Mapping[str, str] = MappingProxyType(
    {
        "resistor": "resistor",
        "diode": "diode",
        "socket": "socket",
        "bjt": "semiconductor",
        "jfet": "semiconductor",
        "opamp": "semiconductor",
        "pump": "semiconductor",
        "inductor": "inductor",
        "led": "led",
        "pot": "pot",
        "trimmer": "trimmer",
        "switch": "switch",
    }
)

# Hardware designator prefix -> group, longest first (common practice, no source).
_HARDWARE_PREFIX: tuple[tuple[str, str], ...] = (
    ("SW", "switch"),
    ("DC", "jack"),
    ("J", "jack"),
    ("S", "switch"),
)


def build_group(part_type: str, designator: str, attrs: Mapping[str, str]) -> str:
    """The build group of a part: its type, split by dielectric or hardware designator."""
    if part_type == "capacitor":
        polarised = attrs.get("dielectric") in POLARISED
        return "polarised" if polarised else "capacitor"
    if part_type == "hardware":
        upper = designator.upper()
        return next((g for p, g in _HARDWARE_PREFIX if upper.startswith(p)), "hardware")
    return _TYPE_GROUP.get(part_type, "hardware")


def build_rank(part_type: str, designator: str, attrs: Mapping[str, str]) -> int:
    """The place of a part's group in :data:`BUILD_ORDER`."""
    return _RANK[build_group(part_type, designator, attrs)]


def group_heading(group: str) -> str:
    return dict(BUILD_ORDER)[group]
