"""Response plots: their data against the specs and ngspice, their SVG by structure and bytes."""

from __future__ import annotations

import os
import pickle
import re
import shutil
import subprocess
import sys
import tempfile
import xml.etree.ElementTree as ET
from pathlib import Path

import numpy as np
import pytest

from kitleaf.circuit.chain import INPUT, OUTPUT
from kitleaf.engine.spice_export import to_spice
from kitleaf.render.plot import render_response_svg
from kitleaf.render.plot_specs import kit_plot, stage_plot
from kitleaf.specs.solve import nominal_positions
from specs_kits import solved


def test_same_plot_same_bytes():
    _, _, specs = solved("heron-opamp-boost")
    assert render_response_svg(kit_plot(specs)) == render_response_svg(kit_plot(specs))


def test_same_bytes_in_another_process():
    """No hash seed, id counter or clock reaches the file: a fresh interpreter, another seed."""
    _, _, specs = solved("heron-opamp-boost")
    plot = kit_plot(specs)
    code = ("import pickle, sys; from kitleaf.render.plot import render_response_svg; "
            "sys.stdout.buffer.write(render_response_svg(pickle.load(sys.stdin.buffer)).encode())")
    other = subprocess.run([sys.executable, "-c", code], input=pickle.dumps(plot),
                           capture_output=True, check=True, timeout=60,
                           env={**os.environ, "PYTHONHASHSEED": "12345"}).stdout
    assert other == render_response_svg(plot).encode()


SVG = "{http://www.w3.org/2000/svg}"


def svg_tree(plot) -> ET.Element:
    return ET.fromstring(render_response_svg(plot).encode())


def texts(root: ET.Element) -> dict[str, list[tuple[float, float]]]:
    """Each text's string and the (x, y) of its anchor on the baseline."""
    found: dict[str, list[tuple[float, float]]] = {}
    for t in root.iter(f"{SVG}text"):
        if "x" in t.attrib:
            found.setdefault(t.text, []).append((float(t.get("x")), float(t.get("y"))))
    return found


def points(d: str) -> np.ndarray:
    return np.array([[float(v) for v in xy] for xy in re.findall(r"[ML]([-\d.]+) ([-\d.]+)", d)])


def curve_paths(root: ET.Element, clip: str) -> list[ET.Element]:
    """The clipped polylines of one panel that are curves (stroked, not the filled band)."""
    return [e for e in root.iter(f"{SVG}path") if e.get("clip-path") == f"url(#{clip})"
            and "L" in e.get("d") and "fill: none" in e.get("style")]


def test_svg_is_well_formed_with_a_clipped_panel_per_knob_and_distinct_curves():
    _, _, specs = solved("heron-opamp-boost")
    plot = kit_plot(specs)
    root = svg_tree(plot)
    clips = [c.get("id") for c in root.iter(f"{SVG}clipPath")]
    assert len(clips) == len(plot.panels) == 2
    for clip, panel in zip(clips, plot.panels, strict=True):
        curves = curve_paths(root, clip)
        assert len(curves) == len(panel.curves)
        # one line style per knob position, told apart without colour (greyscale print)
        dashes = {re.sub(r"stroke: #\w+;", "", c.get("style")) for c in curves}
        assert len(dashes) == len(curves)
        bands = [e for e in root.iter(f"{SVG}path") if e.get("clip-path") == f"url(#{clip})"
                 and e.get("style") == "fill: #c9ced6"]
        assert len(bands) == 1 and bands[0].get("d").endswith("Z")
    assert root.find(f"{SVG}title").text == plot.title
    assert "Gain (dB)" not in texts(root)  # rotated: placed by its transform
    assert sum(t.text == "Gain (dB)" for t in root.iter(f"{SVG}text")) == 2
    assert len(texts(root)["Frequency"]) == 1  # under the last panel only


def test_curves_and_corner_sit_where_the_axis_labels_say():
    """Read the drawing back through its own tick labels: x from the decade labels (a log axis
    puts f at log10 f, common practice, no source), y from the dB labels."""
    _, _, specs = solved("brookside-boost")
    plot = kit_plot(specs)
    root = svg_tree(plot)
    found = texts(root)
    x10, x100 = found["10 Hz"][0][0], found["100 Hz"][0][0]
    ticks = "".join(e.get("d") for e in root.iter(f"{SVG}path") if "#000000" in e.get("style"))
    tick_y = sorted(float(y) for y in re.findall(r"M[\d.]+ ([\d.]+)h", ticks))
    tick_db = [float(t.text.replace("\u2212", "-")) for t in sorted(
        (t for t in root.iter(f"{SVG}text") if t.get("style", "").endswith("anchor: end")),
        key=lambda t: float(t.get("y")))]
    assert len(tick_y) == len(tick_db) >= 4
    slope, y0 = np.polyfit(tick_y, tick_db, 1)
    assert np.allclose(np.polyval([slope, y0], tick_y), tick_db, atol=0.01)  # evenly spaced
    panel = plot.panels[0]
    clip = next(root.iter(f"{SVG}clipPath")).get("id")
    for curve, path in zip(panel.curves, curve_paths(root, clip), strict=True):
        xy = points(path.get("d"))
        assert np.allclose(10 ** (1 + (xy[:, 0] - x10) / (x100 - x10)), plot.freqs, rtol=1e-3)
        assert np.allclose(np.polyval([slope, y0], xy[:, 1]), curve.gain_db, atol=0.01)
    hz, label = panel.corners[0]
    rule = next(e for e in root.iter(f"{SVG}path") if "#5d6d7e" in e.get("style"))
    x_rule = float(re.match(r"M([\d.]+) ", rule.get("d")).group(1))
    assert 10 ** (1 + (x_rule - x10) / (x100 - x10)) == pytest.approx(hz, rel=1e-3)
    assert found[label][0][0] > x_rule  # the corner's label beside its rule


def test_legend_and_tick_labels_keep_apart():
    _, _, specs = solved("heron-opamp-boost")
    plot = kit_plot(specs)
    found = texts(svg_tree(plot))
    shown = [found.get(c.label) or found[c.label + " (below the plot)"]
             for c in plot.panels[1].curves]
    legend = sorted(y for at in shown for _, y in at)
    assert min(np.diff(legend)) >= 7.5  # the legend's font size in points
    decades = sorted(x for label in ("10 Hz", "100 Hz", "1 kHz", "10 kHz") for x, _ in
                     found[label][:1])
    assert min(np.diff(decades)) > 40  # a label is about 30 pt wide


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
