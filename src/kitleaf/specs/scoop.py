"""The mid scoop of a passive tone control: the deepest dip of its response, at each knob step.

A kit maker choosing a tone stack or a blend tone wants to know how deep the middle of the band
falls and where, with the knobs at half way and as each knob turns; the response plot shows
the shape, these figures put numbers on it.
"""

from __future__ import annotations

import numpy as np

from kitleaf.specs import measures as m
from kitleaf.specs.model import Range, Scoop
from kitleaf.specs.solve import KitState

# A dip shallower than this is no scoop a player hears: about the smallest level change a
# listener notices (common practice, no source).
MIN_SCOOP_DB = 1.0


def scoop(state: KitState, node_in: str, node_out: str, spread: bool) -> Scoop | None:
    """The deepest dip from ``node_in`` to ``node_out`` in ``state``, with its spread over the
    tolerance samples if asked; None when it is shallower than :data:`MIN_SCOOP_DB`."""
    depth, where = m.scoop(node_in, node_out, 0), m.scoop(node_in, node_out, 1)
    if spread:
        found = Scoop(state.range(depth), state.range(where))
    else:
        found = Scoop(_nominal(depth, state), _nominal(where, state))
    return found if found.depth_db.nominal >= MIN_SCOOP_DB else None


def _nominal(measure: m.Measure, state: KitState) -> Range:
    return Range(float(np.asarray(measure(state.nominal))[0]))
