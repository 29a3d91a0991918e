"""A batch of circuits driven by a sampled signal: fixed time steps from the DC operating point.

Each variant (a knob setting, say) starts at its DC operating point, which the reduced
time steps hold exactly while the input is zero, and steps through the signal one sample a
step (reduced_steps.py, BDF2 at a fixed step on the device rows alone). The signal is
resampled up by an integer factor first and the output back down after (scipy's polyphase
resampler, whose filter removes what the steps put above the output's band), so the
harmonics a clipping stage makes above the output's Nyquist frequency are not folded back
into the band by the steps' own sampling (at a factor of one the signal is stepped as it
is, one sample a step). The compiled steps (``kernels``) run where they
exist and take every family of the circuit's devices; the numpy steps are their reference.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field, replace

import numpy as np
from scipy.signal import resample_poly

from kitleaf.engine.batch import BatchResult
from kitleaf.engine.reduce import partition
from kitleaf.engine.reduced_shooting import members
from kitleaf.engine.reduced_steps import Members, StepState, outputs, step
from kitleaf.errors import SolveError

# seconds of signal per run of steps: a failure is found within one (by the numpy steps, run
# again up to it), and each run costs the packing of the members for the compiled steps
CHUNK_S = 0.25
MAX_RATE = 10e6  # steps per second; past this no audio question is asked


@dataclass
class SampledMembers(Members):
    """Members driven by a sampled signal (B, N) at step ``h``: sample k at t = k h, zero
    before the first."""

    signal: np.ndarray = field(default_factory=lambda: np.zeros((0, 0)))
    h: float = 1.0

    def take(self, idx: np.ndarray) -> SampledMembers:
        return replace(super().take(idx), signal=self.signal[idx])

    def drive(self, t: float) -> np.ndarray:
        k = int(round(t / self.h))
        return self.signal[:, k] if k >= 0 else np.zeros(self.signal.shape[0])


@dataclass(frozen=True)
class TransientResult:
    """Each member's waveforms at the kept nodes (members, samples) at the signal's rate,
    less their DC operating point; ``failed_at`` is the time (seconds) where a member's
    steps did not settle (its waveform is then cut there), NaN where it ran through, and
    ``where`` the node that moved most in that step."""

    rate: float
    waves: dict[str, np.ndarray] = field(repr=False)
    failed_at: np.ndarray = field(repr=False)
    where: tuple[str, ...] = ()

    @property
    def converged(self) -> np.ndarray:
        return np.isnan(self.failed_at)

    def wave(self, node: str) -> np.ndarray:
        try:
            return self.waves[node]
        except KeyError:
            raise SolveError(f"no waveform was kept for node {node!r}") from None



def transient_response(batches: Sequence[BatchResult], source: str, signal: np.ndarray,
                       rate: float, oversample: int, nodes: Sequence[str]) -> TransientResult:
    """The response of every member of ``batches`` (variants sharing one circuit's unknowns,
    each with its samples: member = variant x sample) to ``source`` playing ``signal`` (volts
    at ``rate``, on top of its DC value; one row for all members, or one each), stepped at
    ``oversample`` times ``rate`` (1: one step a sample, nothing resampled); the kept
    ``nodes`` come back at ``rate``."""
    if not batches or any(b.layout != batches[0].layout for b in batches):
        raise SolveError("the variants of a rendered signal must share one circuit's unknowns")
    signal = np.asarray(signal, float)
    if not np.all(np.isfinite(signal)):
        raise SolveError("the signal to play holds a value that is not a finite number")
    if not (oversample >= 1 and math.isfinite(rate) and 0.0 < rate * oversample <= MAX_RATE):
        raise SolveError(f"a step rate of {rate!r} per second times {oversample!r} cannot be "
                         f"simulated (it must be above 0 and at most {MAX_RATE:g})")
    fine = resample_poly(signal, oversample, 1, axis=-1) if oversample > 1 else signal
    h = 1.0 / (rate * oversample)
    rows = [batches[0].row(n) for n in nodes]
    built = members(list(batches), source, np.ones(1), 2.0 * math.pi / h, rows, 1)
    if built is None:
        raise SolveError("the circuit has no device rows to step (or a junction capacitance "
                         "on an eliminated row), so it cannot be rendered in time")
    mem, _ = built
    x_dc = np.concatenate([np.broadcast_to(b.x, (batches[0].size, b.x.shape[1]))
                           for b in batches])
    mem = SampledMembers(**{f: getattr(mem, f) for f in Members.__dataclass_fields__},
                         signal=np.broadcast_to(fine, (x_dc.shape[0], fine.shape[-1])), h=h)
    waves, failed_at, where = _run(mem, _start(mem, batches[0], x_dc), x_dc, batches[0], h,
                                   rows)
    if oversample > 1:
        waves = resample_poly(waves, 1, oversample, axis=-1)[..., :signal.shape[-1]]
    return TransientResult(rate, {n: waves[:, i] for i, n in enumerate(nodes)},
                           failed_at, tuple(where))


def _start(mem: SampledMembers, first: BatchResult, x_dc: np.ndarray) -> StepState:
    """The DC operating point as the steps' whole history (no sensitivities carried)."""
    part = partition(first.system)
    x_t = x_dc[:, part.keep]
    ports = first.system.cap_columns()[0]
    xe = [mem.extended(x_t, 0.0), mem.extended(x_t, -mem.h)]
    q = x_dc @ ports
    none = np.zeros((*q.shape, 0))
    return StepState([x_t, x_t.copy(), x_t.copy()], xe, [q, q.copy()],
                     mem.devices.junctions(xe[0]), [none, none], np.zeros(x_dc.shape[0], bool))


