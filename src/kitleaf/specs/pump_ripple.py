"""A charge pump's own switching ripple: how much it leaves on the rail it makes, and how much
of it reaches the kit's output.

The engine's pump is averaged over its switching (docs/engine.md), so the ripple is computed
here, from the textbook charge-pump relation (the 7660's data sheet, from memory): the
reservoir capacitor alone carries the load for half of each pump cycle, so the rail sags by

    ripple (peak to peak) = I_load / (2 f_pump C_reservoir) = I_load / (f_osc C_reservoir)

with f_pump = f_osc / 2, the pump running at half its oscillator's frequency (FOSC); the
reservoir's series resistance adds to it and is left out. The ripple's fundamental, at
f_pump, reaches the output as the rail's voltage does: 1 A injected at the rail gives every
node's voltage in proportion to the rail's, exactly (substitution), and the output's share
of the rail's at f_pump times the ripple, taken as a sine of the same peak to peak (a
sawtooth's fundamental is smaller), is the RMS figure published.
"""

from __future__ import annotations

import numpy as np

from kitleaf.circuit.chain import OUTPUT
from kitleaf.circuit.rails import DOUBLED, DOUBLED_NODE, MADE_BY, NEGATIVE_NODE
from kitleaf.specs.model import PumpRipple
from kitleaf.specs.solve import View

RAIL_NODES = {DOUBLED: DOUBLED_NODE}  # any other rail a pump makes is the negative one


def pump_ripples(solved) -> tuple[PumpRipple, ...]:
    """Each charge pump of the kit's power stages: its ripple on its rail and at the output,
    knobs at half way, and the output's loudest over every knob and switch setting."""
    found = []
    for stage in solved.kit.stages:
        for rail, role in MADE_BY.items():
            chip = stage.part(role)
            if chip is not None:
                found.append(_ripple(solved, chip, stage.part(f"{role}-reservoir"),
                                     RAIL_NODES.get(rail, NEGATIVE_NODE)))
    return tuple(found)


def _ripple(solved, chip, reservoir, node: str) -> PumpRipple:
    fosc = chip.device.get("FOSC")
    hz = fosc / 2.0
    on_rail = rail_ripple(chip.designator, reservoir.designator, reservoir.value, fosc)
    at_output = output_ripple(on_rail, node, hz)
    return PumpRipple(chip.designator, node, hz, solved.base.range(on_rail),
                      solved.base.range(at_output), *_loudest(solved, at_output))


def _loudest(solved, at_output) -> tuple[tuple, float]:
    """The knob or switch setting where the most ripple reaches the output (nominal parts)."""
    best: tuple[tuple, float] = ((), float(at_output(solved.base.nominal)[0]))
    for control in solved.kit.controls:
        for (_, shown), state in zip(control.steps, solved.sweeps[control.designator],
                                     strict=True):
            level = float(at_output(state.nominal)[0])
            if level > best[1]:
                best = (((control.name, shown),), level)
    return best


def rail_ripple(pump: str, reservoir: str, farads: float, fosc: float):
    """Peak-to-peak volts on the rail per build: the pump's load over f_osc C_reservoir."""
    def measure(v: View) -> np.ndarray:
        load = np.abs(v.batch.current(pump))
        return load / (fosc * farads * v.batch.factor(reservoir))
    return measure


def output_ripple(on_rail, node: str, hz: float):
    """RMS volts at the kit's output per build from ``on_rail`` peak to peak at ``node``."""
    freqs = np.array([hz])

    def measure(v: View) -> np.ndarray:
        def solve() -> np.ndarray:
            rhs = np.zeros(v.batch.system.layout.size)
            rhs[v.batch.row(node)] = 1.0
            return v.batch.solve(freqs, rhs)[:, 0]
        x = v.once(("pump-ripple", node, hz), solve)
        out = v.batch.row(OUTPUT)
        share = np.abs(x[:, out] / x[:, v.batch.row(node)])
        return share * on_rail(v) / (2.0 * np.sqrt(2.0))
    return measure
