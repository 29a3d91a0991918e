"""DC operating point: capacitors open, inductors shorted, devices solved by Newton-Raphson."""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field

import numpy as np

from kitleaf.engine import elements as el
from kitleaf.engine.compile import System, compile_circuit
from kitleaf.engine.newton import Problem, State, extend, initial_state, solve_state
from kitleaf.engine.sparse_ac import SPARSE_SIZE
from kitleaf.engine.sparse_stack import SparseStack
from kitleaf.errors import SolveError


@dataclass(frozen=True)
class OperatingPoint:
    """The solved DC state of a circuit.

    ``voltages`` maps every named node to volts (ground ``"0"`` is 0). Branch currents follow
    SPICE: a voltage source's current flows into its positive node, through it and out of its
    negative node, so a battery powering the circuit reads negative.
    """

    voltages: Mapping[str, float]
    currents: Mapping[str, float]
    devices: Mapping[str, Mapping[str, float | str]]
    iterations: int
    method: str
    system: System = field(repr=False, compare=False)
    x: np.ndarray = field(repr=False, compare=False)

    def voltage(self, node: str) -> float:
        if node == el.GROUND:
            return 0.0
        try:
            return self.voltages[node]
        except KeyError:
            raise SolveError(f"no node named {node!r} in the circuit") from None

    def current(self, name: str) -> float:
        """Current through a source, inductor or resistor, from its first node to its second."""
        try:
            return self.currents[name]
        except KeyError:
            raise SolveError(f"no current is recorded for {name!r} (sources, inductors and "
                             "resistors have one)") from None

    def device(self, name: str) -> Mapping[str, float | str]:
        try:
            return self.devices[name]
        except KeyError:
            raise SolveError(f"no semiconductor or op-amp named {name!r}") from None


def problem_for(system: System, factors: np.ndarray | None = None,
                banks: list | None = None) -> Problem:
    """The DC problem of ``system``, optionally with per-sample part factors and device banks.
    A large circuit's samples get a sparse G (see :mod:`~kitleaf.engine.sparse_stack`)."""
    large = factors is not None and system.layout.size >= SPARSE_SIZE
    g = system.sparse_conductances(factors) if large else system.conductances(factors)
    devices = system.devices if banks is None else system.devices.with_banks(banks)
    return Problem(g, system.rhs(), devices, len(system.layout.nodes))


def nominal_jacobian(system: System, x: np.ndarray) -> SparseStack:
    """The nominal circuit's DC Jacobian at unknowns ``x`` (1, n), on the sparse structure:
    the chord a large circuit's samples take their first Newton step with."""
    g, devices = system.sparse_conductances(), system.devices
    if not devices.banks:
        return g
    return g.plus_slopes(devices.slopes(devices.junctions(extend(x))))


def solve_dc(circuit) -> OperatingPoint:
    """Solve the DC operating point; raises SolveError when no trustworthy answer is found."""
    system = compile_circuit(circuit)
    problem = problem_for(system)
    state = initial_state(problem, 1)
    method = solve_state(problem, state)
    return _operating_point(system, problem, state, method)


def _operating_point(system: System, problem: Problem, state: State,
                     method: str) -> OperatingPoint:
    x = state.x
    layout = system.layout
    user = _user_nodes(system)
    voltages = {n: float(x[0, i]) for i, n in enumerate(layout.nodes) if n in user}
    currents = {name: float(x[0, layout.branch(name)]) for name in layout.branches}
    currents.update(_passive_currents(system, voltages))
    xe = extend(x)
    devices: dict[str, dict] = {}
    for bank, v in zip(problem.devices.banks, problem.devices.junctions(xe), strict=True):
        for i, name in enumerate(bank.names):
            devices[name] = bank.report(v, xe, i)
    return OperatingPoint(voltages, currents, devices, int(state.iterations.max()), method,
                          system, x[0].copy())


def _user_nodes(system: System) -> set[str]:
    return {n for e in system.elements for n in el.terminals(e)}


def _passive_currents(system: System, v: Mapping[str, float]) -> dict[str, float]:
    def volt(node: str) -> float:
        return 0.0 if node == el.GROUND else v[node]

    out = {}
    for e in system.elements:
        if isinstance(e, el.Resistor):
            out[e.name] = (volt(e.a) - volt(e.b)) / e.value
        elif isinstance(e, el.ISource):
            out[e.name] = e.dc
    return out
