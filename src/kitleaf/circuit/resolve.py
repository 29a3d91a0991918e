"""Resolving a stage block against its kind: parts by role, options, and their checks."""

from __future__ import annotations

import difflib
from dataclasses import replace
from types import MappingProxyType

from kitleaf.circuit.kind import Stage, StageKind
from kitleaf.circuit.partline import read_part
from kitleaf.circuit.parts import Part
from kitleaf.circuit.stages import KINDS
from kitleaf.errors import CircuitError
from kitleaf.guide.model import StageBlock


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


def resolve_stage(block: StageBlock) -> Stage:
    """The :class:`Stage` for ``block``: every entry is a role, an option or a kind's own key."""
    kind = kind_of(block)
    roles = {r.name: r for r in kind.roles}
    options = {o.name: o for o in kind.options}
    parts: dict[str, list[Part]] = {}
    chosen: dict[str, str] = {}
    extra: dict[str, list[str]] = {}
    for entry in block.entries:
        where = f"stage '{block.id}', role '{entry.key}'"
        if entry.key in roles:
            role = roles[entry.key]
            if parts.get(role.name) and not role.many:
                raise CircuitError(f"{where} takes one part; it is given twice", entry.span)
            part = read_part(entry, role.part_types, where)
            parts.setdefault(role.name, []).append(
                _placed(part, role.name, block.id))
        elif entry.key in options:
            chosen[entry.key] = _option(entry, options[entry.key], block.id)
        elif entry.key in kind.extra_keys:
            extra.setdefault(entry.key, []).append(entry.value)
        else:
            known = sorted([*roles, *options, *kind.extra_keys])
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
                  MappingProxyType({k: tuple(v) for k, v in extra.items()}))
    kind.check(stage)
    return stage


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
