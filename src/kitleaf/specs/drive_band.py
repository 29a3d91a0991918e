"""The tolerance bands of the large-signal figures: the sweep again over tolerance samples.

Each knob and switch setting the drive curve shows gets its own band: the first of the kit's
seeded tolerance samples at that setting (the builds behind every other range of the specs)
are driven at every level of the sweep, every setting in one periodic solve; the band is the
5th to 95th percentile of THD and of the output's peak at each level, at every node asked
for. The knobs at half way take BAND_SAMPLES builds, every other setting SETTING_SAMPLES, so
the bands of a kit with many settings cost a few times the one at half way, not tens. A
sample whose solve did not settle at some level is left out and the band says how many were
used; with fewer than half left that setting has no band.
"""

from __future__ import annotations

import numpy as np

from kitleaf.circuit.chain import SOURCE
from kitleaf.engine.periodic import periodic_steady_state
from kitleaf.errors import KitleafError
from kitleaf.specs.drive import POINTS, DrivePlan, kept
from kitleaf.specs.model import DriveBand

# Samples in the band with the knobs at half way: enough for its 5th and 95th percentiles
# to settle within a few percent of the 200 samples' on the demo kits, at a sixth of their
# time; at every other setting fewer, whose percentiles lie near the extremes of the builds
# drawn (the spread's reach, not its exact edges).
BAND_SAMPLES = 32
SETTING_SAMPLES = 8
PERCENTILES = (5.0, 95.0)


def drive_bands(states, nodes: list[str], plan: DrivePlan) -> dict[tuple[int, str], DriveBand]:
    """The band of each (index of ``states``, node of ``nodes``); none where it could not be
    computed. ``states`` are KitStates, the knobs at half way first."""
    key = repr([s.circuit.elements for s in states]) + repr(nodes) + repr(plan) + "bands"
    return kept(key, lambda: {**_bands(states[:1], 0, BAND_SAMPLES, nodes, plan),
                              **_bands(states[1:], 1, SETTING_SAMPLES, nodes, plan)})


def _bands(states, first: int, count: int, nodes: list[str],
           plan: DrivePlan) -> dict[tuple[int, str], DriveBand]:
    """The bands of ``states`` (indices from ``first``), ``count`` samples each."""
    if not states:
        return {}
    batches = [_first_samples(state, count) for state in states]
    try:
        result = periodic_steady_state(batches, SOURCE, plan.levels, plan.freq, nodes=nodes,
                                       points=POINTS)
    except KitleafError:
        return {}
    found = {}
    for node in nodes:
        d = result.distortion(node)
        for v, batch in enumerate(batches):
            settled = result.converged[v].all(axis=0)
            if 2 * settled.sum() >= batch.size:
                found[(first + v, node)] = _band(d, v, settled)
    return found


def _first_samples(state, count: int):
    """The engine's batch of ``state``'s first ``count`` tolerance samples."""
    batch = state.samples.batch
    every = np.arange(batch.size) if batch.index is None else batch.index
    return batch.system.take(every[:count])


def _band(d, variant: int, settled: np.ndarray) -> DriveBand:
    thd = np.percentile(d.thd[variant][:, settled], PERCENTILES, axis=1)
    peak = np.percentile(d.peak[variant][:, settled], PERCENTILES, axis=1)
    return DriveBand(int(settled.sum()), *(tuple(float(v) for v in row)
                                           for row in (*thd, *peak)))
