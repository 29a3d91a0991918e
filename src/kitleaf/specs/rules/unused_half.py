"""Rule unused-half: a dual op-amp whose other half no stage uses, so its inputs float.

Every op-amp a guide names is one half of an 8-pin dual (docs/stage-kinds.md). The other half
is on the board whether the circuit uses it or not: left with its inputs open it can oscillate
or latch against a rail and draw more than its quiescent current (common practice, no
source). The kit's current counts that quiescent current (circuit/chain.py), but only a stage
of kind ``opamp-spare`` says what the inputs are tied to.
"""

from __future__ import annotations

from kitleaf.circuit.packages import unused_halves
from kitleaf.engine import get_model
from kitleaf.specs.rules import register
from kitleaf.specs.rules._context import RuleContext
from kitleaf.values import format_value

RULE = "unused-half"


@register(RULE, "a dual op-amp's unused half with its inputs left floating")
def check(ctx: RuleContext):
    for missing, used in unused_halves(ctx.parts):
        iq = format_value(get_model(used.device or used.model).get("IQ"), "current")
        yield ctx.finding(RULE, used, (
            f"{used.designator} ({used.model}) is half of a dual op-amp whose other half, "
            f"{missing}, no stage uses: its inputs float, so it may oscillate or latch; tie "
            f"them with a stage of kind opamp-spare ('opamp: {missing} {used.model}', "
            f"'tie: vref'); the kit current counts its {iq} either way"))
