"""How a computed figure is shown on a page or in a terminal: the display formatters, by name.

Specs hold SI floats and ranges; this module alone turns them into words. The Jinja
environment registers :data:`FORMATTERS` as its filters, and the commands call the same
functions, so a figure reads the same on the page and on the command line.
"""

from __future__ import annotations

import math
from collections.abc import Callable

from kitleaf.values import format_db, format_value

DASH = "–"  # where there is no figure
# Resistor power ratings as the trade writes them (common practice, no source).
_WATT_FRACTIONS = {0.125: "1/8 W", 0.25: "1/4 W", 0.5: "1/2 W"}


def si(value: float | None, quantity: str, digits: int = 3) -> str:
    """One value in its SI unit, to ``digits`` significant figures: "4.7 kΩ"."""
    return DASH if value is None else format_value(value, quantity, digits)


def figure(value: float | None, quantity: str) -> str:
    """One plain value in its unit ("db" for decibels, "meter" as a meter shows volts)."""
    return DASH if value is None else _one(value, quantity)


def _one(value: float, quantity: str) -> str:
    if quantity == "voltage" and 0.0 < abs(value) < SMALLEST_VOLTAGE:
        return BELOW_VOLTAGE
    if quantity == "db":
        return format_db(value)
    if quantity == "thd":
        return thd_text(value)
    if quantity == "meter":
        return meter_volts(value)
    return format_value(value, quantity)


# Below a picovolt a figure is the solver's rounding, not a signal (a 10 kΩ resistor's own
# noise over the audio band is about 2 µV; Johnson-Nyquist, from memory): shown as a bound.
SMALLEST_VOLTAGE = 1e-12
BELOW_VOLTAGE = "under 1 pV"


def meter_volts(volts: float) -> str:
    """A DC voltage as a multimeter on its 20 V range shows it: "6.87 V", "0.00 V".

    A builder compares the table with the meter's display, so the voltage table keeps one unit
    and two decimals instead of switching to mV or µV (common practice, no source).
    """
    text = f"{volts:.2f}"
    return f"{'0.00' if text == '-0.00' else text} V"


def range_text(value, quantity: str) -> str:
    """A spec as the trade writes it, with its tolerance spread: "25.8 dB (24.9–26.6)"."""
    if value is None:
        return DASH
    if quantity == "current" and _below_meter(value):
        return NO_CURRENT
    nominal = _one(value.nominal, quantity)
    if value.low is None or value.high is None:
        return nominal
    low, high = _one(value.low, quantity), _one(value.high, quantity)
    if BELOW_VOLTAGE in (nominal, low, high):
        return _bounded(nominal, high)
    if low == high == nominal:  # no spread at this precision
        return nominal
    unit = nominal.partition(" ")[2]
    if low.endswith(" " + unit) and high.endswith(" " + unit):
        low, high = low.partition(" ")[0], high.partition(" ")[0]
    # A dash between negative numbers reads as a minus sign: "-9.1 to -6.9".
    joiner = " to " if high.startswith("-") or low.startswith("-") else "–"
    return f"{nominal} ({low}{joiner}{high})"


def _bounded(nominal: str, high: str) -> str:
    """A range reaching under the smallest shown voltage: the nominal and how high it goes."""
    return nominal if high == nominal else f"{nominal} (up to {high})"


# A current below what a multimeter's lowest range resolves (about 0.1 µA; common practice,
# no source) is the solver's rounding, not a draw: a stage that draws nothing says so.
SMALLEST_CURRENT = 1e-9
NO_CURRENT = "none (under 1 nA)"


def _below_meter(value) -> bool:
    ends = [x for x in (value.nominal, value.low, value.high) if x is not None]
    return all(abs(x) < SMALLEST_CURRENT for x in ends)


def instability_words(unstable) -> str:
    """What an unstable setting does (a specs ``Unstable``): "the circuit oscillates near
    1.08 kHz (a pole pair in the right half plane)"."""
    hz = format_value(unstable.hz, "frequency")
    if unstable.oscillates:
        return f"the circuit oscillates near {hz} (a pole pair in the right half plane)"
    return f"the circuit runs to a rail (a growing real pole at {hz})"


def unstable_text(unstable) -> str:
    """What stands in place of a small-signal figure at an unstable setting."""
    return f"not meaningful: {instability_words(unstable)}"


def small_signal_text(value, quantity: str, unstable=None) -> str:
    """:func:`range_text`, or :func:`unstable_text` where the setting is unstable."""
    return unstable_text(unstable) if unstable is not None else range_text(value, quantity)


def setting_rows(specs, field: str, quantity: str, switches) -> list[tuple[bool, str, str]]:
    """A figure of a specs table (``field`` of a kit's or stage's specs) at rest and per knob
    or switch setting, as rows (a sub-row?, the words after the label or the setting, the
    text): the settings that show another text than at rest, then one row for all the others;
    one row when every setting shows the same text, none without the figure."""
    rest = getattr(specs, field)
    if rest is None:
        return []
    text = _row_text(rest, quantity, specs.unstable)
    rows = [(True, settings(p.positions), _row_text(getattr(p, field), quantity, p.unstable))
            for p in specs.knob_sweep if getattr(p, field) is not None]
    return _folded(text, text, rows, switches)


def scoop_rows(specs, switches) -> list[tuple[bool, str, str]]:
    """The mid scoop's rows, as :func:`setting_rows` gives a figure's: at rest with its
    spread, then the settings (nominal parts) whose scoop reads otherwise than at rest."""
    rest = specs.scoop
    rows = [(True, settings(p.positions), _scoop_text(p.scoop, p.unstable, spread=False))
            for p in specs.knob_sweep]
    return _folded(_scoop_text(rest, specs.unstable, spread=True),
                   _scoop_text(rest, specs.unstable, spread=False), rows, switches)


