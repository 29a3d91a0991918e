"""The data a response plot draws: nominal curves per knob or switch position and the
tolerance band."""

from __future__ import annotations

import numpy as np

from kitleaf.specs.model import Curve
from kitleaf.specs.response import to_db
from kitleaf.specs.solve import KitState
from kitleaf.specs.stability import unstable_at


def curves(solved, node_in: str, node_out: str, controls) -> tuple[Curve, ...]:
    """One nominal curve per position of each knob or switch in ``controls``; one curve if
    there is none."""
    if not controls:
        return (Curve("", None, _db(solved.base, node_in, node_out),
                      unstable=unstable_at(solved.base)),)
    return tuple(Curve(c.name, shown, _db(state, node_in, node_out), pos == c.nominal,
                       unstable_at(state))
                 for c in controls
                 for (pos, shown), state in zip(c.steps, solved.sweeps[c.designator],
                                                strict=True))


def _db(state: KitState, node_in: str, node_out: str) -> tuple[float, ...]:
    db = to_db(state.nominal.sweep.ratio(node_in, node_out)[0])
    return tuple(float(x) for x in db)


def band(state: KitState, node_in: str, node_out: str, percentile: float) -> tuple[float, ...]:
    """A percentile of the sampled gain (dB) at each frequency, knobs at half way."""
    db = to_db(state.samples.sweep.ratio(node_in, node_out))
    return tuple(float(x) for x in np.percentile(db, percentile, axis=0))
