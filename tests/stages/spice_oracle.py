"""A stage kind's published figures against Debian's ngspice on the same exported kit, and its
clipping under a loud sine against ngspice's transient.

The specs (test-point voltages, gain and impedances at 1 kHz at every step of each knob,
corners) are compared with ngspice's operating point and AC analysis of the kit's netlist at
the same knob positions. Tolerances are the engine's contract (tests/engine/
test_ngspice_oracle.py): DC within 1 % or 5 mV, gain within 0.1 dB, impedances and corners
within 2 %.
"""

from __future__ import annotations

import re
import tempfile
from pathlib import Path

import numpy as np
import pytest
from tests.engine.large_signal_circuits import SETTLE_S
from tests.engine.ngspice_run import (
    ac_sweep,
    half_power_corners,
    operating_point,
    require_ngspice,
    run,
)
from tests.engine.ngspice_tran import settled_figures

from kitleaf.circuit.chain import GROUND, OUTPUT, SOURCE, KitCircuit, input_meter
from kitleaf.engine import solve_batch
from kitleaf.engine.periodic import periodic_steady_state
from kitleaf.engine.spice_export import to_spice
from kitleaf.specs.measures import SUPPLY as SUPPLY_SOURCE
from kitleaf.specs.model import KitSpecs, KnobPoint, StageSpecs
from kitleaf.specs.solve import nominal_positions

REF_HZ = 1000.0
LOAD = "RLOAD"


def check_stage(kit: KitCircuit, specs: KitSpecs, stage_id: str) -> None:
    """Every figure of the last signal stage ``stage_id`` against ngspice."""
    require_ngspice()
    assert kit.signal_stages[-1].id == stage_id  # its output impedance is taken at the jack
    stage = next(s for s in specs.stages if s.id == stage_id)
    check_voltages(kit, stage)
    check_knob_points(kit, stage)
    check_corners(kit, stage)


def check_voltages(kit: KitCircuit, stage: StageSpecs) -> None:
    theirs = operating_point(kit.netlist(nominal_positions(kit)))
    for v in stage.voltages:
        # ngspice oracle: within 1 % or 5 mV
        ref = 0.0 if v.node == GROUND else theirs[v.node]  # ngspice prints no ground node
        assert v.volts.nominal == pytest.approx(ref, rel=0.01, abs=5e-3), v.label


def check_knob_points(kit: KitCircuit, stage: StageSpecs) -> None:
    """Gain, input and output impedance at every knob step and switch position (or once,
    with neither)."""
    points = stage.knob_sweep or (None,)
    for point in points:
        positions = point_positions(kit, point)
        gain_db, z_in, z_out = one_khz(kit, stage.id, positions)
        figures = point or stage
        # ngspice oracle: gain within 0.1 dB, impedances within 2 %
        assert figures.gain_db.nominal == pytest.approx(gain_db, abs=0.1), positions
        assert figures.input_impedance.nominal == pytest.approx(z_in, rel=0.02), positions
        assert figures.output_impedance.nominal == pytest.approx(z_out, rel=0.02), positions


def point_positions(kit: KitCircuit, point: KnobPoint | None) -> dict[str, float]:
    """Every knob and switch of ``kit`` at ``point``'s setting (None: where they rest)."""
    # each control's setting as a point names it (a knob's rotation, a switch's position name)
    settings = {c.name: (c.designator, {shown: value for value, shown in c.steps})
                for c in kit.controls}
    positions = nominal_positions(kit)
    for name, shown in point.positions if point is not None else ():
        positions[settings[name][0]] = settings[name][1][shown]
    return positions


# The adapter of the hum checks (a kit block line), an invented figure.
RIPPLE = "adapter-ripple: 100 mV at 120 Hz"


def check_hum(kit: KitCircuit, specs: KitSpecs) -> None:
    """The hum at the output with the controls where they rest and at every knob step and
    switch position: ngspice's response at the ripple's frequency from the supply alone,
    times the ripple taken as a sine (RMS: peak to peak over 2 sqrt 2)."""
    require_ngspice()
    volts_pp, hz = specs.ripple
    for point in (None, *specs.knob_sweep):
        circuit = kit.netlist(point_positions(kit, point))
        alone = circuit.replaced(SOURCE, ac=0.0).replaced(SUPPLY_SOURCE, ac=1.0)
        freqs, found = ac_sweep(alone, SUPPLY_SOURCE, [OUTPUT], hz, 10 * hz, per_decade=1)
        assert freqs[0] == pytest.approx(hz)
        expected = abs(found[OUTPUT][0]) * volts_pp / (2 * np.sqrt(2))
        figure = (specs.hum if point is None else point.hum).nominal
        # ngspice oracle: within 0.1 dB, as the gain (nothing where no path carries it)
        if expected < 1e-12:
            assert figure < 1e-12, (point, figure)
        else:
            assert 20 * abs(np.log10(figure / expected)) < 0.1, (point, figure, expected)


