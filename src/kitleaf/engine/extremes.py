"""Each wave's highest and lowest point, stepped again finely where a period's steps are coarse.

A period of N fixed steps (reduced_steps.py) follows a clipped wave's harmonics, but not the
top of a spike about as narrow as a step: a hard-clipped edge through a treble or high-pass
path leaves one some 10 us wide, whose top came out up to 13 % low at N = 96 (10.4 us steps
at 1 kHz). Once the periodic state is solved it is known at every step, so such an extreme
is stepped again over a few steps around it, from the solved point before it (where the
wave is still smooth), at FIRST times finer steps, then at twice as fine, and so on until
two agree within PEAK_TOL of the wave's half swing; past FINEST the member is marked as not
resolved rather than left low.

An extreme is stepped again where the wave turns sharply beside it: the largest third
difference of the samples around it, over the wave's half swing, above SHARP (the measure
of ``periodic.roughness``, taken at the extreme alone). A smooth top, or a clipped flat one,
stays as sampled.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass, replace

import numpy as np

from kitleaf.engine.reduced_steps import RELTOL, VNTOL, Members, StepState
from kitleaf.engine.transient import SampledMembers, run_steps

SHARP = 0.1
BEFORE, AFTER = 3, 2  # coarse steps stepped again before and after an extreme
FIRST, FINEST = 4, 64  # the finer steps' first and last factor
PEAK_TOL = 5e-3  # of the wave's half swing: two factors' extremes agree within it


@dataclass(frozen=True)
class Extremes:
    """Each member's highest and lowest value of each kept row (members, rows), and the
    members whose extremes still moved by more than PEAK_TOL at FINEST (members,)."""

    top: np.ndarray
    bottom: np.ndarray
    unresolved: np.ndarray

    def put(self, idx: np.ndarray, other: Extremes) -> Extremes:
        """These extremes with the members ``idx`` taken from ``other``."""
        arrays = [a.copy() for a in (self.top, self.bottom, self.unresolved)]
        for mine, theirs in zip(arrays, (other.top, other.bottom, other.unresolved),
                                strict=True):
            mine[idx] = theirs
        return Extremes(*arrays)


def sampled(waves: np.ndarray) -> Extremes:
    """The extremes of ``waves`` (members, rows, points) as sampled."""
    return Extremes(waves.max(axis=-1), waves.min(axis=-1), np.zeros(waves.shape[0], bool))


def sharp(waves: np.ndarray) -> np.ndarray:
    """Which extremes the steps turn too sharply beside (members, rows, 2: top, bottom)."""
    points = waves.shape[-1]
    third = np.abs(waves - 3.0 * np.roll(waves, 1, -1) + 3.0 * np.roll(waves, 2, -1)
                   - np.roll(waves, 3, -1))
    swing = np.ptp(waves, axis=-1) / 2.0 + 1e-6
    found = []
    for at in (np.argmax(waves, axis=-1), np.argmin(waves, axis=-1)):
        near = (at[..., None] + np.arange(-1, 4)) % points  # the differences reading it
        found.append(np.take_along_axis(third, near, -1).max(axis=-1) / swing > SHARP)
    return np.stack(found, axis=-1)


@dataclass(frozen=True)
class _Windows:
    """The stretches stepped again: each one's member and first coarse step."""

    member: np.ndarray
    row: np.ndarray
    first: np.ndarray

    def take(self, idx: np.ndarray) -> _Windows:
        return _Windows(self.member[idx], self.row[idx], self.first[idx])

    def covered(self, shape: tuple) -> np.ndarray:
        """(members, rows, points): the coarse samples a stretch steps again for its row
        (its first is its start, not stepped again)."""
        mask = np.zeros(shape, bool)
        for span in range(1, BEFORE + AFTER + 1):
            mask[self.member, self.row, (self.first + span) % shape[-1]] = True
        return mask


def _windows(waves: np.ndarray, marked: np.ndarray) -> _Windows:
    """One stretch around every marked extreme, each row's its own (a row's extremes do not
    depend on which other rows are kept)."""
    where = np.stack([np.argmax(waves, axis=-1), np.argmin(waves, axis=-1)], axis=-1)
    member, row, _ = np.nonzero(marked)
    starts = np.unique(np.stack([member, row, (where[marked] - BEFORE) % waves.shape[-1]]),
                       axis=1)
    return _Windows(*starts)


