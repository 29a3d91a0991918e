"""Batched solves for callers that need each sample's unknowns, not only spreads.

``solve_batch`` solves a circuit's nominal parts (a batch of one) or seeded tolerance samples
drawn exactly as :func:`~kitleaf.engine.monte_carlo` draws them, so a figure read here agrees
with Monte Carlo sample for sample. The result keeps every DC unknown (node voltages, then
branch currents), each device's parameters, and answers small-signal questions per sample:
complex responses at chosen frequencies, in pole-residue form or by direct solve.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from functools import cached_property

import numpy as np

from kitleaf.engine import elements as el
from kitleaf.engine.ac import small_signal
from kitleaf.engine.batch_lu import solve_many
from kitleaf.engine.blocks import BlockResponse, cap_ends, split
from kitleaf.engine.compile import Layout, System, compile_circuit
from kitleaf.engine.dc import nominal_jacobian, problem_for
from kitleaf.engine.montecarlo import DISTRIBUTIONS, draw_problem, nominal_state
from kitleaf.engine.newton import Problem, State, extend, initial_state, solve_stack, state_at
from kitleaf.engine.ports import PoleResidue, capacitances, modal, port_form
from kitleaf.engine.reduce import Reduced, partition, reduce_problem, solve_reduced
from kitleaf.engine.sparse_ac import SPARSE_SIZE, SparseAc
from kitleaf.engine.sparse_stack import SparseStack
from kitleaf.errors import SolveError

FREQ_CHUNK = 24  # frequencies per direct batched solve, to bound memory on large circuits
CHECK_HZ = 1000.0  # where a pole-residue response is checked against the direct port solve


@dataclass(frozen=True)
class BatchResult:
    """DC unknowns ``x`` (samples, n) laid out by ``layout``, and each device's parameters."""

    layout: Layout
    x: np.ndarray = field(repr=False)
    params: dict = field(repr=False)  # device name -> {parameter: (samples,) array}
    # (samples, parts and pots' upper legs) or None (nominal); see System.full_factors
    factors: np.ndarray | None = field(repr=False)
    system: System = field(repr=False, compare=False)
    # the DC problem; a large batch keeps it without G (see ``problem``)
    stored: Problem = field(repr=False, compare=False)
    # each bank's junction voltages Newton ended at, per sample (a nominal start uses them)
    vstar: list | None = field(default=None, repr=False, compare=False)
    # a nominal batch's reduced Jacobian, for the first step of samples started from it
    chord: np.ndarray | None = field(default=None, repr=False, compare=False)
    # the DC reduction of ``problem`` when Newton made one (the AC response reuses it)
    reduced: Reduced | None = field(default=None, repr=False, compare=False)

    @property
    def size(self) -> int:
        return self.x.shape[0]

    @property
    def problem(self) -> Problem:
        """The DC problem, G rebuilt from the parts when the batch did not keep it."""
        if self.stored.g is not None:
            return self.stored
        return replace(self.stored, g=self.system.conductances(self.factors))

    def row(self, node: str) -> int | None:
        """The unknown's index of ``node``; None for ground."""
        if node == el.GROUND:
            return None
        if node not in self.layout.nodes:
            raise SolveError(f"no node named {node!r} in the circuit")
        return self.layout.row(node)

    def voltage(self, node: str) -> np.ndarray:
        """DC voltage of ``node`` per sample."""
        row = self.row(node)
        return np.zeros(self.size) if row is None else self.x[:, row].copy()

    def current(self, name: str) -> np.ndarray:
        """DC branch current of a voltage source or inductor per sample (SPICE sign)."""
        if name not in self.layout.branches:
            raise SolveError(f"{name!r} is not a voltage source or inductor of the circuit")
        return self.x[:, self.layout.branch(name)].copy()

    def reports(self, name: str) -> tuple[dict, ...]:
        """Device ``name``'s operating-point figures (region, currents, voltages) in each
        sample, as :func:`~kitleaf.engine.solve_dc` reports them."""
        xe = extend(self.x)
        for bank in self.stored.devices.banks:
            if name in bank.names:
                d, v = bank.names.index(name), bank.junctions(xe)
                return tuple(_one_sample(bank, k).report(v[k:k + 1], xe[k:k + 1], d)
                             for k in range(self.size))
        raise SolveError(f"no semiconductor or op-amp named {name!r}")

    def factor(self, name: str) -> np.ndarray:
        """The multiplier each sample drew for part ``name``'s value (ones when nominal)."""
        names = [e.name for e in self.system.elements]
        if name not in names:
            raise SolveError(f"no part named {name!r} in the circuit")
        if self.factors is None:
            return np.ones(self.size)
        return self.factors[:, names.index(name)].copy()

    def leg_factors(self, name: str) -> tuple[np.ndarray, np.ndarray]:
        """Pot ``name``'s multipliers per sample: its lower leg's (ccw to wiper), which
        :meth:`factor` gives, and its upper leg's (alike unless its wiper moved)."""
        uppers = self.system.stamper.upper_legs
        if name not in uppers:
            raise SolveError(f"no pot named {name!r} in the circuit")
        if self.factors is None:
            return np.ones(self.size), np.ones(self.size)
        return self.factor(name), self.factors[:, uppers[name]].copy()

    def excitation(self, source: str, amplitude: float = 1.0) -> np.ndarray:
        """The right-hand side (n,) with ``source`` alone at ``amplitude``."""
        if source not in self.system.stamper.source_cols:
            raise SolveError(f"{source!r} is not a source of the circuit")
        return self.system.rhs(only=source, amplitude=amplitude)[0]

    def take(self, idx: np.ndarray) -> BatchResult:
        """The samples at ``idx`` alone, at the operating points solved for them here."""
        return BatchResult(self.layout, self.x[idx],
                           {n: {k: v[idx] for k, v in p.items()} for n, p in self.params.items()},
                           None if self.factors is None else self.factors[idx], self.system,
                           self.stored.take(idx))

    @cached_property
    def matrices(self) -> tuple[np.ndarray, np.ndarray]:
        """Small-signal G and C per sample, (samples, n, n) each."""
        g, c, _, _ = small_signal(self.system, self.stored.devices, self.x, self.factors)
        shape = (self.size, *g.shape[1:])
        return np.broadcast_to(g, shape).copy(), np.broadcast_to(c, shape).copy()

    def dc_resistance(self, pairs: list[tuple[str, str]], samples: np.ndarray) -> np.ndarray:
        """The small-signal DC resistance (k, pairs) between each pair of nodes of the
        chosen ``samples`` (k,), with every source at rest: what a meter across them sees."""
        problem = self.problem.take(samples)
        factors = None if self.factors is None else self.factors[samples]
        g, _, _, _ = small_signal(self.system, problem.devices, self.x[samples], factors)
        rhs = np.zeros((samples.size, self.layout.size, len(pairs)))
        for k, (a, b) in enumerate(pairs):
            for node, sign in ((a, 1.0), (b, -1.0)):
                if (row := self.row(node)) is not None:
                    rhs[:, row, k] += sign
        v = solve_many(np.broadcast_to(g, (samples.size, *g.shape[1:])).copy(), rhs)
        return np.einsum("snk,snk->sk", rhs, v)

    def solve_ac(self, freqs, rhs: np.ndarray, opened: str | None = None,
                 samples: np.ndarray | None = None) -> np.ndarray:
        """Complex unknowns (samples, F, n) by direct solve; ``freqs`` (F,) or (samples, F).

        ``opened`` names a voltage source whose branch is forced to carry no current (the
        source taken out); ``samples`` restricts the solve to those sample indices. A large
        circuit is solved sparsely (see :mod:`~kitleaf.engine.sparse_ac`)."""
        k = None if opened is None else self.layout.branch(opened)
        if self.layout.size >= SPARSE_SIZE:
            return self._sparse.solve(freqs, rhs, k, samples)
        g, c = self.matrices
        if samples is not None:
            g, c = g[samples], c[samples]
        f = np.asarray(freqs, float)
        f = np.broadcast_to(f, (g.shape[0], f.shape[-1]))
        parts = []
        for start in range(0, f.shape[1], FREQ_CHUNK):
            s = 2j * np.pi * f[:, start:start + FREQ_CHUNK]
            a = g[:, None] + s[:, :, None, None] * c[:, None]
            if k is not None:  # the branch's row says its current is zero
                a[:, :, k, :] = 0.0
                a[:, :, k, k] = 1.0
            parts.append(solve_stack(a, np.broadcast_to(rhs.astype(complex), a.shape[:-1])))
        return np.concatenate(parts, axis=1)

    @cached_property
    def _sparse(self) -> SparseAc:
        return SparseAc(self.system, self.stored.devices, self.x, self.factors)

    def impedance(self, node: str, freqs, opened: str | None = None) -> np.ndarray:
        """Driving-point impedance (samples, F) from ``node`` to ground, sources at rest."""
        rhs = np.zeros(self.layout.size)
        rhs[self.row(node)] = 1.0
        return self.solve_ac(freqs, rhs, opened)[:, :, self.row(node)]

    def response(self, rhs: np.ndarray, rows: list[int] | None = None,
                 check_hz: float = CHECK_HZ, joints: tuple[str, ...] = ()
                 ) -> PoleResidue | BlockResponse:
        """The response to ``rhs`` (n,) at unknowns ``rows`` (default: every node) in
        pole-residue form, checked per sample at ``check_hz``; call it with frequencies.

        A large circuit whose ``joints`` (nodes where its parts meet) split it into blocks
        is answered block by block instead (see :mod:`~kitleaf.engine.blocks`): one
        eigenproblem of the whole circuit grows with the cube of its size."""
        if joints and self.layout.size >= SPARSE_SIZE:
            blocks = self._blocks(rhs, joints)
            if blocks is not None:
                return blocks
        rows = list(range(len(self.layout.nodes))) if rows is None else rows
        ports = port_form(self.system, partition(self.system), self.problem, self.x,
                          self.factors, rhs[None, :], rows, self._reduction)
        return modal(ports, check_hz)

    def _blocks(self, rhs: np.ndarray, joints: tuple[str, ...]) -> BlockResponse | None:
        nodes, fixed = len(self.layout.nodes), partition(self.system)
        known = {int(r): (int(b), float(sign)) for r, b, sign in
                 zip(fixed.fixed, fixed.fixed_branch, fixed.fixed_sign, strict=True)}
        part = split(self._sparse, [self.layout.row(j) for j in joints
                                    if j in self.layout.nodes], nodes, known)
        if part is None:
            return None
        devices = self.stored.devices
        v = devices.junctions(extend(self.x)) if devices.banks else None
        a, d, _ = capacitances(self.system, self.stored, v, self.factors, self.size)
        return BlockResponse(self._sparse, part, cap_ends(a, d), rhs, nodes)

    @cached_property
    def _reduction(self) -> Reduced | None:
        """The DC reduction (G_LL eliminated once), from Newton or made here: the response
        then works on the device rows and never forms an n x n matrix per sample."""
        part = partition(self.system)
        if self.reduced is not None or part is None or not self.stored.devices.banks:
            return self.reduced
        try:
            return reduce_problem(self.problem, part)
        except SolveError:
            return None


