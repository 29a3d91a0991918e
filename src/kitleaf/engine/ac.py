"""Small-signal AC analysis: the circuit linearised at its operating point, batched in frequency."""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from kitleaf.engine import elements as el
from kitleaf.engine.compile import System, incidence
from kitleaf.engine.dc import OperatingPoint
from kitleaf.engine.newton import extend, solve_stack
from kitleaf.engine.nonlinear import Devices
from kitleaf.engine.poles import decompose, evaluate
from kitleaf.engine.stamps import apply
from kitleaf.errors import SolveError


@dataclass(frozen=True)
class Linearised:
    """The small-signal system at an operating point: (G + j w C) x = b, C = A diag(d) A^T."""

    system: System
    g: np.ndarray
    c: np.ndarray
    cap_a: np.ndarray
    cap_d: np.ndarray
    _forms: dict = field(default_factory=dict, repr=False, compare=False)

    def solve(self, freqs: np.ndarray, rhs: np.ndarray) -> np.ndarray:
        """Solutions (frequencies, n) for one right-hand side, in one batched solve."""
        s = 2j * np.pi * np.asarray(freqs, dtype=float)
        a = self.g[None, :, :] + s[:, None, None] * self.c[None, :, :]
        return solve_stack(a, np.broadcast_to(rhs.astype(complex), (s.size, rhs.size)))

    def response(self, source: str, rhs: np.ndarray, freqs: np.ndarray) -> np.ndarray:
        """Solutions (frequencies, n) for a source's excitation: from the pole-residue form
        when it reproduces the direct solve at the check frequencies, else solved directly."""
        if source not in self._forms:
            self._forms[source] = self._checked_form(rhs)
        form = self._forms[source]
        if form is None:
            return self.solve(freqs, rhs)
        return evaluate(*form, np.asarray(freqs, dtype=float))[0]

    def _checked_form(self, rhs: np.ndarray):
        form = decompose(self.g[None], self.cap_a, self.cap_d[None], rhs)
        direct = self.solve(CHECK_HZ, rhs)
        fast = evaluate(*form, CHECK_HZ)[0]
        scale = np.max(np.abs(direct), axis=1, keepdims=True)
        return form if np.all(np.abs(fast - direct) <= AGREEMENT * scale) else None


CHECK_HZ = np.array([1.0, 1e3, 1e6])
AGREEMENT = 1e-9  # relative to the largest unknown at each check frequency


def small_signal(system: System, devices: Devices, x: np.ndarray,
                 factors: np.ndarray | None = None) -> tuple[np.ndarray, ...]:
    """Batched G, C (s, n, n) linearised at operating points ``x`` (s, n), with C's factors:
    incidence A (n, m) and values d (s, m). Junction capacitances are included."""
    g, c = system.matrices(factors)
    g = np.broadcast_to(g, (x.shape[0], *g.shape[1:]))
    cap_a, cap_d = system.cap_columns(factors)
    cap_d = np.broadcast_to(cap_d, (x.shape[0], cap_d.shape[1]))
    if devices.banks:
        v = devices.junctions(extend(x))
        _, dev_g = devices.linearise(v, v)
        dev_d = devices.cap_values(v)
        g, c = g + dev_g, c + apply(dev_d, devices.cap_map, c.shape[1:])  # dense C as well
        cap_a = np.concatenate([cap_a, incidence(system.layout.size, devices.cap_pairs())], 1)
        cap_d = np.concatenate([cap_d, dev_d], axis=1)
    return g, c, cap_a, cap_d


def linearise(op: OperatingPoint) -> Linearised:
    """The circuit's small-signal system at ``op``."""
    g, c, cap_a, cap_d = small_signal(op.system, op.system.devices, op.x[None, :])
    return Linearised(op.system, g[0], c[0], cap_a, cap_d[0])


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
    return AcResult(freqs, source, amplitude, linear.response(source, rhs, freqs), linear)


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
