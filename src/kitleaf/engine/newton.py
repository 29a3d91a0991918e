"""Batched Newton-Raphson for the DC operating point, with gmin and source stepping fallbacks."""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from kitleaf.engine.batch_lu import solve_many
from kitleaf.engine.nonlinear import Devices
from kitleaf.engine.sparse_stack import SparseStack
from kitleaf.errors import SolveError

RELTOL = 1e-9
VNTOL = 1e-9  # volts
ABSTOL = 1e-14  # amperes, for branch-current unknowns
MAX_ITER = 100
# A step this far inside the tolerance (in units of it) whose size predicts the next one
# below PREDICTED (quadratic convergence: next ~ step**3 / previous**2) ends the iteration:
# the point it reached is then within a tenth of the tolerance.
PREDICTED = 0.1
QUADRATIC_REACH = RELTOL ** -0.5 * 0.3  # the step's relative size squared <= 0.09 RELTOL
# The batch drops its settled samples once they are a fifth of it: copying every device
# parameter of the rest costs more than stepping a few settled samples once more.
SHRINK = 0.8


@dataclass(frozen=True)
class Problem:
    """A batch of DC problems: G (s, n, n), b (s, n), and the devices (params per sample).
    A large circuit's G is a :class:`SparseStack` (the same matrices on their entries).

    ``fixed`` holds voltages (1, f) the devices may read beyond ground (index n + 1 on): the
    nodes a reduced problem keeps fixed by their sources (see reduce.py)."""

    g: np.ndarray
    b: np.ndarray
    devices: Devices
    node_count: int
    fixed: np.ndarray | None = None

    def extend(self, x: np.ndarray) -> np.ndarray:
        """``x`` with ground and the fixed voltages appended, for the device rows."""
        if self.fixed is None:
            return extend(x)
        fixed = np.broadcast_to(self.fixed, (x.shape[0], self.fixed.shape[1]))
        return np.concatenate([x, np.zeros((x.shape[0], 1)), fixed], axis=1)

    def take(self, idx: np.ndarray) -> Problem:
        banks = [bank.with_params(**{k: _rows(v, idx) for k, v in bank.params.items()})
                 for bank in self.devices.banks]
        devices = self.devices.with_banks(banks)
        g = None if self.g is None else _rows(self.g, idx)  # a large batch keeps no G
        return replace(self, g=g, b=_rows(self.b, idx), devices=devices)


def _rows(a: np.ndarray, idx: np.ndarray) -> np.ndarray:
    return a[idx] if a.shape[0] > 1 else a


@dataclass
class State:
    """Unknowns, the junction voltages devices were last evaluated at, iteration counts.

    A fresh state evaluates devices at its initial junction voltages (not at x = 0), as
    SPICE does on its first iteration. A state started at one solved point may carry that
    point's Jacobian as ``chord``: every sample then takes its first step with it (the
    predictor of a continuation from the solved point to the sample's parts), not with its
    own Jacobian there, which a device the spread has switched off at that point leaves
    blind to it (see docs/engine.md)."""

    x: np.ndarray
    vstar: list[np.ndarray]
    iterations: np.ndarray
    fresh: bool = True
    chord: np.ndarray | SparseStack | None = None  # (1, n, n)


def extend(x: np.ndarray) -> np.ndarray:
    """Append the ground column (index n) so device rows can point at it."""
    return np.concatenate([x, np.zeros((x.shape[0], 1))], axis=1)


def solve_stack(a: np.ndarray, rhs: np.ndarray) -> np.ndarray:
    try:
        out = solve_many(a, rhs[..., None])[..., 0]
    except np.linalg.LinAlgError:
        raise SolveError("the circuit matrix is singular (a floating node or a loop of "
                         "sources); check the connections") from None
    return out


def newton(problem: Problem, state: State, gshunt: float = 0.0, scale: float = 1.0,
           max_iter: int | None = None) -> np.ndarray:
    """Iterate ``state`` in place; return the per-sample convergence flags. A converged
    sample stops iterating, so the batch costs what its unsettled samples cost."""
    max_iter = MAX_ITER if max_iter is None else max_iter
    size = problem.g.shape[-1]
    shunt = np.zeros(size)
    shunt[: problem.node_count] = gshunt
    tol_abs = np.where(np.arange(size) < problem.node_count, VNTOL, ABSTOL)
    done = np.zeros(state.x.shape[0], dtype=bool)
    previous = np.full(done.size, np.inf)  # the last unlimited step, in tolerance units
    active, sub = np.arange(done.size), problem
    for _ in range(max_iter):
        full = active.size == done.size  # then the state itself is stepped, no copies
        part = state if full else State(state.x[active], [v[active] for v in state.vstar],
                                        active, state.fresh)
        step, limited = _step(sub, part, shunt, scale)
        state.chord = None
        with np.errstate(invalid="ignore"):
            new_x = part.x + step
            norm = np.max(np.abs(step) / (RELTOL * np.maximum(np.abs(new_x), np.abs(part.x))
                                          + tol_abs), axis=1)
        finite = np.isfinite(norm)
        if not finite.all():
            new_x = np.where(finite[:, None], new_x, part.x)
        if full:
            state.x = new_x
        else:
            state.x[active] = new_x
            for whole, v in zip(state.vstar, part.vstar, strict=True):
                whole[active] = v
        state.iterations[active] += 1
        state.fresh = False
        # sticky: a settled sample kept in the batch (see SHRINK) only refines further
        done[active] |= _converged(norm, previous[active]) & ~limited & finite
        previous[active] = np.where(limited, np.inf, norm)
        if done.all():
            break
        if np.count_nonzero(~done) < SHRINK * active.size:
            active = np.flatnonzero(~done)
            sub = problem.take(active)
    return done


