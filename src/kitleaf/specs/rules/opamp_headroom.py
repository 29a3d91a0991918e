"""Rule opamp-headroom: an op-amp whose DC output sits within 1 V of a supply rail, or is
pinned at the limit of its output swing (the engine's model reports it saturated).

Few op-amps swing closer than about 1 V to their rails (common practice, no source): an output
biased nearer than that clips at once, or is latched against the rail.
"""

from __future__ import annotations

from kitleaf.specs.rules import register
from kitleaf.specs.rules._context import RuleContext
from kitleaf.values import format_value

RULE = "opamp-headroom"
MARGIN_V = 1.0  # common practice, no source


@register(RULE, "an op-amp output within 1 V of a rail at some knob position")
def check(ctx: RuleContext):
    for part in ctx.of_type("opamp"):
        for state in ctx.states:
            report = state.op.device(part.designator)
            out = float(report["vout"])
            room = min(float(report["vpos"]) - out, out - float(report["vneg"]))
            if room < MARGIN_V or report["region"] != "linear":
                yield ctx.finding(RULE, part, (
                    f"{part.designator} output sits at {format_value(abs(out), 'voltage')}, "
                    f"{_where(room, str(report['region']))} with {state.words}; "
                    "bias it near mid-supply"))
                break


def _where(room: float, region: str) -> str:
    if region != "linear":
        return "pinned at the limit of its swing"
    return f"{format_value(room, 'voltage')} from a rail" if room > 0 else "at a rail"
