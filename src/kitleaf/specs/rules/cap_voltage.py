"""Rule cap-voltage: a capacitor whose DC voltage exceeds 80 % of its rating at any knob
position, in the nominal build or in 5 % of the builds within part tolerances.

A capacitor should see at most 80 % of its rated voltage (common practice, no source). A
polarised capacitor that states no rating is found too: it cannot be bought without one.
"""

from __future__ import annotations

import numpy as np

from kitleaf.specs.rules import register
from kitleaf.specs.rules._context import RuleContext
from kitleaf.specs.rules.cap_polarity import POLARISED, across
from kitleaf.values import format_value

RULE = "cap-voltage"
DERATING = 0.8  # common practice, no source


@register(RULE, "a capacitor's DC voltage above 80 % of its rating")
def check(ctx: RuleContext):
    for part in ctx.of_type("capacitor"):
        volts = across(ctx, part.designator)

        def stress(reading, volts=volts):
            return np.abs(volts(reading))

        if part.rating is None:
            if part.dielectric in POLARISED:
                yield _unrated(ctx, part, stress)
            continue
        limit = DERATING * part.rating * (1 + 1e-9)
        verdict = ctx.worst(lambda r, stress=stress, limit=limit: stress(r) > limit)
        if verdict is None:
            continue
        value, words = ctx.shown(verdict, stress)
        over = "over its" if value > part.rating else f"over {DERATING:.0%} of its"
        yield ctx.finding(RULE, part, (
            f"{part.designator} sees {words}{format_value(value, 'voltage')}"
            f"{ctx.setting(verdict.state, lambda r: float(stress(r)[0]))}, "
            f"{verdict.builds()}, {over} {format_value(part.rating, 'voltage')} rating; use "
            f"one rated {format_value(value / DERATING, 'voltage')} or more"))


def _unrated(ctx: RuleContext, part, stress):
    """The rating to ask for covers the 95th percentile of the builds at every setting."""
    value, state = max((float(stress(s.nominal)[0]), i) for i, s in enumerate(ctx.states))
    need = max(value, *(float(np.percentile(stress(s.samples), 95.0)) for s in ctx.states))
    where = ctx.setting(ctx.states[state], lambda r: float(stress(r)[0]))
    return ctx.finding(RULE, part, (
        f"{part.designator} sees {format_value(value, 'voltage')}{where} but states no "
        f"voltage rating; rate it {format_value(need / DERATING, 'voltage')} or more"))
