"""Rule custom-drawing: a custom stage whose netlist the automatic placement cannot draw as a
schematic (a switch, an op-amp on other supplies, more parts than one drawing shows), so its
page shows the netlist as a box of text; the finding says why."""

from __future__ import annotations

from kitleaf.circuit.stages._custom_plan import layout_problem
from kitleaf.specs.rules import register
from kitleaf.specs.rules._context import RuleContext

RULE = "custom-drawing"


@register(RULE, "a custom stage drawn as a box of its netlist text, not as a schematic")
def check(ctx: RuleContext):
    for stage in ctx.kit.stages:
        why = layout_problem(stage) if stage.kind == "custom" else None
        if why is not None:
            yield ctx.finding(RULE, stage, (
                f"stage '{stage.id}' is drawn as a box of its netlist text, not as a schematic: "
                f"{why}; a builder reads it from the part lines"))
