"""A shorted supply: a kit drawing more than any pedal supply gives is miswired, not a design.

Every other figure of such a kit would be computed against an ideal supply that holds its
voltage at tens of amps, so the check stops with one error at the part that carries the
current (a diode, resistor or pot wired across the rails, say), before any figure is shown.
"""

from __future__ import annotations

from kitleaf.circuit.chain import KitCircuit
from kitleaf.circuit.parts import Part
from kitleaf.engine import elements as el
from kitleaf.engine.batch import BatchResult
from kitleaf.errors import SpecError
from kitleaf.values import format_value

# A 9 V pedal adapter gives a few hundred milliamps to 2 A, a pedalboard's supply a few amps
# per outlet at most (common practice, no source): a kit drawing more is wired wrong.
SHORT_A = 2.0
SUPPLY_SOURCE = "VSUPPLY"


def check_supply(kit: KitCircuit, batch: BatchResult, setting: str = "") -> None:
    """SpecError at the part carrying most of the supply current when the nominal build
    draws more than :data:`SHORT_A`; ``setting`` words the knob setting (``with Gain at
    0 %``), if not the nominal one."""
    drawn = float(-batch.current(SUPPLY_SOURCE)[0])
    if not drawn > SHORT_A:
        return
    part, amps = culprit(kit, batch, drawn)
    raise SpecError(
        f"stage '{part.stage_id}', {part.designator} carries {format_value(amps, 'current')} "
        f"from the supply{setting} (a kit draws milliamps): the supply is shorted through "
        f"{part.designator}; check the nodes it joins and its value", part.span)


def culprit(kit: KitCircuit, batch: BatchResult, drawn: float) -> tuple[Part, float]:
    """The part carrying the most current, a signal stage's before the power stage's (whose
    series protection carries whatever the kit draws)."""
    elements = {e.name: e for e in batch.system.elements}
    currents = {p.designator: part_current(batch, elements[p.designator])
                for p in kit.parts() if p.designator in elements}
    signal = {p.designator for s in kit.signal_stages for p in s.all_parts()}
    ranked = sorted(kit.parts(), key=lambda p: (
        p.designator in signal and currents.get(p.designator, 0.0) >= drawn / 2,
        currents.get(p.designator, 0.0)), reverse=True)
    return ranked[0], currents.get(ranked[0].designator, 0.0)


def part_current(batch: BatchResult, element) -> float:
    """The nominal DC current through a part (its larger leg for a pot, the main current
    for a semiconductor); 0 for a part that carries none at DC."""
    def volts(node: str) -> float:
        return float(batch.voltage(node)[0])

    if isinstance(element, el.Resistor):
        return abs(volts(element.a) - volts(element.b)) / element.value
    if isinstance(element, el.Pot):
        lower, upper = element.legs()
        return max(abs(volts(element.ccw) - volts(element.w)) / lower,
                   abs(volts(element.w) - volts(element.cw)) / upper)
    if isinstance(element, el.Inductor):
        return abs(float(batch.current(element.name)[0]))
    key = DEVICE_CURRENT.get(type(element))
    return 0.0 if key is None else abs(float(batch.reports(element.name)[0][key]))


DEVICE_CURRENT = {el.Diode: "id", el.Bjt: "ic", el.Jfet: "id"}
