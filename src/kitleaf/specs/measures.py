"""The measurements a spec table shows, each a function of a solved view, per sample.

Each factory returns ``measure(view) -> array (samples,)``, so one definition gives both the
nominal value and its tolerance spread (see :meth:`KitState.range`).
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np

from kitleaf.circuit.chain import input_meter
from kitleaf.specs.headroom import Margin, headroom
from kitleaf.specs.response import REFERENCE_HZ, band_peak, deepest_dip, to_db
from kitleaf.specs.solve import View

Measure = Callable[[View], np.ndarray]
LOAD = "RLOAD"  # the chain's load resistor on the kit output
SUPPLY = "VSUPPLY"  # the supply: the battery or adapter


def gain_db(node_in: str, node_out: str) -> Measure:
    """Gain at 1 kHz from ``node_in`` to ``node_out``."""
    return lambda v: to_db(v.at_ref(node_out) / v.at_ref(node_in))


def band_gain_db(node_in: str, node_out: str) -> Measure:
    """The highest gain anywhere from 10 Hz to 40 kHz."""
    return lambda v: band_peak(v.sweep.ratio(node_in, node_out))[0]


def corner(node_in: str, node_out: str, side: int) -> Measure:
    """The low (side 0) or high (side 1) -3 dB corner, relative to the band gain."""
    return lambda v: v.sweep.corners(node_in, node_out)[side]


def scoop(node_in: str, node_out: str, side: int) -> Measure:
    """The deepest dip of the response over the plotted band: its depth in dB (side 0) or its
    frequency (side 1)."""
    def measure(v: View) -> np.ndarray:
        return v.once(("scoop", node_in, node_out),
                      lambda: deepest_dip(v.sweep.ratio(node_in, node_out)))[side]
    return measure


def input_impedance(stage_id: str, node_in: str) -> Measure:
    """|V(in)| over the current into the stage's input meter, at 1 kHz."""
    def measure(v: View) -> np.ndarray:
        current = v.ref[:, v.batch.system.layout.branch(input_meter(stage_id))]
        return np.abs(v.at_ref(node_in) / current)
    return measure


def output_impedance(node_out: str, next_meter: str | None, load_ohms: float | None) -> Measure:
    """Thevenin impedance of a stage's output at 1 kHz, the following load taken away.

    Between stages, the next stage's input meter (a 0 V source, the only way in) is opened
    and 1 A injected at the output node: exact for the linearised circuit. At the kit output,
    the load resistor's conductance is subtracted from the driving-point admittance: exact too.
    """
    freqs = np.array([REFERENCE_HZ])

    def measure(v: View) -> np.ndarray:
        z = v.batch.impedance(node_out, freqs, opened=next_meter)[:, 0]
        if load_ohms is not None:
            z = 1.0 / (1.0 / z - 1.0 / load_ohms)
        return np.abs(z)
    return measure


def supply_current(branch: str | None, minus: tuple[str, ...] = ()) -> Measure:
    """DC current drawn through ``branch`` (None: the whole kit), less other meters' currents."""
    def measure(v: View) -> np.ndarray:
        b = v.batch
        total = -b.current("VSUPPLY") if branch is None else b.current(branch)
        return total - sum((b.current(m) for m in minus), np.zeros(b.size))
    return measure


def hum(node: str, volts_pp: float, hz: float) -> Measure:
    """RMS volts at ``node`` from the supply's ripple, taken as a sine of ``volts_pp`` peak to
    peak at ``hz`` (its fundamental: an adapter's ripple is rather a sawtooth, whose
    fundamental is smaller than the sine's, so this errs on the side of more hum)."""
    freqs = np.array([hz])

    def measure(v: View) -> np.ndarray:
        x = v.once(("hum", hz), lambda: v.batch.solve(freqs, v.batch.excitation(SUPPLY))[:, 0])
        row = v.batch.row(node)
        per_volt = np.zeros(v.batch.size) if row is None else np.abs(x[:, row])
        return per_volt * volts_pp / (2.0 * np.sqrt(2.0))
    return measure


def node_voltage(node: str) -> Measure:
    return lambda v: v.batch.voltage(node)


def swing(find: Callable[[View], list[Margin]], node: str) -> Measure:
    """Peak volts at ``node`` before the first device leaves its linear region."""
    def measure(v: View) -> np.ndarray:
        found = v.once(("headroom", node), lambda: headroom(find(v), v.ref, v.batch, node))
        return np.full(v.batch.size, np.nan) if found is None else found[0]
    return measure


def swing_limit(find: Callable[[View], list[Margin]], node: str, v: View) -> str:
    """What limits the nominal headroom at ``node``."""
    found = v.once(("headroom", node), lambda: headroom(find(v), v.ref, v.batch, node))
    return "" if found is None else found[1][0]

