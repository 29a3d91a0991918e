"""Rule bias-path: an op-amp input, a JFET gate or a transistor base that nothing but
capacitors reaches, so it has no DC bias of its own.

Such a terminal is held only by the device itself (an op-amp's input resistance to its other
input, a gate or base junction), so on the bench it drifts until the stage latches against a
rail or cuts off (common practice, no source). The engine still finds an operating point
through those internal paths, which is why this is a design rule and not a solver error.
"""

from __future__ import annotations

from kitleaf.engine import elements as el
from kitleaf.engine.topology import NodeSets
from kitleaf.specs.rules import register
from kitleaf.specs.rules._context import RuleContext

RULE = "bias-path"
REFERENCE = "vref"  # the kit's mid-supply rail, made by the power stage's vref parts
# The terminals that need a DC path through the circuit around the device, with words.
CONTROL = {"opamp": (("inp", "+ input"), ("inn", "- input")), "jfet": (("g", "gate"),),
           "bjt": (("b", "base"),)}
# Node pairs joined at DC by each element type, around the device being checked. An op-amp
# counts only by its driven output; its input resistance is the path this rule looks past.
_DC_PAIRS = {
    el.Resistor: (("a", "b"),), el.Inductor: (("a", "b"),), el.VSource: (("p", "n"),),
    el.Pot: (("ccw", "w"), ("w", "cw")), el.Diode: (("a", "k"),),
    el.Bjt: (("b", "e"), ("c", "e")), el.Jfet: (("g", "s"), ("d", "s")),
    el.OpAmp: (("out", None),), el.Capacitor: (), el.ISource: (), el.Pump: (("out", "ref"),),
}


@register(RULE, "an op-amp input, JFET gate or transistor base with no DC path but its own")
def check(ctx: RuleContext):
    elements = ctx.states[0].circuit.elements
    for part in ctx.of_type(*CONTROL):
        device = next((e for e in elements if e.name == part.designator), None)
        if device is None:
            continue
        grounded, joined = _grounded_nodes(elements, device)
        for terminal, words in CONTROL[part.type]:
            node = getattr(device, terminal)
            if node in grounded:
                continue
            # biased to the reference, but nothing makes the reference
            fix = ("no stage makes the reference it is biased to: give the power stage its "
                   "vref parts" if joined(node, REFERENCE) else
                   "add a bias resistor to the reference or to ground")
            yield ctx.finding(RULE, part, (
                f"{part.designator}'s {words} has no DC path except through "
                f"{part.designator} itself (only capacitors reach it), so it drifts to a rail "
                f"on the bench; {fix}"))


def _grounded_nodes(elements, device):
    """Nodes joined to ground at DC by every element except ``device``'s own junctions or
    input resistance (an op-amp's driven output still counts: its feedback is a bias path),
    and whether two nodes are joined so."""
    sets = NodeSets()
    for element in elements:
        if element is device and not isinstance(device, el.OpAmp):
            continue
        for a, b in _DC_PAIRS[type(element)]:
            sets.union(getattr(element, a), el.GROUND if b is None else getattr(element, b))
    root = sets.find(el.GROUND)
    grounded = {node for node in sets.parent if sets.find(node) == root}
    return grounded, lambda a, b: (a in sets.parent and b in sets.parent
                                   and sets.find(a) == sets.find(b))
