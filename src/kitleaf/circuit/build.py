"""build_circuit: a parsed guide in, the kit's :class:`KitCircuit` out."""

from __future__ import annotations

import re

from kitleaf.circuit.chain import (
    DEFAULT_LOAD,
    LOW_Z,
    PICKUP,
    KitCircuit,
    KnobRef,
    SignalSource,
    input_meter,
)
from kitleaf.circuit.harness import build_harness
from kitleaf.circuit.kind import Stage
from kitleaf.circuit.parts import Part
from kitleaf.circuit.resolve import resolve_stage
from kitleaf.circuit.stages import KINDS
from kitleaf.engine.elements import Capacitor, terminals
from kitleaf.engine.topology import check_topology
from kitleaf.errors import CircuitError, KitleafError
from kitleaf.guide.model import Entry, Guide
from kitleaf.values import format_value, parse_value

# Supplies kitleaf solves: a single cell up to 60 V DC, the usual safety extra-low-voltage
# limit of equipment standards (from memory); anything else is a typo such as '9k'.
SUPPLY_RANGE = (1.0, 60.0)


def build_circuit(guide: Guide) -> KitCircuit:
    """Resolve every stage of ``guide`` and check the kit holds together as one circuit."""
    stages = _in_order(guide, [resolve_stage(b) for b in guide.stages])
    hardware = tuple(Part(h.designator, "hardware", h.description, h.span)
                     for h in guide.kit.hardware)
    _check_designators(stages, hardware)
    _check_power(stages)
    kit = KitCircuit(
        stages=tuple(stages), hardware=hardware, knobs=_knobs(guide, stages),
        source=_source(guide.kit.source), load=_load(guide.kit.load),
        supply_v=_volts(guide.kit.supply, guide.kit.supply_span or guide.kit.span),
    )
    _check_dc_paths(kit)
    build_harness(guide, kit)  # read now, so a wiring mistake is named by every command
    return kit


def _in_order(guide: Guide, stages: list[Stage]) -> list[Stage]:
    if not stages:
        raise CircuitError("the guide has no stage blocks; add one, like ```stage boost",
                           guide.kit.span)
    if not any(KINDS[s.kind].signal for s in stages):
        raise CircuitError(
            f"the guide has no stage the signal passes through (only {stages[0].kind}); add "
            "one, like ```stage boost with 'kind: common-emitter'", guide.kit.span)
    order = guide.kit.order
    if order is None:
        return stages
    by_id = {s.id: s for s in stages}
    ids = [w.strip() for w in order.value.split(",") if w.strip()]
    unknown = [i for i in ids if i not in by_id]
    if unknown or sorted(ids) != sorted(by_id):
        raise CircuitError(
            f"'order:' must list every stage id once ({', '.join(sorted(by_id))})"
            + (f"; there is no stage '{unknown[0]}'" if unknown else ""),
            order.span,
        )
    return [by_id[i] for i in ids]


def _check_designators(stages: list[Stage], hardware: tuple[Part, ...]) -> None:
    seen: dict[str, Part] = {}
    for part in [p for s in stages for p in s.all_parts()] + list(hardware):
        if part.designator in seen:
            first = seen[part.designator]
            raise CircuitError(
                f"designator {part.designator} is used twice (first at line {first.span.line}"
                f"{', stage ' + repr(first.stage_id) if first.stage_id else ''}); "
                "give each part its own designator",
                part.span,
            )
        seen[part.designator] = part


def _check_power(stages: list[Stage]) -> None:
    has_reference = any(KINDS[s.kind].provides_power for s in stages)
    for stage in stages:
        if KINDS[stage.kind].needs_reference_for(stage) and not has_reference:
            raise CircuitError(
                f"stage '{stage.id}' ({stage.kind}) needs the mid-rail reference; add a power "
                "stage with a reference divider",
                stage.span,
            )


