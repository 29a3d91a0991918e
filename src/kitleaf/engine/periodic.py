"""Periodic steady state under a sine drive, by shooting: one period of time steps per pass.

Every member of the batch (knob positions x input levels x tolerance samples) starts at its
DC operating point. A pass integrates one period (see stepper.py) and carries the
sensitivity of the end state to the capacitor and inductor port values at the start; Newton
on those port values (x(T) = x(0)) then lands on the periodic state in a few passes, where
plain time stepping would need hundreds of milliseconds for the coupling capacitors to
settle. Only the ports are unknowns of the shooting: every other unknown follows from them
within a step (junction capacitances, picofarads, settle within nanoseconds).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field, replace

import numpy as np

from kitleaf.engine import elements as el
from kitleaf.engine.batch import BatchResult
from kitleaf.engine.extremes import FINEST, Extremes, resolve, sampled, with_ports
from kitleaf.engine.harmonics import Distortion, distortion
from kitleaf.engine.newton import extend
from kitleaf.engine.reduce import partition
from kitleaf.engine.reduced_shooting import (
    linear_at,
    member_levels,
    member_order,
    members,
    shoot,
    start_at,
)
from kitleaf.engine.reduced_steps import Members
from kitleaf.engine.stepper import Drive, History, advance
from kitleaf.errors import SolveError

POINTS = 96  # steps and output points per period (docs/engine.md: the accuracy it keeps)
MAX_SHOTS = 12
# The ports' mismatch x(T) - x(0) allowed: this share of the port's value plus this share of
# the member's drive level (a ramp left over would leak into every harmonic).
SHOT_RELTOL = 1e-9
SHOT_DRIVE = 1e-4
MAX_FREQ = 1e6  # hertz; a drive above this is not an audio question
MAX_LEVEL = 100.0  # volts peak
# A member whose waves' roughness (see ``roughness``) exceeds this is solved again at REFINE
# times the steps: at 96 steps the two-transistor fuzzes' clipped edges (roughness 2 to 4)
# left their fourth and fifth harmonics 1.2 to 2.2 dB off ngspice, 0.7 dB at 192; the
# clipping op-amp, diode and transistor stages (0.8 and under) agree within 0.7 dB at 96
ROUGH = 1.0
REFINE = 2


@dataclass(frozen=True)
class PeriodicResult:
    """One period of each requested node per member, indexed (variant, level, sample, time).

    ``converged`` is False where a member's time steps or shooting did not settle; its
    waveform is then meaningless and ``reasons`` says what failed (one text per member).
    The members ``refined`` (flat indices) were solved at REFINE times the steps: ``fine``
    holds their waves on that grid (members refined, time), which their harmonics are
    read from (a clipped edge's harmonics above the coarse grid's Nyquist fold onto the
    low ones there)."""

    freq: float
    levels: np.ndarray
    waves: dict[str, np.ndarray] = field(repr=False)
    converged: np.ndarray = field(repr=False)
    reasons: np.ndarray = field(repr=False)
    passes: int = 0
    refined: np.ndarray = field(default_factory=lambda: np.zeros(0, int), repr=False)
    fine: dict[str, np.ndarray] = field(default_factory=dict, repr=False)
    extremes: dict[str, np.ndarray] = field(default_factory=dict, repr=False)
    unresolved: np.ndarray | None = field(default=None, repr=False)

    def wave(self, node: str) -> np.ndarray:
        if node == el.GROUND:
            return np.zeros_like(next(iter(self.waves.values())))
        try:
            return self.waves[node]
        except KeyError:
            raise SolveError(f"no waveform was kept for node {node!r}") from None

    def distortion(self, node: str, harmonics: int = 5) -> Distortion:
        """The figures of ``node``'s waves, their peaks from its extremes."""
        found = self._sampled(node, harmonics)
        if node not in self.extremes:
            return found
        top, bottom = np.moveaxis(self.extremes[node], -1, 0)
        return replace(found, peak_pos=top - found.mean, peak_neg=found.mean - bottom)

    def _sampled(self, node: str, harmonics: int) -> Distortion:
        coarse = distortion(self.wave(node), harmonics)
        if not self.refined.size:
            return coarse
        wave = (np.zeros((self.refined.size, REFINE * self.wave_points)) if node == el.GROUND
                else self.fine[node])
        sharp = distortion(wave, harmonics)
        return Distortion(*(_merged(getattr(coarse, f), getattr(sharp, f), self.refined)
                            for f in Distortion.__dataclass_fields__))

    def times(self) -> np.ndarray:
        return np.arange(self.wave_points) / (self.wave_points * self.freq)

    @property
    def wave_points(self) -> int:
        return next(iter(self.waves.values())).shape[-1]


