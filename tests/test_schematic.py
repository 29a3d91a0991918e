"""Schematics: every stage kind draws a well-formed, complete, uncluttered, reproducible SVG."""

from __future__ import annotations

import inspect
import re
import xml.etree.ElementTree as ET
from pathlib import Path

import pytest
from tests.stages.kits import EVERY_KIND, make_kit, stage_block

from kitleaf.bom import bom_lines
from kitleaf.circuit import drawing
from kitleaf.render import schemdraw_adapter
from kitleaf.render.schematic import (
    SchematicSheet,
    part_value,
    render_overview_svg,
    render_stage_svg,
)

SVG = "{http://www.w3.org/2000/svg}"
KIT = make_kit(*EVERY_KIND)
RING_PT = 0.17 * 36  # a test point's ring: 0.17 grid units of 36 pt
CHAR_WIDTH = 0.62  # of the font size, a wide sans-serif average (common practice, no source)


def texts(svg: str) -> list[tuple[str, tuple[float, float, float, float]]]:
    """Each line of text with its estimated box (x0, y0, x1, y1) in SVG units."""
    found = []
    for node in ET.fromstring(svg).iter(f"{SVG}text"):
        x, y = float(node.get("x")), float(node.get("y"))
        size = float(node.get("font-size"))
        anchor, baseline = node.get("text-anchor"), node.get("dominant-baseline")
        for i, span in enumerate(node.iter(f"{SVG}tspan")):
            line_y = y + size * (i + 1)  # each tspan moves down by dy = one font size
            found.append((span.text or "", _box(span.text or "", x, line_y, size, anchor,
                                                baseline)))
    return found


def _box(text, x, y, size, anchor, baseline):
    width = len(text) * size * CHAR_WIDTH
    x0 = {"start": x, "middle": x - width / 2, "end": x - width}[anchor]
    y0 = {"ideographic": y - size, "central": y - size / 2, "hanging": y}[baseline]
    return (x0, y0, x0 + width, y0 + size)


def overlaps(a, b) -> bool:
    return a[0] < b[2] and b[0] < a[2] and a[1] < b[3] and b[1] < a[3]


def segments(svg: str) -> list[tuple[tuple[float, float], tuple[float, float]]]:
    """Every straight stroke: wires and symbol outlines (path M/L runs, polygon edges)."""
    found = []
    root = ET.fromstring(svg)
    for node in root.iter(f"{SVG}path"):
        points = []
        for cmd, x, y in re.findall(r"([ML])\s*(-?[\d.]+)[ ,](-?[\d.]+)", node.get("d")):
            points = [] if cmd == "M" else points
            points.append((float(x), float(y)))
            found += [(points[-2], points[-1])] if len(points) > 1 else []
    for node in root.iter(f"{SVG}polygon"):
        p = [tuple(map(float, q.split(","))) for q in node.get("points").split()]
        found += list(zip(p, p[1:] + p[:1], strict=True))
    return found


def crosses(segment, box, air: float = 0.5) -> bool:
    """Does the segment pass through the box shrunk by ``air``? (Liang-Barsky clipping)"""
    (x0, y0), (x1, y1) = segment
    dx, dy = x1 - x0, y1 - y0
    lo, hi = 0.0, 1.0
    for p, q in ((-dx, x0 - box[0] - air), (dx, box[2] - air - x0),
                 (-dy, y0 - box[1] - air), (dy, box[3] - air - y0)):
        if p == 0 and q < 0:
            return False
        if p != 0:
            lo, hi = (max(lo, q / p), hi) if p < 0 else (lo, min(hi, q / p))
    return lo <= hi


def text_on_lines(svg: str) -> list[str]:
    lines = segments(svg)
    return [t for t, box in texts(svg) if t.strip() and any(crosses(s, box) for s in lines)]


