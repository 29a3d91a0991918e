"""Rule clips-when-clean: a stage driven past 10 % THD by a 300 mV pickup peak (a playing
level; common practice, no source) at some knob setting, in a kit whose title or summary
calls it clean.

A maker who calls a kit clean means it stays clean when played; a stage that distorts that
much at an ordinary pickup level is heard as overdrive.
"""

from __future__ import annotations

import re

from kitleaf.display import thd_text
from kitleaf.specs.rules import register
from kitleaf.specs.rules._context import RuleContext, drive_words

RULE = "clips-when-clean"
PLAYING_V = 0.3  # a middle playing level, pickup peak (common practice, no source)
CLIPPED = 0.10  # THD at which a stage is driven
_CLEAN = re.compile(r"\bclean\b", re.IGNORECASE)


def called_clean(ctx: RuleContext) -> bool:
    kit = ctx.guide.kit
    return bool(_CLEAN.search(kit.title) or _CLEAN.search(kit.summary))


@register(RULE, "a stage that clips at a playing level in a kit called clean")
def check(ctx: RuleContext):
    if not called_clean(ctx):
        return
    for stage in ctx.kit.signal_stages:
        drive = ctx.specs.stage(stage.id).drive
        for s in () if drive is None else drive.settings:
            # the sweep holds this level whatever the kit's playing levels (specs/drive.py)
            thd = s.thd[drive.levels.index(PLAYING_V)] if s.thd else 0.0
            if thd >= CLIPPED:
                yield ctx.finding(RULE, stage, (
                    f"stage '{stage.id}' reaches {thd_text(thd)} THD at 300 mV pickup "
                    f"peak with {drive_words(s.positions)}, but the kit is called clean; "
                    "lower its gain or say it is meant to drive"))
                break
