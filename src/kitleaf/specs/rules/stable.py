"""Rule stable: a setting at which the kit's small-signal circuit, nominal parts, has a pole in
the right half plane, so it oscillates or runs to a rail on its own (specs/stability.py).

The gain, corners and impedances of such a setting describe an operating point the circuit
never stays at; the page, ``kitleaf specs`` and the JSON mark them not meaningful. The finding
sits at the stage whose nodes swing most in the growing mode, and names the setting and the
pole's frequency. A loop closed through the supply (a high-gain stage hearing its own rail
through the supply's filter) is the usual cause in a pedal, cured by filtering that stage's
supply on its own or by less gain (common practice, no source).
"""

from __future__ import annotations

from kitleaf.display import at_rest, instability_words, settings
from kitleaf.specs.rules import register
from kitleaf.specs.rules._context import RuleContext

RULE = "stable"


@register(RULE, "a setting whose small-signal circuit has a pole in the right half plane")
def check(ctx: RuleContext):
    specs = ctx.specs
    found = [(at_rest(specs.switches), specs.unstable)] if specs.unstable else []
    found += [(settings(p.positions), p.unstable)
              for p in specs.knob_sweep + specs.knob_ends if p.unstable is not None]
    by_stage: dict[str, list] = {}
    for words, unstable in found:
        if words not in [w for w, _ in by_stage.get(unstable.stage, [])]:
            by_stage.setdefault(unstable.stage, []).append((words, unstable))
    stages = {s.id: s for s in ctx.kit.stages}
    for stage_id, where in by_stage.items():
        message = _message(stage_id, where)
        if stage_id in stages:
            yield ctx.finding(RULE, stages[stage_id], message)
        else:
            yield ctx.kit_finding(RULE, message)


def _message(stage_id: str, where: list) -> str:
    """The fastest-growing setting in words, with how many others grow too."""
    words, unstable = max(where, key=lambda found: found[1].growth)
    others = len(where) - 1
    more = f" (and at {others} other setting{'s' if others > 1 else ''})" if others else ""
    scope = f"stage '{stage_id}'" if stage_id else "the kit"
    return (f"{scope} is unstable with {words}{more}: {instability_words(unstable)} with "
            "nominal parts, so the gain, corners and impedances shown there mean nothing; "
            "lower the loop's gain or filter the stage's supply apart from the others")
