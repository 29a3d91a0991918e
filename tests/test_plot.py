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
from matplotlib.font_manager import FontProperties
from matplotlib.textpath import text_to_path

from kitleaf.circuit.chain import INPUT, OUTPUT
from kitleaf.engine.spice_export import to_spice
from kitleaf.render.plot import Panel, ResponsePlot, Trace, render_response_svg
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


def svg_tree(plot, narrow: bool = False) -> ET.Element:
    return ET.fromstring(render_response_svg(plot, narrow).encode())


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


@pytest.mark.parametrize("narrow", [False, True], ids=["wide", "narrow"])
def test_curves_and_corner_sit_where_the_axis_labels_say(narrow):
    """Read the drawing back through its own tick labels: x from the decade labels (a log axis
    puts f at log10 f, common practice, no source), y from the dB labels."""
    _, _, specs = solved("brookside-boost")
    plot = kit_plot(specs)
    root = svg_tree(plot, narrow)
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


def test_a_panel_title_lists_the_other_knobs_as_a_sentence_does():
    from kitleaf.render.plot_specs import _title
    knobs = ["Drive", "Tone", "Level", "Blend"]
    assert _title("Tone", knobs) == "Tone knob turned, Drive, Level and Blend at 50 %"
    assert _title("Tone", knobs[:2]) == "Tone knob turned, Drive at 50 %"


def test_a_stage_plot_names_only_the_knobs_of_that_stage():
    _, _, specs = solved("heron-opamp-boost")
    titles = [p.title for s in specs.stages if (plot := stage_plot(specs, s.id))
              for p in plot.panels]
    assert titles and all("at 50 %" not in t for t in titles), titles


def test_a_panel_title_says_where_the_switches_rest():
    from kitleaf.render.plot_specs import _title
    rests = {"Level": 0.0, "Clip": "diodes"}
    assert _title("Level", ["Level", "Clip"], rests) == "Level knob turned, Clip set to diodes"
    assert _title("Clip", ["Level", "Clip"], rests) == "Clip switch set, Level at 50 %"


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


# DejaVu Sans's ascender and descender (its OS/2 table: 1556 and 492 of 2048 units), the line
# box every label of the plot is laid out in.
ASCENT, DESCENT = 1556 / 2048, 492 / 2048
FREQS = tuple(np.logspace(1, np.log10(40e3), 64).tolist())


def text_boxes(root: ET.Element) -> list[tuple[str, float, float, float, float]]:
    """Each text's (string, left, top, right, bottom) in points, from the font's own metrics
    (matplotlib's DejaVu Sans) rather than anything the plot module computes."""
    boxes = []
    for t in root.iter(f"{SVG}text"):
        style = dict(p.split(": ") for p in t.get("style").split("; "))
        size = float(style["font-size"].removesuffix("px"))
        font = FontProperties(family="DejaVu Sans", size=size,
                              weight="bold" if style.get("font-weight") == "700" else "normal")
        width = text_to_path.get_text_width_height_descent(t.text, font, ismath=False)[0]
        shift = {"start": 0.0, "middle": 0.5, "end": 1.0}[style["text-anchor"]] * width
        if "transform" in t.attrib:  # translate(x y) rotate(-90): read bottom to top
            x, y = (float(v) for v in re.findall(r"[-\d.]+", t.get("transform"))[:2])
            boxes.append((t.text, x - ASCENT * size, y - width + shift, x + DESCENT * size,
                          y + shift))
        else:
            x, y = float(t.get("x")), float(t.get("y"))
            boxes.append((t.text, x - shift, y - ASCENT * size, x - shift + width,
                          y + DESCENT * size))
    return boxes


def knob_panel(knob: str, others: str, offset: float, band: float) -> Panel:
    """A made-up panel: five positions of a knob as gentle humps, the lowest far below the
    rest, and a tolerance band ``band`` dB either side of the middle curve."""
    hump = -6 * np.log10(np.asarray(FREQS) / 1e3) ** 2
    levels = (-120.0, -20.0, -8.0, 0.0, 6.0)
    curves = tuple(Trace(f"{knob} {25 * i} %", tuple((hump + level + offset).tolist()))
                   for i, level in enumerate(levels))
    middle = hump + offset - 8.0
    return Panel(f"{knob} knob turned, {others} at 50 %", curves,
                 tuple((middle - band).tolist()), tuple((middle + band).tolist()),
                 ((35.0, "−3 dB 35.0 Hz"), (9000.0, "−3 dB 9.00 kHz")))


def made_up_plot(title: str, knobs: tuple[str, ...], band: float = 2.0):
    panels = tuple(knob_panel(k, " and ".join(o for o in knobs if o != k), 3.0 * i, band)
                   for i, k in enumerate(knobs))
    return ResponsePlot(title, FREQS, panels)


def overlaps(a, b) -> bool:
    return a[1] < b[3] and b[1] < a[3] and a[2] < b[4] and b[2] < a[4]


