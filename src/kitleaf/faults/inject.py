"""One fault built into the kit's circuit as it would be on the bench: parts moved, values
changed, wires left out, with no switches. The outside check exports these to ngspice."""

from __future__ import annotations

import dataclasses

from kitleaf.circuit.chain import GROUND, SUPPLY, KitCircuit
from kitleaf.engine import Circuit
from kitleaf.faults.board import (
    BOARD_GROUND,
    FLAT_V,
    R_LEAK,
    R_ON,
    R_STRAY,
    add_strays,
    board_parts,
)
from kitleaf.faults.model import Bridge, Fault, Leak, Pins, Supply, Value, Wire


def faulted_circuit(kit: KitCircuit, fault: Fault, supply_v: float | None = None) -> Circuit:
    """``kit`` built with ``fault`` (knobs half way); a missing wire or an open part is
    left as the board's stray leakage (R_STRAY), as on the fault board."""
    volts = kit.supply_v if supply_v is None else supply_v
    parts = board_parts(kit)
    edits = fault.edits
    values = {e.part: e.factor for e in edits if isinstance(e, Value)}
    fits = {e.package: e.pads for e in edits if isinstance(e, Pins)}
    circuit = Circuit(f"fault {fault.key}")
    for e in parts.loose:
        factor = values.get(e.name)
        circuit.add(dataclasses.replace(e, value=e.value * factor) if factor else e)
    for package, sections in parts.packages:
        fit = fits.get(package.name, tuple(range(len(package.pins))))
        for e in sections:
            moved = {field: package.pads[fit[pin]]
                     for pin, wired in enumerate(package.wiring)
                     for name, field in wired if name == e.name}
            circuit.add(dataclasses.replace(e, **moved))
    add_strays(circuit, parts)
    for k, e in enumerate(x for x in edits if isinstance(x, Bridge)):
        package = next(p for p, _ in parts.packages if p.name == e.package)
        circuit.resistor(f"bridge{k}", package.pads[e.a], package.pads[e.b], R_ON)
    for e in (x for x in edits if isinstance(x, Leak)):
        cap = circuit.element(e.part)
        circuit.resistor(f"{e.part}#leak", cap.a, cap.b, R_LEAK)
    _supply(circuit, volts, edits)
    return circuit


def _supply(circuit: Circuit, volts: float, edits) -> None:
    supply = next((e.name for e in edits if isinstance(e, Supply)), None)
    wires = {e.name for e in edits if isinstance(e, Wire)}
    dc = {None: volts, "flat": FLAT_V, "reversed": -volts}[supply]
    circuit.vsource("VBAT", "bat", GROUND, dc=dc)
    circuit.resistor("wire.bat", "bat", SUPPLY, R_STRAY if "supply" in wires else R_ON)
    circuit.resistor("wire.ground", BOARD_GROUND, GROUND,
                     R_STRAY if "ground" in wires else R_ON)
