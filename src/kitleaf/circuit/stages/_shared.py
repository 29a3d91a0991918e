"""What several stage kinds share: device families, pot wiring, op-amp pins, test points."""

from __future__ import annotations

from kitleaf.circuit.kind import Option, Role, Stage, TestPoint
from kitleaf.circuit.parts import Part
from kitleaf.errors import CircuitError, KitleafError

# Engine model kinds by the part type a role takes (see kitleaf.engine.models).
FAMILIES = {"bjt": ("npn", "pnp"), "jfet": ("njf", "pjf"), "opamp": ("opamp",),
            "diode": ("diode",), "led": ("diode",), "pump": ("pump",)}
# With the article each takes as it is read aloud ("an NPN", "a PNP").
FAMILY_NAMES = {"npn": "an NPN BJT", "pnp": "a PNP BJT", "njf": "an N-channel JFET",
                "pjf": "a P-channel JFET", "diode": "a diode", "opamp": "an op-amp",
                "pump": "a charge pump"}
# Pins of one section of an 8-pin dual op-amp (TL072, NE5532, LM358 share the pinout;
# datasheet pin diagrams, from memory): section A, section B, then the supply pins.
DUAL_PINS = {
    "A": {"out": "1", "inv": "2", "non_inv": "3"},
    "B": {"out": "7", "inv": "6", "non_inv": "5"},
}
SUPPLY_PINS = {"vpos": "8", "vneg": "4"}


def family(part: Part) -> str:
    """The engine's kind of a semiconductor's model (npn, pnp, njf, pjf, diode, opamp)."""
    if part.device is not None:
        return part.device.kind
    from kitleaf.engine.models import get_model  # the model library loads on first use

    try:
        return get_model(part.model).kind
    except KitleafError as exc:
        raise CircuitError(f"{part.designator}: {exc.message}", part.span) from None


def check_family(stage: Stage, role: str, allowed: tuple[str, ...]) -> None:
    """The part in ``role`` must be a model of one of the ``allowed`` engine kinds."""
    check_part_family(stage, role, stage.part(role), allowed)


def check_part_family(stage: Stage, role: str, part: Part | None, allowed: tuple[str, ...]
                      ) -> None:
    if part is None or part.model is None:
        return
    found = family(part)
    if found not in allowed:
        wanted = " or ".join(FAMILY_NAMES[a] for a in allowed)
        raise CircuitError(
            f"stage '{stage.id}', role '{role}': {part.designator} {part.model} is "
            f"{FAMILY_NAMES.get(found, f'a {found}')}; this kind takes {wanted}", part.span)


def is_flipped(stage: Stage, role: str) -> bool:
    """True for a PNP or P-channel part, which this project wires mirror-image on the same
    positive rail (emitter or source towards VCC, the load towards ground)."""
    part = stage.part(role)
    return part is not None and family(part) in ("pnp", "pjf")


def require_together(stage: Stage, needs: str, needed: str) -> None:
    """A part in role ``needs`` only makes sense with a part in role ``needed``."""
    part = stage.part(needs)
    if part is not None and stage.part(needed) is None:
        raise CircuitError(
            f"stage '{stage.id}', role '{needs}': {part.designator} needs a '{needed}' part "
            f"beside it; add a line '{needed}: ...' or drop {part.designator}", part.span)


def need_role(stage: Stage, role: str, why: str) -> None:
    """A role optional in the kind that this stage's variant (``why``) cannot do without."""
    if stage.part(role) is None:
        raise CircuitError(f"stage '{stage.id}' ({stage.kind}) {why} needs a '{role}' part; "
                           f"add a line '{role}: ...'", stage.span)


def refuse_role(stage: Stage, role: str, why: str) -> None:
    """A part in a role this stage's variant has no place for, refused at its line."""
    part = stage.part(role)
    if part is not None:
        raise CircuitError(f"stage '{stage.id}', role '{role}': {why}; drop "
                           f"{part.designator} or change the stage", part.span)


def rheostat(wiring, part: Part | None, a: str, b: str, grows: bool = True) -> None:
    """A pot as a variable resistor from ``a`` to ``b``, its wiper tied to one end.

    With ``grows`` the resistance is the track from ccw to the wiper, so it rises as the knob
    turns clockwise; otherwise it is the track from the wiper to cw, and falls.
    """
    if part is None:
        return
    if grows:
        wiring.place(part, a, b, b)
    else:
        wiring.place(part, b, b, a)


def series(wiring, chain: list[tuple[Part | None, bool]], start: str, end: str, prefix: str
           ) -> None:
    """The parts of ``chain`` that are present, in series from ``start`` to ``end``.

    Each item is (part, grows): pots are rheostats whose resistance grows clockwise when
    ``grows``. Nodes between the parts are named ``prefix1``, ``prefix2``...
    """
    present = [(p, grows) for p, grows in chain if p is not None]
    nodes = [start] + [f"{prefix}{i}" for i in range(1, len(present))] + [end]
    for (part, grows), a, b in zip(present, nodes[:-1], nodes[1:], strict=True):
        if part.type == "pot":
            rheostat(wiring, part, a, b, grows)
        else:
            wiring.place(part, a, b)


