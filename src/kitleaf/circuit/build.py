"""build_circuit: a parsed guide in, the kit's :class:`KitCircuit` out."""

from __future__ import annotations

import re
from dataclasses import replace

from kitleaf.circuit.chain import (
    DEFAULT_LOAD,
    LOW_Z,
    PICKUP,
    KitCircuit,
    KnobRef,
    SignalSource,
    SwitchRef,
    input_meter,
)
from kitleaf.circuit.devices import read_devices
from kitleaf.circuit.harness import build_harness
from kitleaf.circuit.kind import Stage
from kitleaf.circuit.parts import Part
from kitleaf.circuit.rails import check_rails
from kitleaf.circuit.resolve import resolve_stage
from kitleaf.circuit.stages import KINDS
from kitleaf.circuit.switches import form_of
from kitleaf.circuit.trim import read_trims, trim_positions
from kitleaf.engine.elements import Capacitor, terminals
from kitleaf.engine.topology import check_topology
from kitleaf.errors import CircuitError, KitleafError
from kitleaf.guide.model import Entry, Guide
from kitleaf.values import format_value, parse_value

# Supplies kitleaf solves: a single cell up to 60 V DC, the usual safety extra-low-voltage
# limit of equipment standards (from memory); anything else is a typo such as '9k'.
SUPPLY_RANGE = (1.0, 60.0)


def build_circuit(guide: Guide, set_trimmers: bool = True) -> KitCircuit:
    """Resolve every stage of ``guide`` and check the kit holds together as one circuit.

    With ``set_trimmers``, each trimmer is set where its ``trim:`` line says (a DC solve per
    try); without, the kit is good for what does not depend on positions (the parts list).
    """
    devices = read_devices(guide)
    stages = _in_order(guide, [resolve_stage(b, devices) for b in guide.stages])
    hardware = tuple(Part(h.designator, "hardware", h.description, h.span)
                     for h in guide.kit.hardware)
    _check_designators(stages, hardware)
    _check_power(stages)
    check_rails(stages)
    kit = KitCircuit(
        stages=tuple(stages), hardware=hardware, knobs=_knobs(guide, stages),
        source=_source(guide.kit.source), load=_load(guide.kit.load),
        supply_v=_volts(guide.kit.supply, guide.kit.supply_span or guide.kit.span),
        switches=_switches(guide, stages), warnings=devices.warnings,
    )
    _check_dc_paths(kit)
    build_harness(guide, kit)  # read now, so a wiring mistake is named by every command
    targets = read_trims(kit)
    if not targets or not set_trimmers:
        return kit
    return replace(kit, trims=targets, presets=tuple(trim_positions(kit, targets).items()))


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
        _check_direct_outputs(chain, circuit)
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


def _check_direct_outputs(chain: tuple[Stage, ...], circuit) -> None:
    """A stage with ``output-coupling: direct`` drives the next stage's input cap, and only
    that: anything else at the next stage's input would take the stage's DC."""
    for i, stage in enumerate(chain):
        if stage.options.get("output-coupling") != "direct":
            continue
        if i + 1 == len(chain):
            raise CircuitError(
                f"stage '{stage.id}' has 'output-coupling: direct' but is the last stage: its "
                "DC would reach the output jack and the amplifier; couple it through an "
                "output cap", stage.span)
        after = chain[i + 1]
        node = f"{after.id}.in"  # the next stage's side of its input meter
        touching = [e for e in circuit.elements
                    if node in terminals(e) and e.name != input_meter(after.id)]
        dc = [e.name for e in touching if not isinstance(e, Capacitor)]
        if dc or not touching:
            raise CircuitError(
                f"stage '{stage.id}' has 'output-coupling: direct', but stage '{after.id}' "
                f"({after.kind}) takes DC at its input ({', '.join(dc) or 'nothing'} there, no "
                "input cap); give it an input cap or couple stage "
                f"'{stage.id}' through an output cap", stage.span)


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


def _switches(guide: Guide, stages: list[Stage]) -> tuple[SwitchRef, ...]:
    """Each ``switch:`` line against its part: one name per position of the part's form, and
    every switch on the board named by a line (its positions are states of the kit)."""
    parts = {p.designator: p for s in stages for p in s.all_parts() if p.type == "switch"}
    found = []
    for switch in guide.kit.switches:
        part = parts.get(switch.designator)
        if part is None:
            raise CircuitError(
                f"switch '{switch.name}' is {switch.designator}, but no stage has a switch "
                f"{switch.designator}; switches: {', '.join(sorted(parts)) or 'none'}",
                switch.span)
        count = form_of(part).positions
        if len(switch.positions) != count:
            raise CircuitError(
                f"switch '{switch.name}' names {len(switch.positions)} positions, but "
                f"{part.designator} ({_form_words(part)}, line {part.span.line}) has {count}; "
                "name each position once, in the switch's order", switch.span)
        found.append(SwitchRef(switch.name, part.designator, part.stage_id, switch.positions,
                               switch.rest))
    named = {s.designator for s in found}
    for part in parts.values():
        if part.designator not in named:
            raise CircuitError(
                f"{part.designator} is a switch no 'switch:' line of the kit block names; add "
                f"one naming its {form_of(part).positions} positions, like 'switch: Clip = "
                f"{part.designator}: {', '.join(_SAMPLE_NAMES[:form_of(part).positions])}'",
                part.span)
    return tuple(found)


_SAMPLE_NAMES = ("first", "second", "third", "fourth", "fifth", "sixth", "seventh", "eighth",
                 "ninth", "tenth", "eleventh", "twelfth", "thirteenth")


def _form_words(part: Part) -> str:
    return " ".join(filter(None, (part.attrs["form"], part.attrs.get("function"))))


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
