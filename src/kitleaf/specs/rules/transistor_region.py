"""Rule transistor-region: a BJT saturated or cut off, or a JFET cut off or in its ohmic
region, at any knob position: the stage then clips or passes nothing instead of amplifying.

The engine reports each device's region (thresholds in docs/engine.md), in the nominal build
and in each build drawn within part tolerances and device spreads.
"""

from __future__ import annotations

from collections import Counter

from kitleaf.specs.rules import register
from kitleaf.specs.rules._context import RuleContext

RULE = "transistor-region"
# Regions in which a transistor does not amplify, by part type, with words for the page.
BAD_REGIONS = {
    "bjt": {"saturated": "saturated", "cutoff": "cut off"},
    "jfet": {"cutoff": "cut off", "ohmic": "in its ohmic region (saturated)"},
}


@register(RULE, "a transistor saturated or cut off at some knob position, in the nominal "
          "build or in 5 % of builds")
def check(ctx: RuleContext):
    for part in ctx.of_type(*BAD_REGIONS):
        bad = BAD_REGIONS[part.type]

        def regions(reading, name=part.designator):
            return reading.device(name, "region")

        verdict = ctx.worst(lambda r, bad=bad: [region in bad for region in regions(r)])
        if verdict is None:
            continue
        seen = regions(verdict.state.nominal if verdict.nominal else verdict.state.samples)
        region = Counter(r for r in seen if r in bad).most_common(1)[0][0]
        yield ctx.finding(RULE, part, (
            f"{part.designator} ({part.model}) is {bad[region]}{verdict.where}, "
            f"{verdict.builds()}; check its bias resistors"))