@pytest.mark.parametrize("plot", [
    made_up_plot("Fernbrook Test Kit: gain from the input jack to the output jack",
                 ("Volume", "Gain", "Tone")),
    made_up_plot("Fernbrook Test Kit: gain from the input jack to the output jack",
                 ("Volume", "Gain", "Drive", "Tone", "Master")),
    made_up_plot("Fernbrook Extraordinarily Long Named Overdrive With A Very Long Title: gain "
                 "from the input jack to the output jack", ("Presence control",)),
], ids=["three knobs", "five knobs", "long title"])
@pytest.mark.parametrize("narrow", [False, True], ids=["wide", "narrow"])
def test_every_label_is_whole_on_the_sheet_and_clear_of_every_other(plot, narrow):
    """No label is cut by the sheet's edge ("Volume 0 % (below the plot)" in full) and none
    overlaps another (the figure title clear of the first panel's title)."""
    root = svg_tree(plot, narrow)
    width, height = (float(v) for v in root.get("viewBox").split()[2:])
    boxes = text_boxes(root)
    assert "Volume 0 % (below the plot)" in {b[0] for b in boxes} or len(plot.panels) == 1
    for box in boxes:
        assert box[1] >= 0 and box[2] >= 0 and box[3] <= width and box[4] <= height, box
    clashes = [(a[0], b[0]) for i, a in enumerate(boxes) for b in boxes[i + 1:]
               if overlaps(a, b)]
    assert clashes == []


def test_the_narrow_sheet_fits_a_phone_and_puts_each_legend_under_its_panel():
    # 262 pt is 350 CSS px: a phone's column at 390 px, where the smallest label (7.5 pt)
    # still draws at 10 px
    _, _, specs = solved("heron-opamp-boost")
    plot = kit_plot(specs)
    root = svg_tree(plot, narrow=True)
    assert float(root.get("viewBox").split()[2]) == 262.0
    frames = sorted(clip_rects(root).values(), key=lambda r: r[1])
    boxes = text_boxes(root)
    for panel, frame, below in zip(plot.panels, frames, [*frames[1:], None], strict=True):
        labels = [b for b in boxes if b[0].removesuffix(" (below the plot)")
                  in {c.label for c in panel.curves}]
        assert len(labels) == len(panel.curves)
        for label in labels:  # under its own panel's axes, above the next panel
            assert label[2] > frame[1] + frame[3] and (below is None or label[4] < below[1])
    assert [(a[0], b[0]) for i, a in enumerate(boxes) for b in boxes[i + 1:]
            if overlaps(a, b)] == []


def test_demo_plots_keep_every_label_whole_and_apart():
    _, _, specs = solved("heron-opamp-boost")
    root = svg_tree(kit_plot(specs))
    boxes = text_boxes(root)
    width = float(root.get("viewBox").split()[2])
    assert all(0 <= b[1] and b[3] <= width for b in boxes)
    assert [(a[0], b[0]) for i, a in enumerate(boxes) for b in boxes[i + 1:]
            if overlaps(a, b)] == []


def clip_rects(root: ET.Element) -> dict[str, tuple[float, float, float, float]]:
    return {c.get("id"): tuple(float(c[0].get(k)) for k in ("x", "y", "width", "height"))
            for c in root.iter(f"{SVG}clipPath")}


@pytest.mark.parametrize("band", [2.0, 15.0])
def test_the_tolerance_band_stays_inside_its_axes(band):
    """A band wider than the curves widens the axes instead of running off their bottom edge,
    so the grey never stands for values the axis does not show."""
    rise = 12 * np.tanh(np.log10(np.asarray(FREQS) / 30.0))  # a gentle high-pass shape
    panel = Panel("", (Trace("nominal parts", tuple(rise.tolist())),),
                  tuple((rise - band).tolist()), tuple((rise + band).tolist()))
    root = svg_tree(ResponsePlot("Fernbrook Test Kit", FREQS, (panel,)))
    [(clip, (_, top, _, height))] = clip_rects(root).items()
    [outline] = [e for e in root.iter(f"{SVG}path") if e.get("style") == "fill: #c9ced6"
                 and e.get("clip-path") == f"url(#{clip})"]
    ys = points(outline.get("d"))[:, 1]
    assert ys.min() >= top - 0.01 and ys.max() <= top + height + 0.01


def test_a_band_with_gaps_is_drawn_as_separate_closed_outlines():
    """Where the band has no value (a sample set that did not solve there) it is left out,
    each stretch outlined and closed on its own instead of one outline folding across."""
    panel = made_up_plot("Fernbrook Test Kit", ("Level",)).panels[0]
    low = list(panel.band_low)
    low[20:30] = [float("nan")] * 10
    gappy = Panel(panel.title, panel.curves, tuple(low), panel.band_high, panel.corners)
    root = svg_tree(ResponsePlot("Fernbrook Test Kit", FREQS, (gappy,)))
    [outline] = [e for e in root.iter(f"{SVG}path") if e.get("style") == "fill: #c9ced6"]
    runs = re.findall(r"M[^MZ]*Z", outline.get("d"))
    assert len(runs) == 2 and "".join(runs) == outline.get("d")


def test_a_switch_panel_draws_its_resting_position_solid():
    from kitleaf.render.plot_draw import STYLES, style_of
    # the first position is the band's state, as half way is a knob's
    assert style_of(0, 3, solid=0) == STYLES[2]
    assert [style_of(i, 3, solid=0) for i in (1, 2)] == [STYLES[0], STYLES[1]]
    assert style_of(2, 5) == STYLES[2]  # knobs keep their order
