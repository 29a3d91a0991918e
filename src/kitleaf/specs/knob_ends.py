"""The kit's gain with its knobs together at the ends of their travel, for the gain range.

One knob swept at a time (``knob_sweep``) misses what knobs do together: Gain and Level both
fully up give more than either alone; a switch's position changes what the knobs reach too.
The index card's gain range reads these points too.
"""

from __future__ import annotations

import itertools
import math

from kitleaf.circuit.chain import INPUT, OUTPUT
from kitleaf.specs import measures as m
from kitleaf.specs.model import KnobPoint, Range
from kitleaf.specs.solve import KitState
from kitleaf.specs.stability import unstable_at

# Up to this many knobs every combination of their ends is solved (2**4 = 16 settings);
# with more, all at 0 % and all at 100 % only.
EVERY_COMBINATION = 4
# Switches: every combination of their positions up to this many (two three-way toggles
# take 9), each with every knob setting above.
EVERY_SWITCH_SETTING = 12


def end_settings(count: int) -> list[tuple[float, ...]]:
    """Knob positions (0 or 1 each) of the settings solved for ``count`` knobs."""
    if count <= EVERY_COMBINATION:
        return list(itertools.product((0.0, 1.0), repeat=count))
    return [(0.0,) * count, (1.0,) * count]


def knob_ends(kit, base: KitState) -> tuple[KnobPoint, ...]:
    """Gain at 1 kHz, nominal parts, input jack to output jack, at each of ``end_settings``
    and each combination of switch positions (:func:`switch_settings`; an empty tuple for a
    kit without knobs or switches); ``base`` is the kit with its knobs half way."""
    if not kit.knobs and not kit.switches:
        return ()
    gain = m.gain_db(INPUT, OUTPUT)
    found = []
    for switched in switch_settings(kit.switches):
        for ends in end_settings(len(kit.knobs)) if kit.knobs else [()]:
            setting = [(k, p, p) for k, p in zip(kit.knobs, ends, strict=True)] + switched
            state = KitState(kit, {**base.positions, **{c.designator: p for c, p, _ in setting}},
                             near=base)
            found.append(KnobPoint(tuple((c.name, shown) for c, _, shown in setting),
                                   Range(float(gain(state.nominal)[0])),
                                   unstable=unstable_at(state)))
    return tuple(found)


def switch_settings(switches) -> list[list[tuple]]:
    """(switch, position, its name) for each switch, in every combination of positions up to
    EVERY_SWITCH_SETTING of them; with more, each switch alone at each position (the others
    where they rest)."""
    steps = [s.steps for s in switches]
    if math.prod(len(x) for x in steps) <= EVERY_SWITCH_SETTING:
        return [[(s, p, shown) for s, (p, shown) in zip(switches, combo, strict=True)]
                for combo in itertools.product(*steps)]
    rest = [(s, *s.steps[s.rest]) for s in switches]
    return [rest] + [rest[:i] + [(s, p, shown)] + rest[i + 1:]
                     for i, s in enumerate(switches) for p, shown in s.steps if p != s.nominal]
