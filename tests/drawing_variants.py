"""Every stage kind in every variant, as invented Fernbrook Circuitworks stage blocks: each
optional role present and absent, NPN and PNP, N- and P-channel, film and electrolytic, each
option's every choice. Generic over the registry, so a new kind is covered once it is listed.
"""

from __future__ import annotations

from collections.abc import Iterator
from dataclasses import dataclass

from tests.stages.kits import POWER, stage_block

from kitleaf.circuit.kind import StageKind
from kitleaf.circuit.stages import KINDS

# The values tried per part type: flavour 0 takes the first, flavour 1 the last (an NPN and a
# PNP, an N- and a P-channel JFET, a film and an electrolytic capacitor).
SAMPLES = {
    "resistor": ("10k",), "capacitor": ("100n film", "10u electrolytic 25V"),
    "inductor": ("100mH",), "pot": ("B100k",), "diode": ("1N4148",), "led": ("red",),
    "bjt": ("2N3904", "2N3906"), "jfet": ("J201", "2N5460"), "opamp": ("TL072",),
    "pump": ("7660",), "switch": ("SPDT", "SP3T"),
}
PREFIX = {"resistor": "R", "capacitor": "C", "inductor": "L", "pot": "VR", "diode": "D",
          "led": "LED", "bjt": "Q", "jfet": "Q", "opamp": "U", "pump": "U", "switch": "S"}
FLAVOURS = ("npn-film", "pnp-electrolytic")
VOLUME = stage_block("vol", "volume", "volume: VR99 A100k")
# After a stage whose output carries its DC (an option leaving out its output roles): a
# stage that takes its input through a cap.
CAP_LOAD = stage_block("vol", "high-pass", "series-cap: C99 100n film",
                       "shunt-resistor: R99 100k")


@dataclass(frozen=True)
class Variant:
    kind: str
    name: str
    blocks: tuple[str, ...]  # the guide's stage blocks, the variant's stage among them
    kit_lines: tuple[str, ...] = ()  # the kit block's own lines: a switch's positions

    @property
    def every_role(self) -> bool:
        """Every role filled (the required roles alone or one optional role left out or
        taken alone may be refused by a kind whose roles come in pairs)."""
        return not any(w in self.name for w in ("-required", "-without-", "-only-"))

    @property
    def id(self) -> str:
        return f"{self.kind}-{self.name}"


def variants() -> Iterator[Variant]:
    """Every kind's variants, kinds in registry order (kinds whose parts name their own nodes,
    the custom netlist, are drawn from generated netlists instead)."""
    for kind in KINDS.values():
        if any(role.nodes for role in kind.roles):
            continue
        for flavour, flavour_name in enumerate(FLAVOURS):
            for name, roles, options, types in kind_role_sets(kind):
                left_out = _left_out(kind, options)
                lines = part_lines(kind, roles - left_out, flavour, types)
                block = stage_block("stage", kind.name, *options, *lines)
                blocks = (block, VOLUME) if kind.provides_power else (
                    (POWER, block, CAP_LOAD) if left_out else
                    (POWER, block) if kind.signal else (POWER, block, VOLUME))
                yield Variant(kind.name, f"{flavour_name}-{name}", blocks, switch_lines(lines))


def _left_out(kind: StageKind, options: tuple[str, ...]) -> set[str]:
    """The roles the chosen options leave no place for."""
    chosen = dict(line.split(": ", 1) for line in options)
    return {role for o in kind.options for role in o.excluded(chosen[o.name])}


def kind_role_sets(kind: StageKind
                   ) -> Iterator[tuple[str, set[str], tuple[str, ...], dict[str, str]]]:
    """The role sets of :func:`role_sets` and the part type each role takes; a kind built in
    variants gives them per variant, its own roles required, the other variants' left out."""
    if not kind.variant_role:
        yield from ((*found, {}) for found in role_sets(kind))
        return
    for part_type, own in kind.variant_roles.items():
        others = {r for t, roles in kind.variant_roles.items() if t != part_type for r in roles}
        for name, roles, options in role_sets(kind, set(own), others):
            yield f"{part_type}-{name}", roles, options, {kind.variant_role: part_type}


