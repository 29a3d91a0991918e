"""One solved state of a kit: the DC operating point and the AC response over the band."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Mapping

import numpy as np

from kitleaf.circuit.chain import SOURCE, KitCircuit
from kitleaf.engine import solve_ac, solve_dc
from kitleaf.specs.response import FREQS


@dataclass
class Solution:
    """A kit solved at given knob positions and supply voltage."""

    circuit: object
    op: object
    ac: object

    def h(self, node: str) -> np.ndarray:
        """Voltage at ``node`` per volt of source, over :data:`FREQS`."""
        return np.asarray(self.ac.transfer(node))

    def at(self, freq: float):
        """The AC solution at one frequency, solved afresh."""
        return solve_ac(self.circuit, self.op, np.array([freq]), source=SOURCE)


def solve_kit(kit: KitCircuit, positions: Mapping[str, float],
              supply_v: float | None = None) -> Solution:
    circuit = kit.netlist(positions, supply_v)
    op = solve_dc(circuit)
    return Solution(circuit, op, solve_ac(circuit, op, FREQS, source=SOURCE))


def nominal_positions(kit: KitCircuit) -> dict[str, float]:
    """Every knob at half its rotation: the state the voltage table and headline assume."""
    return {knob.designator: 0.5 for knob in kit.knobs}