@pytest.mark.parametrize("stage", KIT.stages, ids=lambda s: s.kind)
class TestStageSchematic:
    def test_parses_and_names_every_part(self, stage):
        svg = render_stage_svg(KIT, stage)
        words = " ".join(t for t, _ in texts(svg))
        for part in stage.all_parts():
            assert re.search(rf"\b{part.designator}\b", words), part.designator
            assert part_value(part) in words, (part.designator, part_value(part))

    def test_no_two_labels_overlap(self, stage):
        boxes = [(t, b) for t, b in texts(render_stage_svg(KIT, stage)) if t.strip()]
        clashes = [(a[0], b[0]) for i, a in enumerate(boxes) for b in boxes[i + 1:]
                   if overlaps(a[1], b[1])]
        assert clashes == []

    def test_no_label_touches_a_wire_or_part(self, stage):
        assert text_on_lines(render_stage_svg(KIT, stage)) == []

    def test_every_test_point_is_numbered_on_the_drawing_and_in_the_legend(self, stage):
        svg = render_stage_svg(KIT, stage)
        points = KIT.kind(stage).test_points(stage)
        words = [t for t, _ in texts(svg)]
        if not points:
            assert not any(w.startswith("Test points") for w in words)
            return
        legend = " · ".join(words[words.index(next(w for w in words if w.startswith("Test "))):])
        for number, tp in enumerate(points, 1):
            assert f"{number} {tp.label}" in legend, tp.label  # the voltage table's wording
        rings = [c for c in ET.fromstring(svg).iter(f"{SVG}circle")
                 if abs(float(c.get("r")) - RING_PT) < 0.01]
        drawn = len(points)  # a custom stage's too: its nodes are drawn as rows
        assert len(rings) == drawn
        assert all(str(n) in words for n in range(1, drawn + 1))

    def test_byte_identical(self, stage):
        assert render_stage_svg(KIT, stage) == render_stage_svg(KIT, stage)

    def test_reused_placements_draw_the_same_bytes(self, stage, monkeypatch):
        # elements placed for an earlier sheet are reused: the sheet must not tell the difference
        warm = render_stage_svg(KIT, stage)
        monkeypatch.setattr(schemdraw_adapter, "PLACED", {})
        monkeypatch.setattr(schemdraw_adapter, "PLACED_LIMIT", 0)
        assert render_stage_svg(KIT, stage) == warm
        assert schemdraw_adapter.PLACED == {}  # this sheet placed all its own elements

    def test_no_ids_or_timestamps(self, stage):
        svg = render_stage_svg(KIT, stage)
        assert " id=" not in svg and "Date" not in svg


def test_values_are_written_as_on_the_bill_of_materials():
    # one writing of a value across sheet and BOM: each BOM line's value beside its parts
    for stage in KIT.stages:
        words = " ".join(t for t, _ in texts(render_stage_svg(KIT, stage)))
        for line in bom_lines(stage.all_parts()):
            if line.type == "socket":  # bought with the chip, not drawn
                continue
            assert re.search(rf"(^|\s){re.escape(line.value_text)}(\s|$)", words), line.value_text


def test_a_bare_ohm_value_gets_its_rkm_letter():
    # IEC 60062 RKM code: 470 ohms is written 470R, 4.7 kilohms 4k7
    kit = make_kit(stage_block("lp", "low-pass", "series-resistor: R7 470",
                               "shunt-cap: C7 4.7n"), stage_block("hp", "high-pass",
                               "series-cap: C8 100n", "shunt-resistor: R8 4.7k"))
    words = [t for s in kit.stages for t, _ in texts(render_stage_svg(kit, s))]
    assert {"470R", "4n7", "4k7"} <= set(words) and "470" not in words


def test_supply_and_reference_are_net_labels():
    by_id = {s.id: s for s in KIT.stages}
    drive = " ".join(t for t, _ in texts(render_stage_svg(KIT, by_id["drive"])))
    assert "VCC" in drive and "VREF" in drive
    power = " ".join(t for t, _ in texts(render_stage_svg(KIT, by_id["power"])))
    assert "+9 V" in power and "VCC" in power and "VREF" in power


def test_opamp_pins_are_numbered_by_section():
    by_id = {s.id: s for s in KIT.stages}
    inv = [t for t, _ in texts(render_stage_svg(KIT, by_id["inv"]))]
    # U1B is the second section of an 8-pin dual: pins 5, 6, 7 (TL072 datasheet, from memory)
    assert {"5", "6", "7", "8", "4"} <= set(inv)


