"""Rule battery-life: a current draw the battery cannot sustain for the life the kit promises.

Applies where the kit block gives ``battery-life:`` (hours); the capacity is ``battery:``
(mAh) or, if none is given, 500 mAh, about what a 9 V alkaline battery holds (common practice,
from memory). The check uses the high end of the current draw's tolerance range.
"""

from __future__ import annotations

from kitleaf.guide.kit_lines import battery_capacity_ah, battery_life_hours
from kitleaf.guide.model import Entry
from kitleaf.specs.rules import register
from kitleaf.specs.rules._context import RuleContext
from kitleaf.values import format_value

RULE = "battery-life"
DEFAULT_CAPACITY_AH = 0.5  # a 9 V alkaline battery (common practice, from memory)


def capacity_ah(entry: Entry | None) -> float:
    return DEFAULT_CAPACITY_AH if entry is None else battery_capacity_ah(entry)


@register(RULE, "a current draw the stated battery life cannot meet")
def check(ctx: RuleContext):
    entries = {e.key: e for e in ctx.guide.kit.extra}
    life = entries.get("battery-life")
    if life is None:
        return
    hours = battery_life_hours(life)
    capacity = capacity_ah(entries.get("battery"))
    draw = ctx.specs.supply_current
    amps = max(draw.nominal, draw.high or 0.0)
    if amps * hours > capacity:
        yield ctx.kit_finding(RULE, (
            f"the kit draws {format_value(amps, 'current')}, so a {capacity * 1e3:g} mAh "
            f"battery lasts about {capacity / amps:.0f} h, not the {hours:g} h promised; "
            "lower the draw or the promise"), life.span)
