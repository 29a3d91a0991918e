"""Rule cap-voltage: a capacitor whose DC voltage exceeds 80 % of its rating at any knob
position, in the nominal build or in 5 % of the builds within part tolerances.

The limit, and the flag on a polarised capacitor that states no rating, are the BOM's too:
both read specs/ratings.py.
"""

from __future__ import annotations

from kitleaf.specs.ratings import rating_problem
from kitleaf.specs.rules import register
from kitleaf.specs.rules._context import RuleContext

RULE = "cap-voltage"


@register(RULE, "a capacitor's DC voltage above 80 % of its rating")
def check(ctx: RuleContext):
    for part in ctx.of_type("capacitor"):
        message = rating_problem(part.designator, part.type, part.rating, part.dielectric,
                                 ctx.stresses[part.designator])
        if message is not None:
            yield ctx.finding(RULE, part, message)
