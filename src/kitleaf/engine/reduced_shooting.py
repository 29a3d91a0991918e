"""Shooting on the reduced time steps: Newton on the ports' start values, members batched.

Each pass steps one period at a fixed step (reduced_steps.py) from the members' start port
values q_0 and the history before them, carrying d q / d q_0; Newton on q_0 (the monodromy
matrix minus the identity, pseudo-inverted) lands on the periodic state. BDF2 also reads
the point before the start: it is taken as q_0 plus the last pass's final backward
difference, so at convergence the start's whole history is the period's own end and the
result is the periodic solution of the fixed-step formula. The first pass starts at the
DC operating point with no backward difference (a damped start).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from kitleaf.engine.batch import BatchResult
from kitleaf.engine.kernels import pack
from kitleaf.engine.reduce import partition
from kitleaf.engine.reduced_steps import (
    Linear,
    Members,
    StepState,
    bdf2,
    cap_incidence,
    outputs,
    reduce_linear,
    step,
)

MAX_SHOTS = 12
SHOT_RELTOL = 1e-9  # the ports' mismatch allowed: of each port's value,
SHOT_DRIVE = 3e-4  # and of the member's drive level


def members(batches: Sequence[BatchResult], source: str, levels: np.ndarray, omega: float,
            rows: list[int | None], steps: int) -> tuple[Members, np.ndarray] | None:
    """The reduced equations of every (variant, level, sample) member and their DC start
    (B, n); None when the circuit cannot be reduced (then the full stepper runs).
    ``levels`` is (count,), or (variants, count) for each variant's own levels."""
    first = batches[0]
    part = partition(first.system)
    banks0 = first.problem.devices.banks
    if part is None or not banks0:
        return None
    moved = part.remap(banks0)
    if any(a < 0 or b < 0 for a, b in moved.cap_pairs()):
        return None  # a junction capacitance on an eliminated row
    samples, count = first.size, levels.shape[-1]
    h = 2.0 * np.pi / omega / steps
    b_dc, e = first.system.rhs()[0], first.excitation(source)
    order = member_order(len(batches), count, samples)
    joined = linear_at(batches, source, rows, h, order)
    params_banks = []
    for i, bank in enumerate(banks0):
        params = {k: np.concatenate([np.broadcast_to(
            b.problem.devices.banks[i].params[k], (samples, v.shape[1]))
            for b in batches])[order] for k, v in bank.params.items()}
        params_banks.append(bank.with_params(**params))
    devices = part.remap(params_banks)
    vf = part.fixed_sign[None, :] * np.stack([b_dc, e])[:, part.fixed_branch]
    amplitude = member_levels(levels, len(batches), samples)
    mem = Members(joined, devices, vf, amplitude, omega, part.node_count,
                  cap_incidence(devices, part.keep.size + 1 + part.fixed.size))
    return mem, linear_start(batches, e, amplitude, h, omega, order, len(first.layout.nodes))


