"""Rule input-impedance: a kit driven by a passive pickup that loads it below about 500 kΩ,
in the nominal build or in 5 % of the builds within part tolerances.

A passive pickup loses treble into less than about 500 kΩ (common practice, no source); the
rule applies only where the kit block's ``source:`` is a pickup (the default).
"""

from __future__ import annotations

from kitleaf.specs.rules import register
from kitleaf.specs.rules._context import RuleContext, past_limit
from kitleaf.values import format_value

RULE = "input-impedance"
LIMIT_OHM = 500e3  # common practice, no source


@register(RULE, "a kit input impedance below about 500 kΩ behind a passive pickup")
def check(ctx: RuleContext):
    z = ctx.specs.input_impedance
    if ctx.specs.unstable is not None:  # no figure of an oscillating kit means anything
        return
    words = past_limit(z, LIMIT_OHM, False, "resistance")
    if ctx.kit.source.is_pickup and words is not None:
        source = ctx.guide.kit.source
        yield ctx.kit_finding(RULE, (
            f"the kit's input impedance is {format_value(z.nominal, 'resistance')}{words}: it "
            "dulls a passive pickup; raise the input bias resistors or put a buffer first"),
            source.span if source else None)
