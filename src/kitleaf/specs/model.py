"""The computed specs of a kit: frozen records that pages, claims and JSON all read.

Values are SI floats (dB for gains); a :class:`Range` carries the nominal value and the 5th and
95th percentiles over the part-tolerance samples. Field names are stable: docs/specs-json.md
maps each one to its JSON key.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import TYPE_CHECKING

if TYPE_CHECKING:  # loading.py solves circuits, which in turn build these records
    from kitleaf.specs.loading import Comparison

# The tolerance run behind every Range (here, not beside the solver, so that reading and
# writing specs does not import the engine)
SAMPLES = 200  # enough for stable 5th and 95th percentiles at the shown precision
SEED = 1
SOURCE_GAIN_LABEL = "gain at 1 kHz"  # the source-loading table's row for the gain


@dataclass(frozen=True)
class Range:
    """A nominal value with the 5th-95th percentile spread from part tolerances (None: not run)."""

    nominal: float
    low: float | None = None
    high: float | None = None


@dataclass(frozen=True)
class Unstable:
    """A setting whose small-signal circuit has a pole in the right half plane, nominal parts
    (specs/stability.py): the circuit oscillates there (a pole pair) or runs to a rail (a
    real pole) instead of amplifying, so its gain, corners and impedances mean nothing.

    ``hz`` is the fastest-growing pole's frequency |s| / 2 pi, ``growth`` its real part (1/s:
    the growth rate of the mode), ``stage`` the stage whose nodes swing most in that mode
    ("" when no stage's do)."""

    hz: float
    growth: float
    oscillates: bool
    stage: str = ""


@dataclass(frozen=True)
class Scoop:
    """The deepest dip of a tone stage's response, 10 Hz to 40 kHz: how far it falls below the
    lower of the highest gains on either side of it, and where."""

    depth_db: Range
    hz: Range


@dataclass(frozen=True)
class PumpRipple:
    """A charge pump's switching ripple (specs/pump_ripple.py): peak-to-peak volts on the rail
    it makes, at ``hz``, and the RMS volts of it at the kit's output, knobs at half way; and
    the loudest at the output over the knob and switch settings (nominal parts), where."""

    pump: str  # the chip's designator
    rail: str  # the rail's node: v2 (doubled) or vee (negative)
    hz: float
    volts_pp: Range
    output: Range
    loudest_at: tuple[tuple[str, float | str], ...]  # () with the knobs at half way
    loudest: float


@dataclass(frozen=True)
class KnobPoint:
    """The gain at 1 kHz with the kit's knobs at given positions (0..1 of rotation) or its
    switches at given positions (by name), and the impedances there (None where not
    measured: the knob ends, the power section)."""

    positions: tuple[tuple[str, float | str], ...]
    gain_db: Range
    input_impedance: Range | None = None
    output_impedance: Range | None = None
    scoop: Scoop | None = None  # nominal parts; for passive tone controls only
    hum: Range | None = None  # RMS volts at the kit output from the adapter's ripple
    unstable: Unstable | None = None  # the figures above mean nothing at this setting


@dataclass(frozen=True)
class Supply:
    """A supply the voltage table is read at: "adapter" at 9.0 V, "fresh battery" at 9.6 V."""

    name: str
    volts: float


@dataclass(frozen=True)
class Voltage:
    """A test point's DC voltage to ground, as a builder measures it.

    ``volts`` is the reading at the kit's rated supply (the first of ``KitSpecs.supplies``);
    ``readings`` has one Range per supply, in the same order.
    """

    label: str
    node: str
    device: str
    pin: str
    volts: Range
    readings: tuple[Range, ...] = ()


@dataclass(frozen=True)
class Curve:
    """Gain in dB over ``KitSpecs.freqs`` with one knob or switch at one position (a
    fraction of rotation, or a switch position's name), the others at their nominal
    settings; ``knob`` is empty for the single curve of a stage no control acts on."""

    knob: str
    position: float | str | None
    gain_db: tuple[float, ...]
    at_rest: bool = False  # the position the control rests at (a knob's half way)
    unstable: Unstable | None = None  # the curve is no response at this setting


@dataclass(frozen=True)
class Trim:
    """A trimmer's set-up: the test point (its label, its number in its stage's voltage table)
    the builder watches, the voltage to turn it to, and the position (0..1 of its travel,
    clockwise) that reaches it, nominal and over the tolerance builds (each build needs its
    own); ``out_of_reach`` is the share of builds whose trimmer cannot get there."""

    designator: str
    stage_id: str
    stage_title: str
    label: str
    number: int
    volts: float
    position: Range
    out_of_reach: float = 0.0


@dataclass(frozen=True)
class Headroom:
    """Peak output swing before a device leaves its linear region, and what limits it."""

    volts: Range
    limit: str


@dataclass(frozen=True)
class DrivePoint:
    """The output at one pickup peak level: THD (a fraction, never capped), the output's
    peak (volts, the larger side) and harmonics 1..5 (volts peak)."""

    level: float
    thd: float
    peak: float
    harmonics: tuple[float, ...]
    # the output over one period from the sine's zero crossing going up (not in the JSON)
    wave: tuple[float, ...] = field(default=(), repr=False)


@dataclass(frozen=True)
class DriveBand:
    """The spread of the large-signal figures over part-tolerance samples at one knob
    setting: 5th and 95th percentiles of THD and of the output's peak at each sweep level,
    over the ``samples`` builds whose periodic solve settled (specs/drive_band.py)."""

    samples: int
    thd_low: tuple[float, ...]
    thd_high: tuple[float, ...]
    peak_low: tuple[float, ...]
    peak_high: tuple[float, ...]


@dataclass(frozen=True)
class DriveSetting:
    """Large-signal figures at one knob setting (``positions`` empty: every knob at half).

    ``clean_limit`` and ``driven_limit`` are the pickup peak levels where THD first reaches
    1 % and 10 % going up (None: not within the sweep); where THD is past the mark already
    at the lowest level solved, that level is ``clean_below`` or ``driven_below`` instead
    (the limit lies below it); ``thd`` and ``peak`` follow
    ``Drive.levels``; ``swing_up`` and ``swing_down`` are (volts, the part that sets them)
    above and below the output's mean at the top level, None while the output is still
    clean there. ``error`` says why the figures were not computed (then all are empty)."""

    positions: tuple[tuple[str, float], ...]
    clean_limit: float | None = None
    driven_limit: float | None = None
    points: tuple[DrivePoint, ...] = ()
    thd: tuple[float, ...] = ()
    peak: tuple[float, ...] = ()
    swing_up: tuple[float, str] | None = None
    swing_down: tuple[float, str] | None = None
    error: str = ""
    clean_below: float | None = None
    driven_below: float | None = None
    band: DriveBand | None = None  # the tolerance spread (None: not computed)


@dataclass(frozen=True)
class Drive:
    """A stage's (or the kit's) output under a 1 kHz sine from the pickup, per knob setting."""

    levels: tuple[float, ...]
    settings: tuple[DriveSetting, ...]
    freq: float = 1000.0
    # (op-amp, knob setting) pairs whose output reaches its swing limit at 1 V pickup peak
    rails: tuple[tuple[str, tuple[tuple[str, float], ...]], ...] = ()
    @property
    def base(self) -> DriveSetting:
        return self.settings[0]

    @property
    def band(self) -> DriveBand | None:
        """The tolerance spread with the knobs at half way (None: not computed)."""
        return self.base.band


@dataclass(frozen=True)
class ToneDrives:
    """The large-signal figures at a test tone a claim sets (specs/claim_tone.py): the
    kit's, and each signal stage's by its id; nominal parts, no tolerance band."""

    freq: float
    kit: Drive
    stages: tuple[tuple[str, Drive], ...]


@dataclass(frozen=True)
class StageSpecs:
    """What one stage does, measured in the chain it sits in (loaded by the stage after it)."""

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
    curves: tuple[Curve, ...] = ()
    extra: tuple[tuple[str, float], ...] = ()
    band_gain_db: Range | None = None
    headroom: Headroom | None = None
    # 5th and 95th percentile gain (dB) over ``KitSpecs.freqs``, knobs at half way.
    band_low: tuple[float, ...] = ()
    band_high: tuple[float, ...] = ()
    # The stage alone (low-Z source, 1 MΩ load) against in its place: see specs/loading.py.
    loading: Comparison | None = None
    drive: Drive | None = None
    # The deepest dip, knobs at half way, for a passive tone control (None: not one, or its
    # response does not dip by MIN_SCOOP_DB); each knob step's is on its knob_sweep point.
    scoop: Scoop | None = None
    hum: Range | None = None  # the kit's alone (KitSpecs.hum); a stage has none
    # The stage clips by design: its gain figures hold for small signals only.
    clips: bool = False
    # Its −3 dB corners describe it (not for a tone stack or blend: StageKind.passband).
    passband: bool = True
    # The kit is unstable with the knobs at half way: every small-signal figure means nothing.
    unstable: Unstable | None = None


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
    curves: tuple[Curve, ...] = ()
    notes: tuple[str, ...] = field(default=())
    # The kit from its input jack against from the source's own voltage: specs/loading.py.
    source_loading: Comparison | None = None
    band_gain_db: Range | None = None
    headroom: Headroom | None = None
    band_low: tuple[float, ...] = ()
    band_high: tuple[float, ...] = ()
    supplies: tuple[Supply, ...] = ()
    knobs: tuple[tuple[str, str], ...] = ()  # (knob name, pot designator), as the kit block says
    # (switch name, designator, position names, the one it rests at), as the kit block says
    switches: tuple[tuple[str, str, tuple[str, ...], str], ...] = ()
    clips: bool = False  # a stage clips by design: the gain figures hold for small signals
    samples: int = 0
    seed: int = 0
    drive: Drive | None = None
    # The large-signal figures at each test tone the claims set, for those claims alone.
    claim_tones: tuple[ToneDrives, ...] = ()
    # The gain (nominal parts) with the knobs together at the ends of their travel:
    # specs/knob_ends.py says which combinations.
    knob_ends: tuple[KnobPoint, ...] = ()
    # Each trimmer's set-up instruction, in the guide's order (specs/trim.py).
    trims: tuple[Trim, ...] = ()
    # The adapter's ripple as the kit block states it (volts peak to peak, hertz), and the
    # RMS volts of it at the output, knobs at half way (per knob position: knob_sweep).
    ripple: tuple[float, float] | None = None
    hum: Range | None = None
    pump_ripples: tuple[PumpRipple, ...] = ()  # each charge pump's own switching ripple
    # Unstable with the knobs at half way (each other setting's is on its knob_sweep point).
    unstable: Unstable | None = None
    # A passive tone control in the chain shapes the whole response: no flat band, so the
    # kit's corners mark only where a hump falls off and its mid scoop says what it does.
    scoop: Scoop | None = None
    passband: bool = True

    def stage(self, stage_id: str) -> StageSpecs:
        return next(s for s in self.stages if s.id == stage_id)

    @property
    def source_gain_db(self) -> Range | None:
        """Gain at 1 kHz from the source's own voltage (nominal parts), as the page's
        source-loading table has it; None for a low-impedance source (no such table)."""
        if self.source_loading is None:
            return None
        gain = next((r.second for r in self.source_loading.rows
                     if r.label == SOURCE_GAIN_LABEL), None)
        return None if gain is None else Range(gain)
