"""Device families (diode, BJT, JFET, op-amp), each compiled into a vectorised Bank."""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

from kitleaf.engine.devices.base import Bank


@dataclass(frozen=True)
class Family:
    """How one element type compiles: its internal nodes and its Bank builder."""

    name: str
    element_type: type
    internal_nodes: Callable[[object], tuple[str, ...]]
    build: Callable[[list, object], Bank]


FAMILIES: list[Family] = []


def register_family(family: Family) -> Family:
    FAMILIES.append(family)
    return family


# The family modules register themselves; imported last because they use the names above.
from kitleaf.engine.devices import bjt, diode, jfet, opamp  # noqa: E402, F401

__all__ = ["FAMILIES", "Bank", "Family", "register_family"]
