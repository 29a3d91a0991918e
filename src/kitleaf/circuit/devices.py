"""A guide's own device models: its ``device NAME`` blocks read into engine models.

A block gives the engine kind (``type: npn``) or a library model to start from
(``from: 2N3904``), then one SPICE-named parameter per line (``bf: 250``, ``vaf: 0``), and
optionally ``spread: BF 150..450`` lines for Monte Carlo and a ``note:``. SPICE's "zero means
off" holds where SPICE says so (the engine's models read VAF, VAR, IKF, IKR of 0 as infinite).
Parameters SPICE knows but the engine does not model are left out with one warning; a word
that is no parameter at all is an error.
"""

from __future__ import annotations

import difflib
import re
from collections.abc import Mapping
from dataclasses import dataclass, field
from types import MappingProxyType

from kitleaf.engine.models import DEFAULTS, DeviceModel, get_model, registered_models
from kitleaf.errors import CircuitError, KitleafError, SourceSpan
from kitleaf.guide.model import Block, Entry, Guide
from kitleaf.values import parse_number

# The block's own keys; every other key is a parameter.
OWN_KEYS = ("type", "from", "note", "spread")
_BJT_UNMODELLED = frozenset({
    "IRB", "RBM", "XTF", "VTF", "ITF", "PTF", "TR", "CJS", "VJS", "MJS", "XCJC", "XTB", "EG",
    "XTI", "KF", "AF", "TNOM", "NK", "ISS", "NS", "QCO", "RCO", "VO", "GAMMA", "LEVEL",
})
_JFET_UNMODELLED = frozenset({"B", "KF", "AF", "TNOM", "XTI", "VTOTC", "BETATCE", "M",
                              "NR", "ISR", "ALPHA", "VK", "LEVEL"})
# SPICE parameters the engine does not model (temperature, noise, the second-order charge
# and resistance terms; SPICE3 and ngspice manuals, from memory): left out with a warning.
UNMODELLED: Mapping[str, frozenset[str]] = MappingProxyType({
    "diode": frozenset({"EG", "XTI", "KF", "AF", "TNOM", "IKF", "IKR", "ISR", "NR", "JSW",
                        "CJSW", "CJP", "MJSW", "PHP", "FCS", "TRS", "TBV1", "TBV2", "NBV",
                        "IBVL", "NBVL", "AREA", "LEVEL"}),
    "npn": _BJT_UNMODELLED, "pnp": _BJT_UNMODELLED,
    "njf": _JFET_UNMODELLED, "pjf": _JFET_UNMODELLED, "opamp": frozenset(),
})
# SPICE's other spellings of parameters the engine models (SPICE3 manual, from memory).
_BJT_ALIASES = {"VA": "VAF", "VB": "VAR", "IK": "IKF", "PE": "VJE", "ME": "MJE", "PC": "VJC",
                "MC": "MJC"}
ALIASES: Mapping[str, Mapping[str, str]] = MappingProxyType({
    "diode": {"CJ": "CJO", "CJ0": "CJO"}, "npn": _BJT_ALIASES, "pnp": _BJT_ALIASES,
    "njf": {}, "pjf": {}, "opamp": {},
})
_SPREAD = re.compile(r"^([A-Za-z]+)\s+(\S+?)\s*\.\.\s*(\S+)$")


@dataclass(frozen=True)
class DeviceWarning:
    """What reading a device block raised and did not stop: its place and its words."""

    span: SourceSpan
    text: str

    def line(self) -> str:
        """As the terminal prints it: ``path:line: warning: ...``."""
        return f"{self.span}: warning: {self.text}"


@dataclass(frozen=True)
class GuideDevices:
    """The guide's own models by upper-case name, and the warnings reading them raised."""

    models: Mapping[str, DeviceModel] = field(default_factory=dict)
    warnings: tuple[DeviceWarning, ...] = ()

    def find(self, name: str) -> DeviceModel | None:
        return self.models.get(name.upper())


NO_DEVICES = GuideDevices()


def read_devices(guide: Guide) -> GuideDevices:
    """Every device block of ``guide`` as an engine model; a library name it reuses is
    replaced for this guide's parts, with a warning."""
    library = set(registered_models())
    models, warnings = {}, []
    for block in guide.devices:
        model, unmodelled = read_device(block)
        models[model.name.upper()] = model
        warnings.extend(unmodelled)
        if model.name.upper() in library:
            warnings.append(DeviceWarning(
                block.span, f"device '{model.name}' replaces the library's {model.name} for "
                "this guide's parts; rename it to keep both"))
    return GuideDevices(MappingProxyType(models), tuple(warnings))