def _run(mem: SampledMembers, st: StepState, x_dc: np.ndarray, first: BatchResult, h: float,
         rows: list[int | None]):
    """Every step, chunk by chunk: the kept waves less their DC value (B, o, N), the time
    each member failed (NaN: never) and the node it failed at ('' for none)."""
    count, total = mem.signal.shape
    dc = np.stack([np.zeros(count) if r is None else x_dc[:, r] for r in rows], axis=1)
    waves = np.empty((count, len(rows), total))
    waves[:, :, 0] = dc
    failed_at, where = np.full(count, np.nan), [""] * count
    chunk = max(1, int(round(CHUNK_S / h)))
    for begin in range(1, total, chunk):
        stop = min(begin + chunk, total)
        before = _copy(st)
        with np.errstate(invalid="ignore", over="ignore", divide="ignore"):
            waves[:, :, begin:stop] = run_steps(mem, st, begin, stop, h)
        for b in np.flatnonzero(st.failed & np.isnan(failed_at)):
            k, node = _failure(mem.take(np.array([b])), _copy(before, b), begin, stop, h,
                               first)
            failed_at[b], where[b] = k * h, node
            waves[b, :, k:] = np.nan
        if not np.isnan(failed_at).any():
            break  # every member failed: the rest of their waves is NaN already
    return waves - dc[:, :, None], failed_at, where


def run_steps(mem: SampledMembers, st: StepState, begin: int, stop: int, h: float) -> np.ndarray:
    """The kept waves (B, o, stop - begin) of steps ``begin`` .. ``stop`` - 1, ``st`` moved on."""
    compiled = _compiled(mem)
    if compiled is not None:
        return compiled.run(mem, st, mem.signal[:, begin:stop], h, None, keep=False)[0]
    found = []
    for k in range(begin, stop):
        if st.failed.all():  # nothing left to step: the failed members' waves are cut anyway
            found.extend([np.full(mem.linear.out_t.shape[:2], np.nan)] * (stop - k))
            break
        u = step(mem, st, k * h, h)
        found.append(outputs(mem, st.x_t[0], u, k * h))
    return np.stack(found, axis=2)


def _compiled(mem: Members):
    """The compiled steps' entry (kernels/pack.py) when they exist for these devices."""
    try:
        from kitleaf.engine.kernels import pack
    except ImportError:
        return None
    return pack if pack.slots(mem.devices) is not None else None


def _failure(one: SampledMembers, st: StepState, begin: int, stop: int, h: float,
             first: BatchResult) -> tuple[int, str]:
    """The first step of ``begin`` .. ``stop`` - 1 where the member ``one`` (its state at
    ``begin`` in ``st``) did not settle, by the numpy steps, and the node that moved most
    in it (the one the failure is about)."""
    keep, nodes = partition(first.system).keep, first.layout.nodes
    for k in range(begin, stop):
        last = st.x_t[0]
        with np.errstate(invalid="ignore", over="ignore"):
            step(one, st, k * h, h)
            moved = np.abs(st.x_t[0] - last)[0, :one.node_count]
        if st.failed[0]:
            worst = int(np.argmax(np.where(np.isfinite(moved), moved, np.inf)))
            return k, nodes[int(keep[worst])]
    return stop - 1, ""  # settled here: the compiled steps' own failure, at the chunk's end


def _copy(st: StepState, member: int | None = None) -> StepState:
    """A copy of ``st``, or of one member's part of it."""
    pick = (lambda a: a.copy()) if member is None else (lambda a: a[member:member + 1].copy())
    return StepState([pick(x) for x in st.x_t], [pick(x) for x in st.xe],
                     [pick(x) for x in st.q], [pick(v) for v in st.vstar],
                     [pick(s) for s in st.sens], pick(st.failed),
                     None if st.sens_x is None else [pick(s) for s in st.sens_x])
