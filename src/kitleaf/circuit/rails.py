"""Supply rails: which a power stage makes, which a stage runs on, and their circuit nodes.

Every kit has the main rail (VCC, from the supply through the power stage) and ground. A
power stage's charge pumps make more: a doubler the doubled rail (about twice VCC, for
op-amps on 18 V from a 9 V supply), an inverter the negative rail (about -VCC, for op-amps
on +-9 V). A stage names its rails with ``rails:``; on ``doubled`` its VCC is the
doubled rail (and the reference, when the power stage's divider sits across it, half of
it); on ``bipolar`` its op-amps' negative supply pins go to the negative rail and its
reference is ground.
"""

from __future__ import annotations

from collections.abc import Mapping
from types import MappingProxyType

from kitleaf.errors import CircuitError

MAIN, DOUBLED, BIPOLAR = "main", "doubled", "bipolar"
RAILS = (MAIN, DOUBLED, BIPOLAR)
# Circuit nodes of the rails a charge pump makes.
DOUBLED_NODE = "v2"
NEGATIVE_NODE = "vee"
# The power section's rails as circuit nodes, in the order they are named together.
POWER_RAILS = ("vcc", DOUBLED_NODE, "vref", NEGATIVE_NODE)
# Which role of a power stage (the pump chip) makes which rail.
MADE_BY: Mapping[str, str] = MappingProxyType({DOUBLED: "doubler", BIPOLAR: "inverter"})


def read_rails(stage_id: str, kind, entries) -> dict:
    """The ``rails:`` line of a stage as Stage fields; given at most once, on a stage that
    draws from the rails."""
    if not entries:
        return {}
    entry = entries[0]
    if len(entries) > 1:
        raise CircuitError(f"stage '{stage_id}' gives 'rails:' twice (first at line "
                           f"{entry.span.line}); keep one", entries[1].span)
    if kind.provides_power:
        raise CircuitError(f"stage '{stage_id}' makes the rails; its 'doubler:' and "
                           "'inverter:' chips say which", entry.span)
    value = entry.value.strip().lower()
    if value not in RAILS:
        raise CircuitError(f"stage '{stage_id}', 'rails:': {entry.value.strip()!r} is not one "
                           f"of {', '.join(RAILS)}", entry.span)
    return {"rails": value, "rails_entry": entry}


def check_rails(stages) -> None:
    """Every rail a stage runs on is made by a power stage; else an error at its line."""
    made = {MAIN} | {rail for s in stages for rail, role in MADE_BY.items()
                     if s.part(role) is not None}
    for stage in stages:
        if stage.rails not in made:
            raise CircuitError(
                f"stage '{stage.id}' runs on the {stage.rails} rail, but no power stage makes "
                f"it; give the power stage a charge pump, '{MADE_BY[stage.rails]}: U9 7660' "
                "with its capacitors, or drop the 'rails:' line", stage.rails_entry.span)


def rail_labels(rails: str) -> dict[str, str]:
    """How a stage's drawing names its rails when they are not the main ones."""
    return {DOUBLED: {"vcc": "V2"}, BIPOLAR: {"vref": "0 V"}}.get(rails, {})


def negative_supply(rails: str) -> str:
    """The local net an op-amp's negative supply pin joins: the negative rail ``vee`` on
    ``bipolar``, else ground."""
    return "vee" if rails == BIPOLAR else "0"


def rail_nodes(rails: str, main: str) -> dict[str, str]:
    """A stage's local rail names (``vcc``, ``vref``, ``vee``) as circuit nodes."""
    nodes = {"vcc": main, "vref": "vref", "vee": "0"}
    if rails == DOUBLED:
        nodes["vcc"] = DOUBLED_NODE
    elif rails == BIPOLAR:
        nodes.update(vref="0", vee=NEGATIVE_NODE)
    return nodes
