"""The drawing checker: the nets a schematic shows, read off its sheet's record, against the
netlist the stage's kind builds for the engine, part pin for part pin; and the marks a reader
relies on: junction dots where wires join and none where they only cross, nothing drawn over
a part or another wire, words clear of each other and of the lines, test-point rings on their
node.

A drawn net joins wires that meet end to end, at a dot or where one's end (or a pin, or a
ground, rail, port or net symbol) lands on another; two wires that cross are not joined unless
a dot marks it. Every problem is one line of words, with the place in grid units.
"""

from __future__ import annotations

import itertools
from collections.abc import Mapping
from dataclasses import dataclass

from kitleaf.circuit.chain import Wiring
from kitleaf.circuit.kind import Stage
from kitleaf.circuit.rails import negative_supply
from kitleaf.circuit.stages import KINDS
from kitleaf.engine import Circuit
from kitleaf.engine.elements import VSource, terminals
from kitleaf.render.schematic_geometry import (
    TEXT_AIR,
    arms,
    box_meets,
    boxes_meet,
    crossing,
    drawn_points,
    inside,
    junctions,
    near,
    on_segment,
    overlap,
    where,
)
from kitleaf.render.schematic_record import Point, SheetRecord

CHAIN = ("in", "out", "vcc", "vref", "0", "supply")  # a stage's connections, named as such
UNORDERED = ("resistor", "inductor", "trimmer")  # a builder may fit these either way round


@dataclass(frozen=True)
class StageNetlist:
    """Each part's local node per pin (engine pin order), and the names of nodes the kind
    links with a plain 0 V link (a wire), by the one name the netlist uses for them."""

    parts: Mapping[str, tuple[str, ...]]
    alias: Mapping[str, str]


def stage_netlist(stage: Stage) -> StageNetlist:
    """The stage's parts as its kind wires them for the engine."""
    circuit = Circuit()
    nodes = {n: n for n in CHAIN}
    if negative_supply(stage.rails) != "0":  # op-amps' negative pins on the negative rail
        nodes["vee"] = "vee"
    KINDS[stage.kind].build(stage, Wiring(circuit, stage, nodes, {}))
    prefix = f"{stage.id}."
    links = Joins()
    for e in circuit.elements:
        if isinstance(e, VSource) and e.dc == 0.0 and e.ac == 0.0:
            links.join(e.p, e.n)
    # a linked group is known by its first chain connection, if it has one
    chain: dict[str, str] = {}
    for n in CHAIN:
        chain.setdefault(links.find(n), n)

    def local(node: str) -> str:
        root = links.find(node)
        return chain.get(root, root).removeprefix(prefix)

    named = {p.designator for p in stage.all_parts()}
    parts = {e.name: tuple(map(local, terminals(e))) for e in circuit.elements if e.name in named}
    parts.update(_poles(circuit, named, local))
    alias = {n.removeprefix(prefix): local(n) for n in links.parent if local(n) != n}
    return StageNetlist(parts, alias)


def _poles(circuit, named: set[str], local) -> dict[str, tuple[str, ...]]:
    """Each switch pole (``S1:p1``) as one part: its common, then each wired throw in
    position order, from its contacts (``S1:p1t2`` joins the common to throw 2)."""
    contacts: dict[str, list[tuple[int, str, str]]] = {}
    for e in circuit.elements:
        designator, _, contact = e.name.partition(":")
        pole, _, throw = contact.partition("t")
        if designator in named and pole.startswith("p") and throw.isdigit():
            common, to = terminals(e)
            contacts.setdefault(f"{designator}:{pole}", []).append((int(throw), common, to))
    return {name: (local(found[0][1]), *(local(to) for _, _, to in sorted(found)))
            for name, found in contacts.items()}


class Joins:
    """Union-find over hashable things: which ones are joined."""

    def __init__(self) -> None:
        self.parent: dict = {}

    def find(self, x):
        self.parent.setdefault(x, x)
        while self.parent[x] != x:
            self.parent[x] = self.parent[self.parent[x]]
            x = self.parent[x]
        return x

    def join(self, a, b) -> None:
        ra, rb = self.find(a), self.find(b)
        if ra != rb:
            self.parent[max(ra, rb, key=repr)] = min(ra, rb, key=repr)  # the same root always


