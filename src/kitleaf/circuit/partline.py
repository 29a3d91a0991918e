"""Reading one part line, ``R3 10k 1% 0.25W``, into a :class:`Part` for the role it plays."""

from __future__ import annotations

import re
import shlex
from dataclasses import replace
from types import MappingProxyType

from kitleaf.circuit.devices import NO_DEVICES, GuideDevices
from kitleaf.circuit.parts import PART_QUANTITY, Part
from kitleaf.circuit.switches import is_function, read_form
from kitleaf.errors import CircuitError, KitleafError, SourceSpan
from kitleaf.guide.model import DESIGNATOR, Entry
from kitleaf.values import parse_rating, parse_tolerance, parse_value

# Designator prefixes of the trade (common practice, no source), longest first.
PREFIX_TYPES = (
    ("LED", ("led",)), ("VR", ("pot",)), ("RV", ("pot",)), ("IC", ("opamp", "pump")),
    ("R", ("resistor",)), ("C", ("capacitor",)), ("L", ("inductor",)), ("P", ("pot",)),
    ("D", ("diode", "led")), ("Q", ("bjt", "jfet")), ("U", ("opamp", "pump")),
    ("SW", ("switch",)), ("S", ("switch",)), ("TR", ("trimmer",)),
)
EXAMPLES = {
    "resistor": "R3 10k", "capacitor": "C2 100n film", "inductor": "L1 100mH",
    "pot": "VR1 100k log", "diode": "D1 1N4148", "led": "LED1 red", "bjt": "Q1 2N3904",
    "jfet": "Q1 J201", "opamp": "U1 TL072", "pump": "U3 7660", "switch": "S1 SPDT on-off-on",
    "trimmer": "TR1 50k",
}
DIELECTRICS = {
    "film", "polyester", "polypropylene", "ceramic", "c0g", "np0", "x7r", "mica",
    "electrolytic", "tantalum",
}
TAPERS = {"lin": "lin", "log": "log", "rlog": "rlog"}
# The keys a part line may give as key=value: what a buyer needs to pick the part, read by
# the BOM; words with any other key would be read by nothing (a model's parameters come from
# its model name), so they are refused.
ATTRIBUTE_KEYS = ("package", "colour", "size", "shaft", "mount")
# Pot value prefixes as marked on many pots: A audio (log), B linear, C reverse log.
TAPER_LETTERS = {"A": "log", "B": "lin", "C": "rlog"}
# Default tolerances where the line states none (common practice, no source).
DEFAULT_TOLERANCE = {
    "resistor": 0.05, "pot": 0.20, "trimmer": 0.20, "inductor": 0.10,
    "film": 0.05, "polyester": 0.05, "polypropylene": 0.05, "c0g": 0.05, "np0": 0.05,
    "mica": 0.05, "ceramic": 0.10, "x7r": 0.10, "tantalum": 0.10, "electrolytic": 0.20,
    "capacitor": 0.10,
}
# What a rating on a part line means: a capacitor's voltage or a resistor's power.
RATING_QUANTITY = {"capacitor": "voltage", "resistor": "power", "pot": "power",
                   "trimmer": "power"}
PINNED = ("pot", "trimmer")  # three-pin resistive parts: a track and a wiper
_KEYVALUE = re.compile(r"^([a-z][a-z0-9-]*)=(.+)$")


def types_for_designator(designator: str) -> tuple[str, ...]:
    for prefix, types in PREFIX_TYPES:
        if designator.startswith(prefix):
            return types
    return ()


def read_part(entry: Entry, accepted: tuple[str, ...], where: str,
              devices: GuideDevices = NO_DEVICES) -> Part:
    """The part written on ``entry`` for a role accepting ``accepted`` part types; a
    semiconductor's model is the guide's own (``devices``) or else the library's."""
    try:
        words = shlex.split(entry.value)
    except ValueError:
        raise CircuitError(f"{where}: unbalanced quotes in {entry.value!r}", entry.span) from None
    words, nodes = split_nodes(words)
    if len(words) < 2 or not DESIGNATOR.match(words[0]):
        raise CircuitError(
            f"{where}: cannot read {entry.value!r}; write a designator and a value, "
            f"like '{EXAMPLES[accepted[0]]}'",
            entry.span,
        )
    designator, value_text, rest = words[0], words[1], words[2:]
    part_type = _choose_type(designator, accepted, entry.span, where, value_text, devices)
    try:
        part = _make_part(designator, part_type, value_text, rest, entry.span, devices)
    except KitleafError as exc:
        raise CircuitError(f"{where}, {designator}: {exc.message}", entry.span) from None
    if nodes is None:
        return part
    return replace(part, attrs=MappingProxyType({**part.attrs, "nodes": " ".join(nodes)}))


def split_nodes(words: list[str]) -> tuple[list[str], list[str] | None]:
    """A part line's words, and the node names after a lone ``@`` (None when there is none)."""
    if "@" not in words:
        return words, None
    at = words.index("@")
    return words[:at], words[at + 1:]


def device_model(part_type: str, value_text: str, devices: GuideDevices = NO_DEVICES) -> str:
    """The model a semiconductor's value names; an LED is written by its colour, or by the
    name of a model of the guide's own."""
    if part_type == "led" and not value_text.upper().startswith("LED") \
            and devices.find(value_text) is None:
        return f"LED-{value_text.upper()}"
    return value_text


