"""A stage's published figures against Debian's ngspice: gain and impedances at every knob step,
corners with the knobs at half way. The stage sits alone in its kit, so the kit's input and
output are its own; ngspice solves the netlist the engine exports."""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest
from tests.engine.ngspice_run import ac_sweep, half_power_corners, require_ngspice

from kitleaf.circuit.chain import INPUT, OUTPUT, SOURCE, KitCircuit
from kitleaf.specs.model import StageSpecs
from kitleaf.specs.solve import KNOB_STEPS

BAND = (10.0, 40e3)  # the plotted band the band gain is the highest of
SECOND_LOAD = 10e3  # a second load on the output: two loadings give its Thevenin impedance


def at_1khz(kit: KitCircuit, positions: dict[str, float]) -> dict[str, complex]:
    """ngspice's input and output voltages and the source current at 1 kHz."""
    freqs, found = ac_sweep(kit.netlist(positions), SOURCE, [INPUT, OUTPUT], 1e3, 1e4,
                            per_decade=1)
    assert freqs[0] == pytest.approx(1e3)
    return {name: complex(values[0]) for name, values in found.items()}


def output_impedance(kit: KitCircuit, positions: dict[str, float]) -> float:
    """|Z| from the output voltages under two loads: V = Vth R / (R + Z), solved for Z (the
    Thevenin equivalent, Horowitz & Hill, The Art of Electronics 3e, 1.2.5)."""
    r1, r2 = kit.load, SECOND_LOAD
    v1 = at_1khz(kit, positions)[OUTPUT]
    v2 = at_1khz(replace(kit, load=r2), positions)[OUTPUT]
    return abs((v2 - v1) / (v1 / r1 - v2 / r2))


def check_knob_steps(kit: KitCircuit, stage: StageSpecs) -> None:
    """Gain (within 0.05 dB) and impedances (within 1 %) at every step of every knob."""
    require_ngspice()
    nominal = {k.designator: 0.5 for k in kit.knobs}
    names = {k.name: k.designator for k in kit.knobs}
    points = stage.knob_sweep or ()
    assert len(points) == len(kit.knobs) * len(KNOB_STEPS)
    for point in points:
        (name, position), = point.positions
        positions = {**nominal, names[name]: position}
        theirs = at_1khz(kit, positions)
        gain = 20 * np.log10(abs(theirs[OUTPUT] / theirs[INPUT]))
        assert point.gain_db.nominal == pytest.approx(gain, abs=0.05), point.positions
        z_in = abs(theirs[INPUT] / theirs[SOURCE])
        assert point.input_impedance.nominal == pytest.approx(z_in, rel=0.01), point.positions
        assert point.output_impedance.nominal == pytest.approx(
            output_impedance(kit, positions), rel=0.01), point.positions


def check_corners(kit: KitCircuit, stage: StageSpecs) -> None:
    """Both -3 dB corners below the band's highest gain, knobs at half way, within 1 %."""
    require_ngspice()
    nominal = {k.designator: 0.5 for k in kit.knobs}
    freqs, theirs = ac_sweep(kit.netlist(nominal), SOURCE, [INPUT, OUTPUT], 0.1, 10e6,
                             per_decade=400)
    h = theirs[OUTPUT] / theirs[INPUT]
    inside = (freqs >= BAND[0]) & (freqs <= BAND[1])
    peak_hz = freqs[inside][np.argmax(np.abs(h[inside]))]
    low, high = half_power_corners(freqs, h, float(peak_hz))
    for ours, ref in ((stage.low_corner_hz, low), (stage.high_corner_hz, high)):
        assert (ours is None) == (ref is None)
        if ref is not None:
            assert ours.nominal == pytest.approx(ref, rel=0.01)


def dip_from(freqs: np.ndarray, h: np.ndarray) -> tuple[float, float]:
    """The deepest dip on a dense sweep by brute force: for each point, the lower of the
    highest gains on either side of it, less its own gain; the largest, and where."""
    db = 20 * np.log10(np.abs(h))
    depth = [min(db[: i + 1].max(), db[i:].max()) - db[i] for i in range(db.size)]
    i = int(np.argmax(depth))
    return depth[i], float(freqs[i])


def check_scoops(kit: KitCircuit, stage: StageSpecs) -> None:
    """The mid scoop with the knobs at half way and at every knob step: depth within 0.05 dB,
    frequency within 2 % (a flat-bottomed dip puts its lowest point less exactly)."""
    require_ngspice()
    nominal = {k.designator: 0.5 for k in kit.knobs}
    names = {k.name: k.designator for k in kit.knobs}
    settings = [(nominal, stage.scoop)] + [
        ({**nominal, names[p.positions[0][0]]: p.positions[0][1]}, p.scoop)
        for p in stage.knob_sweep]
    for positions, ours in settings:
        freqs, theirs = ac_sweep(kit.netlist(positions), SOURCE, [INPUT, OUTPUT], *BAND,
                                 per_decade=400)
        depth, hz = dip_from(freqs, theirs[OUTPUT] / theirs[INPUT])
        if ours is None:
            assert depth < 1.0, positions
            continue
        assert ours.depth_db.nominal == pytest.approx(depth, abs=0.05), positions
        assert ours.hz.nominal == pytest.approx(hz, rel=0.02), positions