def _converged(norm: np.ndarray, previous: np.ndarray) -> np.ndarray:
    """Steps within tolerance (``norm`` <= 1, in units of it), or steps that predict the
    next one far inside it: Newton's error squares each step, so after steps of sizes p and
    n the next is about n**3 / p**2. Accepting those saves the step that would only
    confirm convergence; the step must be well inside the quadratic regime (its relative
    size squared far under RELTOL) and smaller than the step before (an unlimited one)."""
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        predicted = norm ** 3 / previous ** 2
    return (norm <= 1.0) | ((norm < previous) & (norm <= QUADRATIC_REACH)
                            & (predicted <= PREDICTED))


def _step(problem: Problem, state: State, shunt: np.ndarray, scale: float
          ) -> tuple[np.ndarray, np.ndarray]:
    """One Newton step; also reports which samples had a junction voltage limited."""
    x, g = state.x, problem.g
    sparse = isinstance(g, SparseStack)
    product = g.times(x) if sparse else np.einsum("sij,sj->si", g, x)
    residual = product - (problem.b if scale == 1.0 else scale * problem.b)
    jac, slopes = g, None
    if shunt.any():  # gmin stepping only: plain Newton skips these products
        residual = residual + shunt * x
        if not sparse:
            jac = jac + np.diag(shunt)
    limited = np.zeros(x.shape[0], dtype=bool)
    if problem.devices.banks:
        vraw = problem.devices.junctions(problem.extend(x))
        vlim = state.vstar if state.fresh else [
            bank.limit(vr, vs) for bank, vr, vs in
            zip(problem.devices.banks, vraw, state.vstar, strict=True)]
        state.fresh = False
        for vr, vl in zip(vraw, vlim, strict=True):
            limited |= np.any(vr != vl, axis=(1, 2))
        if sparse:
            currents, slopes = problem.devices.linearise_slopes(vlim, vraw)
        else:
            currents, dev_jac = problem.devices.linearise(vlim, vraw)
            jac = jac + dev_jac
        residual = residual + currents
        state.vstar = vlim
    if state.chord is not None:
        step = _chord_step(state.chord, -residual)
        if step is not None:
            return step, limited
    if sparse:
        return g.solve(-residual, slopes, shunt), limited
    return solve_stack(jac, -residual), limited


def _chord_step(chord, rhs: np.ndarray) -> np.ndarray | None:
    """Every sample's step with one shared Jacobian (one factorisation); None when that
    Jacobian is singular, and each sample then steps with its own."""
    if isinstance(chord, SparseStack):
        return chord.solve_shared(rhs)
    try:
        return np.linalg.solve(chord[0], rhs.T).T
    except np.linalg.LinAlgError:
        return None


def state_at(problem: Problem, samples: int, x: np.ndarray, vstar: list[np.ndarray]) -> State:
    """``samples`` samples all starting at one solved point: its unknowns ``x`` and the
    junction voltages ``vstar`` its devices were last evaluated at."""
    state = initial_state(problem, samples)
    state.x[:] = x
    for whole, v in zip(state.vstar, vstar, strict=True):
        whole[:] = v
    state.fresh = False
    return state


def initial_state(problem: Problem, samples: int) -> State:
    size = problem.g.shape[-1]
    vstar = [np.broadcast_to(bank.initial(), (samples, *bank.jp.shape)).copy()
             for bank in problem.devices.banks]
    return State(np.zeros((samples, size)), vstar, np.zeros(samples, dtype=int))


GMIN_STEPS = tuple(10.0 ** -k for k in range(2, 13))
MAX_SOURCE_STEPS = 100


def solve_state(problem: Problem, state: State) -> str:
    """Solve every sample, falling back per failing sample; returns the hardest method used."""
    ok = newton(problem, state)
    if ok.all():
        return "newton"
    bad = np.flatnonzero(~ok)
    for method, strategy in (("gmin stepping", _gmin_stepping),
                             ("source stepping", _source_stepping)):
        sub = problem.take(bad)
        trial = initial_state(sub, bad.size)
        done = strategy(sub, trial)
        _merge(state, trial, bad, done)
        bad = bad[~done]
        if bad.size == 0:
            return method
    raise SolveError(f"the DC operating point did not converge ({bad.size} of "
                     f"{ok.size} samples), even with gmin and source stepping")


def _gmin_stepping(problem: Problem, state: State) -> np.ndarray:
    done = np.ones(state.x.shape[0], dtype=bool)
    for gshunt in (*GMIN_STEPS, 0.0):
        done &= newton(problem, state, gshunt=gshunt)
    return done


def _source_stepping(problem: Problem, state: State) -> np.ndarray:
    newton(problem, state, scale=0.0)
    scale, step, budget = 0.0, 0.1, MAX_SOURCE_STEPS
    while scale < 1.0 and step > 1e-4 and budget > 0:
        budget -= 1
        saved = State(state.x.copy(), [v.copy() for v in state.vstar], state.iterations.copy())
        target = min(1.0, scale + step)
        if newton(problem, state, scale=target).all():
            scale, step = target, step * 1.5
        else:
            state.x, state.vstar, step = saved.x, saved.vstar, step / 2.0
    if scale < 1.0:
        return np.zeros(state.x.shape[0], dtype=bool)
    return newton(problem, state)


def _merge(state: State, trial: State, idx: np.ndarray, done: np.ndarray) -> None:
    state.x[idx] = trial.x
    state.iterations[idx] += trial.iterations
    for whole, part in zip(state.vstar, trial.vstar, strict=True):
        whole[idx] = part
