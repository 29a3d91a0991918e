"""Resolving a stage block against its kind: parts by role, options, and their checks."""

from __future__ import annotations

import difflib
from dataclasses import replace
from types import MappingProxyType

from kitleaf.circuit.devices import NO_DEVICES, GuideDevices
from kitleaf.circuit.kind import Stage, StageKind
from kitleaf.circuit.partline import read_part
from kitleaf.circuit.parts import Part
from kitleaf.circuit.rails import read_rails
from kitleaf.circuit.stages import KINDS
from kitleaf.errors import CircuitError
from kitleaf.guide.model import Entry, StageBlock

# Keys every stage takes whatever its kind: claims about its numbers, silenced design rules,
# the supply rails it runs on, the set-up targets of its trimmers.
GENERIC_KEYS = ("claim", "allow", "rails", "trim")


def kind_of(block: StageBlock) -> StageKind:
    kind = KINDS.get(block.kind)
    if kind is None:
        raise CircuitError(
            f"stage '{block.id}': unknown kind '{block.kind}'{did_you_mean(block.kind, KINDS)}; "
            f"the kinds are: {', '.join(sorted(KINDS))}",
            block.kind_span,
        )
    return kind


def did_you_mean(word: str, choices) -> str:
    close = difflib.get_close_matches(word, list(choices), n=1)
    return f" (did you mean '{close[0]}'?)" if close else ""


def resolve_stage(block: StageBlock, devices: GuideDevices = NO_DEVICES) -> Stage:
    """The :class:`Stage` for ``block``: every entry is a role, an option or a kind's own key;
    semiconductors take the guide's own ``devices`` before the library's models."""
    kind = kind_of(block)
    roles = {r.name: r for r in kind.roles}
    options = {o.name: o for o in kind.options}
    parts: dict[str, list[Part]] = {}
    chosen: dict[str, str] = {}
    extra: dict[str, list[Entry]] = {}
    for entry in block.entries:
        where = f"stage '{block.id}', role '{entry.key}'"
        if entry.key in roles:
            role = roles[entry.key]
            if parts.get(role.name) and not role.many:
                raise CircuitError(f"{where} takes one part; it is given twice", entry.span)
            part = read_part(entry, role.part_types, where, devices)
            _check_nodes(part, role, where)
            parts.setdefault(role.name, []).append(
                _placed(part, role.name, block.id))
        elif entry.key in options:
            chosen[entry.key] = _option(entry, options[entry.key], block.id)
        elif entry.key in kind.extra_keys:
            extra.setdefault(entry.key, []).append(entry)
        elif entry.key in GENERIC_KEYS:
            extra.setdefault(entry.key, []).append(entry)
        else:
            known = sorted([*roles, *options, *kind.extra_keys, *GENERIC_KEYS])
            raise CircuitError(
                f"stage '{block.id}' ({kind.name}) has no role or option '{entry.key}'"
                f"{did_you_mean(entry.key, known)}; it takes: {', '.join(known)}",
                entry.span,
            )
    _check_required(block, kind, parts)
    for name, option in options.items():
        chosen.setdefault(name, option.default)
    stage = Stage(block.id, kind.name, block.title,
                  MappingProxyType({k: tuple(v) for k, v in parts.items()}),
                  MappingProxyType(chosen), block.span,
                  MappingProxyType({k: tuple(v) for k, v in extra.items()
                                    if k not in GENERIC_KEYS}),
                  claims=tuple(extra.get("claim", ())), allows=tuple(extra.get("allow", ())),
                  trims=tuple(extra.get("trim", ())),
                  **read_rails(block.id, kind, extra.get("rails", [])))
    kind.check(stage)
    return stage


def _check_nodes(part: Part, role, where: str) -> None:
    """Nodes after '@' belong on the custom kind's part lines, and only there."""
    if role.nodes and "nodes" not in part.attrs:
        raise CircuitError(f"{where}: name the nodes {part.designator} joins after '@', "
                           f"like '{part.designator} {part.text} @ in b'", part.span)
    if not role.nodes and "nodes" in part.attrs:
        raise CircuitError(f"{where}: this kind wires its parts itself; drop the '@ ...' "
                           "nodes (only custom stages name nodes)", part.span)


def _placed(part: Part, role: str, stage_id: str) -> Part:
    return replace(part, role=role, stage_id=stage_id)


def _option(entry, option, stage_id: str) -> str:
    value = entry.value.strip().lower()
    if value not in option.choices:
        raise CircuitError(
            f"stage '{stage_id}', option '{option.name}': {value!r} is not one of "
            f"{', '.join(option.choices)}",
            entry.span,
        )
    return value


def _check_required(block: StageBlock, kind: StageKind, parts) -> None:
    for role in kind.roles:
        if role.required and role.name not in parts:
            example = " / ".join(role.part_types)
            raise CircuitError(
                f"stage '{block.id}' ({kind.name}) is missing its '{role.name}' part "
                f"({role.help or example}); add a line '{role.name}: ...'",
                block.span,
            )