def resolve(waves: np.ndarray, history: tuple[np.ndarray, np.ndarray],
            finer: Callable[[int, np.ndarray], Members]) -> Extremes:
    """The extremes of the periodic ``waves`` (members, rows, N) at t = 0, h, ...; the
    last pass's ports and kept unknowns at steps 1 .. N, (N, members, m) and (N, members,
    t) (``with_ports``, reduced_shooting.Shot's ``last.trail``), are where the stretches
    start; ``finer(factor, idx)`` builds the members ``idx`` at ``factor`` times finer
    steps."""
    marked = sharp(waves)
    if not marked.any():
        return sampled(waves)
    windows = _windows(waves, marked)
    # a move within this is settled: the share of the swing, and Newton's own tolerance
    allowed = PEAK_TOL * np.ptp(waves, axis=-1) / 2.0 + 10.0 * (
        RELTOL * np.abs(waves).max(axis=-1) + VNTOL)
    tops, bottoms = np.zeros((2, windows.member.size))
    going, factor, before = np.ones(windows.member.size, bool), FIRST, None
    while True:
        idx = np.flatnonzero(going)
        here = windows.take(idx)
        tops[idx], bottoms[idx] = _stepped_again(finer(factor, here.member), history, here,
                                                 factor)
        now = _joined(waves, windows, tops, bottoms)
        if before is not None:
            moved = np.maximum(np.abs(now.top - before.top), np.abs(now.bottom - before.bottom))
            going &= ~(moved <= allowed)[windows.member, windows.row]
        if not going.any() or factor >= FINEST:
            break
        before, factor = now, 2 * factor
    unresolved = np.zeros(waves.shape[0], bool)
    unresolved[windows.member[going]] = True
    return Extremes(now.top, now.bottom, now.unresolved | unresolved)


def _joined(waves: np.ndarray, windows: _Windows, tops: np.ndarray,
            bottoms: np.ndarray) -> Extremes:
    """The members' extremes: the stretches' own, and the samples they did not step again
    (a stretch whose finer steps failed keeps its samples)."""
    stepped = np.isfinite(tops) & np.isfinite(bottoms)
    kept = windows.take(np.flatnonzero(stepped))
    covered = kept.covered(waves.shape)
    top = np.where(covered, -np.inf, waves).max(axis=-1)
    bottom = np.where(covered, np.inf, waves).min(axis=-1)
    np.maximum.at(top, (kept.member, kept.row), tops[stepped])
    np.minimum.at(bottom, (kept.member, kept.row), bottoms[stepped])
    return Extremes(top, bottom, ~np.isfinite(top).all(axis=1))


def with_ports(mem: Members) -> Members:
    """``mem`` with its ports kept after its waves: each step's q = Q x + y(t) - K u is a
    kept wave's linear form, so the steps give the ports' history the stretches start from."""
    lin = mem.linear
    return replace(mem, linear=replace(
        lin, out_t=np.concatenate([lin.out_t, lin.q_mat], axis=1),
        out=np.concatenate([lin.out, lin.y], axis=2),
        out_u=np.concatenate([lin.out_u, lin.k_mat], axis=1)))


def _stepped_again(mem: Members, history: tuple[np.ndarray, np.ndarray], windows: _Windows,
                   factor: int) -> tuple[np.ndarray, np.ndarray]:
    """Each stretch's highest and lowest values (stretches, rows) at ``factor`` times finer
    steps (NaN where they failed), ``mem`` being their members at those steps. A stretch
    starts from its first coarse point, the one finer step before it taken along BDF2's
    slope there (the history the finer formula reads)."""
    ports, points = history
    steps = ports.shape[0]
    h = 2.0 * math.pi / mem.omega / steps
    fine_h = h / factor
    q, x = (_start(a, windows, steps, fine_h / h) for a in (ports, points))
    span = (BEFORE + AFTER) * factor
    times = windows.first[:, None] * h + fine_h * np.arange(-1, span + 1)
    sampled_mem = SampledMembers(**{f: getattr(mem, f) for f in Members.__dataclass_fields__},
                                 signal=mem.amplitude[:, None] * np.sin(mem.omega * times),
                                 h=fine_h)
    xe = [sampled_mem.extended(x[0], fine_h), sampled_mem.extended(x[1], 0.0)]
    none = np.zeros((*q[0].shape, 0))
    st = StepState([x[0], x[1], 2.0 * x[1] - x[0]], xe, q, mem.devices.junctions(xe[0]),
                   [none, none], np.zeros(windows.member.size, bool))
    with np.errstate(invalid="ignore", over="ignore", divide="ignore"):
        waves = run_steps(sampled_mem, st, 2, span + 2, fine_h)
    waves[st.failed] = np.nan
    own = waves[np.arange(windows.row.size), windows.row]
    return own.max(axis=-1), own.min(axis=-1)


def _start(values: np.ndarray, windows: _Windows, steps: int, share: float) -> list:
    """A stretch's start value and the one a finer step (``share`` of a coarse one) before,
    along BDF2's slope through the three coarse points ending at the start."""
    at = [values[(windows.first - back - 1) % steps, windows.member] for back in range(3)]
    slope = 1.5 * at[0] - 2.0 * at[1] + 0.5 * at[2]
    return [at[0], at[0] - share * slope]