def _merged(coarse: np.ndarray, sharp: np.ndarray, members: np.ndarray) -> np.ndarray:
    """``coarse`` (variant, level, sample, ...) with the flat ``members`` taken from
    ``sharp`` (members, ...)."""
    flat = coarse.reshape(-1, *coarse.shape[3:]).copy()
    flat[members] = sharp
    return flat.reshape(coarse.shape)


def check_drive(levels, freq: float, variants: int = 1) -> np.ndarray:
    """The levels as an array, (count,) or (variants, count); SolveError for a level or
    frequency that cannot be simulated."""
    if not (math.isfinite(freq) and 0.0 < freq <= MAX_FREQ):
        raise SolveError(f"a drive frequency of {freq!r} Hz cannot be simulated "
                         f"(it must be above 0 and at most {MAX_FREQ:g} Hz)")
    arr = np.asarray(levels, dtype=float)
    if arr.ndim != 2:
        arr = arr.reshape(-1)
    elif arr.shape[0] != variants:
        raise SolveError(f"levels per variant must be (variants, count) = ({variants}, ...), "
                         f"got {arr.shape}")
    bad = [v for v in arr.reshape(-1) if not (math.isfinite(v) and 0.0 < v <= MAX_LEVEL)]
    if bad or arr.size == 0:
        raise SolveError(f"a drive level of {bad[0] if bad else 'none'!r} V cannot be simulated "
                         f"(levels must be above 0 and at most {MAX_LEVEL:g} V peak)")
    return arr


def periodic_steady_state(batches: Sequence[BatchResult], source: str, levels: Sequence[float],
                          freq: float = 1000.0, nodes: Sequence[str] = (),
                          points: int = POINTS) -> PeriodicResult:
    """The periodic response of each batch (variants of one circuit sharing its unknowns,
    such as knob positions) to ``source`` driven at each peak level of ``levels`` at
    ``freq``, on top of its DC value. ``nodes`` are the waveforms kept. ``levels`` may be
    (variants, count) instead: each variant driven at its own levels (a variant may repeat
    a batch); the result's ``levels`` then keeps that shape."""
    levels_arr = check_drive(levels, freq, len(batches))
    if not batches or any(b.layout != batches[0].layout for b in batches):
        raise SolveError("the variants of a drive sweep must share one circuit's unknowns")
    rows = [batches[0].row(n) for n in nodes]
    shape = (len(batches), levels_arr.shape[-1], batches[0].size)
    waves, ok, reasons, passes, (refined, fine), found = _solve(batches, source, levels_arr,
                                                                freq, rows, points)
    out = {n: waves[:, i].reshape(*shape, points) for i, n in enumerate(nodes)}
    extremes = {n: np.stack([found.top[:, i], found.bottom[:, i]], axis=-1).reshape(*shape, 2)
                for i, n in enumerate(nodes)}
    return PeriodicResult(freq, levels_arr, out, ok.reshape(shape), reasons.reshape(shape),
                          passes, refined, {n: fine[:, i] for i, n in enumerate(nodes)},
                          extremes, found.unresolved.reshape(shape))


def _solve(batches: Sequence[BatchResult], source: str, levels: np.ndarray, freq: float,
           rows: list[int | None], points: int):
    """Every member's period at t = 0, T/N, ...; a member whose waves turn corners too sharp
    for N steps (``roughness``) is solved again at REFINE N steps and sampled at the N.
    Last: the refined members and their fine waves (refined, rows, REFINE N), and every
    member's extremes (from its fine waves where it was refined)."""
    waves, ok, reasons, passes, extremes_of = _solve_at(batches, source, levels, freq, rows,
                                                        points, None)
    rough = np.flatnonzero(ok & (roughness(waves) > ROUGH))
    smooth = np.setdiff1d(np.arange(ok.size), rough)
    found = sampled(waves).put(smooth, extremes_of(smooth))
    fine = np.zeros((0, len(rows), REFINE * points))
    if rough.size:
        fine, ok_fine, why, more, fine_extremes = _solve_at(batches, source, levels, freq, rows,
                                                            REFINE * points, rough)
        waves[rough], ok[rough], reasons[rough] = fine[..., ::REFINE], ok_fine, why
        passes = max(passes, more)
        found = found.put(rough, fine_extremes(np.arange(rough.size)))
    # a peak still moving at the finest steps is not given as if it were known
    ok &= ~found.unresolved
    reasons[found.unresolved] = (f"the output's peak did not settle with steps {FINEST} "
                                 f"times finer around it")
    return waves, ok, reasons, passes, (rough, fine), found


