"""Rule e-series: a resistor or capacitor value outside the E-series its tolerance implies.

IEC 60063 pairs each series with a tolerance (E12 for 10 %, E24 for 5 %, E96 for 1 %); a value
outside it is hard to buy. Pots are exempt: they are stocked in their own steps.
"""

from __future__ import annotations

from kitleaf.circuit.parts import PART_QUANTITY
from kitleaf.eseries import in_series, nearest_in_series, series_for_tolerance
from kitleaf.specs.rules import register
from kitleaf.specs.rules._context import RuleContext
from kitleaf.values import format_value

RULE = "e-series"


@register(RULE, "a value not in the E-series its tolerance implies (IEC 60063)")
def check(ctx: RuleContext):
    for part in ctx.of_type("resistor", "capacitor"):
        if part.value is None or part.tolerance is None:
            continue
        name = series_for_tolerance(part.tolerance)
        if in_series(part.value, name):
            continue
        quantity = PART_QUANTITY[part.type]
        below, above = (format_value(v, quantity) for v in nearest_in_series(part.value, name))
        yield ctx.finding(RULE, part, (
            f"{part.designator} {format_value(part.value, quantity)} is not in {name}, the "
            f"series of {part.tolerance:.0%} parts (IEC 60063); the nearest stocked values "
            f"are {below} and {above}"))
