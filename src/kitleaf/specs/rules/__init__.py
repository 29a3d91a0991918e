"""The registry of design rules: the modules of this package, in order, each registering the
rule it defines (see :mod:`kitleaf.registry`).

A rule is a function from a :class:`RuleContext` to its findings. ``allow:`` lines in the kit
block or a stage block silence one rule for one part, stage or the kit, with a stated reason
that the page shows: ``allow: RULE SUBJECT: REASON``.
"""

from __future__ import annotations

import difflib
from collections.abc import Callable, Iterable
from dataclasses import dataclass, replace

from kitleaf.circuit.chain import KitCircuit
from kitleaf.errors import SpecError
from kitleaf.guide.model import Entry, Guide
from kitleaf.registry import add, load
from kitleaf.specs.lookup import KIT
from kitleaf.specs.rules._context import Finding, RuleContext


@dataclass(frozen=True)
class Rule:
    """A design rule: its id, a one-line summary for the docs, and the check itself."""

    id: str
    summary: str
    check: Callable[[RuleContext], Iterable[Finding]]


RULES: dict[str, Rule] = {}

# The modules defining rules, in the order the rules run and docs/claims-and-rules.md lists
# them. A new rule is one new module here plus its tests; a test fails while a module of this
# folder is not listed.
MODULES = (
    "cap_polarity",
    "cap_voltage",
    "resistor_power",
    "coupling_corner",
    "treble_corner",
    "stable",
    "transistor_region",
    "opamp_headroom",
    "bias_path",
    "led_current",
    "pot_taper",
    "input_impedance",
    "tone_drive",
    "tone_load",
    "e_series",
    "battery_life",
    "unused_half",
    "custom_drawing",
    "trim_reach",
    "large_signal",
    "clips_when_clean",
    "asymmetric_clip",
    "opamp_rail",
    "hum",
    "pump_ripple",
)


def register(rule_id: str, summary: str):
    """Decorator: make a check function available as rule ``rule_id``."""
    def register_check(check: Callable[[RuleContext], Iterable[Finding]]):
        add(RULES, rule_id, Rule(rule_id, summary, check), "design rule")
        return check

    return register_check


@dataclass(frozen=True)
class Allow:
    """An ``allow:`` line: rule ``rule`` is silenced for ``subject`` because of ``reason``."""

    rule: str
    subject: str
    reason: str
    entry: Entry


def read_allow(entry: Entry) -> Allow:
    head, sep, reason = entry.value.partition(":")
    words = head.split()
    if not sep or len(words) != 2 or not reason.strip():
        raise SpecError(f"cannot read allow {entry.value!r}; write a rule, what it is about and "
                        "a reason, like 'allow: e-series R7: matches the original circuit'",
                        entry.span)
    rule = words[0].lower()
    if rule not in RULES:
        close = difflib.get_close_matches(rule, list(RULES), n=1)
        hint = f" (did you mean '{close[0]}'?)" if close else ""
        raise SpecError(f"allow: there is no design rule '{rule}'{hint}; the rules are: "
                        f"{', '.join(sorted(RULES))}", entry.span)
    return Allow(rule, words[1].lower(), reason.strip(), entry)


def allow_entries(guide: Guide, kit: KitCircuit) -> tuple[Allow, ...]:
    kit_lines = [e for e in guide.kit.extra if e.key == "allow"]
    stage_lines = [e for s in kit.stages for e in s.allows]
    return tuple(read_allow(e) for e in kit_lines + stage_lines)


def check_rules(ctx: RuleContext) -> tuple[Finding, ...]:
    """Every rule's findings, sorted by line; silenced ones carry their reason."""
    allows = allow_entries(ctx.guide, ctx.kit)
    found = [f for rule in RULES.values() for f in rule.check(ctx)]
    reasons = {(a.rule, a.subject): a.reason for a in allows}
    found = [replace(f, allowed=reasons.get((f.rule, f.subject.lower()), "")) for f in found]
    used = {(f.rule, f.subject.lower()) for f in found}
    found += [_unused(a) for a in allows if (a.rule, a.subject) not in used]
    return tuple(sorted(found, key=lambda f: (f.span.line, f.rule, f.subject)))


def _unused(allow: Allow) -> Finding:
    return Finding("unused-allow", allow.subject, KIT,
                   f"'allow: {allow.entry.value}' silences nothing: rule {allow.rule} finds "
                   f"nothing about {allow.subject}; remove the line", allow.entry.span)


load(__name__, MODULES)

__all__ = ["RULES", "Allow", "Finding", "Rule", "RuleContext", "check_rules", "register"]
