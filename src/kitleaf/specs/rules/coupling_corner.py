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

import numpy as np

from kitleaf.circuit.kind import Stage
from kitleaf.circuit.parts import Part
from kitleaf.specs import measures as m
from kitleaf.specs.rules import register
from kitleaf.specs.rules._context import RuleContext, past_limit
from kitleaf.specs.sampled import solve_variants
from kitleaf.specs.solve import View
from kitleaf.values import format_value

RULE = "coupling-corner"
LIMIT_HZ = 20.0  # common practice, no source
TRIAL = 10.0  # each capacitor is tried at this many times its value
# A capacitor sets the corner if its tenfold value moves the corner down by this fraction.
SETS = 0.2


@register(RULE, "a signal stage's low corner above 20 Hz")
def check(ctx: RuleContext):
    flagged = []
    for stage in ctx.corner_stages():
        corner = ctx.specs.stage(stage.id).low_corner_hz
        words = past_limit(corner, LIMIT_HZ, True, "frequency")
        if words is not None:
            flagged.append((stage, corner, words))
    setting = setting_capacitors(ctx, [stage for stage, _, _ in flagged])
    for stage, corner, words in flagged:
        yield ctx.finding(RULE, stage, (
            f"stage '{stage.id}' cuts the bass: its low corner is "
            f"{format_value(corner.nominal, 'frequency')}{words}; {_advice(setting[stage.id])}"))


def _advice(found: tuple[Part, float] | None) -> str:
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
    return setting_capacitors(ctx, [stage])[stage.id]


def setting_capacitors(ctx: RuleContext, stages: list[Stage]
                       ) -> dict[str, tuple[Part, float] | None]:
    """:func:`setting_capacitor` of each stage, by stage id. Every trial (a capacitor made
    tenfold) is one variant of a single batch, so the kit is solved once for them all: one
    solve per trial grew with the kit's size times the number of stages."""
    base = ctx.states[0]  # the knobs at half way, as the stage's specs are
    circuit = base.circuit
    trials = [(stage, part) for stage in stages for part in stage.all_parts()
              if part.type == "capacitor"]
    found: dict[str, tuple[Part, float] | None] = {stage.id: None for stage in stages}
    if not trials:
        return found
    names = [e.name for e in circuit.elements]
    scale = np.ones((len(trials), len(names)))
    for row, (_, part) in enumerate(trials):
        scale[row, names.index(circuit.element(part.designator).name)] = TRIAL
    # a capacitor carries no DC current: every changed kit keeps the operating point
    pairs = tuple(dict.fromkeys(ctx.kit.stage_nodes(stage.id) for stage in stages))
    changed = View(solve_variants(base.nominal.batch, scale), ctx.kit.joints, pairs)
    best: dict[str, tuple[float, Part, float]] = {}
    for row, (stage, part) in enumerate(trials):
        measure = m.corner(*ctx.kit.stage_nodes(stage.id), 0)
        start = float(measure(base.view)[0])
        moved = float(measure(changed)[row])
        lowered = 1.0 if math.isnan(moved) else 1.0 - moved / start
        if lowered >= SETS and (stage.id not in best or lowered > best[stage.id][0]):
            best[stage.id] = (lowered, part, moved)
    found.update({sid: (part, moved) for sid, (_, part, moved) in best.items()})
    return found
