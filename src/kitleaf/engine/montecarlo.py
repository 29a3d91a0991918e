"""Monte Carlo over part tolerances and device spreads, vectorised across samples."""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field, replace

import numpy as np

from kitleaf.engine import elements as el
from kitleaf.engine.circuit import Circuit
from kitleaf.engine.compile import System, compile_circuit
from kitleaf.engine.dc import nominal_jacobian, problem_for
from kitleaf.engine.devices.base import Bank
from kitleaf.engine.mc_response import McResponse, mc_response
from kitleaf.engine.newton import State, initial_state, state_at
from kitleaf.engine.reduce import partition, solve_reduced
from kitleaf.engine.sparse_stack import SparseStack
from kitleaf.errors import SolveError

DISTRIBUTIONS = ("uniform", "normal")


@dataclass(frozen=True)
class Spread:
    """5th percentile, median and 95th percentile of a sampled figure (NaNs left out)."""

    p5: float
    median: float
    p95: float
    missing: int = 0  # samples without a value (a corner beyond the searched band)

    @classmethod
    def of(cls, values: np.ndarray) -> Spread:
        finite = values[np.isfinite(values)]
        if finite.size == 0:
            return cls(float("nan"), float("nan"), float("nan"), int(values.size))
        p5, p50, p95 = np.percentile(finite, [5.0, 50.0, 95.0])
        return cls(float(p5), float(p50), float(p95), int(values.size - finite.size))


@dataclass(frozen=True)
class McResult:
    """Per-sample DC voltages, gains and corners; ``Spread`` summaries through the methods."""

    samples: int
    seed: int
    distribution: str
    dc: Mapping[str, np.ndarray] = field(repr=False)
    response: McResponse | None = field(repr=False)
    circuit: object = field(repr=False, compare=False)
    factors: np.ndarray = field(repr=False, compare=False)
    draws: Mapping[str, Mapping[str, np.ndarray]] = field(repr=False, compare=False)

    def factor(self, part: str) -> np.ndarray:
        """The multipliers drawn for one part's value, one per sample."""
        names = [e.name for e in self.circuit.elements]
        if part not in names:
            raise SolveError(f"no part named {part!r} in the circuit")
        return self.factors[:, names.index(part)]

    def sample(self, index: int):
        """Sample ``index`` as an ordinary Circuit (its drawn values written in), e.g. to solve
        the worst case alone or to check the batch against the single-circuit solvers."""
        out = Circuit(self.circuit.title)
        for k, part in enumerate(self.circuit.elements):
            changes: dict = {}
            if getattr(part, "tol", 0.0):
                changes["value"] = part.value * float(self.factors[index, k])
            if part.name in self.draws:
                drawn = {p: float(v[index]) for p, v in self.draws[part.name].items()}
                changes["model"] = replace(part.model, params={**part.model.params, **drawn},
                                           spread={})
            out._add(replace(part, **changes))
        return out

    def voltage(self, node: str) -> Spread:
        return Spread.of(self._get(self.dc, node))

    def gain_db(self, node: str, freq: float) -> Spread:
        return Spread.of(self._get(self._ac().gain_db, (node, float(freq))))

    def corner_low(self, node: str) -> Spread:
        return Spread.of(self._get(self._ac().corners, node)[0])

    def corner_high(self, node: str) -> Spread:
        return Spread.of(self._get(self._ac().corners, node)[1])

    def _ac(self) -> McResponse:
        if self.response is None:
            raise SolveError("this Monte Carlo run had no AC part (give freqs and source)")
        return self.response

    @staticmethod
    def _get(table: Mapping, key):
        try:
            return table[key]
        except KeyError:
            raise SolveError(f"{key!r} was not requested from the Monte Carlo run") from None


def part_factors(system: System, rng: np.random.Generator, samples: int,
                 distribution: str) -> np.ndarray:
    """Value multipliers (samples, parts): uniform over 1 +- tol, or normal with sigma tol/3
    clipped at +-tol."""
    tol = np.array([getattr(e, "tol", 0.0) for e in system.elements])
    if distribution == "uniform":
        unit = rng.uniform(-1.0, 1.0, (samples, tol.size))
    else:
        unit = np.clip(rng.normal(0.0, 1.0 / 3.0, (samples, tol.size)), -1.0, 1.0)
    return 1.0 + unit * tol[None, :]


def device_banks(system: System, rng: np.random.Generator, samples: int,
                 draws: dict | None = None) -> list[Bank]:
    """Banks whose spread parameters are drawn uniformly over each model's range; the drawn
    model parameters are recorded per device in ``draws``."""
    banks, draws = [], {} if draws is None else draws
    for bank in system.families:
        # per-sample copies of the drawn parameters only; the rest stay (1, devices)
        drawn_keys = {"BETA" if k == "IDSS" else k for name in bank.names
                      for k in system.elements[system.owners[name]].model.spread}
        params = {k: np.broadcast_to(v, (samples, v.shape[1])).copy() if k in drawn_keys
                  else v for k, v in bank.params.items()}
        for d, name in enumerate(bank.names):
            model = system.elements[system.owners[name]].model
            # IDSS last: it needs this sample's VTO
            for key, (low, high) in sorted(model.spread.items(), key=lambda kv: (
                    kv[0] == "IDSS", kv[0])):
                drawn = rng.uniform(low, high, samples)
                if key == "IDSS":  # BETA follows from IDSS = BETA * VTO**2
                    vto = params["VTO"][:, d]
                    key, drawn = "BETA", tracking_idss(model.spread, vto, drawn) / vto ** 2
                params[key][:, d] = drawn
                draws.setdefault(name, {})[key] = params[key][:, d]
        banks.append(bank.with_params(**params))
    return banks


