"""Rule led-current: an indicator LED carrying less than 1 mA (too dim to see) or over 20 mA,
and any other LED (a clipping LED) carrying over 20 mA at DC, at any knob position, in the
nominal build or in 5 % of the builds within part tolerances.

Indicator LEDs (the power stage's ``led`` role, or a custom stage's LED that carries DC
current with the knobs at half way, so is lit) are rated about 20 mA continuous and are
visible from about 1 mA (common practice, no source). An LED in a clipping role carries no DC
current by design: its series resistor shapes the clipping, so no advice on it is given.
"""

from __future__ import annotations

import numpy as np

from kitleaf.specs.rules import register
from kitleaf.specs.rules._context import RuleContext
from kitleaf.values import format_value

RULE = "led-current"
LOW_A, HIGH_A = 1e-3, 20e-3  # common practice, no source
INDICATOR_ROLES = ("led",)
LIT_A = 1e-6  # a custom stage's LED carrying more DC current than this is an indicator


@register(RULE, "an indicator LED's current outside 1-20 mA; any LED's over 20 mA")
def check(ctx: RuleContext):
    for part in ctx.of_type("led"):
        indicator = is_indicator(ctx, part)

        def amps(reading, name=part.designator):
            return np.array(reading.device(name, "id"), float)

        low = LOW_A if indicator else -np.inf
        verdict = ctx.worst(lambda r, amps=amps, low=low: (amps(r) < low) | (amps(r) > HIGH_A))
        if verdict is None:
            continue
        seen = amps(verdict.state.nominal if verdict.nominal else verdict.state.samples)
        high = np.sum(seen > HIGH_A) >= np.sum(seen < low)
        value, words = ctx.shown(verdict, amps, high=high)
        yield ctx.finding(RULE, part, (
            f"{part.designator} carries {words}{format_value(max(value, 0.0), 'current')}"
            f"{ctx.setting(verdict.state, lambda r, amps=amps: float(amps(r)[0]))}, "
            f"{verdict.builds()}, {_limits(indicator)}; {_advice(indicator, high)}"))


def is_indicator(ctx: RuleContext, part) -> bool:
    """The power stage's LED, or a custom stage's LED lit by DC current (a clipping LED in a
    custom netlist carries none)."""
    if part.role in INDICATOR_ROLES:
        return True
    lit = float(ctx.states[0].nominal.device(part.designator, "id")[0]) > LIT_A
    return part.role == "part" and lit


def _limits(indicator: bool) -> str:
    if indicator:
        return f"outside {format_value(LOW_A, 'current')} to {format_value(HIGH_A, 'current')}"
    return f"over {format_value(HIGH_A, 'current')}"


def _advice(indicator: bool, high: bool) -> str:
    if not indicator:
        return "limit the DC current through it"
    return f"{'raise' if high else 'lower'} its series resistor"
