"""Rule treble-corner: a signal stage whose high corner (-3 dB) lies below 10 kHz.

A guitar signal carries useful treble to about 10 kHz (common practice, no source); a stage
that cuts below it darkens the sound unless that is its purpose (a tone stage).
"""

from __future__ import annotations

from kitleaf.specs.rules import register
from kitleaf.specs.rules._context import RuleContext
from kitleaf.values import format_value

RULE = "treble-corner"
LIMIT_HZ = 10e3  # common practice, no source


@register(RULE, "a signal stage's high corner below 10 kHz")
def check(ctx: RuleContext):
    for stage in ctx.kit.signal_stages:
        corner = ctx.specs.stage(stage.id).high_corner_hz
        if corner is not None and corner.nominal < LIMIT_HZ:
            yield ctx.finding(RULE, stage, (
                f"stage '{stage.id}' cuts the treble: its high corner is "
                f"{format_value(corner.nominal, 'frequency')}, below "
                f"{format_value(LIMIT_HZ, 'frequency')}; check the capacitors that roll off "
                "the top"))
