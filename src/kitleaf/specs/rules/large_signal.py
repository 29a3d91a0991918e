"""Rule large-signal: a stage whose large-signal figures could not be computed (the time
steps or the periodic solve did not converge at some knob setting and level).

The page shows "not computed" with the reason in place of the figures; this finding names
the stage, the knob setting and the level, so ``--fail-on-findings`` fails the build.
"""

from __future__ import annotations

from kitleaf.specs.rules import register
from kitleaf.specs.rules._context import RuleContext, drive_words

RULE = "large-signal"


@register(RULE, "a stage whose large-signal figures could not be computed")
def check(ctx: RuleContext):
    for stage in ctx.kit.signal_stages:
        drive = ctx.specs.stage(stage.id).drive
        failed = [] if drive is None else [s for s in drive.settings if s.error]
        if failed:
            s = failed[0]
            yield ctx.finding(RULE, stage, (
                f"stage '{stage.id}': large-signal figures not computed with "
                f"{drive_words(s.positions)}: {s.error}; check the stage's parts and bias"))
