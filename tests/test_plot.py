"""Response plots: their data against the specs and ngspice, their SVG by structure and bytes."""

from __future__ import annotations

import os
import shutil
import subprocess
import tempfile
from pathlib import Path

import numpy as np
import pytest

from kitleaf.circuit.chain import INPUT, OUTPUT
from kitleaf.engine.spice_export import to_spice
from kitleaf.render.plot import render_response_svg
from kitleaf.specs.plots import kit_plot, stage_plot
from kitleaf.specs.solve import nominal_positions
from specs_kits import solved


def test_same_plot_same_bytes():
    _, _, specs = solved("heron-opamp-boost")
    assert render_response_svg(kit_plot(specs)) == render_response_svg(kit_plot(specs))


def test_one_panel_per_knob_and_one_curve_per_position():
    _, _, specs = solved("heron-opamp-boost")
    plot = kit_plot(specs)
    assert [len(p.curves) for p in plot.panels] == [5, 5]
    assert [c.label for c in plot.panels[0].curves] == [
        "Gain 0 %", "Gain 25 %", "Gain 50 %", "Gain 75 %", "Gain 100 %"]
    assert plot.panels[1].title == "Level knob turned, Gain at 50 %"


def test_svg_shows_labels_corners_and_band():
    _, _, specs = solved("brookside-boost")
    svg = render_response_svg(kit_plot(specs))
    for text in ("Level 0 %", "Level 100 %", "1 kHz", "10 kHz", "Gain (dB)",
                 "part tolerances (5–95 %)", "35.1 Hz"):
        assert text in svg, text
    assert "Date" not in svg


def test_plot_data_is_the_stage_response():
    _, kit, specs = solved("millrace-jfet-boost")
    plot = stage_plot(specs, "boost")
    middle = plot.panels[0].curves[2]
    assert middle.gain_db == specs.stage("boost").curves[2].gain_db
    band = plot.panels[0]
    assert all(lo <= hi for lo, hi in zip(band.band_low, band.band_high, strict=True))


def ngspice_gain_db(circuit, node_in: str, node_out: str) -> np.ndarray:
    """Gain in dB from ``node_in`` to ``node_out`` by ngspice's AC analysis, (freq, dB) rows."""
    net = to_spice(circuit)
    with tempfile.TemporaryDirectory() as tmp:
        out = Path(tmp) / "gain.txt"
        deck = net.text + (f".control\nac dec 40 10 40k\n"
                           f"let g = db(v({net.node(node_out)})/v({net.node(node_in)}))\n"
                           f"wrdata {out} g\n.endc\n.end\n")
        (Path(tmp) / "kit.cir").write_text(deck)
        subprocess.run(["ngspice", "-b", str(Path(tmp) / "kit.cir")], capture_output=True,
                       timeout=60, check=False)
        return np.loadtxt(out)


@pytest.mark.slow
@pytest.mark.parametrize("name", ["brookside-boost", "millrace-jfet-boost"])
def test_kit_curve_against_ngspice(name):
    if shutil.which("ngspice") is None:
        if os.environ.get("CI"):
            pytest.fail("ngspice is required in CI for the reference check")
        pytest.skip("ngspice is not installed (Debian package ngspice)")
    _, kit, specs = solved(name)
    plot = kit_plot(specs)
    middle = next(c for c in plot.panels[0].curves if c.label.endswith(" 50 %"))
    reference = ngspice_gain_db(kit.netlist(nominal_positions(kit)), INPUT, OUTPUT)
    ours = np.interp(np.log(reference[:, 0]), np.log(plot.freqs), middle.gain_db)
    # Debian's ngspice as the oracle: same netlist, its own AC analysis
    assert np.max(np.abs(ours - reference[:, 1])) < 0.02
