"""The data a response plot draws: nominal curves per knob position and the tolerance band."""

from __future__ import annotations

import numpy as np

from kitleaf.specs.model import Curve
from kitleaf.specs.response import to_db
from kitleaf.specs.solve import KNOB_STEPS, KitState


def curves(solved, node_in: str, node_out: str, knobs) -> tuple[Curve, ...]:
    """One nominal curve per position of each knob in ``knobs``; one curve if there is none."""
    if not knobs:
        return (Curve("", None, _db(solved.base, node_in, node_out)),)
    return tuple(Curve(k.name, pos, _db(state, node_in, node_out))
                 for k in knobs
                 for pos, state in zip(KNOB_STEPS, solved.sweeps[k.designator], strict=True))


def _db(state: KitState, node_in: str, node_out: str) -> tuple[float, ...]:
    db = to_db(state.nominal.sweep.ratio(node_in, node_out)[0])
    return tuple(float(x) for x in db)


def band(state: KitState, node_in: str, node_out: str, percentile: float) -> tuple[float, ...]:
    """A percentile of the sampled gain (dB) at each frequency, knobs at half way."""
    db = to_db(state.samples.sweep.ratio(node_in, node_out))
    return tuple(float(x) for x in np.percentile(db, percentile, axis=0))
