"""Large-signal waveforms against Debian's ngspice: eight circuits driven into clipping.

Both sides solve the same exported netlist: the engine by its periodic steady state, ngspice
by a plain transient over enough milliseconds to settle (fine step, tightened step control),
then the same FFT over the last whole period. Tolerances: output peak within 2 %, THD
within 5 % relative where it is at least 0.1 %, each harmonic (2nd to 5th) down to -60 dBc
within 1 dB.
"""

import numpy as np
import pytest

from kitleaf.engine import solve_batch
from kitleaf.engine.periodic import periodic_steady_state

from .large_signal_circuits import CIRCUITS, SETTLE_S
from .ngspice_run import require_ngspice
from .ngspice_tran import settled_figures

FREQ = 1000.0


@pytest.mark.slow
@pytest.mark.parametrize("name", sorted(CIRCUITS))
def test_clipping_waveform_matches_ngspice(name):
    require_ngspice()
    build, levels = CIRCUITS[name]
    circuit = build()
    ours = periodic_steady_state([solve_batch(circuit)], "VIN", levels, FREQ, nodes=["out"])
    assert ours.converged.all(), ours.reasons
    mine = ours.distortion("out")
    for i, level in enumerate(levels):
        theirs = settled_figures(circuit, "VIN", level, FREQ, "out", SETTLE_S)
        peak, ref_peak = mine.peak[0, i, 0], float(theirs.peak)
        assert peak == pytest.approx(ref_peak, rel=0.02), (level, "peak")
        thd, ref_thd = mine.thd[0, i, 0], float(theirs.thd)
        if ref_thd >= 1e-3:
            assert thd == pytest.approx(ref_thd, rel=0.05), (level, "THD")
        ref_dbc, dbc = theirs.dbc(), mine.dbc()[0, i, 0]
        shown = ref_dbc[1:] >= -60.0
        assert np.all(np.abs(dbc[1:][shown] - ref_dbc[1:][shown]) <= 1.0), (level, dbc, ref_dbc)
