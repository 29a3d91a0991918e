"""The custom kind: a stage whose netlist is written in the guide, drawn as a labelled block.

Syntax (one entry per line)::

    nodes: b c e                  # the stage's own node names
    part: R1 470k @ vcc b         # a part, '@', then the nodes it joins in pin order
    part: Q1 2N5089 @ c b e       # BJT c b e; JFET d g s; pot ccw wiper cw; diode anode cathode
    part: S1 SPDT @ out d1 d2     # a switch: per pole the common, then each throw ('-': none)
    input: b                      # optional: which own node is the stage input (else 'in')
    test-point: Q1 collector = c  # a labelled node for the builder's meter

Besides its own nodes a part may join ``in``, ``out``, ``vcc``, ``vref`` and ``0`` (ground).
"""

from __future__ import annotations

from kitleaf.circuit.drawing import Sheet
from kitleaf.circuit.kind import Role, Stage, StageKind, TestPoint
from kitleaf.circuit.parts import PART_QUANTITY, Part
from kitleaf.circuit.stages import register
from kitleaf.errors import CircuitError

CHAIN_NODES = ("in", "out", "vcc", "vref", "0")
# The chain connection each alias key names.
ALIASES = {"input": "in", "output": "out", "supply": "vcc", "reference": "vref"}
PIN_NAMES = {
    "resistor": ("a", "b"), "capacitor": ("a", "b"), "inductor": ("a", "b"),
    "pot": ("ccw", "wiper", "cw"), "trimmer": ("ccw", "wiper", "cw"),
    "diode": ("anode", "cathode"), "led": ("anode", "cathode"),
    "bjt": ("collector", "base", "emitter"), "jfet": ("drain", "gate", "source"),
    "opamp": ("+in", "-in", "out", "v+", "v-"),
    "switch": ("common", "throws..."),  # pole by pole; the count comes from the form
}
UNWIRED = "-"  # a switch throw wired to nothing
PART_TYPES = tuple(t for t in PART_QUANTITY if t != "hardware")


def own_nodes(stage: Stage) -> tuple[str, ...]:
    return tuple(n for e in stage.extra.get("nodes", ()) for n in e.value.split())


def aliases(stage: Stage) -> dict[str, str]:
    """Own node -> the chain connection it stands for (from input:, output:...)."""
    return {e.value.strip(): ALIASES[key] for key in ALIASES for e in stage.extra.get(key, ())}


def part_nodes(part: Part) -> tuple[str, ...]:
    return tuple(part.attrs["nodes"].split())


def test_point_lines(stage: Stage) -> list[tuple[str, str, object]]:
    """(label, node, span) for each ``test-point: LABEL = NODE`` line."""
    found = []
    for entry in stage.extra.get("test-point", ()):
        label, sep, node = entry.value.rpartition("=")
        if not sep or not label.strip() or not node.strip():
            raise CircuitError(f"stage '{stage.id}', test-point: cannot read {entry.value!r}; "
                               "write a label, '=' and a node, like 'Q1 collector = c'",
                               entry.span)
        found.append((label.strip(), node.strip(), entry.span))
    return found


@register
class Custom(StageKind):
    name = "custom"
    summary = "a netlist written in the guide, drawn by automatic placement"
    roles = (Role("part", PART_TYPES, many=True, nodes=True,
                  help="a part and the nodes it joins: 'R1 470k @ vcc b'"),)
    extra_keys = ("nodes", "input", "output", "supply", "reference", "test-point")

    def build(self, stage: Stage, wiring) -> None:
        alias = aliases(stage)
        for part in stage.parts["part"]:
            nodes = [alias.get(n, n) for n in part_nodes(part)]
            if part.type == "switch":
                wiring.place(part, *(None if n == UNWIRED else n for n in nodes))
            elif part.type in ("bjt", "jfet") or part.type == "opamp" and len(nodes) == 5:
                wiring.place(part, *nodes)
            elif part.type == "opamp":
                wiring.place(part, *nodes, "vcc", "0")
            else:
                wiring.place(part, *nodes)

    def check(self, stage: Stage) -> None:
        from kitleaf.circuit.stages._custom_check import check_custom

        check_custom(stage)

    def test_points(self, stage: Stage) -> tuple[TestPoint, ...]:
        alias = aliases(stage)
        return tuple(TestPoint(label, alias.get(node, node))
                     for label, node, _ in test_point_lines(stage))

    def draw(self, stage: Stage, sheet: Sheet) -> None:
        from kitleaf.circuit.stages._custom_check import draw_custom
        from kitleaf.circuit.stages._custom_layout import draw_netlist
        from kitleaf.circuit.stages._custom_plan import layout_problem

        if layout_problem(stage) is None:
            draw_netlist(stage, sheet)
        else:  # the design rule custom-drawing says why
            draw_custom(stage, sheet)
