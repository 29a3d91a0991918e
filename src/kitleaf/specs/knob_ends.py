"""The kit's gain with its knobs together at the ends of their travel, for the gain range.

One knob swept at a time (``knob_sweep``) misses what knobs do together: Gain and Level both
fully up give more than either alone. The index card's gain range reads these points too.
"""

from __future__ import annotations

import itertools

from kitleaf.circuit.chain import INPUT, OUTPUT
from kitleaf.specs import measures as m
from kitleaf.specs.model import KnobPoint, Range
from kitleaf.specs.solve import KitState

# Up to this many knobs every combination of their ends is solved (2**4 = 16 settings);
# with more, all at 0 % and all at 100 % only.
EVERY_COMBINATION = 4


def end_settings(count: int) -> list[tuple[float, ...]]:
    """Knob positions (0 or 1 each) of the settings solved for ``count`` knobs."""
    if count <= EVERY_COMBINATION:
        return list(itertools.product((0.0, 1.0), repeat=count))
    return [(0.0,) * count, (1.0,) * count]


def knob_ends(kit, base: KitState) -> tuple[KnobPoint, ...]:
    """Gain at 1 kHz, nominal parts, input jack to output jack, at each of ``end_settings``
    (an empty tuple for a kit without knobs); ``base`` is the kit with its knobs half way."""
    if not kit.knobs:
        return ()
    gain = m.gain_db(INPUT, OUTPUT)
    found = []
    for ends in end_settings(len(kit.knobs)):
        positions = {k.designator: p for k, p in zip(kit.knobs, ends, strict=True)}
        state = KitState(kit, positions, near=base)
        found.append(KnobPoint(tuple((k.name, p) for k, p in zip(kit.knobs, ends, strict=True)),
                               Range(float(gain(state.nominal)[0]))))
    return tuple(found)
