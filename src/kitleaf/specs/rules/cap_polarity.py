"""Rule cap-polarity: an electrolytic or tantalum capacitor whose DC voltage reverses.

A polarised capacitor is fitted with its + lead to the side that is higher in the nominal
build with the knobs at half way. It is reversed if some knob position drives it more than
REVERSE_LIMIT the other way, in the nominal build or in 5 % of the builds within part
tolerances: then no orientation keeps it forward-biased.
"""

from __future__ import annotations

from kitleaf.specs.ratings import POLARISED
from kitleaf.specs.rules import register
from kitleaf.specs.rules._context import Reading, RuleContext
from kitleaf.values import format_value

RULE = "cap-polarity"
# The reverse bias an aluminium electrolytic is taken to survive (common practice, no source).
REVERSE_LIMIT = 0.5


def across(ctx: RuleContext, designator: str):
    """A measure: the DC voltage across a capacitor, first node to second, per build."""
    element = ctx.states[0].circuit.element(designator)
    return lambda reading: reading.voltage(element.a) - reading.voltage(element.b)


@register(RULE, "a polarised capacitor whose DC voltage reverses at some knob position")
def check(ctx: RuleContext):
    for part in ctx.of_type("capacitor"):
        if part.dielectric not in POLARISED:
            continue
        volts = across(ctx, part.designator)
        nominal = float(volts(ctx.states[0].nominal)[0])
        sign = 1.0 if nominal >= 0 else -1.0

        def forward(reading: Reading, volts=volts, sign=sign):
            return volts(reading) * sign

        verdict = ctx.worst(lambda r, forward=forward: forward(r) < -REVERSE_LIMIT)
        if verdict is None:
            continue
        worst, words = ctx.shown(verdict, forward, high=False)
        yield ctx.finding(RULE, part, (
            f"{part.designator} ({part.dielectric}) is reverse-biased by {words}"
            f"{format_value(-worst, 'voltage')}{verdict.where}, {verdict.builds()}, against "
            f"{format_value(abs(nominal), 'voltage')} with the knobs at half way; "
            "use a film or bipolar capacitor"))
