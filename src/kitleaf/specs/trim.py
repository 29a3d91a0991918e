"""Each trimmer's set-up over the tolerance builds: the position every build needs.

The circuit layer sets each trimmer where its target is met with nominal parts
(:mod:`kitleaf.circuit.trim`). A real build's parts differ, so the builder turns the trimmer
further one way or the other; this module finds how far, build by build, from the tolerance
samples solved at positions across the travel (the same samples at every position), reading
where each build's test point crosses the target between two of them. Every sampled state
of the kit then has each build's trimmer there (:class:`~kitleaf.specs.solve.KitState`), so
the ranges on the page are those of trimmed builds; a build whose trimmer cannot reach the
target is left at the end of the travel that comes closest.
"""

from __future__ import annotations

import numpy as np

from kitleaf.specs.model import Range, Trim
from kitleaf.specs.solve import KitState

GRID = 11  # positions across the travel (every 10 %) the samples are solved at
_MEMO = "trim-positions"  # the kit's cache entry: each trimmer's needed positions


def trims(kit) -> tuple[Trim, ...]:
    """The set-up of every trimmer of ``kit``, in the guide's order."""
    titles = {s.id: s.title for s in kit.stages}
    nominal = dict(kit.presets)
    found = []
    for target in kit.trims:
        needed = needed_positions(kit)[target.designator]
        reached = needed[np.isfinite(needed)]
        spread = (Range(nominal[target.designator],
                        *map(float, np.percentile(reached, [5.0, 95.0])))
                  if reached.size else Range(nominal[target.designator]))
        found.append(Trim(target.designator, target.stage_id, titles[target.stage_id],
                          target.label, target.number, target.volts, spread,
                          float(1.0 - reached.size / needed.size)))
    return tuple(found)


def trimmed_positions(kit) -> dict[str, np.ndarray]:
    """Each trimmer's position in every tolerance build: where it meets its target, or the
    end of its travel that comes closest."""
    return {d: closest for d, (_, closest) in _solved(kit).items()}


def needed_positions(kit) -> dict[str, np.ndarray]:
    """Each trimmer's position in every tolerance build, NaN where it cannot meet its
    target."""
    return {d: needed for d, (needed, _) in _solved(kit).items()}


def _solved(kit) -> dict[str, tuple[np.ndarray, np.ndarray]]:
    """Per trimmer (in the guide's order, each with the ones before it trimmed): the needed
    positions and the closest reachable ones; solved once per kit."""
    if _MEMO not in kit.cache:
        found: dict[str, tuple[np.ndarray, np.ndarray]] = {}
        for target in kit.trims:
            earlier = {d: closest for d, (_, closest) in found.items()}
            found[target.designator] = _positions(kit, target, earlier)
        kit.cache[_MEMO] = found
    return kit.cache[_MEMO]


def _positions(kit, target, earlier: dict[str, np.ndarray]) -> tuple[np.ndarray, np.ndarray]:
    """Where each build crosses the target, linear between the two grid positions it crosses
    at (the crossing nearest the middle of the travel), and the reachable position closest
    to it."""
    grid = np.linspace(0.0, 1.0, GRID)
    rest = kit.rest_positions()
    states: list[KitState] = []
    for p in grid:
        near = states[-1] if states else None
        states.append(KitState(kit, {**rest, target.designator: p}, near=near,
                               trims=earlier))
    misses = np.stack([s.samples.batch.voltage(target.node) for s in states],
                      axis=1) - target.volts
    needed = np.full(misses.shape[0], np.nan)
    # the crossing nearest the middle of the travel wins, as for the nominal parts
    for k in sorted(range(GRID - 1), key=lambda k: -abs(grid[k] + grid[k + 1] - 1.0)):
        a, b = misses[:, k], misses[:, k + 1]
        crossing = (a == 0.0) | (a * b < 0.0)
        share = np.divide(a, a - b, out=np.zeros_like(a), where=crossing)
        needed = np.where(crossing, grid[k] + share * (grid[k + 1] - grid[k]), needed)
    end = np.where(np.abs(misses[:, 0]) <= np.abs(misses[:, -1]), 0.0, 1.0)
    return needed, np.where(np.isfinite(needed), needed, end)
