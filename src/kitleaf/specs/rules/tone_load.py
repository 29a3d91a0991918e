"""Rule tone-load: a passive tone control whose output impedance, at any of its knob steps, is
more than a tenth of what loads it, in the nominal build or in 5 % of the builds within part
tolerances.

A passive tone network has a high output impedance (a tone stack's reaches hundreds of
kilohms with the treble up); a load under ten times it (the usual bridging ratio, common
practice, no source) pulls its response down and reshapes it. The load is the next stage's
input impedance at 1 kHz, or the kit's load after the last stage.
"""

from __future__ import annotations

from kitleaf.display import settings
from kitleaf.specs.model import Range
from kitleaf.specs.rules import register
from kitleaf.specs.rules._context import RuleContext, past_limit
from kitleaf.specs.rules.tone_drive import RATIO, tone_controls
from kitleaf.values import format_value

RULE = "tone-load"


@register(RULE, "a passive tone control loaded by less than ten times its output impedance")
def check(ctx: RuleContext):
    chain = ctx.kit.signal_stages
    for i, stage, specs in tone_controls(ctx):
        points = [p for p in specs.knob_sweep
                  if p.output_impedance is not None and p.unstable is None]
        worst = max(points, key=lambda p: p.output_impedance.nominal, default=None)
        z_out = worst.output_impedance if worst else specs.output_impedance
        if i + 1 < len(chain):
            load, name = ctx.specs.stage(chain[i + 1].id).input_impedance, \
                f"stage '{chain[i + 1].id}'"
        else:
            load, name = Range(ctx.kit.load), "the kit's load"
        if z_out is None or load is None:
            continue
        words = past_limit(z_out, load.nominal / RATIO, True, "resistance")
        if words is not None:
            where = f", {settings(worst.positions)}" if worst else ""
            yield ctx.finding(RULE, stage, (
                f"stage '{stage.id}' has an output impedance of "
                f"{format_value(z_out.nominal, 'resistance')} (at 1 kHz{where}){words}, a "
                f"tenth of what loads it ({name}, {format_value(load.nominal, 'resistance')}): "
                "the load pulls its response down and reshapes it; follow it with a buffer or "
                "a stage of higher input impedance"))
