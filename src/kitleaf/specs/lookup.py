"""Names for every computed value of a kit, so prose and claims can refer to them.

A name is dotted and lower-case: ``kit.gain``, ``boost.low-corner``, ``boost.gain.level-100``
(the gain with the Level knob fully clockwise), ``drive.gain.clip-leds`` (with the Clip
switch set to its position "LEDs"), ``boost.q1.collector`` (a test point),
``power.vref``, ``r3`` (a part's value). docs/claims-and-rules.md lists them all.
"""

from __future__ import annotations

import difflib
import re
from collections.abc import Mapping
from dataclasses import dataclass

from kitleaf.circuit.chain import KitCircuit
from kitleaf.circuit.kind import point_name
from kitleaf.circuit.parts import PART_QUANTITY
from kitleaf.display import settings
from kitleaf.errors import SourceSpan, SpecError
from kitleaf.guide.kit_lines import PLAYING_VOLTS, level_word
from kitleaf.guide.slug import slug_for as slug
from kitleaf.specs.model import (
    DriveSetting,
    KitSpecs,
    KnobPoint,
    PumpRipple,
    Range,
    Scoop,
    StageSpecs,
    Unstable,
)
from kitleaf.values import format_value

KIT = "kit"
# Spec field -> (name, quantity, what it is); the same for the kit and each stage.
FIELDS = (
    ("gain_db", "gain", "db", "gain at 1 kHz"),
    ("low_corner_hz", "low-corner", "frequency", "low corner (−3 dB)"),
    ("high_corner_hz", "high-corner", "frequency", "high corner (−3 dB)"),
    ("input_impedance", "input-impedance", "resistance", "input impedance at 1 kHz"),
    ("output_impedance", "output-impedance", "resistance", "output impedance at 1 kHz"),
    ("supply_current", "current", "current", "current draw"),
    ("hum", "hum", "voltage", "hum at the output from the adapter's ripple (RMS)"),
)

# The fields read at DC, which an unstable small-signal circuit leaves as they are.
DC_FIELDS = ("supply_current",)
# KnobPoint field -> the same, for the figures given at every knob position.
KNOB_FIELDS = tuple(f for f in FIELDS if f[0] in ("gain_db", "input_impedance",
                                                    "output_impedance", "hum"))


@dataclass(frozen=True)
class Computed:
    """One named computed value: its range, the quantity it is in and what it is."""

    name: str
    value: Range
    quantity: str
    label: str
    # Another way a maker may spell it, offered by the did-you-mean only: a custom test
    # point labelled "Q2 source" is ``buffer.s``, but a maker may try ``buffer.q2.source``.
    spelling: str = ""
    # A small-signal figure of an unstable setting: it means nothing (specs/stability.py).
    unstable: Unstable | None = None


def computed_values(specs: KitSpecs, kit: KitCircuit) -> dict[str, Computed]:
    """Every name a guide may use, in a stable order."""
    found: dict[str, Computed] = {}
    _add_specs(found, KIT, specs, "the kit")
    if specs.source_gain_db is not None:
        found[f"{KIT}.gain-from-source"] = Computed(
            f"{KIT}.gain-from-source", specs.source_gain_db, "db",
            "gain at 1 kHz from the source's own voltage, the kit")
    found[f"{KIT}.supply"] = Computed(f"{KIT}.supply", Range(specs.supply_v), "voltage",
                                      "supply voltage")
    for ripple in specs.pump_ripples:
        _add_pump_ripple(found, ripple)
    local = {s.id: [tp.node for tp in kit.kind(s).test_points(s)] for s in kit.stages}
    for stage in specs.stages:
        _add_specs(found, stage.id, stage, stage.title)
        for v, node in zip(stage.voltages, local[stage.id], strict=True):
            name = f"{stage.id}.{point_name(v.device, v.pin, node)}"
            spelling = "" if v.device else f"{stage.id}.{'.'.join(map(slug, v.label.split()))}"
            found[name] = Computed(name, v.volts, "voltage", f"{v.label}, DC to ground",
                                   spelling)
    for part in kit.parts():
        quantity = PART_QUANTITY.get(part.type)
        if quantity is not None and part.value is not None:
            name = part.designator.lower()
            found[name] = Computed(name, Range(part.value), quantity, f"value of {part.designator}")
    return found


