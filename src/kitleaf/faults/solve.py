"""Every fault of a kit solved in batched DC runs, with the tolerance spread, and turned into
the readings a builder's meter would show at each test point.

Two batches: the faults over their tolerance samples, meters off (the spread), and the
faults with nominal parts (the centre), with a meter across each test point where its
10 Mohm loading matters. Where it does not (the point's DC resistance to the black probe
under 100 kohm, 1 % loading), the loading is applied from that resistance: V Rm / (Rm + R).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from kitleaf.circuit.chain import KitCircuit
from kitleaf.engine.batch import solve_batch
from kitleaf.errors import SolveError
from kitleaf.faults.board import R_OFF, Board, build_board, meter_switch
from kitleaf.faults.catalogue import catalogue
from kitleaf.faults.model import GOOD, Fault
from kitleaf.faults.probes import BLACK, METER_OHMS, Probe, probes

SAMPLES = 8  # tolerance samples per fault
SEED = 1
EXACT_ABOVE = 100e3  # ohms to the black probe: above this the meter is solved in place


@dataclass(frozen=True)
class Readings:
    """What the meter shows for each fault (index 0: the good build) at each probe with the
    black probe at each place of ``BLACK``: with nominal parts (``centre``) and the range
    the tolerance samples span around it, all (faults, probes, blacks) in volts."""

    faults: tuple[Fault, ...]
    probes: tuple[Probe, ...]
    supply_v: float
    centre: np.ndarray = field(repr=False)
    low: np.ndarray = field(repr=False)
    high: np.ndarray = field(repr=False)
    # Faults whose DC operating point the engine could not find: left out of every ranking,
    # and named wherever the faults are listed.
    unsolved: tuple[Fault, ...] = ()

    def index(self, key: str) -> int:
        return next(i for i, f in enumerate(self.faults) if f.key == key)


def solve_faults(kit: KitCircuit, supply_v: float | None = None,
                 samples: int = SAMPLES) -> Readings:
    """The good build and every DC-visible fault of ``kit``, solved together."""
    points = probes(kit)
    board = build_board(kit, supply_v, _meters(points))
    faults = (GOOD, *(f for f in catalogue(kit, board) if f.dc_visible))
    try:
        return readings_of(board, faults, points, samples)
    except SolveError:
        return _readings_by_halves(board, faults, points, samples)


def _readings_by_halves(board: Board, faults: tuple[Fault, ...], points: tuple[Probe, ...],
                        samples: int) -> Readings:
    """The faults solved in ever smaller batches, so the few a batch cannot solve (a chip
    reversed on a rail the model cannot settle) are set aside alone; the good build must
    solve."""
    solved, unsolved = _split_solve(board, faults, points, samples)
    if not solved or solved[0].faults[0] is not GOOD:
        raise SolveError("the good build's DC operating point did not converge")
    stack = lambda name: np.concatenate([getattr(r, name) for r in solved])  # noqa: E731
    return Readings(tuple(f for r in solved for f in r.faults), points, board.supply_v,
                    stack("centre"), stack("low"), stack("high"), tuple(unsolved))


def _split_solve(board, faults, points, samples) -> tuple[list[Readings], list[Fault]]:
    try:
        return [readings_of(board, faults, points, samples)], []
    except SolveError:
        if len(faults) == 1:
            return [], list(faults)
    half = len(faults) // 2
    first, lost_first = _split_solve(board, faults[:half], points, samples)
    second, lost_second = _split_solve(board, faults[half:], points, samples)
    return first + second, lost_first + lost_second


def _pairs(points: tuple[Probe, ...]) -> tuple[tuple[str, str], ...]:
    return tuple((p.node, b.node) for p in points for b in BLACK)


def _meters(points: tuple[Probe, ...]) -> tuple[tuple[str, str], ...]:
    return tuple(dict.fromkeys(_pairs(points)))


def readings_of(board: Board, faults: tuple[Fault, ...], points: tuple[Probe, ...],
                samples: int) -> Readings:
    """Solve ``faults`` on ``board`` and read every probe as the meter would."""
    pairs = _pairs(points)
    shape = (len(faults), len(points), len(BLACK))
    scale = board.scale(list(faults))
    spread = solve_batch(board.circuit, samples=len(faults) * samples, seed=SEED,
                         scale=np.repeat(scale, samples, axis=0))
    volts = _volts(spread, pairs).reshape(len(faults), samples, *shape[1:])
    firsts = np.arange(len(faults)) * samples
    ohms = spread.dc_resistance(pairs, firsts).reshape(shape)
    loading = METER_OHMS / (METER_OHMS + ohms)
    exact = [(f, k) for f in range(len(faults)) for k, (a, b) in enumerate(pairs)
             if a != b and ohms.reshape(len(faults), -1)[f, k] > EXACT_ABOVE]
    centre = _centres(board, scale, pairs, exact).reshape(shape)
    centre = np.where(ohms.reshape(shape) > EXACT_ABOVE, centre, centre * loading)
    deviation = (volts - np.median(volts, axis=1, keepdims=True)) * loading[:, None]
    return Readings(faults, points, board.supply_v, centre, centre + deviation.min(axis=1),
                    centre + deviation.max(axis=1))


def _volts(batch, pairs) -> np.ndarray:
    return np.stack([batch.voltage(a) - batch.voltage(b) for a, b in pairs], axis=1)


def _centres(board: Board, scale: np.ndarray, pairs, exact: list[tuple[int, int]]
             ) -> np.ndarray:
    """Nominal readings (faults, pairs): unloaded, except the ``exact`` (fault, pair)
    entries, solved with the meter across that pair."""
    index = {e.name: i for i, e in enumerate(board.circuit.elements)}
    metered = scale[[f for f, _ in exact]].copy()
    for row, (_, k) in enumerate(exact):
        metered[row, index[meter_switch(*pairs[k])]] *= METER_OHMS / R_OFF
    nominal = solve_batch(board.circuit, samples=len(scale) + len(exact),
                          scale=np.concatenate([scale, metered]), spread=False)
    volts = _volts(nominal, pairs)
    out = volts[: len(scale)].copy()
    for row, (f, k) in enumerate(exact):
        out[f, k] = volts[len(scale) + row, k]
    return out
