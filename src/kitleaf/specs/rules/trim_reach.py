"""Rule trim-reach: a trimmer that cannot reach its set-up target in at least 5 % of the
builds within part tolerances: its travel runs out first.

Each build's trimmer is turned where that build needs it (specs/trim.py); where no position
gives the target, the builder meets a kit that cannot be set up. The share is that of the
5th-95th percentile spread claims use (common practice, no source).
"""

from __future__ import annotations

from kitleaf.display import meter_volts
from kitleaf.specs.rules import register
from kitleaf.specs.rules._context import SHARE_LIMIT, RuleContext

RULE = "trim-reach"


@register(RULE, "a trimmer whose travel runs out before its set-up target in some builds")
def check(ctx: RuleContext):
    parts = {p.designator: p for p in ctx.parts}
    for trim in ctx.specs.trims:
        if trim.out_of_reach >= SHARE_LIMIT:
            yield ctx.finding(RULE, parts[trim.designator], (
                f"{trim.designator} cannot bring {trim.label} to {meter_volts(trim.volts)} in "
                f"{round(trim.out_of_reach * 100)} % of builds within part tolerances: its "
                f"travel runs out first; fit a larger trimmer, or a fixed resistor in series "
                "to move its range"))