# -- the drawn nets ------------------------------------------------------------------------


@dataclass(frozen=True)
class DrawnNets:
    """Which drawn points are joined: every pin's and name's net, by a root point."""

    joins: Joins
    pin_nets: Mapping[tuple[str, int], Point]
    name_nets: tuple[tuple[Point, str], ...]

    def net_of(self, at: Point) -> Point:
        return self.joins.find(at)


def drawn_nets(record: SheetRecord, alias: Mapping[str, str]) -> DrawnNets:
    """The drawn nets; a symbol's name is read through ``alias``."""
    joins = Joins()
    points = drawn_points(record)
    for p in points:
        joins.find(p)
    for a, b in record.wires:
        for p in points:
            if on_segment(p, a, b):
                joins.join(p, a)
    return DrawnNets(joins, {pin: joins.find(at) for pin, at in record.pins.items()},
                     tuple((joins.find(at), alias.get(net, net)) for at, net in record.names))


# -- the checks ----------------------------------------------------------------------------


def netlist_problems(record: SheetRecord, netlist: StageNetlist
                     ) -> tuple[list[str], dict[Point, str]]:
    """Differences between the drawn nets and ``netlist``, and each drawn net's node."""
    problems = _parts_problems(record, netlist.parts)
    nets = drawn_nets(record, netlist.alias)
    candidates: dict[Point, set[str]] = {}
    for net, name in nets.name_nets:
        candidates.setdefault(net, set()).add(name)
    for designator, nodes in sorted(netlist.parts.items()):
        pins = [nets.pin_nets.get((designator, i)) for i in range(len(nodes))]
        if None in pins:
            continue
        if record.part_types.get(designator) in UNORDERED and _swapped(pins, nodes, candidates):
            pins = pins[::-1]
        for net, node in zip(pins, nodes, strict=True):
            candidates.setdefault(net, set()).add(node)
    for net, nodes in sorted(candidates.items()):
        if len(nodes) > 1:
            problems.append(f"a drawn net at {where(net)} joins the nodes "
                            f"{', '.join(sorted(nodes))}: they are separate in the circuit")
    node_of = {net: next(iter(nodes)) for net, nodes in candidates.items() if len(nodes) == 1}
    problems += _pieces_problems(nets, node_of)
    return problems, node_of


def _parts_problems(record: SheetRecord, netlist: Mapping[str, tuple[str, ...]]) -> list[str]:
    problems = [f"{d} is in the circuit but not drawn" for d in sorted(netlist)
                if d not in record.part_types]
    problems += [f"{d} is drawn but is no part of the stage's circuit"
                 for d in sorted(record.part_types) if d not in netlist]
    for designator, nodes in sorted(netlist.items()):
        if designator in record.part_types:
            missing = [i for i in range(len(nodes)) if (designator, i) not in record.pins]
            problems += [f"{designator}: pin {i + 1} is not drawn" for i in missing]
    return problems


def _swapped(pins: list[Point], nodes: tuple[str, ...], candidates) -> bool:
    """Whether an unordered part's drawn ends fit its nodes better the other way round."""
    def fits(net, node):
        return node in candidates.get(net, ())

    straight = fits(pins[0], nodes[0]) or fits(pins[1], nodes[1])
    return not straight and (fits(pins[0], nodes[1]) or fits(pins[1], nodes[0]))


def _pieces_problems(nets: DrawnNets, node_of: Mapping[Point, str]) -> list[str]:
    """A node drawn in several pieces must name each piece (a ground, rail or net label)."""
    pieces: dict[str, list[Point]] = {}
    for net, node in sorted(node_of.items()):
        pieces.setdefault(node, []).append(net)
    named = {(net, name) for net, name in nets.name_nets}
    problems = []
    for node, found in sorted(pieces.items()):
        unnamed = [net for net in found if (net, node) not in named]
        if len(found) > 1 and unnamed:
            problems.append(f"node {node} is drawn in {len(found)} pieces; the one at "
                            f"{where(unnamed[0])} is joined to the rest by nothing drawn")
    used = {node for node in node_of.values()}
    problems += [f"node {node} is used but no symbol names it" for node in sorted(used)
                 if node in CHAIN and not any(name == node for _, name in nets.name_nets)]
    return problems


