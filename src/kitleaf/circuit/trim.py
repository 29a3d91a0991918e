"""Trimmers: the test-point voltage a guide sets each one to, and the position that reaches it.

A stage block's ``trim: TR1 sets q1.collector to 4.5 V`` says how the builder sets trimmer
TR1 on the bench: turn it until that test point reads 4.5 V. kitleaf finds the position that
gives it with nominal parts (knobs half way, switches where they rest), turning from
half way as a trimmer comes (where the point reads the target twice, the crossing nearer the
middle), and every figure of the kit is then solved with the trimmer there.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

from kitleaf.circuit.kind import Stage, TestPoint, point_name
from kitleaf.circuit.parts import Part
from kitleaf.errors import CircuitError, KitleafError, SourceSpan
from kitleaf.guide.model import Entry
from kitleaf.values import format_value, parse_value

_TRIM = re.compile(r"^(?P<designator>\S+)\s+sets\s+(?P<name>\S+)\s+to\s+(?P<volts>.+)$")
EXAMPLE = "trim: TR1 sets q1.collector to 4.5 V"
GRID = 11  # positions tried over the travel to bracket the target (every 10 %)
POSITION_TOLERANCE = 1e-4  # of the travel: far finer than a builder's hand


@dataclass(frozen=True)
class TrimTarget:
    """A trimmer, the test point it is set by (its circuit node, its label and its number in
    its stage's voltage table) and the voltage that point must read."""

    designator: str
    stage_id: str  # the stage of the test point
    label: str
    number: int
    node: str
    volts: float
    span: SourceSpan


def read_trims(kit) -> tuple[TrimTarget, ...]:
    """Every ``trim:`` line of the kit's stages, checked: a trimmer of the kit, a test point
    that exists, one line a trimmer, and a line for every trimmer."""
    trimmers = {p.designator: p for p in kit.parts() if p.type == "trimmer"}
    points = _test_points(kit)
    found: dict[str, TrimTarget] = {}
    for stage in kit.stages:
        for entry in stage.trims:
            target = _read(entry, stage, trimmers, points)
            if target.designator in found:
                raise CircuitError(
                    f"{target.designator} is set by a 'trim:' line already (line "
                    f"{found[target.designator].span.line}); a trimmer has one target, keep one",
                    entry.span)
            found[target.designator] = target
    for part in trimmers.values():
        if part.designator not in found:
            raise CircuitError(
                f"{part.designator} is a trimmer with no set-up target; add a line to stage "
                f"'{part.stage_id}' like '{EXAMPLE.replace('TR1', part.designator)}' (a test "
                "point and the voltage the builder sets it to)", part.span)
    return tuple(found.values())


def _test_points(kit) -> dict[str, tuple[Stage, int, TestPoint, str]]:
    """Every test point by its full name (``boost.q1.collector``): its stage, its number in
    the stage's table and its circuit node."""
    found = {}
    for stage in kit.stages:
        for number, tp in enumerate(kit.kind(stage).test_points(stage), start=1):
            found[f"{stage.id}.{point_name(tp.device, tp.pin, tp.node)}"] = (
                stage, number, tp, kit.node_of(stage, tp.node))
    return found


def _read(entry: Entry, stage: Stage, trimmers: dict[str, Part], points) -> TrimTarget:
    match = _TRIM.match(entry.value.strip())
    if match is None:
        raise CircuitError(f"cannot read 'trim: {entry.value}'; write the trimmer, the test "
                           f"point and the voltage, like '{EXAMPLE}'", entry.span)
    designator = match["designator"]
    if designator not in trimmers:
        raise CircuitError(
            f"'trim:' names {designator}, which is no trimmer of the kit; trimmers (TR...): "
            f"{', '.join(sorted(trimmers)) or 'none'}", entry.span)
    name = match["name"].lower()
    key = next((k for k in (f"{stage.id}.{name}", name) if k in points), None)
    if key is None:
        raise CircuitError(f"'trim:' names no test point '{name}'{_nearest(name, stage, points)}"
                           "; the voltage table lists them (docs/claims-and-rules.md names "
                           "them)", entry.span)
    try:
        volts = parse_value(match["volts"].strip(), "voltage")
    except KitleafError as exc:
        raise CircuitError(f"'trim:' {exc.message}", entry.span) from None
    owner, number, tp, node = points[key]
    return TrimTarget(designator, owner.id, tp.label, number, node, volts, entry.span)


def _nearest(name: str, stage: Stage, points) -> str:
    from kitleaf.circuit.resolve import did_you_mean

    prefix = f"{stage.id}."
    short = [k.removeprefix(prefix) for k in points]
    return did_you_mean(name, short)


def trim_positions(kit, targets: tuple[TrimTarget, ...]) -> dict[str, float]:
    """The position (0..1 of the travel) of each trimmer that sets its point to its target,
    nominal parts, the trimmers set in the order the guide gives them."""
    found: dict[str, float] = {}
    for target in targets:
        found[target.designator] = _position(kit, target, found)
    return found


def _position(kit, target: TrimTarget, found: dict[str, float]) -> float:
    from kitleaf.engine import solve_dc  # the solver loads only for a kit with trimmers

    node = target.node
    rest = {**kit.rest_positions(), **found}

    def off_target(position: float) -> float:
        circuit = kit.netlist({**rest, target.designator: position})
        try:
            return solve_dc(circuit).voltage(node) - target.volts
        except KitleafError as exc:
            raise kit.locate(exc).located(target.span) from None

    grid = [i / (GRID - 1) for i in range(GRID)]
    misses = [off_target(p) for p in grid]
    # Turned from half way, as trimmers come: the crossing nearest the middle of the travel
    # (a transistor driven into saturation may read the target a second time near one end).
    spans = sorted((i for i in range(GRID - 1)
                    if misses[i] == 0.0 or misses[i] * misses[i + 1] < 0.0),
                   key=lambda i: abs(grid[i] + grid[i + 1] - 1.0))
    if spans:
        i = spans[0]
        return _bisect(off_target, grid[i], grid[i + 1], misses[i])
    if misses[-1] == 0.0:
        return 1.0
    reached = [m + target.volts for m in misses]
    raise CircuitError(
        f"{target.designator} cannot set {target.label} to "
        f"{format_value(target.volts, 'voltage')}: over its travel it reads from "
        f"{format_value(min(reached), 'voltage')} to {format_value(max(reached), 'voltage')}"
        f" (nominal parts); set a target in that range or change the parts around "
        f"{target.designator}", target.span)


def _bisect(miss, low: float, high: float, at_low: float) -> float:
    """Where ``miss`` crosses zero between ``low`` and ``high`` (it changes sign there)."""
    if at_low == 0.0:
        return low
    while high - low > POSITION_TOLERANCE:
        mid = (low + high) / 2
        at_mid = miss(mid)
        if at_mid == 0.0:
            return mid
        if (at_mid < 0.0) == (at_low < 0.0):
            low, at_low = mid, at_mid
        else:
            high = mid
    return (low + high) / 2
