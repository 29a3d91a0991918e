"""Rule hum: the adapter's ripple heard at the kit's output, louder than -80 dBV (100 uV RMS)
at some knob position, in the nominal build or in 5 % of the builds within part tolerances.

Applies where the kit block states ``adapter-ripple:``. A pedal's own noise at its output is
about -90 to -100 dBV, and hum at -80 dBV is what a player starts to hear from an amplifier
turned up for practice (common practice, no source). The usual cures are a larger filter:
a series resistor before a larger bulk capacitor, or a larger capacitor on the reference.
"""

from __future__ import annotations

from kitleaf.display import dbv, settings
from kitleaf.specs.rules import register
from kitleaf.specs.rules._context import RuleContext, past_limit
from kitleaf.values import format_value

RULE = "hum"
LIMIT_V = 100e-6  # RMS, -80 dBV (common practice, no source)


@register(RULE, "the adapter's ripple heard at the output above -80 dBV")
def check(ctx: RuleContext):
    specs = ctx.specs
    if specs.hum is None:
        return
    # a setting that oscillates has no hum figure to judge (rule stable names it)
    points = [(p, p.hum) for p in specs.knob_sweep if p.hum is not None and p.unstable is None]
    rest = [] if specs.unstable else [("with the knobs at half way", specs.hum)]
    if not rest + points:
        return
    where, worst = max(rest + [(f"with {settings(p.positions)}", hum) for p, hum in points],
                       key=lambda found: found[1].high or found[1].nominal)
    words = past_limit(worst, LIMIT_V, True, "voltage")
    if words is None:
        return
    entry = next(e for e in ctx.guide.kit.extra if e.key == "adapter-ripple")
    yield ctx.kit_finding(RULE, (
        f"the adapter's {entry.value} ripple reaches the output as "
        f"{format_value(worst.nominal, 'voltage')} RMS ({dbv(worst.nominal):.1f} dBV) "
        f"{where}{words}; filter the supply more (a series resistor before a larger bulk "
        "capacitor) or the reference (a larger reference capacitor)"), entry.span)

