"""Rule resistor-power: a resistor or pot dissipating over half its power rating, in the
nominal build or in 5 % of the builds within part tolerances.

The limit, and the rating assumed for a part that states none, are the BOM's too: both read
specs/ratings.py.
"""

from __future__ import annotations

from kitleaf.specs.ratings import rating_problem
from kitleaf.specs.rules import register
from kitleaf.specs.rules._context import RuleContext

RULE = "resistor-power"


@register(RULE, "a resistor or pot dissipating over half its power rating")
def check(ctx: RuleContext):
    for part in ctx.of_type("resistor", "pot", "trimmer"):
        message = rating_problem(part.designator, part.type, part.rating, None,
                                 ctx.stresses[part.designator])
        if message is not None:
            yield ctx.finding(RULE, part, message)