def one_khz(kit: KitCircuit, stage_id: str, positions: dict[str, float]
            ) -> tuple[float, float, float]:
    """ngspice's stage gain (dB), input impedance and output impedance (load taken off)."""
    node_in, node_out = kit.stage_nodes(stage_id)
    circuit = kit.netlist(positions)
    net = to_spice(circuit)
    meter = net.parts[input_meter(stage_id)]
    v_in, v_out = f"v({net.node(node_in)})", f"v({net.node(node_out)})"
    gain = _print(net, [f"let g = db({v_out}/{v_in})", f"let z = mag({v_in}/i({meter}))"])
    load = circuit.element(LOAD).value
    probe = circuit.replaced(SOURCE, ac=0.0).isource("IPROBE", "0", node_out, ac=1.0)
    probe_net = to_spice(probe)
    z = _print(probe_net, [f"let z = mag(v({probe_net.node(node_out)}))"])["z"]
    return gain["g"], gain["z"], 1.0 / (1.0 / z - 1.0 / load)


def _print(net, lets: list[str]) -> dict[str, float]:
    names = [re.match(r"let (\w+)", line)[1] for line in lets]
    control = [f"ac lin 1 {REF_HZ} {REF_HZ}", *lets, *(f"print {n}" for n in names)]
    with tempfile.TemporaryDirectory() as tmp:
        out = run(net, control, Path(tmp))
    found = dict(re.findall(r"^(\w+) = (\S+)", out, flags=re.M))
    return {n: float(found[n].rstrip(",")) for n in names}


def check_corners(kit: KitCircuit, stage: StageSpecs) -> None:
    """The corners at the nominal knob positions, both measured from the band's peak."""
    node_in, node_out = kit.stage_nodes(stage.id)
    freqs, h = _sweep(kit, node_in, node_out)
    band = (freqs >= 10.0) & (freqs <= 40e3)
    peak_hz = float(freqs[band][np.argmax(np.abs(h[band]))])
    low, high = half_power_corners(freqs, h, peak_hz)
    for mine, ref in ((stage.low_corner_hz, low), (stage.high_corner_hz, high)):
        assert (mine is None) == (ref is None), (mine, ref)
        if ref is not None:
            # ngspice oracle: corners within 2 %
            assert mine.nominal == pytest.approx(ref, rel=0.02)


def _sweep(kit: KitCircuit, node_in: str, node_out: str) -> tuple[np.ndarray, np.ndarray]:
    net = to_spice(kit.netlist(nominal_positions(kit)))
    vectors = f"v({net.node(node_in)}) v({net.node(node_out)})"
    with tempfile.TemporaryDirectory() as tmp:
        run(net, ["ac dec 400 0.1 10e6", f"wrdata {tmp}/ac.dat {vectors}"], Path(tmp))
        data = np.loadtxt(f"{tmp}/ac.dat")
    v_in, v_out = data[:, 1] + 1j * data[:, 2], data[:, 4] + 1j * data[:, 5]
    return data[:, 0], v_out / v_in


def check_large_signal(kit: KitCircuit, positions: dict[str, float], node: str,
                       levels: tuple[float, ...], freq: float = 1000.0,
                       settle: float = SETTLE_S) -> None:
    """The engine's periodic steady state at ``node`` under a sine of each peak level at the
    source against ngspice's settled transient (tests/engine/test_ngspice_tran.py): peak within
    2 %, THD within 5 % where it is at least 0.1 %, each harmonic down to -60 dBc within 1 dB.
    The kit's coupling time constants must be a few milliseconds, for ngspice to settle within
    ``settle`` seconds; mind those of a clipping stage, whose feedback loop is open while it
    clips (a gain leg's capacitor then charges through the whole feedback network)."""
    require_ngspice()
    circuit = kit.netlist(positions)
    ours = periodic_steady_state([solve_batch(circuit)], SOURCE, list(levels), freq,
                                 nodes=[node])
    assert ours.converged.all(), ours.reasons
    mine = ours.distortion(node)
    for i, level in enumerate(levels):
        # 500 steps a period: the harmonics agree with 4000 steps to 0.01 dB on these kits
        theirs = settled_figures(circuit, SOURCE, level, freq, node, settle,
                                 steps_per_period=500)
        assert mine.peak[0, i, 0] == pytest.approx(float(theirs.peak), rel=0.02), level
        if theirs.thd >= 1e-3:
            assert mine.thd[0, i, 0] == pytest.approx(float(theirs.thd), rel=0.05), level
        ref_dbc, dbc = theirs.dbc(), mine.dbc()[0, i, 0]
        shown = ref_dbc[1:] >= -60.0
        assert np.all(np.abs(dbc[1:][shown] - ref_dbc[1:][shown]) <= 1.0), (level, dbc, ref_dbc)