def solve_batch(circuit, samples: int | None = None, seed: int = 1,
                distribution: str = "uniform", start: np.ndarray | None = None,
                nominal: BatchResult | None = None, scale: np.ndarray | None = None,
                spread: bool = True) -> BatchResult:
    """The circuit's nominal operating point (``samples`` None: a batch of one) or
    ``samples`` seeded variants within part tolerances and device spreads; ``scale``
    (samples, elements) multiplies each sample's drawn part values (1 leaves a part alone;
    with a further column per pot, :func:`~kitleaf.engine.elements.upper_leg_columns`,
    a pot's two legs apart, which moves its wiper),
    and without ``spread`` the samples are the nominal parts changed by ``scale`` alone.

    Newton starts every sample at the nominal operating point, or at ``start`` (samples, n):
    the same samples solved in a nearby state (another knob position, say). ``nominal`` is
    this circuit's nominal batch when the caller has solved it already: the samples then
    start from it as from a nominal solve of their own, bit for bit.
    """
    system = compile_circuit(circuit)
    if samples is None:
        problem, factors = _nominal(system)
        state, reduced = nominal_state(system, problem, 1), None
    else:
        if distribution not in DISTRIBUTIONS or samples < 1:
            raise SolveError(f"a batch needs samples >= 1 and a distribution in "
                             f"{DISTRIBUTIONS}")
        if scale is not None and (scale.ndim != 2 or scale.shape[0] != samples
                                  or scale.shape[1] not in (len(system.elements),
                                                            system.factor_count)):
            raise SolveError(f"scale must be (samples, elements) = ({samples}, "
                             f"{len(system.elements)}), or with a column per pot's upper leg "
                             f"({system.factor_count}), got {scale.shape}")
        problem, factors, _ = draw_problem(system, samples, seed, distribution, scale, spread)
        state = _started(system, problem, samples, start, nominal)
        reduced = solve_reduced(problem, state, partition(system))
    return BatchResult(system.layout, state.x, _device_params(problem, state.x.shape[0]),
                       factors, system, _kept(system, problem), state.vstar,
                       state.chord if samples is None else None,
                       None if samples is None else reduced)


