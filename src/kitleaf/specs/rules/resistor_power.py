"""Rule resistor-power: a resistor or pot dissipating over half its power rating, at any knob
position, in the nominal build or in 5 % of the builds within part tolerances.

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


def dissipation(ctx: RuleContext, designator: str):
    """A measure: the power the part dissipates, per build. A build's drawn value scales
    both legs of a pot alike, so the power at its voltages goes as one over that factor."""
    element = ctx.states[0].circuit.element(designator)
    stress = STRESS[type(element)]
    return lambda reading: stress(reading, element) / reading.factor(designator)


@register(RULE, "a resistor or pot dissipating over half its power rating")
def check(ctx: RuleContext):
    for part in ctx.of_type("resistor", "pot"):
        rating = part.rating or ASSUMED[part.type]
        watts = dissipation(ctx, part.designator)
        limit = DERATING * rating * (1 + 1e-9)
        verdict = ctx.worst(lambda r, watts=watts, limit=limit: watts(r) > limit)
        if verdict is None:
            continue
        value, words = ctx.shown(verdict, watts)
        stated = "" if part.rating else " (assumed: none stated)"
        yield ctx.finding(RULE, part, (
            f"{part.designator} dissipates {words}{format_value(value, 'power')}"
            f"{ctx.setting(verdict.state, lambda r, watts=watts: float(watts(r)[0]))}, "
            f"{verdict.builds()}, over half its {format_value(rating, 'power')} "
            f"rating{stated}; use one rated {format_value(value / DERATING, 'power')} or more"))