def read_device(block: Block) -> tuple[DeviceModel, tuple[DeviceWarning, ...]]:
    """One block's model, and its warning for parameters left out (none or one)."""
    name = block.argument
    base = _base(block)
    kind = _kind(block, base)
    params = dict(base.params) if base else {}
    given: dict[str, Entry] = {}
    unmodelled: list[Entry] = []
    for entry in block.entries:
        if entry.key in OWN_KEYS:
            continue
        key = ALIASES[kind].get(entry.key.upper(), entry.key.upper())
        if key in DEFAULTS[kind]:
            _once(name, key, entry, given)
            params[key] = _parameter(name, kind, key, entry)
        elif key in UNMODELLED[kind]:
            unmodelled.append(entry)
        else:
            raise CircuitError(_not_a_parameter(name, kind, entry.key), entry.span)
    spread = _spreads(block, kind, base)
    note = block.first("note")
    model = _model(block, kind, params, spread, note.value if note else "")
    return model, _left_out(name, kind, unmodelled)


def _base(block: Block) -> DeviceModel | None:
    entry = _single(block, "from")
    if entry is None:
        return None
    try:
        return get_model(entry.value.strip())
    except KitleafError as exc:
        raise CircuitError(f"device '{block.argument}', 'from:': {exc.message}",
                           entry.span) from None


def _kind(block: Block, base: DeviceModel | None) -> str:
    entry = _single(block, "type")
    if entry is None:
        if base is None:
            raise CircuitError(
                f"device '{block.argument}' needs a 'type:' line ({', '.join(DEFAULTS)}) or "
                "a 'from:' line naming a library model, like 'from: 2N3904'", block.span)
        return base.kind
    kind = entry.value.strip().lower()
    if kind not in DEFAULTS:
        raise CircuitError(f"device '{block.argument}': type {entry.value.strip()!r} is not "
                           f"one of {', '.join(DEFAULTS)}", entry.span)
    if base is not None and base.kind != kind:
        raise CircuitError(f"device '{block.argument}' is an {kind}, but 'from: {base.name}' "
                           f"is an {base.kind}; keep the two the same kind", entry.span)
    return kind


def _single(block: Block, key: str) -> Entry | None:
    found = block.all(key)
    if len(found) > 1:
        raise CircuitError(f"device '{block.argument}' gives '{key}:' twice (first at line "
                           f"{found[0].span.line}); keep one", found[1].span)
    return found[0] if found else None


def _once(name: str, key: str, entry: Entry, given: dict[str, Entry]) -> None:
    if key in given:
        raise CircuitError(f"device '{name}' gives {key} twice (first at line "
                           f"{given[key].span.line}); keep one", entry.span)
    given[key] = entry


def _parameter(name: str, kind: str, key: str, entry: Entry) -> float:
    """The value, checked alone so a bad one is named at its own line."""
    try:
        value = parse_number(entry.value)
        DeviceModel(name, kind, {key: value})
    except KitleafError as exc:
        why = exc.message.removeprefix(f"model {name!r}: ")
        why = why if why.startswith(key) else f"{key}: {why}"
        raise CircuitError(f"device '{name}': {why}", entry.span) from None
    return value


def _not_a_parameter(name: str, kind: str, key: str) -> str:
    known = [*DEFAULTS[kind], *OWN_KEYS]
    close = difflib.get_close_matches(key.upper(), [k.upper() for k in known], n=1)
    hint = f" (did you mean '{close[0].lower()}'?)" if close else ""
    return (f"device '{name}': '{key}' is not a parameter of an {kind}{hint}; it takes "
            f"{', '.join(DEFAULTS[kind])} and {', '.join(OWN_KEYS)}")


def _spreads(block: Block, kind: str, base: DeviceModel | None
             ) -> dict[str, tuple[float, float]]:
    """The ``spread:`` lines, which replace the base model's spreads when given."""
    lines = block.all("spread")
    if not lines:
        return dict(base.spread) if base else {}
    spread: dict[str, tuple[float, float]] = {}
    for entry in lines:
        match = _SPREAD.match(entry.value.strip())
        try:
            if match is None:
                raise CircuitError("write a parameter and its production range, like "
                                   "'spread: BF 150..450'")
            low, high = parse_number(match[2]), parse_number(match[3])
            spread[match[1].upper()] = (low, high)
            DeviceModel(block.argument, kind, {}, {match[1].upper(): (low, high)})
        except KitleafError as exc:
            raise CircuitError(f"device '{block.argument}', 'spread:': {exc.message}",
                               entry.span) from None
    return spread


def _model(block: Block, kind: str, params: dict, spread: dict, note: str) -> DeviceModel:
    try:
        return DeviceModel(block.argument, kind, params, spread, "user", note)
    except KitleafError as exc:  # each value passed alone; together they still may not
        raise CircuitError(f"device '{block.argument}': {exc.message}", block.span) from None


def _left_out(name: str, kind: str, entries: list[Entry]) -> tuple[DeviceWarning, ...]:
    if not entries:
        return ()
    keys = ", ".join(e.key.upper() for e in entries)
    return (DeviceWarning(entries[0].span, (
        f"device '{name}': {keys} {'is' if len(entries) == 1 else 'are'} not modelled by "
        "kitleaf and left out (it works at 27 degC, without noise); the "
        f"{kind} parameters it models are {', '.join(DEFAULTS[kind])}")),)