def _scoop_text(scoop, unstable, spread: bool) -> str:
    if unstable is not None:
        return unstable_text(unstable)
    if scoop is None:
        return "none"
    depth, hz = scoop.depth_db, scoop.hz
    if not spread:  # a setting's scoop is nominal only: compare like with like
        depth, hz = type(depth)(depth.nominal), type(hz)(hz.nominal)
    return f"{range_text(depth, 'db')} deep at {range_text(hz, 'frequency')}"


def _folded(text: str, nominal: str, rows: list, switches) -> list[tuple[bool, str, str]]:
    """Rows at rest (``text``) and per setting, the settings that read ``nominal`` (the rest's
    text as a setting's row would read it) folded into one row."""
    if all(shown == nominal for _, _, shown in rows):
        return [(False, "at every knob position" if rows else "", text)]
    moved = [row for row in rows if row[2] != nominal]
    alike = [(True, ALIKE_SETTINGS, ALIKE_TEXT)] if len(moved) < len(rows) else []
    return [(False, at_rest(switches), text), *moved, *alike]


def _row_text(value, quantity: str, unstable) -> str:
    """A table row's figure; ``quantity`` "hum" is RMS volts with its dBV."""
    if quantity == "hum" and unstable is None:
        return hum_text(value)
    return small_signal_text(value, quantity, unstable)


# The row that stands for every setting showing the same text as at rest.
ALIKE_SETTINGS, ALIKE_TEXT = "every other setting", "unchanged"


def dbv(volts: float) -> float:
    """RMS volts in decibels relative to 1 V RMS (dBV)."""
    return 20.0 * math.log10(volts) if volts > 0 else -math.inf


def hum_text(value) -> str:
    """Hum at the output as RMS volts with its spread, and the nominal in dBV:
    "120 µV (98–145) RMS, -78.4 dBV"."""
    if value is None:
        return DASH
    level = dbv(value.nominal)
    shown = f"{level:.1f}" if abs(value.nominal) >= SMALLEST_VOLTAGE else "below -240"
    return f"{range_text(value, 'voltage')} RMS, {shown} dBV"


def power_text(watts: float) -> str:
    """A power rating as the trade writes it: "1/4 W", "1 W", "200 mW"."""
    return _WATT_FRACTIONS.get(watts) or format_value(watts, "power")


def thd_text(fraction: float) -> str:
    """Distortion as a percentage to three figures: "0.42 %", "38.1 %", "112 %"."""
    return f"{fraction * 100:.3g} %"


def level_text(level: float | None, levels: tuple[float, ...],
               below: float | None = None) -> str:
    """A drive level found on a sweep of ``levels``: "140 mV", or past either end of the
    levels solved: above the sweep's top, or ``below`` the lowest level solved below it."""
    if below is not None:
        return f"below {format_value(below, 'voltage')}"
    if level is None:
        return f"above {format_value(levels[-1], 'voltage')}"
    return format_value(level, "voltage")


def percent(fraction: float) -> str:
    """A knob position as a share of its rotation: "25 %"."""
    return f"{round(fraction * 100):d} %"


def setting(name: str, position: float | str) -> str:
    """A knob's or a switch's setting in words: "Level at 50 %", "Clip set to LEDs"."""
    if isinstance(position, str):
        return f"{name} set to {position}"
    return f"{name} at {percent(position)}"


def settings(positions) -> str:
    """Several settings, as a table row names them: "Level at 50 %, Clip set to LEDs"."""
    return ", ".join(setting(name, position) for name, position in positions)


def at_rest(switches) -> str:
    """Where the controls stay while another is swept (``KitSpecs.switches``): "knobs at
    half way" and each switch at the position it rests at."""
    return ", ".join(["knobs at half way"] + [setting(name, rest)
                                              for name, _, _, rest in switches])


def trim_instruction(trim) -> str:
    """The bench step that sets a trimmer (a specs ``Trim``): "Turn TR1 until Q1 drain
    (point 2 of Boost) reads 4.50 V."."""
    return (f"Turn {trim.designator} until {trim.label} (point {trim.number} of "
            f"{trim.stage_title}) reads {meter_volts(trim.volts)}.")


def trim_travel(trim) -> str:
    """Where the trimmer ends up, nominal and over the tolerance builds, in words."""
    p = trim.position
    words = f"With nominal parts it sits at {percent(p.nominal)} of its travel clockwise"
    if p.low is not None and p.high is not None:
        low, high = percent(p.low).removesuffix(" %"), percent(p.high)
        words += f"; builds within part tolerances need {low}–{high}"
    if trim.out_of_reach > 0.0:
        words += (f"; in {max(1, round(trim.out_of_reach * 100))} % of builds it runs out of "
                  "travel before getting there")
    return words + "."


# Every number a page shows goes through one of these (the templates' filters, by name).
FORMATTERS: dict[str, Callable[..., str]] = {
    "si": si,
    "range_text": range_text,
    "small_signal_text": small_signal_text,
    "setting_rows": setting_rows,
    "scoop_rows": scoop_rows,
    "unstable_text": unstable_text,
    "percent": percent,
    "figure": figure,
    "thd_text": thd_text,
    "level_text": level_text,
    "hum_text": hum_text,
    "settings": settings,
    "trim_instruction": trim_instruction,
    "at_rest": at_rest,
    "trim_travel": trim_travel,
}
