"""The kit block's lines with a grammar of their own: knobs, switches, the battery's capacity
and life, the adapter's ripple, and the playing levels and test tone of the large-signal
figures."""

from __future__ import annotations

import re

from kitleaf.errors import GuideError, KitleafError
from kitleaf.guide.model import DESIGNATOR, Block, Entry, Knob, Switch
from kitleaf.guide.slug import slug_for
from kitleaf.values import format_value, parse_value

_CAPACITY = re.compile(r"^(\d+(?:\.\d*)?)\s*(m?)Ah$")
_HOURS = re.compile(r"^(\d+(?:\.\d*)?)\s*(?:h|hours?)$")
_RIPPLE = re.compile(r"^(.+?)\s*(?:p-?p\s*)?at\s+(.+)$")
# What an adapter's ripple may be: up to 2 V peak to peak, at twice a mains frequency of
# 50 or 60 Hz or a harmonic of it up to 1 kHz (common practice, no source)
RIPPLE_VOLTS = (1e-6, 2.0)
RIPPLE_HZ = (50.0, 1000.0)


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


REST_MARK = "*"  # after a switch position's name: the position it rests at


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
    marked = [p.strip() for p in listed.split(",")]
    rests = [i for i, p in enumerate(marked) if p.endswith(REST_MARK)]
    positions = tuple(p.removesuffix(REST_MARK).strip() for p in marked)
    if len(rests) > 1:
        raise GuideError(f"switch '{name.strip()}' marks {len(rests)} positions with "
                         f"'{REST_MARK}'; mark the one it rests at, or none (the first)",
                         entry.span)
    if not sep or not colon or not name or not DESIGNATOR.match(designator) or len(
            positions) < 2 or not all(positions):
        raise GuideError(
            f"cannot read switch {entry.value!r}; write the switch's name, its part and a name "
            "for each position in order, like 'Clip = S1: diodes, off*, LEDs' (the '*' marks "
            "where it rests; the first if none)", entry.span)
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
    return Switch(name, designator, positions, entry.span, rests[0] if rests else 0)


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
    """Both battery lines, the ripple and the large-signal drive read now, so a mistake is
    named even where nothing reads them."""
    for entry in block.all("battery"):
        battery_capacity_ah(entry)
    for entry in block.all("battery-life"):
        battery_life_hours(entry)
    for entry in block.all("adapter-ripple"):
        adapter_ripple(entry)
    for entry in block.all("playing-levels"):
        playing_levels(entry)
    for entry in block.all("test-tone"):
        test_tone(entry)


# What the large-signal figures may be asked for: pickup peaks from 1 mV (a weak single
# coil's softest note) to 10 V (far past the hottest active pickup), at most five of them,
# and a tone within the audio band, 20 Hz to 20 kHz (common practice, no source).
PLAYING_VOLTS = (1e-3, 10.0)
MAX_PLAYING = 5
TONE_HZ = (20.0, 20e3)
_PLAYING_EXAMPLE = "'playing-levels: 100 mV, 300 mV, 1 V' (pickup peaks, soft to hard)"


def playing_levels(entry: Entry) -> tuple[float, ...]:
    """A ``playing-levels:`` line as pickup peak volts, lowest first: "50 mV, 1 V"."""
    levels = []
    for word in entry.value.split(","):
        volts = _drive_value(entry, word, "voltage", _PLAYING_EXAMPLE)
        _within(entry, word, volts, PLAYING_VOLTS, "voltage", "a pickup's peak",
                _PLAYING_EXAMPLE)
        levels.append(volts)
    named = {level_word(v) for v in levels}
    if len(levels) > MAX_PLAYING or len(named) < len(levels):
        raise GuideError(f"'playing-levels: {entry.value}' needs one to {MAX_PLAYING} levels, "
                         f"each apart from the others; write it like {_PLAYING_EXAMPLE}",
                         entry.span)
    return tuple(sorted(levels))


def test_tone(entry: Entry) -> float:
    """A ``test-tone:`` line as hertz: "440 Hz"."""
    return tone_hz(entry, entry.value,
                   "'test-tone: 1 kHz' (the sine the pickup plays, 20 Hz to 20 kHz)")


def tone_hz(entry: Entry, word: str, example: str) -> float:
    """``word`` of ``entry`` as the frequency of a test tone, within TONE_HZ; a located
    error written with ``example`` where it cannot be simulated."""
    hz = _drive_value(entry, word, "frequency", example)
    _within(entry, word, hz, TONE_HZ, "frequency", "the tone (the audio band)", example)
    return hz


def level_word(volts: float) -> str:
    """A playing level as names spell it: 0.3 -> "300mv", 1.0 -> "1v"."""
    return f"{volts:g}v" if volts >= 1.0 else f"{round(volts * 1000, 3):g}mv"


_NUMBER = re.compile(r"^\s*([-+−]?(?:\d+\.?\d*|\.\d+)(?:e[-+]?\d+)?)", re.IGNORECASE)


def _drive_value(entry: Entry, word: str, quantity: str, example: str) -> float:
    number = _NUMBER.match(word)
    if number and float(number[1].replace("−", "-")) <= 0.0:
        raise GuideError(f"'{word.strip()}' in '{entry.key}: {entry.value}' cannot be "
                         "simulated: a drive needs a level and a tone above zero; write it "
                         f"like {example}", entry.span)
    try:
        return parse_value(word.strip(), quantity)
    except KitleafError as exc:
        raise GuideError(f"cannot read '{word.strip()}' in '{entry.key}: {entry.value}' "
                         f"({exc.message}); write it like {example}", entry.span) from None


def _within(entry: Entry, word: str, value: float, limits: tuple[float, float],
            quantity: str, what: str, example: str) -> None:
    low, high = (format_value(v, quantity) for v in limits)
    if not limits[0] <= value <= limits[1]:
        raise GuideError(f"'{word.strip()}' in '{entry.key}: {entry.value}' cannot be "
                         f"simulated: {what} must be from {low} to {high}; write it like "
                         f"{example}", entry.span)


def adapter_ripple(entry: Entry) -> tuple[float, float]:
    """An ``adapter-ripple:`` line as (volts peak to peak, hertz): "20 mV at 120 Hz"."""
    example = "'adapter-ripple: 20 mV at 120 Hz' (peak to peak, at twice the mains frequency)"
    match = _RIPPLE.match(entry.value.strip())
    try:
        if match is None:
            raise GuideError("")
        volts = parse_value(match[1].removesuffix("pp").strip(), "voltage")
        hz = parse_value(match[2], "frequency")
    except KitleafError as exc:
        why = f" ({exc.message})" if exc.message else ""
        raise GuideError(f"cannot read 'adapter-ripple: {entry.value}'{why}; write it like "
                         f"{example}", entry.span) from None
    for value, (low, high), what in ((volts, RIPPLE_VOLTS, "V"), (hz, RIPPLE_HZ, "Hz")):
        if not low <= value <= high:
            raise GuideError(f"'adapter-ripple: {entry.value}' is outside what an adapter "
                             f"gives ({low:g} to {high:g} {what}); write it like {example}",
                             entry.span)
    return volts, hz


def _read(entry: Entry, pattern: re.Pattern, example: str, hint: str = "") -> re.Match:
    match = pattern.match(entry.value.strip())
    if match is None or not 0 < float(match[1]) < 1e6:
        raise GuideError(f"cannot read '{entry.key}: {entry.value}'; write it like "
                         f"'{example}'{hint}", entry.span)
    return match