def diode_stack(wiring, parts, top: str, bottom: str, prefix: str, anode_up: bool) -> None:
    """Diodes in series from ``top`` to ``bottom``, conducting from ``top`` when ``anode_up``
    (none: a clipper may clip one polarity only). Inner nodes are ``prefix1``, ``prefix2``..."""
    if not parts:
        return
    nodes = [top] + [f"{prefix}{i}" for i in range(1, len(parts))] + [bottom]
    for part, a, b in zip(parts, nodes[:-1], nodes[1:], strict=True):
        wiring.place(part, *((a, b) if anode_up else (b, a)))


def check_diodes(stage: Stage, roles: tuple[str, ...]) -> None:
    """Every part in ``roles`` is a diode or an LED, and the roles hold one at least."""
    if not any(stage.parts.get(role) for role in roles):
        example = " and/or ".join(f"'{role}: D{i + 1} 1N4148'" for i, role in enumerate(roles))
        raise CircuitError(f"stage '{stage.id}' ({stage.kind}) has no diodes; add {example}",
                           stage.span)
    for role in roles:
        for part in stage.parts.get(role, ()):
            check_part_family(stage, role, part, ("diode",))


def section(part: Part) -> str:
    """Which half of a dual op-amp: the designator's letter suffix (U1B), A when none."""
    last = part.designator[-1]
    return last if last in DUAL_PINS else "A"


def opamp_pins(part: Part) -> dict[str, str]:
    """Package pin numbers of the section ``part`` uses, by our pin names."""
    return {**DUAL_PINS[section(part)], **SUPPLY_PINS}


def opamp_test_points(part: Part, plus: str, minus: str, out: str) -> tuple[TestPoint, ...]:
    pins = opamp_pins(part)
    d = part.designator.rstrip("AB") if part.designator[-1] in DUAL_PINS else part.designator
    return (
        TestPoint(f"{d} pin {pins['non_inv']} (+ input)", plus, part.designator, pins["non_inv"]),
        TestPoint(f"{d} pin {pins['inv']} (− input)", minus, part.designator, pins["inv"]),
        TestPoint(f"{d} pin {pins['out']} (output)", out, part.designator, pins["out"]),
        TestPoint(f"{d} pin {pins['vpos']} (V+)", "vcc", part.designator, pins["vpos"]),
    )


def transistor_test_points(part: Part, pins: dict[str, str]) -> tuple[TestPoint, ...]:
    """One test point per pin: ``pins`` maps a pin name (base, drain...) to its local node."""
    return tuple(TestPoint(f"{part.designator} {name}", node, part.designator, name)
                 for name, node in pins.items())


def capacitor_role(name: str, help: str, required: bool = True) -> Role:
    return Role(name, ("capacitor",), required, help=help)


def resistor_role(name: str, help: str, required: bool = True) -> Role:
    return Role(name, ("resistor",), required, help=help)


# A gain stage's output: through its output cap (the default), or straight from its output
# node into the next stage, whose own input cap then blocks the DC (one coupling cap between
# the two stages instead of two in a row).
OUTPUT_COUPLING = Option(
    "output-coupling", ("cap", "direct"), "cap",
    help="cap: the output cap blocks DC; direct: no output cap, the stage drives the next "
         "stage's input cap straight from its output node (one coupling cap between the two)",
    excludes=(("direct", ("output-cap", "pulldown", "volume")),))


def output_roles(source: str) -> tuple[Role, ...]:
    """The output cap from ``source`` (the collector, the drain...), its pulldown and the
    optional volume pot: the same three roles end every gain stage. The output cap is
    required unless ``output-coupling: direct`` (:func:`check_output`)."""
    return (
        capacitor_role("output-cap", f"coupling capacitor from {source} to the output "
                       "(required unless 'output-coupling: direct')", required=False),
        resistor_role("pulldown", "from the output cap to ground: keeps it charged, no pop",
                      required=False),
        Role("volume", ("pot",), required=False,
             help="output volume pot after the output cap: cw end to the cap, ccw end to ground"),
    )


def check_output(stage: Stage, kind_name: str) -> None:
    """An output cap unless the output is direct, and then none, nor a pulldown or volume pot
    (they would sit at the stage's DC voltage)."""
    direct = stage.options.get("output-coupling") == "direct"
    if not direct and stage.part("output-cap") is None:
        raise CircuitError(
            f"stage '{stage.id}' ({kind_name}) is missing its 'output-cap' part (coupling "
            "capacitor to the output); add a line 'output-cap: ...', or 'output-coupling: "
            "direct' where the next stage's input cap blocks the DC", stage.span)
    for role in OUTPUT_COUPLING.excluded("direct") if direct else ():
        part = stage.part(role)
        if part is not None:
            raise CircuitError(
                f"stage '{stage.id}', role '{role}': with 'output-coupling: direct' the "
                f"output carries the stage's DC, so {part.designator} has no place; drop it "
                "or couple through an output cap", part.span)


def place_output(stage: Stage, wiring, node: str) -> None:
    """Output cap from ``node``, its pulldown, then the volume pot (cw to the cap, wiper out);
    with a direct output, ``node`` joins the output through a 0 V source (a wire)."""
    if stage.options.get("output-coupling") == "direct":
        wiring.internal("vsource", "direct", node, "out", dc=0.0)
        return
    volume = stage.part("volume")
    after = "v" if volume else "out"
    wiring.place(stage.part("output-cap"), node, after)
    wiring.place(stage.part("pulldown"), after, "0")
    wiring.place(volume, "0", "out", "v")
