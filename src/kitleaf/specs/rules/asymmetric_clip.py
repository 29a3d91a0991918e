"""Rule asymmetric-clip: a stage whose output, driven into clipping, swings at least twice as
far one way as the other, and the guide does not say it is intended (an ``allow:`` line).

Asymmetric clipping adds even harmonics; it is a voicing choice in a drive, but in a boost it
usually means a device biased off centre (common practice, no source).
"""

from __future__ import annotations

from kitleaf.display import si
from kitleaf.specs.rules import register
from kitleaf.specs.rules._context import RuleContext, drive_words

RULE = "asymmetric-clip"
RATIO = 2.0  # common practice, no source


@register(RULE, "a clipping output that swings twice as far one way as the other")
def check(ctx: RuleContext):
    for stage in ctx.kit.signal_stages:
        drive = ctx.specs.stage(stage.id).drive
        for s in () if drive is None else drive.settings:
            if s.swing_up is None or s.swing_down is None:
                continue
            (up, up_part), (down, down_part) = s.swing_up, s.swing_down
            if max(up, down) >= RATIO * max(min(up, down), 1e-12):
                yield ctx.finding(RULE, stage, (
                    f"stage '{stage.id}' clips asymmetrically with {drive_words(s.positions)}: "
                    f"+{si(up, 'voltage')} ({up_part}) against -{si(down, 'voltage')} "
                    f"({down_part}); re-bias it, or add an allow line if it is intended"))
                break