def find_device(name: str, devices: GuideDevices = NO_DEVICES):
    """The guide's own model called ``name``, else the library's; an error naming both."""
    from kitleaf.engine.models import get_model  # the model library loads on first use

    own = devices.find(name)
    if own is not None:
        return own
    try:
        return get_model(name)
    except KitleafError as exc:
        own = ", ".join(m.name for m in devices.models.values())
        raise CircuitError(f"{exc.message}{'; the guide defines ' + own if own else ''}; or "
                           f"define {name} in a block ```device {name}") from None


def _by_model(matching: list[str], value_text: str, devices: GuideDevices) -> str:
    """Between a BJT and a JFET (both 'Q'), the type the engine's model says."""
    try:
        kind = find_device(value_text, devices).kind
    except KitleafError:
        return matching[0]
    found = _MODEL_TYPES.get(kind)
    return found if found in matching else matching[0]


_MODEL_TYPES = {"npn": "bjt", "pnp": "bjt", "njf": "jfet", "pjf": "jfet", "opamp": "opamp",
                "pump": "pump"}


def _choose_type(designator: str, accepted: tuple[str, ...], span: SourceSpan, where: str,
                 value_text: str = "", devices: GuideDevices = NO_DEVICES) -> str:
    by_prefix = types_for_designator(designator)
    # Set once on the bench, a trimmer stands wherever a resistor does.
    allowed = (*accepted, "trimmer") if "resistor" in accepted else accepted
    matching = [t for t in allowed if t in by_prefix]
    if len(matching) > 1:
        return _by_model(matching, value_text, devices)
    if matching:
        return matching[0]
    wanted = " or ".join(accepted)
    raise CircuitError(
        f"{where} takes a {wanted}, but {designator} is "
        f"{'a ' + by_prefix[0] if by_prefix else 'no known part type'} by its designator; "
        f"write a {accepted[0]} such as '{EXAMPLES[accepted[0]]}'",
        span,
    )


def _make_part(designator: str, part_type: str, value_text: str, rest, span,
               devices: GuideDevices = NO_DEVICES) -> Part:
    if part_type == "switch":
        return _switch(designator, value_text, rest, span)
    attrs: dict[str, str] = {}
    tolerance = rating = None
    for word in rest:
        tolerance, rating = _read_attribute(word, part_type, attrs, tolerance, rating)
    quantity = PART_QUANTITY[part_type]
    value = model = device = None
    if part_type in PINNED and value_text[:1] in TAPER_LETTERS and len(value_text) > 1:
        _set_once(attrs, "taper", TAPER_LETTERS[value_text[0]], value_text)
        value_text = value_text[1:]
    if quantity is None:
        model = device_model(part_type, value_text, devices)
        device = find_device(model, devices)
    else:
        value = parse_value(value_text, quantity)
    if part_type == "trimmer":
        attrs.setdefault("taper", "lin")  # trimmers are linear (common practice, no source)
    if part_type == "pot" and "taper" not in attrs:
        raise CircuitError(
            "a pot needs a taper: add 'lin', 'log' or 'rlog', or write A100k / B100k")
    if tolerance is None and part_type in ("resistor", "inductor", "capacitor", *PINNED):
        tolerance = DEFAULT_TOLERANCE.get(attrs.get("dielectric", part_type), 0.10)
    return Part(designator, part_type, value_text, span, value=value, model=model,
                tolerance=tolerance, rating=rating, attrs=MappingProxyType(attrs),
                device=device)


def _switch(designator: str, form: str, rest: list[str], span) -> Part:
    """A switch: its form (SPDT...), an optional toggle function (on-off-on) and key=value."""
    attrs = {"form": form.upper()}
    for word in rest:
        if is_function(word) and "function" not in attrs:
            attrs["function"] = word.lower()
        elif (match := _KEYVALUE.match(word)) is not None:
            _key_value(match[1], match[2], attrs)
        else:
            raise CircuitError(f"unknown attribute {word!r}; a switch takes its positions "
                               "(on-off-on) and key=value (mount=panel)")
    read_form(attrs["form"], attrs.get("function"))
    return Part(designator, "switch", form, span, attrs=MappingProxyType(attrs))


def _read_attribute(word: str, part_type: str, attrs: dict, tolerance, rating):
    low = word.lower()
    if low.endswith("%"):
        return parse_tolerance(word), rating
    if low[-1:] in ("v", "w") and low[:1] in "0123456789.-+":
        return tolerance, parse_rating(word, RATING_QUANTITY.get(part_type))
    if low in DIELECTRICS and part_type == "capacitor":
        _set_once(attrs, "dielectric", low, word)
    elif low in TAPERS and part_type in PINNED:
        _set_once(attrs, "taper", TAPERS[low], word)
    elif (match := _KEYVALUE.match(word)) is not None:
        _key_value(match[1], match[2], attrs)
    else:
        raise CircuitError(
            f"unknown attribute {word!r}; write a tolerance (1%), a rating (25V, 0.25W), "
            "a dielectric (film, ceramic, electrolytic), a taper (lin, log) or key=value"
        )
    return tolerance, rating


def _set_once(attrs: dict, key: str, value: str, word: str) -> None:
    """A taper or dielectric written twice must agree with itself."""
    if attrs.get(key, value) != value:
        raise CircuitError(f"{word!r} gives a second {key}, {value}, after {attrs[key]}; "
                           f"keep the one the part has")
    attrs[key] = value


def _key_value(key: str, value: str, attrs: dict) -> None:
    if key not in ATTRIBUTE_KEYS:
        raise CircuitError(
            f"unknown attribute '{key}={value}'; a part line takes {', '.join(ATTRIBUTE_KEYS)} "
            "as key=value (a device's parameters come from its model name)")
    if key in attrs:
        raise CircuitError(f"'{key}=' is given twice; keep one")
    attrs[key] = value
