"""Rule battery-life: a current draw the battery cannot sustain for the life the kit promises.

Applies where the kit block gives ``battery-life:`` (hours); the capacity is ``battery:``
(mAh) or, if none is given, 500 mAh, about what a 9 V alkaline battery holds (common practice,
from memory). The check uses the high end of the current draw's tolerance range.
"""

from __future__ import annotations

import re

from kitleaf.errors import SpecError
from kitleaf.guide.model import Entry
from kitleaf.specs.rules import register
from kitleaf.specs.rules._context import RuleContext
from kitleaf.values import format_value

RULE = "battery-life"
DEFAULT_CAPACITY_AH = 0.5  # a 9 V alkaline battery (common practice, from memory)
_CAPACITY = re.compile(r"^(\d+(?:\.\d*)?)\s*(m?)Ah$")
_HOURS = re.compile(r"^(\d+(?:\.\d*)?)\s*(?:h|hours?)$")


def read(entry: Entry, pattern: re.Pattern, example: str) -> re.Match:
    match = pattern.match(entry.value.strip())
    if match is None or float(match[1]) <= 0:
        raise SpecError(f"cannot read '{entry.key}: {entry.value}'; write it like '{example}'",
                        entry.span)
    return match


def capacity_ah(entry: Entry | None) -> float:
    if entry is None:
        return DEFAULT_CAPACITY_AH
    match = read(entry, _CAPACITY, "battery: 500 mAh")
    return float(match[1]) * (1e-3 if match[2] else 1.0)


@register(RULE, "a current draw the stated battery life cannot meet")
def check(ctx: RuleContext):
    entries = {e.key: e for e in ctx.guide.kit.extra}
    life = entries.get("battery-life")
    if life is None:
        return
    hours = float(read(life, _HOURS, "battery-life: 20 h")[1])
    capacity = capacity_ah(entries.get("battery"))
    draw = ctx.specs.supply_current
    amps = max(draw.nominal, draw.high or 0.0)
    if amps * hours > capacity:
        yield ctx.kit_finding(RULE, (
            f"the kit draws {format_value(amps, 'current')}, so a {capacity * 1e3:g} mAh "
            f"battery lasts about {capacity / amps:.0f} h, not the {hours:g} h promised; "
            "lower the draw or the promise"), life.span)
