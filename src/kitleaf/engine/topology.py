"""Topology checks before solving: every node needs a DC path to ground, no source loops."""

from __future__ import annotations

from kitleaf.engine import elements as el
from kitleaf.errors import SolveError

# Node pairs joined by a DC conductance, per element type (capacitors and current sources
# conduct no DC, so a node hanging on them alone has no defined operating point).
_DC_PAIRS = {
    el.Resistor: (("a", "b"),),
    el.Inductor: (("a", "b"),),
    el.Pot: (("ccw", "w"), ("w", "cw")),
    el.VSource: (("p", "n"),),
    el.Diode: (("a", "k"),),
    el.Bjt: (("b", "e"), ("b", "c"), ("c", "e")),
    el.Jfet: (("g", "s"), ("g", "d"), ("d", "s")),
    el.OpAmp: (("inp", "inn"), ("out", None), ("vneg", None)),
    el.Capacitor: (),
    el.ISource: (),
    el.Pump: (("out", "ref"),),
}
_SHORTS = (el.VSource, el.Inductor)  # zero-impedance branches at DC


class NodeSets:
    """Union-find over node names."""

    def __init__(self) -> None:
        self.parent: dict[str, str] = {}

    def find(self, node: str) -> str:
        self.parent.setdefault(node, node)
        while self.parent[node] != node:
            self.parent[node] = self.parent[self.parent[node]]
            node = self.parent[node]
        return node

    def union(self, a: str, b: str) -> bool:
        """Join two sets; False when they were already one (the edge closes a loop)."""
        ra, rb = self.find(a), self.find(b)
        self.parent[ra] = rb
        return ra != rb


def check_topology(elements: tuple[el.Element, ...]) -> None:
    """Raise SolveError naming the first floating node or the part closing a source loop."""
    _check_loops(elements)
    sets = NodeSets()
    sets.find(el.GROUND)
    for element in elements:
        for a, b in _DC_PAIRS[type(element)]:
            node_b = el.GROUND if b is None else getattr(element, b)
            sets.union(getattr(element, a), node_b)
    for element in elements:
        for node in el.terminals(element):
            if sets.find(node) != sets.find(el.GROUND):
                raise SolveError(
                    f"node {node!r} (at {element.name}) has no DC path to ground: only "
                    "capacitors or current sources reach it; add a bias resistor")


def _check_loops(elements: tuple[el.Element, ...]) -> None:
    sets = NodeSets()
    for element in elements:
        if isinstance(element, _SHORTS) and not sets.union(*el.terminals(element)):
            a, b = el.terminals(element)
            raise SolveError(
                f"{element.name} closes a loop of voltage sources and inductors between "
                f"nodes {a!r} and {b!r}; the circuit is singular at DC")
