"""Batched DC problems reduced to the device terminals: the linear rest eliminated once.

A node tied to ground by a voltage source is known (F). The device rows (T) keep their
unknowns; every other unknown (L) is a linear function of them, eliminated once per sample
by a Schur complement, so Newton iterates on a t x t system instead of n x n:

    (G_TT - G_TL G_LL^-1 G_LT) x_T = r_T - G_TL G_LL^-1 r_L,   r = b - G_:F v_F,

and afterwards x_L = G_LL^-1 (r_L - G_LT x_T). A source's branch current at a fixed node
follows from that node's current balance.
"""

from __future__ import annotations

import dataclasses
import warnings
from dataclasses import dataclass

import numpy as np
from scipy.linalg import LinAlgWarning

from kitleaf.engine import elements as el
from kitleaf.engine.batch_lu import block, solve_many
from kitleaf.engine.compile import incidence
from kitleaf.engine.newton import Problem, State, initial_state, newton, solve_state
from kitleaf.engine.nonlinear import Devices
from kitleaf.engine.sparse_stack import SparseStack
from kitleaf.errors import SolveError

_INDEX_FIELDS = ("jp", "jn", "src", "dst", "cap_a", "cap_b", "ext")


@dataclass(frozen=True)
class Partition:
    """Rows kept for Newton (nodes first), rows fixed by grounded sources, and the rest."""

    size: int
    keep: np.ndarray
    node_count: int
    fixed: np.ndarray  # node rows fixed by a source to ground
    fixed_branch: np.ndarray  # that source's branch row
    fixed_sign: np.ndarray  # v_node = sign * b[branch]
    rest: np.ndarray
    devices: Devices  # the device banks re-indexed into [x_T, ground, v_F]
    cap_rest: np.ndarray | None = None  # the capacitances' incidence on the rest rows

    def values(self, b: np.ndarray) -> np.ndarray:
        """Fixed node voltages (1, f) from a right-hand side (1, n)."""
        return self.fixed_sign[None, :] * b[:, self.fixed_branch]

    def remap(self, banks: list) -> Devices:
        """The reduced device maps over ``banks`` (per-sample parameters kept)."""
        index = self._index()
        moved = [dataclasses.replace(b, **{k: index[getattr(b, k)] for k in _INDEX_FIELDS})
                 for b in banks]
        return self.devices.with_banks(moved)

    def _index(self) -> np.ndarray:
        index = np.full(self.size + 1, -1)
        index[self.keep] = np.arange(self.keep.size)
        index[self.size] = self.keep.size
        index[self.fixed] = self.keep.size + 1 + np.arange(self.fixed.size)
        return index


def partition(system) -> Partition | None:
    """The partition of a compiled system, cached on it."""
    if "_partition" not in system.__dict__:
        system.__dict__["_partition"] = _partition(system)
    return system.__dict__["_partition"]


def _partition(system) -> Partition:
    layout, n = system.layout, system.layout.size
    fixed, branch, sign = [], [], []
    for e in system.elements:
        if isinstance(e, el.VSource) and (e.p == el.GROUND) != (e.n == el.GROUND):
            node, s = (e.p, 1.0) if e.n == el.GROUND else (e.n, -1.0)
            fixed.append(layout.row(node)), branch.append(layout.branch(e.name)), sign.append(s)
    touched = {int(r) for b in system.families for k in ("jp", "jn", "src", "dst")
               for r in getattr(b, k).ravel()}
    nodes = sorted(touched - set(fixed) - {n})
    extra = _looped_branches(system, set(nodes) | set(fixed) | {n}, set(branch))
    keep = np.array(nodes + extra, dtype=int)
    rest = np.setdiff1d(np.arange(n), np.concatenate([keep, fixed, branch]).astype(int))
    part = Partition(n, keep, len(nodes), np.array(fixed, int), np.array(branch, int),
                     np.array(sign), rest, system.devices)
    index = part._index()
    moved = [dataclasses.replace(b, **{k: index[getattr(b, k)] for k in _INDEX_FIELDS})
             for b in system.families]
    caps = np.concatenate([system.cap_columns()[0],
                           incidence(n, system.devices.cap_pairs())], axis=1)
    return dataclasses.replace(part, devices=Devices(moved, keep.size), cap_rest=caps[rest])


def _looped_branches(system, known: set[int], fixed_branches: set[int]) -> list[int]:
    """Branches (sources, inductors) that close a loop through the kept and fixed nodes:
    eliminating them would leave G_LL singular, so they are kept for Newton."""
    layout, parent = system.layout, {r: -1 for r in known}

    def find(r: int) -> int:
        while parent.get(r, r) != r:
            r = parent[r]
        return r

    out = []
    for e in system.elements:
        if not isinstance(e, el.VSource | el.Inductor):
            continue
        k = layout.branch(e.name)
        a, b = (find(layout.row(t)) for t in el.terminals(e))
        if k in fixed_branches:
            continue
        if a == b:
            out.append(k)
        else:
            parent[a] = b
    return out