# How far a JFET's IDSS strays from the curve its pinch-off sets, as a factor either way
# (from memory: datasheet plots of IDSS against VGS(off) show a band about that wide).
IDSS_SCATTER = 1.2


def tracking_idss(spread, vto: np.ndarray, drawn: np.ndarray) -> np.ndarray:
    """IDSS that follows the sample's pinch-off, as real JFETs' does (from memory: the part
    with the smallest |VGS(off)| of a type has the smallest IDSS, the largest the largest).

    The curve is the power law through the corners of the datasheet's two ranges; ``drawn``
    (uniform over the IDSS range) places the part within IDSS_SCATTER of it, and the result
    stays inside the IDSS range. Without a VTO range the draw is used as it is."""
    low, high = spread["IDSS"]
    near, far = sorted(abs(v) for v in spread.get("VTO", (0.0, 0.0)))
    if not 0.0 < low < high or not 0.0 < near < far:
        return drawn
    power = np.log(high / low) / np.log(far / near)
    curve = low * (np.clip(np.abs(vto), near, far) / near) ** power
    place = (drawn - low) / (high - low) * 2.0 - 1.0  # -1 .. 1
    return np.clip(curve * IDSS_SCATTER ** place, low, high)


def monte_carlo(circuit, samples: int = 1000, seed: int = 1, freqs: Sequence[float] = (),
                source: str | None = None, nodes: Sequence[str] = (),
                outputs: Sequence[str] = (), distribution: str = "uniform",
                corner_band: tuple[float, float] | None = None,
                ref_hz: float | None = None) -> McResult:
    """Solve ``samples`` variants of ``circuit`` at once; seeded, so reproducible.

    DC voltages are kept for ``nodes``; for ``outputs``, the gain at every one of ``freqs``
    and the -3 dB corners (relative to the gain at ``ref_hz``, or to the peak). Corners are
    searched on ``corner_band`` at 8 points per decade; without one, on ``freqs`` when they
    are that dense already, else on 1 Hz..1 MHz. See docs/engine.md for the draws.
    """
    if distribution not in DISTRIBUTIONS or samples < 1:
        raise SolveError(f"Monte Carlo needs samples >= 1 and a distribution in {DISTRIBUTIONS}")
    system = compile_circuit(circuit)
    problem, factors, draws = draw_problem(system, samples, seed, distribution)
    state = nominal_state(system, problem, samples)
    reduced = solve_reduced(problem, state, partition(system), currents=False)
    dc = {n: state.x[:, _row(system, n)].copy() for n in nodes}
    response = None
    if outputs:
        if source is None or not len(freqs):
            raise SolveError("AC outputs need a source and at least one frequency")
        response = mc_response(system, problem, state.x, factors, source,
                               np.asarray(freqs, float), list(outputs), corner_band, ref_hz,
                               reduced)
    return McResult(samples, seed, distribution, dc, response, circuit, factors, draws)


def draw_problem(system: System, samples: int | None, seed: int, distribution: str,
                 scale: np.ndarray | None = None, spread: bool = True):
    """The DC problem of ``samples`` seeded draws (None: the nominal parts), with the part
    factors (None when nominal; a column per element, then one per pot's upper leg) and the
    drawn device parameters; ``scale`` (samples, elements), or with the upper legs' columns
    too, multiplies the drawn factors (a part changed in some samples); without ``spread``
    the parts stay nominal and only ``scale`` changes them."""
    if samples is None:
        return problem_for(system), None, {}
    if not spread:
        factors = system.full_factors(np.ones((samples, len(system.elements)))
                                      if scale is None else scale)
        return problem_for(system, factors), factors, {}
    rng = np.random.default_rng(seed)
    factors = system.full_factors(part_factors(system, rng, samples, distribution))
    if scale is not None:
        factors = factors * system.full_factors(scale)
    draws: dict = {}
    problem = problem_for(system, factors, device_banks(system, rng, samples, draws))
    return problem, factors, draws


def nominal_state(system: System, problem, samples: int) -> State:
    """Start every sample at the nominal operating point, with its Jacobian for the first
    step (see State.chord): a few Newton steps each."""
    nominal = problem_for(system)
    start = initial_state(nominal, 1)
    reduced = solve_reduced(nominal, start, partition(system))
    state = state_at(problem, samples, start.x, start.vstar)
    if isinstance(problem.g, SparseStack):
        state.chord = nominal_jacobian(system, start.x)
    elif reduced is not None:
        state.chord = reduced.jacobian(start.x)
    return state


def _row(system: System, node: str) -> int:
    if node == el.GROUND or node not in system.layout.nodes:
        raise SolveError(f"no node named {node!r} in the circuit")
    return system.layout.row(node)
