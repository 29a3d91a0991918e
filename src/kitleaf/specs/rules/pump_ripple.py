"""Rule pump-ripple: a charge pump's own switching ripple heard at the kit's output, where the
pump switches inside the audio band (up to 20 kHz) and its ripple reaches the output above
-80 dBV (100 uV RMS) at some knob or switch setting, in the nominal build or in 5 % of the
builds within part tolerances.

A pump at the usual 7660's 10 kHz oscillator switches at 5 kHz, a whine a player hears; the
limit is the hum rule's (common practice, no source). The cures: a larger reservoir capacitor
(the ripple falls as 1 / C), an RC filter between the pump's rail and the stages it feeds,
or a pump that switches above the audio band.
"""

from __future__ import annotations

from kitleaf.display import dbv, settings
from kitleaf.specs.model import Range
from kitleaf.specs.rules import register
from kitleaf.specs.rules._context import RuleContext, past_limit
from kitleaf.specs.rules.hum import LIMIT_V
from kitleaf.values import format_value

RULE = "pump-ripple"
AUDIO_BAND_HZ = 20e3  # the top of human hearing (common practice, no source)


@register(RULE, "a charge pump's switching ripple heard at the output above -80 dBV")
def check(ctx: RuleContext):
    parts = {p.designator: p for p in ctx.kit.parts()}
    for ripple in ctx.specs.pump_ripples:
        if ripple.hz > AUDIO_BAND_HZ:
            continue
        found = [("with the knobs at half way", ripple.output)]
        if ripple.loudest_at:
            found.append((f"with {settings(ripple.loudest_at)}", Range(ripple.loudest)))
        where, worst = max(found, key=lambda f: f[1].high or f[1].nominal)
        words = past_limit(worst, LIMIT_V, True, "voltage")
        if words is None:
            continue
        yield ctx.finding(RULE, parts[ripple.pump], (
            f"{ripple.pump} switches at {format_value(ripple.hz, 'frequency')}, in the audio "
            f"band, and its {format_value(ripple.volts_pp.nominal, 'voltage')} ripple "
            f"reaches the output as {format_value(worst.nominal, 'voltage')} RMS "
            f"({dbv(worst.nominal):.1f} dBV) {where}{words}; fit a larger reservoir "
            "capacitor or an RC filter on the rail it makes"))