def roughness(waves: np.ndarray) -> np.ndarray:
    """Each member's largest third difference over a period (members, rows, points), over
    the row's half swing (plus a microvolt): BDF2's local error is 2/9 of it, so a large one
    says the step is coarse beside the wave's corners."""
    third = (waves - 3.0 * np.roll(waves, 1, -1) + 3.0 * np.roll(waves, 2, -1)
             - np.roll(waves, 3, -1))
    swing = np.ptp(waves, axis=-1) / 2.0 + 1e-6
    return np.max(np.max(np.abs(third), axis=-1) / swing, axis=-1, initial=0.0)


def _solve_at(batches: Sequence[BatchResult], source: str, levels: np.ndarray, freq: float,
              rows: list[int | None], points: int, only: np.ndarray | None):
    """The periods of the members ``only`` (None: all) by the reduced fixed-step shooting;
    members it does not settle (and circuits it cannot reduce) by the full error-controlled
    one. Last: a function giving the extremes of some of them (indices into ``only``):
    stepped again finely where the steps are coarse beside them (``extremes.resolve``)."""
    omega = 2.0 * math.pi * freq
    built = members(batches, source, levels, omega, rows, points)
    if built is None:
        return _solve_full(batches, source, levels, freq, rows, points, only)
    mem, history = built
    start = start_at(history, batches[0].system.cap_columns()[0],
                     partition(batches[0].system).keep)
    index = np.arange(mem.amplitude.size) if only is None else only
    if only is not None:
        mem, start = mem.take(only), start.take(only)
    # a member gone to NaN or infinity is flagged unsettled by its steps and solved again
    # below; its numbers must not stop the batch on the way
    with np.errstate(invalid="ignore", over="ignore", divide="ignore"):
        shot = shoot(with_ports(mem), start, len(rows) + start.q.shape[1] // 2, points)
    history = np.moveaxis(shot.waves[:, len(rows):], -1, 0), shot.last.trail
    waves = np.concatenate([shot.waves[:, :len(rows), -1:], shot.waves[:, :len(rows), :-1]],
                           axis=-1)
    ok = shot.done.copy()
    reasons = np.full(ok.size, "", dtype=object)
    redo = np.flatnonzero(~ok)
    if redo.size:
        w, k, why, _, _ = _solve_full(batches, source, levels, freq, rows, points, index[redo])
        waves[redo], ok[redo], reasons[redo] = w, k, why

    def extremes_of(idx: np.ndarray) -> Extremes:
        found = sampled(waves[idx])
        mine = np.flatnonzero(shot.done[idx])  # the members the reduced shooting settled
        if not mine.size:
            return found
        sub = idx[mine]
        circuits = member_order(len(batches), levels.shape[-1], batches[0].size)[index[sub]]

        def finer(factor: int, which: np.ndarray) -> Members:
            h = 2.0 * math.pi / omega / (points * factor)
            return replace(mem.take(sub[which]),
                           linear=linear_at(batches, source, rows, h, circuits[which]))

        return found.put(mine, resolve(waves[sub], tuple(a[:, sub] for a in history), finer))

    return waves, ok, reasons.astype(str), shot.passes, extremes_of


def _solve_full(batches, source, levels, freq, rows, points, only: np.ndarray | None):
    """The full error-controlled shooting of the members ``only`` (None: all)."""
    drive, x0 = _drive(batches, source, levels, freq)
    if only is not None:
        drive, x0 = drive.take(only), x0[only]
    cap_a = batches[0].system.cap_columns()[0]
    waves, ok, reasons, passes = _shoot(drive, x0, cap_a, rows, points)
    waves = _periodic(waves)
    return waves, ok, reasons, passes, lambda idx: sampled(waves[idx])


def _drive(batches: Sequence[BatchResult], source: str, levels: np.ndarray,
           freq: float) -> tuple[Drive, np.ndarray]:
    """The stacked equations of every (variant, level, sample) member and their DC start."""
    first, count, samples = batches[0], levels.shape[-1], batches[0].size
    if any(b.size != samples for b in batches):
        raise SolveError("the variants of a drive sweep must have the same number of samples")

    def tiled(a: np.ndarray) -> np.ndarray:  # (samples or 1, ...) -> (levels * samples, ...)
        a = np.broadcast_to(a, (samples, *a.shape[1:]))
        return np.broadcast_to(a[None], (count, *a.shape)).reshape(-1, *a.shape[1:])

    g, c, x0 = [], [], []
    for b in batches:
        gb, cb = b.system.matrices(b.factors)
        g.append(tiled(gb))
        c.append(tiled(cb))
        x0.append(tiled(b.x))
    banks = []
    for i, bank in enumerate(first.problem.devices.banks):
        params = {k: np.concatenate([tiled(b.problem.devices.banks[i].params[k])
                                     for b in batches]) for k in bank.params}
        banks.append(bank.with_params(**params))
    amplitude = member_levels(levels, len(batches), samples)
    own = {n for e in first.system.elements for n in el.terminals(e)}
    judged = np.array([i for i, n in enumerate(first.layout.nodes) if n in own])
    drive = Drive(np.concatenate(g), np.concatenate(c), first.problem.devices.with_banks(banks),
                  first.system.rhs()[0], first.excitation(source), amplitude,
                  2.0 * math.pi * freq, len(first.layout.nodes), judged)
    return drive, np.concatenate(x0)


def _shoot(drive: Drive, x0: np.ndarray, cap_a: np.ndarray, rows: list[int | None],
           points: int):
    """Newton on the ports' start values until a period ends where it began. A member that
    has settled (or failed) keeps its last period and leaves the batch, so the later passes
    cost what the hard members cost."""
    members, ports = x0.shape[0], cap_a.shape[1]
    lift = np.linalg.pinv(cap_a.T)  # (n, m): the least change of x giving the ports' values
    start = x0 @ cap_a
    done, failed = np.zeros(members, bool), np.zeros(members, bool)
    waves = np.zeros((members, len(rows), points + 1))
    active, part = np.arange(members), drive
    for passes in range(1, MAX_SHOTS + 1):
        period, x_end, sens, broke, swing = _period(part, x0, lift if ports else None, rows,
                                                    points)
        waves[active] = period
        failed[active] = broke
        if not ports:
            done[active] = ~broke
            break
        residual = x_end @ cap_a - start
        allowed = SHOT_RELTOL * np.abs(start) + SHOT_DRIVE * part.amplitude[:, None] + 1e-15
        settled = ~broke & np.all(np.abs(residual) <= allowed, axis=1)
        done[active] = settled
        going = ~settled & ~broke
        if not going.any() or passes == MAX_SHOTS:
            break
        monodromy = np.einsum("nm,bnk->bmk", cap_a, sens[going]) - np.eye(ports)
        delta = -np.einsum("bmk,bk->bm", np.linalg.pinv(monodromy), residual[going])
        start = start[going] + delta
        x_end = x_end[going]
        x0 = x_end + (start - x_end @ cap_a) @ lift.T
        part = replace(part, swing=swing)
        active, part = active[going], part.take(np.flatnonzero(going))
    reasons = np.where(done, "", np.where(
        failed, "the time steps did not converge (Newton failed at the smallest step)",
        "the waveform did not settle into a repeating period"))
    return waves, done, reasons, passes


def _period(drive: Drive, x0: np.ndarray, lift: np.ndarray | None, rows: list[int | None],
            points: int):
    """One period from ``x0``: the kept rows at each output point (members, rows, points + 1),
    the end state, its sensitivity to the start's ports, the failed members and each
    member's half peak-to-peak at the judged nodes (the next pass's error scale)."""
    members = x0.shape[0]
    period = 2.0 * math.pi / drive.omega
    sens = None if lift is None else np.broadcast_to(lift, (members, *lift.shape)).copy()
    hist = History([0.0], [x0], drive.devices.junctions(extend(x0)), [sens], drive.caps(x0),
                   np.zeros(members, bool))
    waves = np.zeros((members, len(rows), points + 1))
    _keep(waves, 0, x0, rows)
    low = high = x0[:, drive.judged]
    for k in range(1, points + 1):
        advance(drive, hist, k * period / points, period / points)
        _keep(waves, k, hist.x[0], rows)
        seen = hist.x[0][:, drive.judged]
        low, high = np.minimum(low, seen), np.maximum(high, seen)
    return waves, hist.x[0], hist.sens[0], hist.failed, (high - low) / 2.0


def _keep(waves: np.ndarray, k: int, x: np.ndarray, rows: list[int | None]) -> None:
    for i, r in enumerate(rows):
        waves[:, i, k] = 0.0 if r is None else x[:, r]


def _periodic(wave: np.ndarray) -> np.ndarray:
    """The period's samples at t = 0, T/N, ... from the solved points: t = 0 is taken at T,
    where the periodic state repeats it (the start itself is a lifted guess whose non-port
    unknowns the first step corrects)."""
    return np.concatenate([wave[..., -1:], wave[..., 1:-1]], axis=-1)