def _add_pump_ripple(found: dict, ripple: PumpRipple) -> None:
    """A charge pump's ripple on its rail (peak to peak) and at the output (RMS)."""
    name = f"{KIT}.pump-ripple.{ripple.pump.lower()}"
    found[name] = Computed(name, ripple.volts_pp, "voltage",
                           f"{ripple.pump}'s switching ripple on its rail (peak to peak)")
    found[f"{name}.output"] = Computed(
        f"{name}.output", ripple.output, "voltage",
        f"{ripple.pump}'s switching ripple at the output (RMS), knobs at half way")


def _add_specs(found: dict, prefix: str, specs: KitSpecs | StageSpecs, title: str) -> None:
    for field, name, quantity, label in FIELDS:
        value = getattr(specs, field)
        if value is not None:
            full = f"{prefix}.{name}"
            found[full] = Computed(full, value, quantity, f"{label}, {title}",
                                   unstable=None if field in DC_FIELDS else specs.unstable)
    _add_scoop(found, prefix, "", getattr(specs, "scoop", None), title, specs.unstable)
    for point in specs.knob_sweep:
        for field, name, quantity, label in KNOB_FIELDS:
            value = getattr(point, field)
            if value is not None:
                full = f"{prefix}.{name}.{_knob_suffix(point)}"
                found[full] = Computed(full, value, quantity,
                                       f"{label}, {title}, {_knob_words(point)}",
                                       unstable=point.unstable)
        _add_scoop(found, prefix, f".{_knob_suffix(point)}", point.scoop,
                   f"{title}, {_knob_words(point)}", point.unstable)
    if specs.drive is not None:
        for setting in specs.drive.settings:
            _add_drive(found, prefix, setting, title)


# Large-signal figure -> (name, quantity, what it is); "thd.300mv" and "peak.300mv" per
# playing level besides.
DRIVE_FIELDS = (
    ("clean_limit", "clean-limit", "voltage", "pickup peak where THD reaches 1 %"),
    ("driven_limit", "drive-limit", "voltage", "pickup peak where THD reaches 10 %"),
)


def _add_drive(found: dict, prefix: str, setting: DriveSetting, title: str) -> None:
    """A setting's figures (none when not computed), named with its knob positions."""
    point = KnobPoint(setting.positions, Range(0.0))
    suffix = f".{_knob_suffix(point)}" if setting.positions else ""
    where = f"{title}, {_knob_words(point)}" if setting.positions else f"{title}, knobs at half way"

    def add(name: str, value: float | None, quantity: str, label: str) -> None:
        if value is not None:
            full = f"{prefix}.{name}{suffix}"
            found[full] = Computed(full, Range(value), quantity, f"{label}, {where}")

    for field, name, quantity, label in DRIVE_FIELDS:
        add(name, getattr(setting, field), quantity, label)
    for p in setting.points:
        level, words = level_word(p.level), format_value(p.level, "voltage")
        add(f"thd.{level}", p.thd, "thd", f"THD at {words} pickup peak")
        add(f"peak.{level}", p.peak, "voltage", f"output peak at {words} pickup peak")
    for name, swing, side in (("swing-up", setting.swing_up, "above"),
                              ("swing-down", setting.swing_down, "below")):
        add(name, None if swing is None else swing[0], "voltage",
            f"output swing limit {side} its mean")


def _add_scoop(found: dict, prefix: str, suffix: str, scoop: Scoop | None, title: str,
               unstable: Unstable | None) -> None:
    """A passive tone control's mid scoop: its depth and where it lies (see specs/scoop.py)."""
    if scoop is None:
        return
    for name, value, quantity, label in (("scoop-depth", scoop.depth_db, "db", "mid scoop depth"),
                                         ("scoop-frequency", scoop.hz, "frequency",
                                          "mid scoop frequency")):
        full = f"{prefix}.{name}{suffix}"
        found[full] = Computed(full, value, quantity, f"{label}, {title}", unstable=unstable)