def _check_dc_paths(kit: KitCircuit) -> None:
    """Every node needs a DC path to ground before any solver runs; the usual miss, coupling
    caps in a row between two stages, is named with its remedy, any other at its part's line."""
    try:
        circuit = kit.netlist()
        chain = kit.signal_stages
        for left, right in zip(chain, chain[1:], strict=False):
            _check_joint(kit, circuit, left, right)
        check_topology(circuit.elements)
    except CircuitError:
        raise
    except KitleafError as exc:
        raise kit.locate(exc) from None


def _check_joint(kit: KitCircuit, circuit, left: Stage, right: Stage) -> None:
    """The node joining two stages (either side of the input meter) must reach more than caps."""
    meter = circuit.element(input_meter(right.id))
    joint = set(terminals(meter))
    touching = [e for e in circuit.elements if e is not meter and joint & set(terminals(e))]
    parts = {p.designator: p for p in left.all_parts() + right.all_parts()}
    caps = [parts[e.name] for e in touching if e.name in parts]
    if len(caps) < 2 or len(caps) < len(touching) or not all(
            isinstance(e, Capacitor) for e in touching):
        return
    first, others = caps[0], " and ".join(_named(c) for c in caps[1:])
    raise CircuitError(
        f"{_named(first)} meets {others} with no DC path to ground between them; add a "
        f"pulldown resistor to stage '{left.id}', like '{_pulldown_hint(kit, left)}', so "
        "the caps' junction sits at 0 V",
        first.span,
    )


def _named(part: Part) -> str:
    return f"{part.designator} ({part.role} of stage '{part.stage_id}')"


def _pulldown_hint(kit: KitCircuit, stage: Stage) -> str:
    numbers = [int(m[1]) for p in kit.parts() if (m := re.fullmatch(r"R(\d+)", p.designator))]
    role = "pulldown" if any(r.name == "pulldown" for r in KINDS[stage.kind].roles) else "part"
    resistor = f"R{max(numbers, default=0) + 1} 1M"
    return f"{role}: {resistor}" if role == "pulldown" else f"{role}: {resistor} @ out 0"


def _knobs(guide: Guide, stages: list[Stage]) -> tuple[KnobRef, ...]:
    pots = {p.designator: p for s in stages for p in s.all_parts() if p.type == "pot"}
    knobs = []
    for knob in guide.kit.knobs:
        if knob.designator not in pots:
            raise CircuitError(
                f"knob '{knob.name}' turns {knob.designator}, but no stage has a pot "
                f"{knob.designator}; pots: {', '.join(sorted(pots)) or 'none'}",
                knob.span,
            )
        knobs.append(KnobRef(knob.name, knob.designator, pots[knob.designator].stage_id))
    return tuple(knobs)


def _source(entry: Entry | None) -> SignalSource:
    if entry is None or entry.value.strip().lower() == "pickup":
        return PICKUP
    if entry.value.strip().lower() == "low-z":
        return LOW_Z
    ohms = _quantity(entry, "resistance", "'pickup', 'low-z' or a resistance such as 10k")
    return SignalSource(f"{entry.value.strip()} source", ohms)


def _load(entry: Entry | None) -> float:
    if entry is None:
        return DEFAULT_LOAD
    return _quantity(entry, "resistance", "a resistance such as 1M")


def _quantity(entry: Entry, quantity: str, expected: str) -> float:
    try:
        return parse_value(entry.value.strip(), quantity)
    except KitleafError as exc:
        why = exc.message.partition("; expected")[0]  # our own example follows instead
        raise CircuitError(f"'{entry.key}:' {why}; expected {expected}", entry.span) from None


def _volts(text: str, span) -> float:
    volts = _quantity(Entry("supply", text, span), "voltage", "a voltage such as 9 V")
    low, high = SUPPLY_RANGE
    if not low <= volts <= high:
        raise CircuitError(
            f"'supply: {text}' is {format_value(volts, 'voltage')}; kitleaf solves kits powered "
            f"from {low:g} V to {high:g} V (batteries and adapters); write it like '9 V'", span)
    return volts
