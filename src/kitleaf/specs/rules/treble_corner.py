"""Rule treble-corner: a signal stage whose high corner (-3 dB) lies below 10 kHz, in the
nominal build or in 5 % of the builds within part tolerances.

A guitar signal carries useful treble to about 10 kHz (common practice, no source); a stage
that cuts below it darkens the sound unless that is its purpose: a passive tone control, whose
corners move with its knob, is left alone.
"""

from __future__ import annotations

from kitleaf.specs.rules import register
from kitleaf.specs.rules._context import RuleContext, past_limit
from kitleaf.values import format_value

RULE = "treble-corner"
LIMIT_HZ = 10e3  # common practice, no source


@register(RULE, "a signal stage's high corner below 10 kHz")
def check(ctx: RuleContext):
    for stage in ctx.corner_stages():
        corner = ctx.specs.stage(stage.id).high_corner_hz
        words = past_limit(corner, LIMIT_HZ, False, "frequency")
        if words is not None:
            yield ctx.finding(RULE, stage, (
                f"stage '{stage.id}' cuts the treble: its high corner is "
                f"{format_value(corner.nominal, 'frequency')}{words}; check the capacitors "
                "that roll off the top"))
