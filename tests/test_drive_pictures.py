"""The large-signal pictures' layout: every legend under its panel, never over a line, and
at a phone's 390 px width (headless chromium) no label over another or off the screen."""

from __future__ import annotations

import json
import os
from pathlib import Path
from xml.etree import ElementTree

import pytest

from chromium_pipe import Browser, Page, require_tool
from kitleaf.circuit.build import build_circuit
from kitleaf.guide.parse import parse_guide
from kitleaf.render.plot_drive import (
    CurvePanel,
    DrivePicture,
    WavePanel,
    render_drive_svg,
)
from kitleaf.render.plot_specs import drive_picture, wave_picture
from kitleaf.specs.derive import derive_specs

SVG = "{http://www.w3.org/2000/svg}"
ALDER = Path(__file__).resolve().parents[1] / "guides" / "alder-drive.md"
LEVELS = (0.03, 0.1, 0.2, 0.3, 1.0, 2.0)
# A crowded drive curve: five knob positions and their bands, labels as long as a knob's name
# makes them; the numbers only shape the lines (a layout check, no circuit behind it).
CROWDED = DrivePicture("Fernbrook Test Drive: distortion and output against the pickup level", (
    CurvePanel("THD, Presence Boost knob turned, Level at 50 %", "thd",
               tuple((f"Presence Boost {p} %", tuple(0.001 * (1 + k) * 10 ** i
                                                       for i in range(len(LEVELS))))
                     for k, p in enumerate((0, 25, 50, 75, 100))),
               tuple((tuple(0.0009 * (1 + k) * 10 ** i for i in range(6)),
                      tuple(0.004 * (1 + k) * 10 ** i for i in range(6))) for k in range(5))),
    CurvePanel("Output peak, Clip switch set, knobs at half way", "volts",
               tuple((f"Clip: {name}", tuple(0.5 + 0.1 * k for _ in LEVELS))
                     for k, name in enumerate(("silicon", "open", "LEDs"))))), LEVELS)
WAVES = DrivePicture("Fernbrook Test Drive: output beside the pickup, knobs at half way", tuple(
    WavePanel(level, f"{level} V pickup peak", tuple(0.0 for _ in range(96)))
    for level in (0.1, 0.3, 1.0)))


def frames_and_legends(svg: str) -> tuple[list[tuple[float, float]], list[float]]:
    """Each panel frame's (top, bottom) and each legend label's baseline, in the SVG's units."""
    root = ElementTree.fromstring(svg.encode())
    frames = [(float(r.get("y")), float(r.get("y")) + float(r.get("height")))
              for r in root.iter(f"{SVG}rect") if "fill: none" in r.get("style", "")]
    legends = [float(t.get("y")) for t in root.iter(f"{SVG}text")
               if "font-size: 7.5px" in t.get("style", "")]
    return frames, legends


@pytest.mark.parametrize("picture", [CROWDED, WAVES], ids=["curve", "waves"])
def test_every_legend_sits_outside_the_frames(picture):
    frames, legends = frames_and_legends(render_drive_svg(picture))
    assert len(frames) == len(picture.panels) and legends
    for y in legends:
        assert not any(top <= y <= bottom for top, bottom in frames), y


def test_a_line_far_below_the_rest_is_named_and_leaves_them_their_room():
    # a volume turned to 0 % puts its output microvolts low; the axis keeps three decades
    quiet = DrivePicture("Fernbrook Test Drive: output", (CurvePanel(
        "Output peak, Level knob turned", "volts",
        (("Level 0 %", tuple(2e-6 for _ in LEVELS)), ("Level 50 %", tuple(0.2 for _ in LEVELS)),
         ("Level 100 %", tuple(0.8 for _ in LEVELS)))),), LEVELS)
    texts = [t.text for t in ElementTree.fromstring(render_drive_svg(quiet).encode()).iter(
        f"{SVG}text")]
    assert "Level 0 % (below the plot)" in texts and "Level 50 %" in texts
    assert {"1 mV", "1 V"} <= set(texts) and not {"1 µV", "100 µV"} & set(texts)


# Every text's box and every panel frame, as laid out on the screen.
LAYOUT = """JSON.stringify({
  texts: [...document.querySelectorAll('text')].map(t => {
    const r = t.getBoundingClientRect();
    return [r.left, r.top, r.right, r.bottom, t.textContent];
  }),
  frames: [...document.querySelectorAll('rect')].filter(
      r => (r.getAttribute('style') || '').includes('fill: none')).map(r => {
    const b = r.getBoundingClientRect();
    return [b.left, b.top, b.right, b.bottom];
  }),
  width: window.innerWidth,
})"""


def overlaps(a, b, slack: float = 0.5) -> bool:
    return (a[0] < b[2] - slack and b[0] < a[2] - slack
            and a[1] < b[3] - slack and b[1] < a[3] - slack)


@pytest.fixture(scope="module")
def alder_pictures(tmp_path_factory) -> dict[str, Path]:
    guide = parse_guide(str(ALDER), ALDER.read_text(encoding="utf-8"))
    specs = derive_specs(guide, build_circuit(guide))
    folder = tmp_path_factory.mktemp("drive-pictures")
    found = {}
    for name, picture in (("waves", wave_picture(specs)), ("curve", drive_picture(specs)),
                          ("crowded", CROWDED)):
        # inline in a phone-sized page, as the guide page shows it at its drawn size
        svg = render_drive_svg(picture).split("\n", 1)[1]  # without the XML declaration
        found[name] = folder / f"{name}.html"
        found[name].write_text('<!DOCTYPE html><html><head><meta charset="utf-8"><meta '
                               'name="viewport" content="width=device-width"></head>'
                               f'<body style="margin: 8px">{svg}</body></html>',
                               encoding="utf-8")
    return found


@pytest.mark.slow
def test_at_phone_width_no_label_covers_another_or_a_panel(alder_pictures):
    """Opened at 390 px, each picture keeps every label on the screen, apart from the others
    and out of the panels (tick labels sit outside the frames by design)."""
    with Browser(require_tool("chromium")) as browser:
        for name, path in alder_pictures.items():
            page = Page(browser, path.as_uri(), width=390)
            folder = os.environ.get("KITLEAF_SCREENSHOTS")
            if folder:
                Path(folder).mkdir(parents=True, exist_ok=True)
                (Path(folder) / f"drive-{name}-390.png").write_bytes(page.screenshot())
            layout = json.loads(page.evaluate(LAYOUT))
            texts, frames = layout["texts"], layout["frames"]
            assert frames and texts, name
            for i, a in enumerate(texts):
                assert 0 <= a[0] and a[2] <= layout["width"], (name, a)
                assert not any(overlaps(a, f, slack=1.0) for f in frames), (name, a)
                for b in texts[i + 1:]:
                    assert not overlaps(a, b), (name, a, b)
            assert page.errors() == [], (name, page.errors())
