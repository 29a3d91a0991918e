"""A kit circuit solved as a batch: the nominal parts, or seeded tolerance samples, at once.

The samples are drawn exactly as :func:`kitleaf.engine.montecarlo.monte_carlo` draws them
(same generator, same order), so a figure here and the engine's Monte Carlo agree sample for
sample. What the specs need beyond that API (branch currents, complex node voltages, driving-
point impedances with a branch opened) is read from the batched linearised system here.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from kitleaf.engine.ac import small_signal
from kitleaf.engine.compile import System, compile_circuit
from kitleaf.engine.dc import problem_for
from kitleaf.engine.montecarlo import device_banks, part_factors
from kitleaf.engine.newton import extend, initial_state, solve_batch, solve_state

SAMPLES = 200  # enough for stable 5th and 95th percentiles at the shown precision
SEED = 1
FREQ_CHUNK = 24  # frequencies per batched solve, to bound memory on large kits


@dataclass(frozen=True)
class Batch:
    """DC solutions ``x`` (samples, n) and the small-signal G and C (samples, n, n)."""

    system: System = field(repr=False)
    x: np.ndarray = field(repr=False)
    g: np.ndarray = field(repr=False)
    c: np.ndarray = field(repr=False)
    params: dict = field(repr=False)  # device name -> {parameter: (samples,) array}

    @property
    def size(self) -> int:
        return self.x.shape[0]

    def row(self, node: str) -> int | None:
        """The matrix row of ``node``; None for ground."""
        return None if node == "0" else self.system.layout.row(node)

    def voltage(self, node: str) -> np.ndarray:
        """DC voltage of ``node`` per sample."""
        row = self.row(node)
        return np.zeros(self.size) if row is None else self.x[:, row].copy()

    def current(self, branch: str) -> np.ndarray:
        """DC branch current of a voltage source per sample (SPICE sign)."""
        return self.x[:, self.system.layout.branch(branch)].copy()

    def subset(self, idx: np.ndarray) -> Batch:
        """The samples at ``idx`` alone."""
        return Batch(self.system, self.x[idx], self.g[idx], self.c[idx], self.params)

    def excitation(self, source: str) -> np.ndarray:
        """The right-hand side with ``source`` alone at an AC amplitude of one."""
        return self.system.rhs(only=source)[0]

    def solve(self, freqs: np.ndarray, rhs: np.ndarray, g: np.ndarray | None = None,
              c: np.ndarray | None = None) -> np.ndarray:
        """Complex solutions (samples, frequencies, n); ``freqs`` is (F,) or (samples, F)."""
        g = self.g if g is None else g
        c = self.c if c is None else c
        f = np.asarray(freqs, float)
        f = np.broadcast_to(f, (self.size, f.shape[-1]))
        parts = []
        for start in range(0, f.shape[1], FREQ_CHUNK):
            s = 2j * np.pi * f[:, start:start + FREQ_CHUNK]
            a = g[:, None] + s[:, :, None, None] * c[:, None]
            parts.append(solve_batch(a, np.broadcast_to(rhs.astype(complex), a.shape[:-1])))
        return np.concatenate(parts, axis=1)

    def modal(self, rhs: np.ndarray) -> Modal:
        """The response to ``rhs`` in pole-residue form, for cheap evaluation anywhere."""
        return Modal.of(self.g, self.c, rhs)

    def opened(self, branch: str) -> tuple[np.ndarray, np.ndarray]:
        """G and C with a voltage source's branch forced to zero current (the source removed)."""
        k = self.system.layout.branch(branch)
        g, c = self.g.copy(), self.c.copy()
        g[:, k, :], c[:, k, :] = 0.0, 0.0
        g[:, k, k] = 1.0
        return g, c

    def impedance(self, node: str, freqs: np.ndarray, opened: str | None = None) -> np.ndarray:
        """Driving-point impedance (samples, F) from ``node`` to ground, every source at rest."""
        g, c = self.opened(opened) if opened else (self.g, self.c)
        rhs = np.zeros(self.system.layout.size)
        rhs[self.row(node)] = 1.0
        return self.solve(freqs, rhs, g, c)[:, :, self.row(node)]


