"""Rule cap-voltage: a capacitor whose DC voltage exceeds 80 % of its rating at any knob position.

A capacitor should see at most 80 % of its rated voltage (common practice, no source). A
polarised capacitor that states no rating is found too: it cannot be bought without one.
"""

from __future__ import annotations

from kitleaf.specs.rules import register
from kitleaf.specs.rules._context import RuleContext
from kitleaf.specs.rules.cap_polarity import POLARISED, voltages
from kitleaf.values import format_value

RULE = "cap-voltage"
DERATING = 0.8  # common practice, no source


@register(RULE, "a capacitor's DC voltage above 80 % of its rating")
def check(ctx: RuleContext):
    for part in ctx.of_type("capacitor"):
        stress, words = max((abs(v), w) for v, w in voltages(ctx, part.designator))
        need = format_value(stress / DERATING, "voltage")
        shown = format_value(stress, "voltage")
        if part.rating is None:
            if part.dielectric in POLARISED:
                yield ctx.finding(RULE, part, f"{part.designator} sees {shown} ({words}) but "
                                  f"states no voltage rating; rate it {need} or more")
            continue
        if stress > DERATING * part.rating * (1 + 1e-9):
            over = "over its" if stress > part.rating else f"over {DERATING:.0%} of its"
            yield ctx.finding(RULE, part, (
                f"{part.designator} sees {shown} ({words}), {over} "
                f"{format_value(part.rating, 'voltage')} rating; use one rated {need} or more"))
