"""Small-signal AC analysis: the circuit linearised at its operating point, batched in frequency."""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from kitleaf.engine import elements as el
from kitleaf.engine.compile import System
from kitleaf.engine.dc import OperatingPoint
from kitleaf.engine.newton import extend, solve_batch
from kitleaf.engine.nonlinear import Devices
from kitleaf.errors import SolveError


@dataclass(frozen=True)
class Linearised:
    """The small-signal system at an operating point: (G + j w C) x = b."""

    system: System
    g: np.ndarray
    c: np.ndarray

    def solve(self, freqs: np.ndarray, rhs: np.ndarray) -> np.ndarray:
        """Solutions (frequencies, n) for one right-hand side, in one batched solve."""
        s = 2j * np.pi * np.asarray(freqs, dtype=float)
        a = self.g[None, :, :] + s[:, None, None] * self.c[None, :, :]
        return solve_batch(a, np.broadcast_to(rhs.astype(complex), (s.size, rhs.size)))


def linearise(op: OperatingPoint) -> Linearised:
    """Jacobian and capacitance matrix of the circuit at ``op`` (junction capacitances included)."""
    system = op.system
    g, c = system.matrices()
    x = op.x[None, :]
    if system.families:
        devices = Devices(system.families, system.layout.size)
        v = devices.junctions(extend(x))
        _, dev_g = devices.linearise(v, v)
        g, c = g + dev_g, c + devices.capacitance(v)
    return Linearised(system, g[0], c[0])


@dataclass(frozen=True)
class AcResult:
    """Complex node voltages at ``freqs`` for one excited source of amplitude ``amplitude``."""

    freqs: np.ndarray
    source: str
    amplitude: float
    solution: np.ndarray = field(repr=False)
    linear: Linearised = field(repr=False, compare=False)

    def voltage(self, node: str) -> np.ndarray:
        if node == el.GROUND:
            return np.zeros(self.freqs.size, dtype=complex)
        return self.solution[:, _row(self.linear.system, node)]

    def transfer(self, node: str) -> np.ndarray:
        """Node voltage per unit of the source's AC amplitude."""
        return self.voltage(node) / self.amplitude

    def current(self, name: str) -> np.ndarray:
        """Branch current of a voltage source or inductor (SPICE sign, as in OperatingPoint),
        or a resistor's current from its first node to its second."""
        system = self.linear.system
        part = system.elements[system.owners[name]] if name in system.owners else None
        if isinstance(part, el.Resistor):
            return (self.voltage(part.a) - self.voltage(part.b)) / part.value
        if name not in system.layout.branches:
            raise SolveError(f"no AC current is recorded for {name!r} (voltage sources, "
                             "inductors and resistors have one)")
        return self.solution[:, system.layout.branch(name)]

    def at(self, freqs: np.ndarray) -> AcResult:
        """The same analysis re-solved at other frequencies (exact, no interpolation)."""
        return solve_linearised(self.linear, freqs, self.source)

    def input_impedance(self) -> np.ndarray:
        """Impedance the excited source sees looking into the circuit."""
        part = self.linear.system.elements[self.linear.system.owners[self.source]]
        if isinstance(part, el.VSource):
            branch = self.solution[:, self.linear.system.layout.branch(self.source)]
            return self.amplitude / -branch
        return (self.voltage(part.n) - self.voltage(part.p)) / self.amplitude

    def output_impedance(self, node: str) -> np.ndarray:
        """Impedance from ``node`` to ground with every source at rest (V shorted, I open)."""
        rhs = np.zeros(self.linear.system.layout.size)
        rhs[_row(self.linear.system, node)] = 1.0
        return self.linear.solve(self.freqs, rhs)[:, _row(self.linear.system, node)]


def _row(system: System, node: str) -> int:
    try:
        return system.layout.row(node)
    except KeyError:
        raise SolveError(f"no node named {node!r} in the circuit") from None


def solve_linearised(linear: Linearised, freqs, source: str) -> AcResult:
    freqs = _check_freqs(freqs)
    part = _source(linear.system, source)
    amplitude = part.ac if part.ac != 0.0 else 1.0
    rhs = linear.system.rhs(only=source, amplitude=amplitude)[0]
    return AcResult(freqs, source, amplitude, linear.solve(freqs, rhs), linear)


def solve_ac(circuit, op: OperatingPoint, freqs, source: str) -> AcResult:
    """AC response to ``source`` (its ``ac`` amplitude, or 1 when that is 0) at ``freqs`` Hz."""
    if circuit is not None and tuple(circuit.elements) != op.system.elements:
        raise SolveError("the operating point was solved for a different circuit")
    return solve_linearised(linearise(op), freqs, source)


def _check_freqs(freqs) -> np.ndarray:
    arr = np.atleast_1d(np.asarray(freqs, dtype=float))
    if arr.ndim != 1 or arr.size == 0 or not np.all(np.isfinite(arr)) or np.any(arr <= 0):
        raise SolveError("AC frequencies must be a non-empty list of positive numbers (Hz)")
    return arr


def _source(system: System, name: str) -> el.VSource | el.ISource:
    index = system.owners.get(name)
    part = None if index is None else system.elements[index]
    if not isinstance(part, el.VSource | el.ISource):
        raise SolveError(f"{name!r} is not a voltage or current source of the circuit")
    return part
