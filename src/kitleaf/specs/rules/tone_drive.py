"""Rule tone-drive: a passive tone control driven from more than a tenth of its lowest input
impedance, in the nominal build or in 5 % of the builds within part tolerances.

A passive tone network is designed for a stiff driver: whatever impedance drives it adds to its
own resistors (a tone stack's slope resistor, a blend's series resistor), so its corners move
and its knobs lose range. A driver under a tenth of the load's impedance barely shifts it
(the usual bridging ratio, common practice, no source). The driver is the stage before it, or
the kit's source for the first stage.
"""

from __future__ import annotations

import math

from kitleaf.circuit.chain import SignalSource
from kitleaf.specs.model import Range
from kitleaf.specs.response import REFERENCE_HZ
from kitleaf.specs.rules import register
from kitleaf.specs.rules._context import RuleContext, past_limit
from kitleaf.values import format_value

RULE = "tone-drive"
RATIO = 10.0  # common practice, no source


def tone_controls(ctx: RuleContext):
    """(index in the signal chain, stage, its specs) of each passive tone control."""
    for i, stage in enumerate(ctx.kit.signal_stages):
        if ctx.kit.kind(stage).shapes_response:
            yield i, stage, ctx.specs.stage(stage.id)


@register(RULE, "a passive tone control driven from more than a tenth of its input impedance")
def check(ctx: RuleContext):
    chain = ctx.kit.signal_stages
    for i, stage, specs in tone_controls(ctx):
        lowest = min((p.input_impedance.nominal for p in specs.knob_sweep
                      if p.input_impedance is not None and p.unstable is None),
                     default=specs.input_impedance.nominal)
        if i:
            drive, name = ctx.specs.stage(chain[i - 1].id).output_impedance, \
                f"stage '{chain[i - 1].id}'"
        else:
            drive, name = Range(source_impedance(ctx.kit.source)), f"the {ctx.kit.source.name}"
        words = past_limit(drive, lowest / RATIO, True, "resistance")
        if words is not None:
            yield ctx.finding(RULE, stage, (
                f"stage '{stage.id}' is driven from {format_value(drive.nominal, 'resistance')} "
                f"({name}, at 1 kHz){words}, a tenth of its lowest input impedance "
                f"({format_value(lowest, 'resistance')}): its corners move and its knobs lose "
                "range; drive it from a buffer (an emitter follower or an op-amp stage)"))


def source_impedance(source: SignalSource) -> float:
    """|Z| of the kit's source at 1 kHz: its resistance and inductance in series, with its
    capacitance and its shunt resistance across them."""
    w = 2 * math.pi * REFERENCE_HZ
    admittance = 1 / complex(source.resistance, w * source.inductance) \
        + 1j * w * source.capacitance + (1 / source.shunt if source.shunt else 0.0)
    return abs(1 / admittance)