def share_operating_point(result: BatchResult, circuit) -> BatchResult:
    """``circuit`` at ``result``'s operating point, with its drawn parts and devices.

    Exact only when ``circuit`` differs from ``result``'s circuit in parts that carry no DC
    current there (a pot moved with both legs at zero volts): the same unknowns then satisfy
    both circuits' DC equations, so no Newton solve is needed. The caller checks that.
    """
    system = compile_circuit(circuit)
    if system.layout != result.layout:
        raise SolveError("the circuits' unknowns differ; their operating points cannot be shared")
    banks = None if result.factors is None else result.stored.devices.banks
    problem = _kept(system, problem_for(system, result.factors, banks))
    return BatchResult(system.layout, result.x, result.params, result.factors, system,
                       problem, result.vstar)


def nominal_variants(result: BatchResult, scale: np.ndarray) -> BatchResult:
    """``result``, a nominal batch, as ``scale.shape[0]`` variants of its circuit, each with
    its parts multiplied by its row of ``scale`` (variants, elements), all at ``result``'s
    operating point.

    Exact only where the scaled parts carry no DC current (capacitors): the same unknowns then
    satisfy every variant's DC equations, so no Newton solve is needed. The caller checks that.
    """
    system = result.system
    if result.factors is not None or result.size != 1:
        raise SolveError("variants are made of a nominal batch (one sample, nominal parts)")
    if scale.ndim != 2 or scale.shape[1] not in (len(system.elements), system.factor_count):
        raise SolveError(f"scale must be (variants, elements) = (k, {len(system.elements)}), "
                         f"or with a column per pot's upper leg ({system.factor_count}), got "
                         f"{scale.shape}")
    count, factors = scale.shape[0], system.full_factors(scale)
    problem = _kept(system, problem_for(system, factors))
    vstar = None if result.vstar is None else [np.repeat(v, count, axis=0) for v in result.vstar]
    return BatchResult(system.layout, np.repeat(result.x, count, axis=0),
                       _device_params(problem, count), factors, system, problem, vstar)