def linear_at(batches: Sequence[BatchResult], source: str, rows: list[int | None], h: float,
              circuits: np.ndarray) -> Linear:
    """The reduced linear forms at step ``h`` of each of ``circuits`` (indices variant x
    samples + sample; a member's is ``member_order``), each circuit reduced once."""
    first = batches[0]
    part, samples = partition(first.system), first.size
    b_dc, e = first.system.rhs()[0], first.excitation(source)
    wanted = np.unique(circuits)
    linears = []
    for variant in np.unique(wanted // samples):
        b = batches[variant]
        g, (p, d) = b.system.conductances(b.factors), b.system.cap_columns(b.factors)
        own = wanted[wanted // samples == variant] % samples
        g, d = (a[own] if a.shape[0] == samples else a[np.zeros(own.size, int)]
                for a in (g, d))
        linears.append(reduce_linear(g, (p, d), part, b_dc, e, h, rows))
    where = np.searchsorted(wanted, circuits)
    return Linear(*(np.concatenate([getattr(x, f) for x in linears])[where]
                    for f in Linear.__dataclass_fields__))


def member_levels(levels: np.ndarray, variants: int, samples: int) -> np.ndarray:
    """Each (variant, level, sample) member's drive level, flat; ``levels`` is (count,)
    shared by the variants or (variants, count), each variant's own."""
    return np.repeat(np.broadcast_to(levels, (variants, levels.shape[-1])).reshape(-1), samples)


def linear_start(batches: Sequence[BatchResult], excitation: np.ndarray, amplitude: np.ndarray,
                 h: float,
                 omega: float, order: np.ndarray, nodes: int) -> np.ndarray:
    """Each member's start history (3, B, n) at t = 0, -h, -2h: the DC point plus the
    linearised circuit's periodic solution under the fixed-step formula (exact for a
    member that stays linear, so it settles in one pass). A member whose linear swing
    would leave the span of the circuit's DC node voltages, widened by its drive level on
    each side (it clips), starts at DC."""
    c0, c1, c2 = bdf2(h)
    z = np.exp(1j * omega * h)
    s_eff = c0 + c1 / z + c2 / z ** 2
    x_dc, phasor = [], []
    for b in batches:
        g, c = b.matrices
        rhs = np.broadcast_to(excitation, g.shape[:2])
        phasor.append(np.linalg.solve(g + s_eff * c, rhs.astype(complex)[..., None])[..., 0])
        x_dc.append(b.x)
    x_dc, phasor = np.concatenate(x_dc)[order], np.concatenate(phasor)[order]
    turns = z ** -np.arange(3.0)
    swing = amplitude[None, :, None] * np.imag(phasor[None] * turns[:, None, None])
    # the span, widened by the drive's own swing (the input and AC-coupled nodes sit at 0 V)
    low = min(x_dc[:, :nodes].min(), 0.0) - amplitude[None, :, None]
    high = x_dc[:, :nodes].max() + amplitude[None, :, None]
    moved = x_dc[None, :, :nodes] + swing[:, :, :nodes]
    inside = np.all((moved >= low) & (moved <= high), axis=(0, 2))
    return x_dc[None] + np.where(inside[None, :, None], swing, 0.0)


def member_order(variants: int, count: int, samples: int) -> np.ndarray:
    """Member (variant, level, sample) -> its circuit's index (variant, sample)."""
    v, _, s = np.meshgrid(np.arange(variants), np.arange(count), np.arange(samples),
                          indexing="ij")
    return (v * samples + s).reshape(-1)


@dataclass
class Start:
    """Where a pass begins, per member: the kept unknowns at t = 0, -h, -2h, the ports at
    0 and -h side by side (B, 2m), and each step's first guess (steps, B, t) or None."""

    x_t: list[np.ndarray]
    q: np.ndarray
    trail: np.ndarray | None = None

    def take(self, idx: np.ndarray) -> Start:
        return Start([x[idx] for x in self.x_t], self.q[idx],
                     None if self.trail is None else self.trail[:, idx])


def start_at(history: np.ndarray, ports: np.ndarray, keep: np.ndarray) -> Start:
    """The start of full unknowns ``history`` (3, B, n) at t = 0, -h, -2h."""
    return Start([x[:, keep] for x in history],
                 np.concatenate([history[0] @ ports, history[1] @ ports], axis=1))


@dataclass
class Shot:
    """Each member's period (B, outputs, steps), how it ended, and where its last pass
    began (with the shooting's last correction applied when it had not settled)."""

    waves: np.ndarray
    done: np.ndarray
    failed: np.ndarray
    passes: int
    last: Start


def shoot(mem: Members, first: Start, outputs_count: int, steps: int,
          tolerance: tuple[float, float] = (SHOT_RELTOL, SHOT_DRIVE),
          max_shots: int = MAX_SHOTS, compiled: bool = True) -> Shot:
    """Newton on the start's two port values until a period ends where it began (within
    ``tolerance``: a share of each port's value and of the member's drive level). A
    settled (or failed) member keeps its last period and leaves the batch. The periods
    run compiled (kernels/) unless ``compiled`` is False or a device family has no kernel;
    the numpy steps are their reference."""
    period = _period if not compiled or pack.slots(mem.devices) is None else _period_compiled
    count = first.q.shape[0]
    h = 2.0 * np.pi / mem.omega / steps
    xe = [mem.extended(first.x_t[0], 0.0), mem.extended(first.x_t[1], -h)]
    start, trail = first.q, first.trail
    st = _started(first.x_t, xe, start, mem.devices.junctions(xe[0]))
    waves = np.zeros((count, outputs_count, steps))
    done, failed = np.zeros(count, bool), np.zeros(count, bool)
    last = Start([x.copy() for x in first.x_t], start.copy(),
                 np.zeros((steps, *first.x_t[0].shape)))
    active, part = np.arange(count), mem
    passes = 0
    for passes in range(1, max_shots + 1):
        solved, moves = period(part, st, steps, trail, waves, active)
        last.trail[:, active] = solved
        failed[active] = st.failed
        end = np.concatenate(st.q, axis=1)  # (q_N, q_N-1) against (q_0, q_-1)
        residual = end - start
        allowed = tolerance[0] * np.abs(start) + tolerance[1] * part.amplitude[:, None] + 1e-15
        settled = ~st.failed & np.all(np.abs(residual) <= allowed, axis=1)
        done[active] = settled
        going = ~settled & ~st.failed
        for k, x in enumerate(st.x_t):
            last.x_t[k][active] = x
        last.q[active] = start
        if not going.any() or passes == max_shots:
            break
        idx = np.flatnonzero(going)
        monodromy = np.concatenate(st.sens, axis=1)[idx] - np.eye(start.shape[1])
        delta = -np.einsum("bmk,bk->bm", np.linalg.pinv(monodromy), residual[idx])
        start = start[idx] + delta
        last.q[active[idx]] = start
        st = _started([x[idx] for x in st.x_t], [x[idx] for x in st.xe], start,
                      [v[idx] for v in st.vstar])
        # each step's guess for the next pass: where the last pass's linearisation puts it
        trail = solved[:, idx] + np.einsum("sbtk,bk->sbt", moves[:, idx], delta)
        active, part = active[idx], part.take(idx)
    return Shot(waves, done, failed, passes, last)


def _started(x_t: list, xe: list, start: np.ndarray, vstar: list) -> StepState:
    """A pass's state from the start's ports (q_0, q_-1) side by side, each its own
    unknown of the shooting (sensitivities [I 0] and [0 I])."""
    count, m2 = start.shape
    eye = np.broadcast_to(np.eye(m2), (count, m2, m2))
    m = m2 // 2
    zero = np.zeros((count, x_t[0].shape[1], m2))
    return StepState(x_t, xe, [start[:, :m], start[:, m:]], vstar,
                     [eye[:, :m], eye[:, m:]], np.zeros(count, bool), [zero, zero])


def _period_compiled(mem: Members, st: StepState, steps: int, trail: np.ndarray | None,
                     waves: np.ndarray, active: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """``_period`` in the compiled kernels."""
    h = 2.0 * np.pi / mem.omega / steps
    waves[active], solved, moves = pack.run(mem, st, pack.sine_drive(mem, steps), h, trail)
    return solved, moves


def _period(mem: Members, st: StepState, steps: int, trail: np.ndarray | None,
            waves: np.ndarray, active: np.ndarray) -> np.ndarray:
    """One period of steps; the kept waves go to ``waves[active]``. Returns each step's
    kept unknowns (steps, B, t) and their sensitivities to the start (steps, B, t, k):
    after the first pass, each step's first guess is the last pass's point at the same
    instant moved by the shooting's correction through them."""
    period = 2.0 * np.pi / mem.omega
    points, solved, moves = [], [], []
    for k in range(1, steps + 1):
        t = k * period / steps
        u = step(mem, st, t, period / steps, None if trail is None else trail[k - 1])
        points.append(outputs(mem, st.x_t[0], u, t))
        solved.append(st.x_t[0])
        moves.append(st.sens_x[0])
    waves[active] = np.stack(points, axis=2)
    return np.stack(solved), np.stack(moves)
