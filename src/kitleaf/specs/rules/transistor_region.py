"""Rule transistor-region: a BJT saturated or cut off, or a JFET cut off or in its ohmic
region, at any knob position: the stage then clips or passes nothing instead of amplifying.

The engine reports each device's region (thresholds in docs/engine.md).
"""

from __future__ import annotations

from kitleaf.specs.rules import register
from kitleaf.specs.rules._context import RuleContext

RULE = "transistor-region"
# Regions in which a transistor does not amplify, by part type, with words for the page.
BAD_REGIONS = {
    "bjt": {"saturated": "saturated", "cutoff": "cut off"},
    "jfet": {"cutoff": "cut off", "ohmic": "in its ohmic region (saturated)"},
}


@register(RULE, "a transistor saturated or cut off at some knob position")
def check(ctx: RuleContext):
    for part in ctx.of_type(*BAD_REGIONS):
        for state in ctx.states:
            region = str(state.op.device(part.designator)["region"])
            words = BAD_REGIONS[part.type].get(region)
            if words is not None:
                yield ctx.finding(RULE, part, (
                    f"{part.designator} ({part.model}) is {words} with {state.words}; "
                    "check its bias resistors"))
                break
