"""Rule opamp-rail: an op-amp output that reaches the limit of its swing (a rail, less the
part's own margin) with a 1 V pickup peak at some knob setting.

A hot pickup peaks near 1 V (common practice, no source); an op-amp that hits its rail there
clips hard, with a recovery of its own, where a designed clipper would round the peaks.
"""

from __future__ import annotations

from kitleaf.specs.rules import register
from kitleaf.specs.rules._context import RuleContext, drive_words

RULE = "opamp-rail"


@register(RULE, "an op-amp output at its rail with a 1 V pickup peak")
def check(ctx: RuleContext):
    drive = ctx.specs.drive
    touched = {} if drive is None else dict(reversed(drive.rails))  # first setting per part
    for part in ctx.of_type("opamp"):
        if part.designator in touched:
            yield ctx.finding(RULE, part, (
                f"{part.designator} output reaches the limit of its swing at 1 V pickup peak "
                f"with {drive_words(touched[part.designator])}; lower the gain before it or "
                "clip with diodes"))
