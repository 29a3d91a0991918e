"""Rule opamp-headroom: an op-amp whose DC output sits within 1 V of a supply rail, or is
pinned at the limit of its output swing (the engine's model reports it saturated), at any
knob position, in the nominal build or in 5 % of the builds within part tolerances.

Few op-amps swing closer than about 1 V to their rails (common practice, no source): an output
biased nearer than that clips at once, or is latched against the rail.
"""

from __future__ import annotations

import numpy as np

from kitleaf.specs.rules import register
from kitleaf.specs.rules._context import Reading, RuleContext
from kitleaf.values import format_value

RULE = "opamp-headroom"
MARGIN_V = 1.0  # common practice, no source


def room(reading: Reading, name: str) -> np.ndarray:
    """Volts from the output to the nearer rail, per build; zero where it is pinned."""
    out, vpos, vneg = (np.array(reading.device(name, k), float)
                       for k in ("vout", "vpos", "vneg"))
    linear = np.array([r == "linear" for r in reading.device(name, "region")])
    return np.where(linear, np.minimum(vpos - out, out - vneg), 0.0)


@register(RULE, "an op-amp output within 1 V of a rail at some knob position")
def check(ctx: RuleContext):
    for part in ctx.of_type("opamp"):
        def measure(reading, name=part.designator):
            return room(reading, name)

        verdict = ctx.worst(lambda r, measure=measure: measure(r) < MARGIN_V)
        if verdict is None:
            continue
        value, words = ctx.shown(verdict, measure, high=False)
        yield ctx.finding(RULE, part, (
            f"{part.designator} output sits {_where(value, words)}{verdict.where}, "
            f"{verdict.builds()}; bias it near mid-supply"))


def _where(room: float, words: str) -> str:
    if room <= 0.0:
        return "at a rail, pinned at the limit of its swing"
    return f"{words}{format_value(room, 'voltage')} from a rail"
