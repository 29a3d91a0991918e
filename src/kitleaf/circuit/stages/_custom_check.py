"""Checking and drawing a custom stage: every node known, every part with its pin count."""

from __future__ import annotations

from kitleaf.circuit.drawing import Sheet
from kitleaf.circuit.kind import Stage
from kitleaf.circuit.stages.custom import (
    ALIASES,
    CHAIN_NODES,
    PIN_NAMES,
    UNWIRED,
    aliases,
    own_nodes,
    part_nodes,
    test_point_lines,
)
from kitleaf.circuit.switches import form_of, pole_pins
from kitleaf.errors import CircuitError

TWO_TERMINALS = ("resistor", "capacitor", "inductor", "diode", "led")


def check_custom(stage: Stage) -> None:
    known = set(own_nodes(stage)) | set(CHAIN_NODES)
    _check_aliases(stage, known)
    for part in stage.parts["part"]:
        _check_part(stage, part, known)
    for label, node, span in test_point_lines(stage):
        if node not in known:
            raise CircuitError(_unknown(stage, f"test point '{label}'", node, known), span)
    used = {aliases(stage).get(n, n) for p in stage.parts["part"] for n in part_nodes(p)}
    for chain in ("in", "out"):
        if chain not in used:
            raise CircuitError(
                f"stage '{stage.id}' (custom): no part joins the stage's '{chain}'; use "
                f"'{chain}' as a part's node or name a node with '{_key(chain)}: NODE'",
                stage.span)


def _key(chain: str) -> str:
    return next(k for k, v in ALIASES.items() if v == chain)


def _check_aliases(stage: Stage, known: set[str]) -> None:
    """Each alias names a declared node, and no node or connection is named twice (a
    node that were both the input and the supply would short the two)."""
    own, named = set(own_nodes(stage)), {}
    for key in ALIASES:
        for entry in stage.extra.get(key, ()):
            node = entry.value.strip()
            if node not in own:
                raise CircuitError(_unknown(stage, f"'{key}:'", node, own), entry.span)
            for earlier, clash in ((key, f"'{key}:' is given twice"),
                                   (node, f"node '{node}' is named twice")):
                if earlier in named:
                    raise CircuitError(
                        f"stage '{stage.id}', '{key}: {node}': {clash} (first at line "
                        f"{named[earlier]}); a connection takes one node and a node stands "
                        "for one connection", entry.span)
            named[key] = named[node] = entry.span.line


def _check_part(stage: Stage, part, known: set[str]) -> None:
    nodes = part_nodes(part)
    if part.type == "switch":
        _check_switch(stage, part, nodes, known)
        return
    pins = PIN_NAMES[part.type]
    # an op-amp may leave its supply pins to VCC and ground; a trimmer may be a variable
    # resistor between two nodes
    counts = {"opamp": (3, 5), "trimmer": (2, 3)}.get(part.type, (len(pins),))
    if len(nodes) not in counts:
        shown = " ".join(pins[:3]) + (" [v+ v-]" if part.type == "opamp" else "") \
            if part.type == "opamp" else " ".join(pins)
        raise CircuitError(
            f"stage '{stage.id}', part {part.designator}: a {part.type} joins "
            f"{' or '.join(map(str, counts))} nodes ({shown}); {len(nodes)} given", part.span)
    joined = {aliases(stage).get(n, n) for n in nodes}
    if part.type in TWO_TERMINALS and len(joined) == 1:
        raise CircuitError(
            f"stage '{stage.id}', part {part.designator}: both its pins join '{joined.pop()}', so "
            "it does nothing (or stands for a wire); give it the two nodes it sits between",
            part.span)
    for node in nodes:
        if node not in known:
            raise CircuitError(_unknown(stage, f"part {part.designator}", node, known), part.span)


def _check_switch(stage: Stage, part, nodes: tuple[str, ...], known: set[str]) -> None:
    """A switch joins its common and throws, pole by pole; a throw may be '-' (unwired)."""
    form = form_of(part)
    if len(nodes) != form.pins:
        per = " ".join(["common"] + [f"t{t + 1}" for t in range(form.throw_count)])
        raise CircuitError(
            f"stage '{stage.id}', part {part.designator}: a {part.attrs['form']} switch joins "
            f"{form.pins} nodes ({per}{', per pole' if form.poles > 1 else ''}; '-' for a throw "
            f"wired to nothing); {len(nodes)} given", part.span)
    for common, throws in pole_pins(form, nodes):
        if common == UNWIRED or all(t == UNWIRED for t in throws):
            raise CircuitError(
                f"stage '{stage.id}', part {part.designator}: a pole needs its common and at "
                "least one throw wired; drop the pole's '-'", part.span)
    for node in nodes:
        if node != UNWIRED and node not in known:
            raise CircuitError(_unknown(stage, f"part {part.designator}", node, known), part.span)


def _unknown(stage: Stage, where: str, node: str, known) -> str:
    from kitleaf.circuit.resolve import did_you_mean

    return (f"stage '{stage.id}', {where}: unknown node '{node}'{did_you_mean(node, known)}; "
            f"declare it on the 'nodes:' line or use one of {', '.join(sorted(known))}")


def draw_custom(stage: Stage, sheet: Sheet) -> None:
    """A box listing the parts, with IN on the left, OUT on the right, VCC above, ground below."""
    lines = [stage.title] + [
        sheet.part_label(p).replace("\n", " ") + "  @ " + " ".join(part_nodes(p))
        for p in stage.parts["part"]]
    width = max(4.0, 0.2 * max(len(line) for line in lines) + 1.0)
    height = max(3.0, 0.42 * len(lines) + 1.0)
    low, mid = 3.0, 3.0 + height / 2
    sheet.block((1.5, low), width, height, lines)
    sheet.wire((0.0, mid), (1.5, mid))
    sheet.port((0.0, mid), "IN", "left")
    right = 1.5 + width
    sheet.wire((right, mid), (right + 1.5, mid))
    sheet.port((right + 1.5, mid), "OUT", "right")
    used = {aliases(stage).get(n, n) for p in stage.parts["part"] for n in part_nodes(p)}
    _draw_rails(sheet, used, 1.5 + width / 2, low, low + height)


def _draw_rails(sheet: Sheet, used: set[str], x: float, low: float, high: float) -> None:
    if "vcc" in used:
        sheet.wire((x, high), (x, high + 1.0))
        sheet.rail((x, high + 1.0))
    if "0" in used:
        sheet.wire((x, low), (x, low - 1.0))
        sheet.ground((x, low - 1.0))
    if "vref" in used:
        sheet.wire((x + 1.5, low), (x + 1.5, low - 1.0))
        sheet.net_label((x + 1.5, low - 1.0), "vref", "below")
