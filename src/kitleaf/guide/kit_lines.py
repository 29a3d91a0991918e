"""The kit block's lines with a grammar of their own: knobs, switches and the battery's
capacity and life."""

from __future__ import annotations

import re

from kitleaf.errors import GuideError
from kitleaf.guide.model import DESIGNATOR, Block, Entry, Knob, Switch
from kitleaf.guide.slug import slug_for

_CAPACITY = re.compile(r"^(\d+(?:\.\d*)?)\s*(m?)Ah$")
_HOURS = re.compile(r"^(\d+(?:\.\d*)?)\s*(?:h|hours?)$")


def read_knobs(entries: tuple[Entry, ...]) -> tuple[Knob, ...]:
    """The ``knob:`` lines; each knob has its own name and its own pot."""
    knobs: list[Knob] = []
    for entry in entries:
        knob = read_knob(entry)
        for other in knobs:
            _refuse_twice(knob, other)
        knobs.append(knob)
    return tuple(knobs)


def read_knob(entry: Entry) -> Knob:
    name, sep, designator = entry.value.partition("=")
    name, designator = name.strip(), designator.strip()
    if not sep or not name or not DESIGNATOR.match(designator):
        raise GuideError(
            f"cannot read knob {entry.value!r}; write the knob's name and its pot, "
            "like 'Gain = VR1'",
            entry.span,
        )
    if not slug_for(name):
        raise GuideError(f"knob {name!r} needs a letter a-z or a digit in its name (claims and "
                         "prose name the knob by them); write it like 'Gain = VR1'", entry.span)
    return Knob(name, designator, entry.span)


def read_switches(entries: tuple[Entry, ...], knobs: tuple[Knob, ...]) -> tuple[Switch, ...]:
    """The ``switch:`` lines; a switch has its own name (apart from every knob's too), its own
    part and at least two positions, each named apart from the others."""
    switches: list[Switch] = []
    for entry in entries:
        switch = read_switch(entry)
        for other in (*knobs, *switches):
            _refuse_twice(switch, other)
        switches.append(switch)
    return tuple(switches)


def read_switch(entry: Entry) -> Switch:
    name, sep, rest = entry.value.partition("=")
    designator, colon, listed = rest.partition(":")
    name, designator = name.strip(), designator.strip()
    positions = tuple(p.strip() for p in listed.split(","))
    if not sep or not colon or not name or not DESIGNATOR.match(designator) or len(
            positions) < 2 or not all(positions):
        raise GuideError(
            f"cannot read switch {entry.value!r}; write the switch's name, its part and a name "
            "for each position in order, like 'Clip = S1: diodes, LEDs, off'", entry.span)
    if not slug_for(name):
        raise GuideError(f"switch {name!r} needs a letter a-z or a digit in its name (claims "
                         "and prose name it by them)", entry.span)
    seen: dict[str, str] = {}
    for position in positions:
        slug = slug_for(position)
        if not slug or slug in seen:
            why = (f"is written like '{seen[slug]}'" if slug else
                   "needs a letter a-z or a digit")
            raise GuideError(f"switch '{name}': position {position!r} {why}; claims name a "
                             "position by its letters and digits, so give each its own name",
                             entry.span)
        seen[slug] = position
    return Switch(name, designator, positions, entry.span)


def _refuse_twice(knob: Knob | Switch, other: Knob | Switch) -> None:
    first = f"first at line {other.span.line}"
    if knob.designator == other.designator:
        raise GuideError(f"{knob.designator} is turned by two {_what(knob, other)} "
                         f"('{other.name}', {first}); a part has one, so keep one line",
                         knob.span)
    if slug_for(knob.name) == slug_for(other.name):
        raise GuideError(f"two {_what(knob, other)} are named {knob.name!r} ({first}, "
                         f"'{other.name}'); give each its own name", knob.span)


def _what(one: Knob | Switch, other: Knob | Switch) -> str:
    kinds = {type(one), type(other)}
    return "knobs" if kinds == {Knob} else "switches" if kinds == {Switch} else "controls"


def battery_capacity_ah(entry: Entry) -> float:
    """A ``battery:`` line's capacity in ampere-hours ("500 mAh" -> 0.5)."""
    match = _read(entry, _CAPACITY, "battery: 500 mAh", " (its capacity; the voltage goes on "
                  "the 'supply:' line)")
    return float(match[1]) * (1e-3 if match[2] else 1.0)


def battery_life_hours(entry: Entry) -> float:
    """A ``battery-life:`` line's promise in hours ("100 h" -> 100.0)."""
    return float(_read(entry, _HOURS, "battery-life: 20 h")[1])


def check_battery(block: Block) -> None:
    """Both battery lines read now, so a mistake is named even where no rule reads them."""
    for entry in block.all("battery"):
        battery_capacity_ah(entry)
    for entry in block.all("battery-life"):
        battery_life_hours(entry)


def _read(entry: Entry, pattern: re.Pattern, example: str, hint: str = "") -> re.Match:
    match = pattern.match(entry.value.strip())
    if match is None or not 0 < float(match[1]) < 1e6:
        raise GuideError(f"cannot read '{entry.key}: {entry.value}'; write it like "
                         f"'{example}'{hint}", entry.span)
    return match
