"""The DC stress on each part at the kit's nominal operating point, for the rating checks.

A capacitor's stress is the DC voltage across it (volts); a resistor's or a pot's is the power
it dissipates (watts). Both come from the engine's operating point with every knob at half its
rotation, the state the guide page's voltage table shows.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from types import MappingProxyType

from kitleaf.circuit.chain import KitCircuit
from kitleaf.engine import elements as el
from kitleaf.engine import solve_dc
from kitleaf.specs.solve import nominal_positions


def _across(op, a: str, b: str) -> float:
    return op.voltage(a) - op.voltage(b)


def _capacitor(op, part: el.Capacitor) -> float:
    return abs(_across(op, part.a, part.b))


def _resistor(op, part: el.Resistor) -> float:
    return _across(op, part.a, part.b) ** 2 / part.value


def _pot(op, part: el.Pot) -> float:
    """Both legs of the track, each at the resistance the wiper leaves it."""
    lower, upper = part.legs()
    return (_across(op, part.ccw, part.w) ** 2 / lower
            + _across(op, part.w, part.cw) ** 2 / upper)


# Engine element type -> its stress at an operating point; other elements are not rated here.
STRESS: Mapping[type, Callable] = MappingProxyType(
    {el.Capacitor: _capacitor, el.Resistor: _resistor, el.Pot: _pot}
)


def part_stresses(kit: KitCircuit) -> dict[str, float]:
    """Designator -> DC stress of every capacitor, resistor and pot the kit lists."""
    circuit = kit.netlist(nominal_positions(kit))
    op = solve_dc(circuit)
    designators = {part.designator for part in kit.parts()}
    return {
        element.name: STRESS[type(element)](op, element)
        for element in circuit.elements
        if element.name in designators and type(element) in STRESS
    }
