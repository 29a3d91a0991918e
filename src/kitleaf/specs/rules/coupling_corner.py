"""Rule coupling-corner: a signal stage whose low corner (-3 dB) lies above 20 Hz.

The audio band runs from 20 Hz to 20 kHz (common practice, no source); a coupling or bypass
capacitor that cuts inside it thins the low strings unless that is the stage's purpose.
"""

from __future__ import annotations

from kitleaf.specs.rules import register
from kitleaf.specs.rules._context import RuleContext
from kitleaf.values import format_value

RULE = "coupling-corner"
LIMIT_HZ = 20.0  # common practice, no source


@register(RULE, "a signal stage's low corner above 20 Hz")
def check(ctx: RuleContext):
    for stage in ctx.kit.signal_stages:
        corner = ctx.specs.stage(stage.id).low_corner_hz
        if corner is not None and corner.nominal > LIMIT_HZ:
            yield ctx.finding(RULE, stage, (
                f"stage '{stage.id}' cuts the bass: its low corner is "
                f"{format_value(corner.nominal, 'frequency')}, above "
                f"{format_value(LIMIT_HZ, 'frequency')}; use larger coupling or bypass "
                "capacitors"))
