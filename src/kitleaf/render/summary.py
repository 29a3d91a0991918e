"""Headline numbers: the few specs a kit's card and the overview drawing show."""

from __future__ import annotations

from kitleaf.display import small_signal_text
from kitleaf.specs.model import KitSpecs, StageSpecs
from kitleaf.values import format_db, format_value


def headline(specs: KitSpecs) -> tuple[tuple[str, str], ...]:
    """Name-value pairs for the index card."""
    # a kit that clips by design reaches its gain only for the smallest signals
    words = "Small-signal gain" if specs.clips else "Gain"
    rows = [(f"{words} at 1 kHz", small_signal_text(specs.gain_db, "db", specs.unstable))]
    # each knob alone at every step, and the knobs together at the ends of their travel; an
    # unstable setting's gain means nothing
    gains = [p.gain_db.nominal for p in specs.knob_sweep + specs.knob_ends
             if p.unstable is None]
    if gains:
        rows[0] = (f"{words} range", f"{format_db(min(gains))} to {format_db(max(gains))}")
    rows.append(("Input impedance", format_value(specs.input_impedance.nominal, "resistance")))
    rows.append(("Current draw", format_value(specs.supply_current.nominal, "current")))
    return tuple(rows)


def stage_headline(stage: StageSpecs) -> str:
    """One short line for a stage's block in the overview drawing."""
    if not stage.signal:
        current = stage.supply_current
        return f"draws {format_value(current.nominal, 'current')}" if current else ""
    parts = []
    if stage.gain_db is not None:
        parts.append(format_db(stage.gain_db.nominal))
    if stage.input_impedance is not None:
        parts.append(f"Zin {format_value(stage.input_impedance.nominal, 'resistance')}")
    return ", ".join(parts)
