"""Which way each polarised capacitor is fitted, from the solved kit's DC: its + lead on the
side that stays higher at every knob setting, judged at the setting where the margin is least;
a capacitor held forward by less than :data:`NEAR_ZERO` at every setting has no way round the
circuit sets.

The orientation is kept by the capacitor's pins as its stage kind places it (pin 1 is the
first node), which is how the drawing's ends are linked to the circuit's nodes, so the
schematic's + mark, the bill of materials and the design rule ``cap-polarity`` agree.
"""

from __future__ import annotations

from dataclasses import dataclass

from kitleaf.specs.ratings import POLARISED

# Less DC than this across a polarised capacitor at every knob setting leaves its orientation
# to chance (our own threshold, no source).
NEAR_ZERO = 0.1


@dataclass(frozen=True)
class Orientation:
    """A polarised capacitor's + end, where its forward DC is least, and that DC."""

    designator: str
    plus_pin: int  # 0: the first node its kind places it on, 1: the second
    plus_node: str
    minus_node: str
    plus_v: float  # the DC at each end, at the setting with the least margin
    minus_v: float
    setting: str  # words for that setting ("knobs at half way", "Gain at 0 %"...)
    peak: float  # the forward DC at the setting where it is most

    @property
    def margin(self) -> float:
        """The forward DC at the worst setting; below zero, the capacitor is reversed there."""
        return self.plus_v - self.minus_v

    @property
    def settled(self) -> bool:
        """Whether the circuit holds it forward by :data:`NEAR_ZERO` or more at some setting
        (which sets its way round)."""
        return self.peak >= NEAR_ZERO


def orientations(ctx) -> dict[str, Orientation]:
    """Every polarised capacitor's orientation over the knob settings of ``ctx`` (a
    :class:`kitleaf.specs.rules._context.RuleContext`), by designator."""
    found = {}
    for part in ctx.of_type("capacitor"):
        if part.dielectric in POLARISED:
            found[part.designator] = orient(ctx, part.designator)
    return found


def orient(ctx, designator: str) -> Orientation:
    """The end that is higher at the setting where the capacitor is least forward, choosing
    the way round whose worst setting is best."""
    element = ctx.states[0].circuit.element(designator)
    ends = [(float(s.nominal.voltage(element.a)[0]), float(s.nominal.voltage(element.b)[0]),
             s.words) for s in ctx.states]
    first_up = min(a - b for a, b, _ in ends)
    second_up = min(b - a for a, b, _ in ends)
    plus_pin = 0 if first_up >= second_up else 1
    sign = 1.0 if plus_pin == 0 else -1.0
    a, b, words = min(ends, key=lambda e: sign * (e[0] - e[1]))
    peak = max(sign * (e[0] - e[1]) for e in ends)
    nodes = (element.a, element.b)
    return Orientation(designator, plus_pin, nodes[plus_pin], nodes[1 - plus_pin],
                       a if plus_pin == 0 else b, b if plus_pin == 0 else a, words, peak)