def dot_problems(record: SheetRecord) -> list[str]:
    dots = set(record.dots)
    problems = [f"wires join at {where(p)} without a dot" for p in junctions(record)
                if not any(near(p, d) for d in dots)]
    problems += [f"a dot at {where(d)} where no three lines meet" for d in sorted(dots)
                 if arms(record, d) < 3]
    return problems


def line_problems(record: SheetRecord) -> list[str]:
    """Wires over each other, wires through a part, a line ending on a part's body."""
    problems = []
    for s, t in itertools.combinations(record.wires, 2):
        if overlap(s, t):
            problems.append(f"wires drawn over each other at {where(s[0])}-{where(s[1])}")
    ends = {(p, "a wire's end") for w in record.wires for p in w}
    ends |= {(p, f"{d} pin {i + 1}") for (d, i), p in record.pins.items()}
    for designator, a, b in record.bodies:
        for w in record.wires:
            if crossing((a, b), w) or overlap((a, b), w):
                problems.append(f"a wire crosses {designator} at {where(w[0])}-{where(w[1])}")
        problems += [f"{what} lands on the body of {designator} at {where(p)}"
                     for p, what in sorted(ends) if inside(p, a, b)]
    return problems


def text_problems(record: SheetRecord) -> list[str]:
    words = [(t, b) for t, b in record.texts if t.strip()]
    problems = [f"the words {a!r} and {b!r} overlap" for (a, ba), (b, bb)
                in itertools.combinations(words, 2) if boxes_meet(ba, bb)]
    lines = list(record.wires) + [(a, b) for _, a, b in record.bodies]
    problems += [f"a line runs through the words {t!r}" for t, box in words
                 if any(box_meets(box, a, b) for a, b in lines)]
    problems += [f"the words {t!r} lie over the symbol of {designator}" for t, box in words
                 for designator, shape in record.shapes if boxes_meet(_shrunk(box), shape)]
    return problems


def _shrunk(box, air: float = TEXT_AIR):
    return (box[0] + air, box[1] + air, box[2] - air, box[3] - air)


def leader_problems(record: SheetRecord, netlist: StageNetlist, node_of: Mapping[Point, str]
                    ) -> list[str]:
    nets = drawn_nets(record, netlist.alias)
    problems = []
    for lead in record.leaders:
        drawn = node_of.get(nets.net_of(lead.at))
        if drawn != netlist.alias.get(lead.node, lead.node):
            problems.append(f"the test-point ring for node {lead.node} at {where(lead.ring)} "
                            f"sits on node {drawn or 'nothing drawn'}")
    return problems


def check_record(record: SheetRecord, netlist: StageNetlist) -> list[str]:
    """Every problem of a drawing against its stage's ``netlist``, one line each."""
    if record.blocks:
        return ["the stage is drawn as a box of text, not as a schematic"]
    problems, node_of = netlist_problems(record, netlist)
    return (problems + dot_problems(record) + line_problems(record) + text_problems(record)
            + leader_problems(record, netlist, node_of))


def plus_problems(record: SheetRecord, plus_pins: Mapping[str, int]) -> list[str]:
    """A polarised capacitor whose + is drawn at the end the computed DC puts lower."""
    return [f"{designator}: its + is drawn at pin {record.plus[designator] + 1}, but pin "
            f"{pin + 1} sits higher" for designator, pin in sorted(plus_pins.items())
            if designator in record.plus and record.plus[designator] != pin]


def check_stage(kit, stage: Stage, plus_pins: Mapping[str, int] | None = None) -> list[str]:
    """Every problem of the stage's drawing, as :func:`render_stage_svg` draws it with the
    polarised capacitors' + pins ``plus_pins``."""
    from kitleaf.render.schematic import draw_stage

    sheet = draw_stage(kit, stage, plus_pins)
    sheet.mark_junctions()  # as writing it would
    return (check_record(sheet.record, stage_netlist(stage))
            + plus_problems(sheet.record, plus_pins or {}))