def _kept(system: System, problem: Problem) -> Problem:
    """What a batch keeps of its DC problem: a large circuit's tolerance samples leave G
    out, since (samples, n, n) is quadratic in the circuit (a forty-stage kit's took 260 MB
    per solved state) and the answers read it once at most (it is rebuilt then)."""
    if system.layout.size < SPARSE_SIZE or problem.g.shape[0] == 1:
        return problem
    return replace(problem, g=None)


def _nominal(system: System):
    problem, _, _ = draw_problem(system, None, 0, "uniform")
    return problem, None


def _started(system: System, problem: Problem, samples: int, start, nominal) -> State:
    if start is None and nominal is not None:
        return _from_nominal(system, problem, samples, nominal)
    if start is None:
        return nominal_state(system, problem, samples)
    state = initial_state(problem, samples)
    state.x[:] = start
    # junction voltages that match the start point, so Newton's first step is not limited
    state.vstar = [np.array(v) for v in problem.devices.junctions(extend(state.x))]
    state.fresh = False
    return state


def _from_nominal(system: System, problem: Problem, samples: int,
                  nominal: BatchResult) -> State:
    """As :func:`nominal_state`, with the nominal solve taken from ``nominal``."""
    if (nominal.factors is not None or nominal.vstar is None
            or nominal.system.elements != system.elements):
        raise SolveError("the nominal batch was solved for another circuit")
    state = state_at(problem, samples, nominal.x, nominal.vstar)
    sparse = isinstance(problem.g, SparseStack)
    state.chord = nominal_jacobian(system, nominal.x) if sparse else nominal.chord
    return state


def _one_sample(bank, k: int):
    """``bank`` with sample ``k``'s parameters alone (a device's report reads sample 0)."""
    return bank.with_params(**{key: v[k:k + 1] for key, v in bank.params.items()
                               if v.shape[0] > 1})


def _device_params(problem: Problem, samples: int) -> dict:
    """Each device's model parameters as (samples,) arrays (spreads drawn where modelled)."""
    out = {}
    for bank in problem.devices.banks:
        for d, name in enumerate(bank.names):
            out[name] = {k: np.broadcast_to(v[:, d], (samples,)) for k, v in bank.params.items()}
    return out