@pytest.mark.parametrize("narrow", [False, True])
def test_overview_lists_stages_in_order_with_headlines(narrow):
    svg = render_overview_svg(KIT, {"boost": "gain 24 dB"}, narrow=narrow)
    words = [t for t, _ in texts(svg)]
    titles = [s.title for s in KIT.signal_stages]
    positions = [words.index(t) for t in titles]
    assert positions == sorted(positions)
    assert "gain 24 dB" in words and "Power" in words
    boxes = [b for t, b in texts(svg) if t.strip()]
    assert not any(overlaps(a, b) for i, a in enumerate(boxes) for b in boxes[i + 1:])
    assert text_on_lines(svg) == []


def rects(svg: str) -> list[tuple[float, float, float, float]]:
    """The blocks: closed four-sided paths, as (x0, y0, x1, y1)."""
    found = []
    for node in ET.fromstring(svg).iter(f"{SVG}path"):
        pts = [(float(x), float(y)) for x, y in re.findall(r"(-?[\d.]+),(-?[\d.]+)", node.get("d"))]
        if len(pts) == 5 and pts[0] == pts[-1]:
            xs, ys = [p[0] for p in pts], [p[1] for p in pts]
            found.append((min(xs), min(ys), max(xs), max(ys)))
    return found


def on(point, segment, tol: float = 0.01) -> bool:
    (x0, y0), (x1, y1) = segment
    return (min(x0, x1) - tol <= point[0] <= max(x0, x1) + tol
            and min(y0, y1) - tol <= point[1] <= max(y0, y1) + tol
            and abs((x1 - x0) * (point[1] - y0) - (y1 - y0) * (point[0] - x0)) < tol * 100)


def wired_to(svg: str, box) -> set[int]:
    """Indices of the blocks whose edges the wires touching ``box`` reach (through junctions)."""
    blocks = rects(svg)
    edges = {e for b in blocks for e in _edges(b)}
    wires = [s for s in segments(svg) if s not in edges and (s[1], s[0]) not in edges]
    net = [w for w in wires if any(on(p, e) for p in w for e in _edges(box))]
    while more := [w for w in wires if w not in net and any(
            on(p, n) or on(q, w) for n in net for p in w for q in n)]:
        net += more
    return {i for i, b in enumerate(blocks) for w in net for p in w
            if any(on(p, e) for e in _edges(b))}


def _edges(b):
    x0, y0, x1, y1 = b
    return [((x0, y0), (x1, y0)), ((x1, y0), (x1, y1)), ((x1, y1), (x0, y1)), ((x0, y1), (x0, y0))]


# The kinds of EVERY_KIND built of passive parts alone: nothing of theirs joins a rail.
PASSIVE_KINDS = {"high-pass", "low-pass", "tone-cut", "diode-clipper", "volume", "tone-stack",
                 "tone-blend"}


@pytest.mark.parametrize("narrow", [False, True])
def test_overview_power_feeds_exactly_the_stages_that_use_its_rails(narrow):
    svg = render_overview_svg(KIT, {}, narrow=narrow)
    blocks = rects(svg)
    power = blocks[-1]  # drawn last, below the chain
    chain = KIT.signal_stages
    assert PASSIVE_KINDS < {s.kind for s in chain}  # a renamed kind must be renamed here
    # the transistor, op-amp and custom stages, found by kind, not by place in the chain
    fed = {i for i, s in enumerate(chain) if s.kind not in PASSIVE_KINDS}
    assert {i for i, s in enumerate(chain) if KIT.rails_used(s)} == fed
    assert wired_to(svg, power) == fed | {len(blocks) - 1}
    words = [t for t, _ in texts(svg)]
    assert "VCC, VREF" in words


def test_the_narrow_overview_puts_one_block_to_a_row():
    wide, narrow = (rects(render_overview_svg(KIT, {}, narrow=n))[:-1] for n in (False, True))
    assert len(narrow) == len(KIT.signal_stages) > 4
    assert len({round(b[1], 3) for b in narrow}) == len(narrow)  # every block its own row
    assert len({round(b[0], 3) for b in narrow}) == 1  # all in one column
    assert max(b[2] for b in narrow) < max(b[2] for b in wide)