@dataclass(frozen=True)
class Modal:
    """x(s) = x0 - s P (w / (1 + s lambda)) per sample, from (I + sE) x = x0 with E = G^-1 C.

    E's columns vanish outside the rows ``d`` a capacitance touches, so x_d = (I + s E_dd)^-1
    x0_d exactly and only E_dd is diagonalised (E_dd = V diag(lambda) V^-1, w = V^-1 x0_d);
    then x = x0 - s E[:, d] x_d gives every row, with P = E[:, d] V.
    """

    x0: np.ndarray  # (samples, n)
    p: np.ndarray  # (samples, n, k)
    w: np.ndarray  # (samples, k)
    lambdas: np.ndarray  # (samples, k)

    @classmethod
    def of(cls, g: np.ndarray, c: np.ndarray, rhs: np.ndarray) -> Modal:
        d = np.flatnonzero(np.any(c != 0, axis=(0, 1)))
        b = np.broadcast_to(rhs[None, :, None], (g.shape[0], rhs.size, 1))
        solved = np.linalg.solve(g, np.concatenate([b, c[:, :, d]], axis=2))
        x0, e = solved[:, :, 0], solved[:, :, 1:]
        lambdas, vecs = np.linalg.eig(e[:, d, :])
        w = np.linalg.solve(vecs, x0[:, d, None].astype(complex))[..., 0]
        return cls(x0, e @ vecs, w, lambdas)

    def __call__(self, freqs: np.ndarray, rows: list[int]) -> np.ndarray:
        """Node voltages (samples, F, len(rows)); ``freqs`` is (F,) or (samples, F)."""
        f = np.asarray(freqs, float)
        s = 2j * np.pi * np.broadcast_to(f, (self.x0.shape[0], f.shape[-1]))
        modes = self.w[:, None, :] / (1.0 + s[:, :, None] * self.lambdas[:, None, :])
        return self.x0[:, None, rows] - s[:, :, None] * np.einsum(
            "srk,sfk->sfr", self.p[:, rows, :], modes)


def solve_nominal(circuit) -> Batch:
    """The circuit with every part at its nominal value: a batch of one."""
    system = compile_circuit(circuit)
    problem = problem_for(system)
    state = initial_state(problem, 1)
    solve_state(problem, state)
    return _batch(system, problem, state.x, None, 1)


def solve_samples(circuit, samples: int = SAMPLES, seed: int = SEED,
                  start: np.ndarray | None = None) -> Batch:
    """``samples`` seeded variants within part tolerances and device spreads (uniform).

    Newton starts every sample at the nominal operating point, or at ``start`` (samples, n):
    the same samples solved in a nearby state, such as another knob position.
    """
    system = compile_circuit(circuit)
    rng = np.random.default_rng(seed)
    factors = part_factors(system, rng, samples, "uniform")
    problem = problem_for(system, factors, device_banks(system, rng, samples))
    state = initial_state(problem, samples)
    state.x[:] = solve_nominal(circuit).x if start is None else start
    # Junction voltages that match the start point, so Newton's first step is not limited.
    state.vstar = [np.array(v) for v in problem.devices.junctions(extend(state.x))]
    solve_state(problem, state)
    return _batch(system, problem, state.x, factors, samples)


def _batch(system: System, problem, x: np.ndarray, factors, samples: int) -> Batch:
    g, c, _, _ = small_signal(system, problem.devices, x, factors)
    g = np.broadcast_to(g, (samples, *g.shape[1:])).copy()
    c = np.broadcast_to(c, (samples, *c.shape[1:])).copy()
    return Batch(system, x, g, c, _device_params(problem, samples))


def _device_params(problem, samples: int) -> dict:
    """Each device's model parameters as (samples,) arrays (spreads drawn where modelled)."""
    out = {}
    for bank in problem.devices.banks:
        for d, name in enumerate(bank.names):
            out[name] = {k: np.broadcast_to(v[:, d], (samples,)) for k, v in bank.params.items()}
    return out
