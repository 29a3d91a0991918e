"""The tolerance band of the large-signal figures: the sweep again over tolerance samples.

The first BAND_SAMPLES of the kit's seeded tolerance samples (the builds behind every other
range of the specs, knobs at half way) are driven at every level of the sweep in one
periodic solve; the band is the 5th to 95th percentile of THD and of the output's peak at
each level, at every node asked for. A sample whose solve did not settle at some level is
left out and the band says how many were used; with fewer than half left there is no band.
"""

from __future__ import annotations

import numpy as np

from kitleaf.circuit.chain import SOURCE
from kitleaf.engine.periodic import periodic_steady_state
from kitleaf.errors import KitleafError
from kitleaf.specs.drive import POINTS, DrivePlan, kept
from kitleaf.specs.model import DriveBand

# Samples in the band: enough for its 5th and 95th percentiles to settle within a few
# percent of the 200 samples' on the demo kits, at a sixth of their time.
BAND_SAMPLES = 32
PERCENTILES = (5.0, 95.0)


def drive_bands(state, nodes: list[str], plan: DrivePlan) -> dict[str, DriveBand]:
    """The band at each of ``nodes`` (none where it could not be computed), the kit at
    ``state`` (a KitState: knobs at half way)."""
    key = repr(state.circuit.elements) + repr(nodes) + repr(plan) + "band"
    return kept(key, lambda: _bands(state, nodes, plan))


def _bands(state, nodes: list[str], plan: DrivePlan) -> dict[str, DriveBand]:
    batch = state.samples.batch
    every = np.arange(batch.size) if batch.index is None else batch.index
    try:
        result = periodic_steady_state([batch.system.take(every[:BAND_SAMPLES])], SOURCE,
                                       plan.levels, plan.freq, nodes=nodes, points=POINTS)
    except KitleafError:
        return {}
    settled = result.converged[0].all(axis=0)
    if 2 * settled.sum() < min(BAND_SAMPLES, every.size):
        return {}
    return {node: _band(result.distortion(node), settled) for node in nodes}


def _band(d, settled: np.ndarray) -> DriveBand:
    thd = np.percentile(d.thd[0][:, settled], PERCENTILES, axis=1)
    peak = np.percentile(d.peak[0][:, settled], PERCENTILES, axis=1)
    return DriveBand(int(settled.sum()), *(tuple(float(v) for v in row)
                                           for row in (*thd, *peak)))