@dataclass(frozen=True)
class Reduced:
    """A reduced problem and what rebuilds the full unknowns from its solution."""

    problem: Problem
    part: Partition
    back: np.ndarray  # G_LL^-1 G_LT (s, l, t)
    base: np.ndarray  # G_LL^-1 r_L (s, l)
    ports: np.ndarray  # G_LL^-1 [G_LF, A_L] (s, l, f + m), for the small-signal port system

    def jacobian(self, x: np.ndarray) -> np.ndarray:
        """The reduced problem's Jacobian (s, t, t) at full unknowns ``x`` (s, n)."""
        problem = self.problem
        if not problem.devices.banks:
            return problem.g.copy()
        v = problem.devices.junctions(problem.extend(x[:, self.part.keep]))
        return problem.g + problem.devices.linearise(v, v)[1]

    def expand(self, x_keep: np.ndarray, full: Problem, currents: bool = True) -> np.ndarray:
        """Full unknowns (s, n) from the kept ones; fixed sources' currents by balance, or
        NaN without ``currents`` (Monte Carlo reports node voltages only)."""
        part = self.part
        x = np.zeros((x_keep.shape[0], part.size))
        x[:, part.keep] = x_keep
        x[:, part.rest] = self.base - np.einsum("slt,st->sl", self.back, x_keep)
        x[:, part.fixed] = self.problem.fixed
        if not currents:
            x[:, part.fixed_branch] = np.nan
            return x
        v = full.devices.junctions(full.extend(x))
        device_currents = full.devices.currents(v)
        residual = np.einsum("sij,sj->si", full.g[:, part.fixed, :], x) + device_currents[
            :, part.fixed] - full.b[:, part.fixed]
        coeff = full.g[0, part.fixed, part.fixed_branch]
        x[:, part.fixed_branch] = -residual / coeff
        return x


def reduce_problem(problem: Problem, part: Partition) -> Reduced:
    """The Schur complement of ``problem`` on the kept rows; SolveError if G_LL is singular."""
    g, keep, rest = problem.g, part.keep, part.rest
    vf = part.values(problem.b)
    r = problem.b - np.einsum("snf,f->sn", g[:, :, part.fixed], vf[0])
    g_kr = block(g, keep, rest)
    caps = np.broadcast_to(part.cap_rest, (g.shape[0], *part.cap_rest.shape))
    rhs = np.concatenate([block(g, rest, keep), r[:, rest, None], block(g, rest, part.fixed),
                          caps], 2)
    # one factorisation of G_LL serves Newton and, through ``ports``, the AC response
    solved = _solve(block(g, rest, rest), rhs) if rest.size else rhs
    t = keep.size
    back, base, ports = solved[:, :, :t], solved[:, :, t], solved[:, :, t + 1:]
    g_red = block(g, keep, keep) - g_kr @ back
    b_red = r[:, keep] - np.einsum("skl,sl->sk", g_kr, base)
    banks = problem.devices.banks
    reduced = Problem(g_red, b_red, part.remap(banks), part.node_count, vf)
    return Reduced(reduced, part, back, base, ports)


def _solve(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """G_LL^-1 b; SolveError (so the caller solves unreduced) when G_LL is singular."""
    with warnings.catch_warnings():
        warnings.simplefilter("error", LinAlgWarning)
        try:
            return solve_many(a, b, check="growth")
        except (np.linalg.LinAlgError, LinAlgWarning):
            raise SolveError("the linear part of the circuit is singular") from None


def solve_reduced(problem: Problem, state: State, part: Partition | None,
                  currents: bool = True) -> Reduced | None:
    """Solve ``state`` in place by Newton on the device rows; samples it does not settle (and
    circuits it cannot reduce) take the full solver with its fallbacks. Returns the
    reduction (None when there was none), whose elimination the AC response reuses.
    Without ``currents`` the fixing sources' branch currents are left NaN (see expand)."""
    if part is None or not problem.devices.banks or isinstance(problem.g, SparseStack):
        solve_state(problem, state)  # a sparse G is solved whole: its Schur complement fills
        return None
    try:
        red = reduce_problem(problem, part)
    except SolveError:
        solve_state(problem, state)
        return None
    # the chord is a Jacobian of the reduced rows: only the reduced Newton may take it
    chord, state.chord = state.chord, None
    sub = State(state.x[:, part.keep], state.vstar, state.iterations, state.fresh, chord)
    ok = newton(red.problem, sub)
    state.x, state.vstar, state.fresh = red.expand(sub.x, problem, currents), sub.vstar, False
    if ok.all():
        return red
    bad = np.flatnonzero(~ok)
    alone = problem.take(bad)  # the unsettled samples' own parts and device parameters
    retry = initial_state(alone, bad.size)
    solve_state(alone, retry)
    state.x[bad] = retry.x
    for whole, v in zip(state.vstar, retry.vstar, strict=True):
        whole[bad] = v
    return red
