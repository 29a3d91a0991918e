"""Rule cap-polarity: an electrolytic or tantalum capacitor whose DC voltage reverses.

A polarised capacitor is fitted with its + lead to the side that is higher at the nominal
setting. It is reversed if some knob position drives it more than REVERSE_LIMIT the other way:
then no orientation keeps it forward-biased at every position.
"""

from __future__ import annotations

from kitleaf.specs.ratings import POLARISED
from kitleaf.specs.rules import register
from kitleaf.specs.rules._context import RuleContext
from kitleaf.values import format_value

RULE = "cap-polarity"
# The reverse bias an aluminium electrolytic is taken to survive (common practice, no source).
REVERSE_LIMIT = 0.5


def voltages(ctx: RuleContext, designator: str) -> list[tuple[float, str]]:
    """The DC voltage across a capacitor, first node to second, at every knob state."""
    found = []
    for state in ctx.states:
        element = state.circuit.element(designator)
        found.append((state.op.voltage(element.a) - state.op.voltage(element.b), state.words))
    return found


@register(RULE, "a polarised capacitor whose DC voltage reverses at some knob position")
def check(ctx: RuleContext):
    for part in ctx.of_type("capacitor"):
        if part.dielectric not in POLARISED:
            continue
        seen = voltages(ctx, part.designator)
        nominal = seen[0][0]
        sign = 1.0 if nominal >= 0 else -1.0
        worst, words = min((v * sign, w) for v, w in seen)
        if worst < -REVERSE_LIMIT:
            yield ctx.finding(RULE, part, (
                f"{part.designator} ({part.dielectric}) is reverse-biased by "
                f"{format_value(-worst, 'voltage')} with {words}, against "
                f"{format_value(abs(nominal), 'voltage')} with the knobs at half way; "
                "use a film or bipolar capacitor"))