def _knob_suffix(point: KnobPoint) -> str:
    """``level-100`` for a knob at 100 %, ``clip-leds`` for a switch set to "LEDs"."""
    return ".".join(f"{slug(name)}-{slug(pos) if isinstance(pos, str) else round(pos * 100)}"
                    for name, pos in point.positions)


def _knob_words(point: KnobPoint) -> str:
    return settings(point.positions)


def candidates(name: str, scope: str | None) -> tuple[str, ...]:
    """Where a name may point: inside its stage first, then as written, then the kit's."""
    name = name.strip().lower()
    found = [f"{scope}.{name}"] if scope and scope != KIT else []
    return tuple(found + [name, f"{KIT}.{name}"])


def lookup(values: Mapping[str, Computed], name: str, span: SourceSpan | None,
           scope: str | None = None) -> Computed:
    """The value ``name`` refers to; a SpecError naming the line and the nearest name if none."""
    for candidate in candidates(name, scope):
        if candidate in values:
            return values[candidate]
    why = (_level_problem(values, name) or _limit_problem(values, name, scope)
           or _nearest(values, name, scope))
    raise SpecError(f"there is no computed value '{name}'{why}; "
                    "docs/claims-and-rules.md lists the names", span)


_LEVEL_NAME = re.compile(r"(?:^|\.)(?:thd|peak)\.([^.]*)")
_LEVEL_WORD = re.compile(r"^([-+]?\d+(?:\.\d*)?(?:e[-+]?\d+)?)(mv|v)$")


def named_level(name: str) -> tuple[str, float] | None:
    """The pickup level a THD or peak name is at, as written and in volts:
    ``kit.thd.300mv`` -> ("300mv", 0.3); None for another name."""
    found = _LEVEL_NAME.search(name.strip().lower())
    word = _LEVEL_WORD.match(found[1]) if found else None
    if word is None:
        return None
    return found[1], float(word[1]) * (1e-3 if word[2] == "mv" else 1.0)


def _level_problem(values: Mapping[str, Computed], name: str) -> str:
    """Why a THD or peak name at a pickup level has no value: the level cannot be
    simulated, the kit does not play it, or it has no large-signal figures."""
    level = named_level(name)
    if level is None:
        return ""
    word, volts = level
    low, high = PLAYING_VOLTS
    if not low <= volts <= high:
        return (f": {word} is no pickup level that can be simulated (levels run from "
                f"{format_value(low, 'voltage')} to {format_value(high, 'voltage')} peak)")
    if not any(".thd." in n for n in values):
        return (": large-signal figures are computed only for a kit whose kit block says "
                "'large-signal: yes'")
    return (f": {word} is not one of the kit's playing levels; list it in the kit "
            "block's 'playing-levels:' line")


_LIMIT = re.compile(r"^(.*?)(?:clean|drive)-limit(.*)$")


def _limit_problem(values: Mapping[str, Computed], name: str, scope: str | None) -> str:
    """Why a clean or drive limit of a setting that has large-signal figures has no value:
    THD does not reach its mark within the levels solved there."""
    for candidate in candidates(name, scope):
        found = _LIMIT.match(candidate)
        if found is None:
            continue
        setting = re.compile(re.escape(found[1]) + r"thd\.[^.]+" + re.escape(found[2]) + "$")
        if any(setting.match(n) for n in values):
            return (": THD does not reach its mark within the levels solved at that setting "
                    "(the page says whether the limit lies below the softest level solved or "
                    "above the loudest)")
    return ""


def _nearest(values: Mapping[str, Computed], name: str, scope: str | None) -> str:
    prefixes = tuple(f"{p}." for p in (scope, KIT) if p)
    short = {}  # a spelling -> the name to offer for it
    for full, computed in values.items():
        for spelled in filter(None, (full, computed.spelling)):
            short.setdefault(spelled, full)
            for prefix in prefixes:
                if spelled.startswith(prefix) and full.startswith(prefix):
                    short.setdefault(spelled.removeprefix(prefix), full.removeprefix(prefix))
    close = difflib.get_close_matches(name.strip().lower(), list(short), n=1, cutoff=0.6)
    return f" (did you mean '{short[close[0]]}'?)" if close else ""
