"""Rule coupling-corner: a signal stage whose low corner (-3 dB) lies above 20 Hz, in the
nominal build or in 5 % of the builds within part tolerances.

The audio band runs from 20 Hz to 20 kHz (common practice, no source); a coupling or bypass
capacitor that cuts inside it thins the low strings unless that is the stage's purpose (a
passive tone control, whose corners move with its knob, is left alone). The finding names the
stage's capacitor that sets the corner: the one whose tenfold value lowers the nominal corner
most (a capacitor far from the corner barely moves it).
"""

from __future__ import annotations

import math

from kitleaf.circuit.kind import Stage
from kitleaf.circuit.parts import Part
from kitleaf.specs import measures as m
from kitleaf.specs.rules import register
from kitleaf.specs.rules._context import RuleContext, past_limit
from kitleaf.specs.sampled import solve_alike
from kitleaf.specs.solve import View
from kitleaf.values import format_value

RULE = "coupling-corner"
LIMIT_HZ = 20.0  # common practice, no source
TRIAL = 10.0  # each capacitor is tried at this many times its value
# A capacitor sets the corner if its tenfold value moves the corner down by this fraction.
SETS = 0.2


@register(RULE, "a signal stage's low corner above 20 Hz")
def check(ctx: RuleContext):
    for stage in ctx.corner_stages():
        corner = ctx.specs.stage(stage.id).low_corner_hz
        words = past_limit(corner, LIMIT_HZ, True, "frequency")
        if words is None:
            continue
        yield ctx.finding(RULE, stage, (
            f"stage '{stage.id}' cuts the bass: its low corner is "
            f"{format_value(corner.nominal, 'frequency')}{words}; {_advice(ctx, stage)}"))


def _advice(ctx: RuleContext, stage: Stage) -> str:
    found = setting_capacitor(ctx, stage)
    if found is None:
        return "use larger coupling or bypass capacitors"
    part, moved = found
    where = ("below the band" if math.isnan(moved)
             else f"to {format_value(moved, 'frequency')}")
    return (f"{part.designator} ({part.role}) sets it: ten times its value moves the corner "
            f"{where}, so use a larger {part.designator}")


def setting_capacitor(ctx: RuleContext, stage: Stage) -> tuple[Part, float] | None:
    """The stage's capacitor whose tenfold value lowers the nominal low corner most, with the
    corner it then gives (NaN: below the band searched); None when none moves it by SETS."""
    base = ctx.states[0]  # the knobs at half way, as the stage's specs are
    circuit, measure = base.circuit, m.corner(*ctx.kit.stage_nodes(stage.id), 0)

    def corner(changed) -> float:
        # a capacitor carries no DC current: the changed kit keeps the operating point
        return float(measure(View(solve_alike(changed, base.nominal.batch), ctx.kit.joints))[0])

    start = float(measure(base.view)[0])
    best = None
    for part in (p for p in stage.all_parts() if p.type == "capacitor"):
        value = circuit.element(part.designator).value
        moved = corner(circuit.replaced(part.designator, value=value * TRIAL))
        lowered = 1.0 if math.isnan(moved) else 1.0 - moved / start
        if lowered >= SETS and (best is None or lowered > best[0]):
            best = (lowered, part, moved)
    return None if best is None else (best[1], best[2])
