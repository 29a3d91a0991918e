"""Rule led-current: an indicator LED carrying less than 1 mA (too dim to see) or over 20 mA;
LEDs in a clipper's roles are clipping diodes, not indicators, and are left alone.

Indicator LEDs are rated about 20 mA continuous and are visible from about 1 mA (common
practice, no source).
"""

from __future__ import annotations

from kitleaf.specs.rules import register
from kitleaf.specs.rules._context import RuleContext
from kitleaf.values import format_value

RULE = "led-current"
LOW_A, HIGH_A = 1e-3, 20e-3  # common practice, no source


@register(RULE, "an LED current outside 1-20 mA")
def check(ctx: RuleContext):
    for part in ctx.of_type("led"):
        if part.role.startswith("clip"):  # a clipper's LEDs carry signal, not a lamp current
            continue
        for state in ctx.states:
            amps = float(state.op.device(part.designator)["id"])
            if not LOW_A <= amps <= HIGH_A:
                change = "raise" if amps > HIGH_A else "lower"
                yield ctx.finding(RULE, part, (
                    f"{part.designator} carries {format_value(max(amps, 0.0), 'current')} "
                    f"with {state.words}, outside {format_value(LOW_A, 'current')} to "
                    f"{format_value(HIGH_A, 'current')}; {change} its series resistor"))
                break
