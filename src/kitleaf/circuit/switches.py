"""Switches: their form (poles, positions) read from the part line, and their contacts.

A switch has one or more poles that move together. In each position every pole joins its
common terminal to one of its throws, or to nothing (a centre-off position). The value names
the form as the trade writes it, ``SPDT``, ``DPDT``, ``3PDT``, ``SP3T`` or ``2P4T`` (poles,
then throws), and an optional word spells the positions of a toggle with off positions,
``on-off-on`` (three positions, the middle one joining nothing) or ``on-off`` (an SPST). A
rotary is a many-throw form: ``1P6T``. A pole's pins are its common terminal, then its throws
in position order.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

from kitleaf.errors import CircuitError

# How the trade writes a count in a switch form: S single, D double, else digits.
_COUNTS = {"S": 1, "D": 2}
_FORM = re.compile(r"^(S|D|[1-9])P(S|D|[1-9][0-9]?)T$")
_FUNCTION = re.compile(r"^(on|off)(-(on|off))+$")
# What a closed contact and an open one are, for the solver: a toggle's contact resistance
# and its insulation resistance, both of the order of the makers' data sheets (from memory).
CLOSED_OHMS = 0.02
OPEN_OHMS = 1e9
MAX_THROWS = 12  # a 12-position rotary is the largest usual one (common practice, no source)


@dataclass(frozen=True)
class SwitchForm:
    """``poles`` poles; ``throws[k]`` is the throw (0-based) each pole's common joins in
    position k, or None where position k joins nothing."""

    poles: int
    throw_count: int
    throws: tuple[int | None, ...]

    @property
    def positions(self) -> int:
        return len(self.throws)

    @property
    def pins(self) -> int:
        """Pins the switch has, pole by pole: the common, then each throw."""
        return self.poles * (1 + self.throw_count)


def read_form(value: str, function: str | None = None) -> SwitchForm:
    """The form written on a part line: ``SPDT`` and an optional ``on-off-on``."""
    match = _FORM.match(value.upper())
    if match is None:
        raise CircuitError(
            f"cannot read the switch form {value!r}; write poles and throws as the trade "
            "does, like SPDT, DPDT, 3PDT, SP3T or 1P6T (a rotary)")
    poles = _COUNTS.get(match[1]) or int(match[1])
    throws = _COUNTS.get(match[2]) or int(match[2])
    if throws > MAX_THROWS:
        raise CircuitError(f"a switch of {throws} throws; kitleaf takes up to {MAX_THROWS}")
    if function is None:
        return SwitchForm(poles, throws, (0, None) if throws == 1 else tuple(range(throws)))
    words = function.split("-")
    if words.count("on") != throws:
        raise CircuitError(
            f"'{function}' has {words.count('on')} 'on' positions but {value} has {throws} "
            f"throw{'s' * (throws > 1)}; give one 'on' per throw, like 'on-off-on' for SPDT")
    ons = iter(range(throws))
    return SwitchForm(poles, throws, tuple(next(ons) if w == "on" else None for w in words))


def is_function(word: str) -> bool:
    """Whether ``word`` spells a toggle's positions, such as ``on-off-on``."""
    return _FUNCTION.match(word.lower()) is not None


def form_of(part) -> SwitchForm:
    """The form of a switch part (read and checked when the part line was read)."""
    return read_form(part.attrs["form"], part.attrs.get("function"))


def require_form(part, where: str, throws: int, poles: int = 1) -> SwitchForm:
    """The form of a switch a kind wires with ``throws`` throws on each of ``poles`` poles
    (more poles are fine: the spare ones stay unwired); a located error naming the form to
    fit otherwise."""
    form = form_of(part)
    if form.throw_count != throws or form.poles < poles:
        wanted = f"{_count_letter(poles)}P{_count_letter(throws)}T"
        raise CircuitError(
            f"{where}: {part.designator} is a {part.attrs['form']}, but this stage wires "
            f"{poles} pole{'s' * (poles > 1)} of {throws} throws; fit a {wanted} (or a switch "
            "with more poles), with 'on-off-on' style positions if one is to join nothing",
            part.span)
    return form


def _count_letter(count: int) -> str:
    return {1: "S", 2: "D"}.get(count, str(count))


def wired_poles(form: SwitchForm, nodes: tuple) -> int:
    """How many poles ``nodes`` wires (pins in whole poles, at most the form's); 0 if none fit."""
    size = 1 + form.throw_count
    fits = len(nodes) % size == 0 and 0 < len(nodes) // size <= form.poles
    return len(nodes) // size if fits else 0


def pole_pins(form: SwitchForm, nodes: tuple[str | None, ...]) -> list[tuple[str, tuple]]:
    """The nodes of each pole: (common, throws), from a flat list in pin order."""
    size = 1 + form.throw_count
    return [(nodes[i], tuple(nodes[i + 1:i + size])) for i in range(0, len(nodes), size)]


def contacts(form: SwitchForm, position: int, nodes: tuple[str | None, ...]
             ) -> list[tuple[str, str, str, float]]:
    """(name suffix, common, throw, ohms) of every contact at ``position``: the throw the
    position selects closed, the others open. A throw wired to nothing (None) is left out."""
    chosen = form.throws[position]
    found = []
    for p, (common, throws) in enumerate(pole_pins(form, nodes), start=1):
        for t, throw in enumerate(throws):
            if throw is not None and throw != common:
                ohms = CLOSED_OHMS if t == chosen else OPEN_OHMS
                found.append((f"p{p}t{t + 1}", common, throw, ohms))
    return found
