"""The computed specs of a kit: frozen records that pages, claims and JSON all read."""

from __future__ import annotations

from dataclasses import dataclass, field


@dataclass(frozen=True)
class Range:
    """A nominal value with the 5th-95th percentile spread from part tolerances (None: not run)."""

    nominal: float
    low: float | None = None
    high: float | None = None


@dataclass(frozen=True)
class KnobPoint:
    """The gain at 1 kHz with the kit's knobs at given positions (0..1 of rotation)."""

    positions: tuple[tuple[str, float], ...]
    gain_db: Range


@dataclass(frozen=True)
class Voltage:
    """A test point's DC voltage to ground, as a builder measures it."""

    label: str
    node: str
    device: str
    pin: str
    volts: Range


@dataclass(frozen=True)
class StageSpecs:
    """What one stage does, measured in the chain it sits in."""

    id: str
    kind: str
    title: str
    signal: bool
    voltages: tuple[Voltage, ...]
    knob_sweep: tuple[KnobPoint, ...]
    gain_db: Range | None
    low_corner_hz: Range | None
    high_corner_hz: Range | None
    input_impedance: Range | None
    output_impedance: Range | None
    supply_current: Range | None
    # Gain in dB over KitSpecs.freqs, one curve per knob position (label, values).
    curves: tuple[tuple[str, tuple[float, ...]], ...] = ()
    extra: tuple[tuple[str, float], ...] = ()


@dataclass(frozen=True)
class KitSpecs:
    """What the whole kit does, from its input jack to its output jack."""

    title: str
    code: str
    revision: str
    supply_v: float
    stages: tuple[StageSpecs, ...]
    knob_sweep: tuple[KnobPoint, ...]
    gain_db: Range
    low_corner_hz: Range | None
    high_corner_hz: Range | None
    input_impedance: Range
    output_impedance: Range
    supply_current: Range
    freqs: tuple[float, ...] = ()
    curves: tuple[tuple[str, tuple[float, ...]], ...] = ()
    notes: tuple[str, ...] = field(default=())

    def stage(self, stage_id: str) -> StageSpecs:
        return next(s for s in self.stages if s.id == stage_id)
