"""A sampled signal through a solved circuit: fixed time steps from its DC operating point.

The source plays ``signal`` (volts above its DC value, one value per step of 1 / ``rate``)
and every member of the batch (its tolerance samples, or the nominal alone) steps through it
on the reduced system (reduced_steps.py) in the compiled kernels, starting at rest at its
operating point. The steps are those of the periodic solve, so a sine played long enough
settles onto ``periodic_steady_state``'s period at the same step.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np

from kitleaf.engine.batch import BatchResult
from kitleaf.engine.kernels import pack
from kitleaf.engine.reduce import partition
from kitleaf.engine.reduced_shooting import members
from kitleaf.engine.reduced_steps import StepState
from kitleaf.errors import SolveError

MAX_RATE = 10e6  # steps per second; past this no audio question is asked


@dataclass(frozen=True)
class Transient:
    """Each kept node's samples per member (members, samples); ``failed`` marks a member
    whose Newton did not settle at some step (its samples are meaningless from there)."""

    rate: float
    waves: dict[str, np.ndarray] = field(repr=False)
    failed: np.ndarray = field(repr=False)

    def wave(self, node: str) -> np.ndarray:
        try:
            return self.waves[node]
        except KeyError:
            raise SolveError(f"no waveform was kept for node {node!r}") from None


def transient(batch: BatchResult, source: str, signal: np.ndarray, rate: float,
              nodes: Sequence[str]) -> Transient:
    """The circuit's response at ``nodes`` to ``source`` playing ``signal`` at ``rate``."""
    signal = np.asarray(signal, dtype=float).reshape(-1)
    if not (math.isfinite(rate) and 0.0 < rate <= MAX_RATE):
        raise SolveError(f"a step rate of {rate!r} per second cannot be simulated "
                         f"(it must be above 0 and at most {MAX_RATE:g})")
    if not np.all(np.isfinite(signal)):
        raise SolveError("the signal to play holds a value that is not a number")
    rows = [batch.row(n) for n in nodes]
    # one "period" of one step: h = 1 / rate; the unit level makes the drive the signal
    built = members([batch], source, np.ones(1), 2.0 * math.pi * rate, rows, 1)
    if built is None:
        raise SolveError("the circuit has no semiconductor to step in time; its response "
                         "is its AC response")
    mem = built[0]
    st = _at_rest(mem, batch)
    drive = np.broadcast_to(signal, (st.failed.size, signal.size))
    waves, _, _ = pack.run(mem, st, drive, 1.0 / rate, keep=False)
    return Transient(rate, {n: waves[:, i] for i, n in enumerate(nodes)}, st.failed.copy())


def _at_rest(mem, batch: BatchResult) -> StepState:
    """Every member at its operating point, as if it had rested there for ever."""
    count = mem.amplitude.size
    x_dc = np.broadcast_to(batch.x, (count, batch.x.shape[1]))
    keep = partition(batch.system).keep
    x_t = np.ascontiguousarray(x_dc[:, keep])
    xe = mem.extended(x_t, 0.0)
    q = x_dc @ batch.system.cap_columns()[0]
    none = np.zeros((count, q.shape[1], 0))
    return StepState([x_t] * 3, [xe, xe], [q, q], mem.devices.junctions(xe), [none, none],
                     np.zeros(count, bool))