def role_sets(kind: StageKind, needed: set[str] = frozenset(), left_out: set[str] = frozenset()
              ) -> Iterator[tuple[str, set[str], tuple[str, ...]]]:
    """(name, roles filled, option lines): the required roles alone, every role, every role
    but each optional one, the required ones plus each optional one; each option's choices.
    Roles in ``needed`` count as required, those in ``left_out`` are never filled."""
    required = {r.name for r in kind.roles if r.required} | needed
    optional = [r.name for r in kind.roles
                if not r.required and r.name not in needed | left_out]
    every = required | set(optional)
    base = tuple(f"{o.name}: {o.default or o.choices[0]}" for o in kind.options)
    yield "required", required, base
    yield "every-role", every, base
    for role in optional:
        yield f"without-{role}", every - {role}, base
        yield f"only-{role}", required | {role}, base
    for i, option in enumerate(kind.options):
        for choice in option.choices:
            lines = base[:i] + (f"{option.name}: {choice}",) + base[i + 1:]
            yield f"{option.name}-{choice}", every, lines


def switch_lines(lines: list[str]) -> tuple[str, ...]:
    """A kit-block line naming each switch's positions (SPDT two, SP3T three)."""
    found = [line.split(": ", 1)[1].split()[:2] for line in lines]
    counts = {"SPDT": 2, "SP3T": 3}
    return tuple(f"switch: Switch {d} = {d}: " + ", ".join(f"way {i + 1}"
                                                         for i in range(counts[form]))
                 for d, form in found if form in counts)


def part_lines(kind: StageKind, roles: set[str], flavour: int, types: dict[str, str]
               ) -> list[str]:
    counts: dict[str, int] = {}
    lines = []
    for role in kind.roles:
        if role.name not in roles:
            continue
        part_type = types.get(role.name, role.part_types[0])
        for _ in range(2 if role.many else 1):
            prefix = PREFIX[part_type]
            counts[prefix] = counts.get(prefix, 0) + 1
            designator = f"{prefix}{counts[prefix]}" + ("A" if part_type == "opamp" else "")
            values = SAMPLES[part_type]
            lines.append(f"{role.name}: {designator} {values[min(flavour, len(values) - 1)]}")
    return lines


# Parts a generated netlist draws from: (part type, designator prefix, values, pin count).
NETLIST_PARTS = (
    ("resistor", "R", ("10k", "470k", "2k2"), 2), ("capacitor", "C", ("100n film",
     "10u electrolytic 25V", "470p ceramic"), 2), ("diode", "D", ("1N4148",), 2),
    ("led", "LED", ("red",), 2), ("pot", "VR", ("B100k",), 3),
    ("bjt", "Q", ("2N3904", "2N3906"), 3), ("jfet", "Q", ("J201", "2N5460"), 3),
    ("opamp", "U", ("TL072",), 3),
)


def random_netlist(rng, parts: int) -> str:
    """A custom stage of ``parts`` parts on random nodes, then a resistor to ground from each
    own node (seeded by ``rng``, a random.Random):
    every pin on a stage connection or one of a few own nodes, IN and OUT both used, no part
    with both ends of a resistor, track or channel on one node."""
    own = [f"n{i}" for i in range(1, max(2, parts // 3) + 1)]
    pool = ["in", "out", "vcc", "0", "vref"] + own
    counts: dict[str, int] = {}
    lines = ["nodes: " + " ".join(own)]
    for i in range(parts):
        part_type, prefix, values, pins = rng.choice(NETLIST_PARTS)
        counts[prefix] = counts.get(prefix, 0) + 1
        designator = f"{prefix}{counts[prefix]}" + ("A" if part_type == "opamp" else "")
        if part_type == "opamp" and counts[prefix] > 1:
            designator = f"U{counts[prefix]}A"
        first = ["in", "out"][i] if i < 2 else rng.choice(pool)  # IN and OUT joined
        nodes = [first] + rng.sample([n for n in pool if n != first], pins - 1)
        rng.shuffle(nodes)
        lines.append(f"part: {designator} {rng.choice(values)} @ {' '.join(nodes)}")
    # a DC path to ground from every own node, as the solver asks (these are parts too)
    lines += [f"part: R{900 + i} 1M @ {node} 0" for i, node in enumerate(own)]
    return stage_block("stage", "custom", *lines)
