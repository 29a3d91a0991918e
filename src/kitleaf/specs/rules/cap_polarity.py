"""Rule cap-polarity: an electrolytic or tantalum capacitor whose DC voltage reverses, or that
sits at so little DC that the circuit does not say which way it goes.

A polarised capacitor is fitted with its + lead to the side that stays higher over the knob
sweep (specs/polarity.py; the drawing and the BOM show the same). It is reversed if some knob
position drives it more than REVERSE_LIMIT the other way, in the nominal build or in 5 % of
the builds within part tolerances: then no orientation keeps it forward-biased. Held forward by
less than NEAR_ZERO at every setting, its orientation is a guess.
"""

from __future__ import annotations

from kitleaf.specs.polarity import NEAR_ZERO, Orientation
from kitleaf.specs.ratings import POLARISED
from kitleaf.specs.rules import register
from kitleaf.specs.rules._context import Reading, RuleContext
from kitleaf.values import format_value

RULE = "cap-polarity"
# The reverse bias an aluminium electrolytic is taken to survive (common practice, no source).
REVERSE_LIMIT = 0.5


def across(ctx: RuleContext, designator: str):
    """A measure: the DC voltage across a capacitor, first node to second, per build."""
    element = ctx.states[0].circuit.element(designator)
    return lambda reading: reading.voltage(element.a) - reading.voltage(element.b)


@register(RULE, "a polarised capacitor whose DC voltage reverses at some knob position, or "
                "that sits at too little DC to say which way it goes")
def check(ctx: RuleContext):
    for part in ctx.of_type("capacitor"):
        if part.dielectric not in POLARISED:
            continue
        orientation = ctx.orientations[part.designator]
        volts = across(ctx, part.designator)
        sign = 1.0 if orientation.plus_pin == 0 else -1.0

        def forward(reading: Reading, volts=volts, sign=sign):
            return volts(reading) * sign

        verdict = ctx.worst(lambda r, forward=forward: forward(r) < -REVERSE_LIMIT)
        if verdict is not None:
            worst, words = ctx.shown(verdict, forward, high=False)
            where = verdict.where
            if verdict.nominal and not verdict.everywhere and ctx.kit.knobs:
                # the setting that reverses it most, of those where the nominal build fails
                worst, where = orientation.margin, f" with {orientation.setting}"
            nominal = abs(float(volts(ctx.states[0].nominal)[0]))
            yield ctx.finding(RULE, part, (
                f"{part.designator} ({part.dielectric}) is reverse-biased by {words}"
                f"{format_value(-worst, 'voltage')}{where}, {verdict.builds()}, "
                f"against {format_value(nominal, 'voltage')} with the knobs at half way; "
                "use a film or bipolar capacitor"))
        elif not orientation.settled:
            yield ctx.finding(RULE, part, _unsettled(part, orientation, bool(ctx.kit.knobs)))


def _unsettled(part, orientation: Orientation, knobs: bool) -> str:
    where = " at any knob setting" if knobs else ""
    return (f"{part.designator} ({part.dielectric}) has at most "
            f"{format_value(orientation.peak, 'voltage')} DC across it{where} (less than "
            f"{format_value(NEAR_ZERO, 'voltage')}), so the circuit does not say which way it "
            "goes; use a film or bipolar capacitor, or bias one side")
