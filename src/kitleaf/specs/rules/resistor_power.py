"""Rule resistor-power: a resistor or pot dissipating over half its power rating.

Half the rating is the usual limit (common practice, no source). A resistor that states no
rating is taken as 1/4 W and a pot as 1/8 W, the usual sizes in kits, as the BOM does.
"""

from __future__ import annotations

from kitleaf.bom.stresses import STRESS
from kitleaf.specs.rules import register
from kitleaf.specs.rules._context import RuleContext
from kitleaf.values import format_value

RULE = "resistor-power"
DERATING = 0.5  # common practice, no source
ASSUMED = {"resistor": 0.25, "pot": 0.125}  # common practice, no source


def dissipation(ctx: RuleContext, designator: str) -> tuple[float, str]:
    """The most power the part dissipates over the knob states, and the state."""
    return max((STRESS[type(e)](s.op, e), s.words)
               for s in ctx.states for e in [s.circuit.element(designator)])


@register(RULE, "a resistor or pot dissipating over half its power rating")
def check(ctx: RuleContext):
    for part in ctx.of_type("resistor", "pot"):
        rating = part.rating or ASSUMED[part.type]
        watts, words = dissipation(ctx, part.designator)
        if watts > DERATING * rating * (1 + 1e-9):
            stated = "" if part.rating else " (assumed: none stated)"
            yield ctx.finding(RULE, part, (
                f"{part.designator} dissipates {format_value(watts, 'power')} ({words}), over "
                f"half its {format_value(rating, 'power')} rating{stated}; use one rated "
                f"{format_value(watts / DERATING, 'power')} or more"))