def test_the_narrow_overview_puts_the_blocks_off_the_signal_path_under_the_power_block():
    # the demo op-amp boost's unused op-amp half: beside the power block it widened the phone's
    # drawing by half
    from kitleaf.circuit.build import build_circuit
    from kitleaf.guide import parse_guide

    heron = build_circuit(parse_guide(Path(__file__).parents[1] / "guides"
                                      / "heron-opamp-boost.md"))
    blocks = rects(render_overview_svg(heron, {}, narrow=True))
    assert len(blocks) == len(heron.stages)
    assert len({round(b[0], 3) for b in blocks}) == 1  # one column, the power block's too
    assert not any(a[1] < b[3] and b[1] < a[3] for i, a in enumerate(blocks)
                   for b in blocks[i + 1:])


def test_overview_keeps_the_power_block_close():
    svg = render_overview_svg(make_kit(EVERY_KIND[0], EVERY_KIND[1]), {})
    (chain, power) = rects(svg)
    assert 0 < power[1] - chain[3] <= 72  # two grid units (72 pt) at most between them


def protocol_methods() -> list[str]:
    return [name for name, member in vars(drawing.Sheet).items()
            if callable(member) and not name.startswith("_")]


@pytest.mark.parametrize("name", protocol_methods())
def test_the_schematic_sheet_keeps_the_drawing_protocol(name):
    # What a stage kind may ask of a sheet (circuit/drawing.py), with the same parameters.
    promised = inspect.signature(getattr(drawing.Sheet, name))
    kept = inspect.signature(getattr(SchematicSheet, name))
    assert [(p.name, p.default) for p in kept.parameters.values()] \
        == [(p.name, p.default) for p in promised.parameters.values()]


def test_the_protocol_is_what_the_kinds_use():
    # Every method a kind calls on its sheet is in the protocol, so a kind needs no more.
    used = set()
    for path in sorted(Path(drawing.__file__).parent.glob("stages/*.py")):
        used |= set(re.findall(r"\bsheet\.(\w+)\(", path.read_text(encoding="utf-8")))
    assert used and used <= set(protocol_methods())


def test_overlap_check_sees_a_clash():
    # the checker itself: two labels written at one point must be reported
    sheet = SchematicSheet()
    sheet.text("R1 10k", (0.0, 0.0))
    sheet.text("C1 100n", (0.1, 0.0))
    boxes = [b for _, b in texts(sheet.svg())]
    assert overlaps(boxes[0], boxes[1])


def test_line_check_sees_a_label_on_a_wire():
    sheet = SchematicSheet()
    sheet.wire((0.0, 0.0), (0.0, 3.0))
    sheet.text("100u elec.", (-0.5, 1.5))
    sheet.text("clear", (2.0, 1.5))
    assert text_on_lines(sheet.svg()) == ["100u elec."]


def test_equal_elements_are_placed_once_and_the_table_stays_bounded(monkeypatch):
    monkeypatch.setattr(schemdraw_adapter, "PLACED", {})
    monkeypatch.setattr(schemdraw_adapter, "PLACED_LIMIT", 2)
    for _ in range(2):  # the same wire on two sheets: one entry
        SchematicSheet().wire((0.0, 0.0), (1.0, 0.0))
    assert len(schemdraw_adapter.PLACED) == 1
    SchematicSheet().wire((0.0, 0.0), (0.0, 1.0), (1.0, 1.0), (1.0, 2.0))  # three new, room for one
    assert len(schemdraw_adapter.PLACED) == 2


def test_a_switch_pole_shows_its_contacts_and_rests_on_its_first_position():
    from kitleaf.circuit.partline import read_part
    from kitleaf.errors import SourceSpan
    from kitleaf.guide.model import Entry

    part = read_part(Entry("clip-switch", "S1 DPDT on-off-on", SourceSpan("g.md", 3)),
                     ("switch",), "here")
    sheet = SchematicSheet()
    sheet.switch(part, 1, (0.0, 5.0), [(1.0, 5.5), (1.0, 4.5)])
    sheet.switch(part, 2, (0.0, 2.0), [(1.0, 2.5), None])
    svg = sheet.svg()
    assert svg.count("<circle") == 5  # two commons, three wired throws
    assert svg.count("<path") == 2  # a lever a pole
    assert [t for t, _ in texts(svg)].count("S1") == 1  # one label for both poles
    assert "DPDT on-off-on" in svg
