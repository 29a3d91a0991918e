"""The off-board wiring: what each bypass scheme joins with the switch in either state, and the
drawing's connections read back from its SVG against the wiring list."""

from __future__ import annotations

import re
import xml.etree.ElementTree as ET

import pytest

from kitleaf.circuit.build import build_circuit
from kitleaf.circuit.harness import BOARD, Harness, build_harness
from kitleaf.circuit.offboard import Lug, switch_lug
from kitleaf.guide import parse_guide
from kitleaf.render.wiring_list import lug_words, wires_by_part, wiring_rows
from kitleaf.render.wiring_svg import render_wiring_svg
from site_pages import DEMO_GUIDES

SLUGS = sorted(p.stem for p in DEMO_GUIDES.glob("*.md"))
SVG = "{http://www.w3.org/2000/svg}"
NUMBER = re.compile(r"-?\d+(?:\.\d+)?")


def harness_of(text: str, tmp_path, name: str = "kit.md") -> Harness:
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    guide = parse_guide(path)
    return build_harness(guide, build_circuit(guide))


def demo(slug: str) -> Harness:
    guide = parse_guide(DEMO_GUIDES / f"{slug}.md")
    return build_harness(guide, build_circuit(guide))


class Nets:
    """Which lugs a multimeter finds joined: the wires plus the contacts the parts make.

    Contacts, common practice, no source: a footswitch joins each pole's common lug to its
    effect-on or its bypass lug; a mono plug in a stereo jack joins ring and sleeve; a DC
    jack's switched lug touches its sleeve lug until a plug goes in."""

    def __init__(self, harness: Harness, effect_on: bool, cable_in: bool = True,
                 adapter_in: bool = False) -> None:
        self.parent: dict[Lug, Lug] = {}
        for wire in harness.wires:
            self.join(wire.a, wire.b)
        switch = harness.piece("footswitch")
        for pole in range(switch.poles if switch else 0):
            self.join(switch_lug(switch, pole, "common"),
                      switch_lug(switch, pole, "on" if effect_on else "bypass"))
        jack = harness.piece("input-jack")
        if cable_in and jack.stereo:
            self.join(jack.lug("ring"), jack.lug("sleeve"))
        dc = harness.piece("dc-jack")
        if dc is not None and not adapter_in:
            self.join(dc.lug("switched lug"), dc.lug("sleeve"))

    def find(self, lug: Lug) -> Lug:
        while self.parent.get(lug, lug) != lug:
            lug = self.parent[lug]
        return lug

    def join(self, a: Lug, b: Lug) -> None:
        self.parent[self.find(a)] = self.find(b)

    def joined(self, a: Lug, b: Lug) -> bool:
        return self.find(a) == self.find(b)


def pad(name: str) -> Lug:
    return Lug(BOARD, name)


@pytest.mark.parametrize("slug", SLUGS)
def test_true_bypass_puts_the_board_in_the_path_only_with_the_effect_on(slug):
    harness = demo(slug)
    tip_in, tip_out = Lug("J1", "tip"), Lug("J2", "tip")
    on, off = Nets(harness, effect_on=True), Nets(harness, effect_on=False)
    assert on.joined(tip_in, pad("IN")) and on.joined(pad("OUT"), tip_out)
    assert not on.joined(tip_in, tip_out) and not on.joined(pad("IN"), pad("OUT"))
    assert off.joined(tip_in, tip_out)
    assert not off.joined(tip_in, pad("IN")) and not off.joined(pad("OUT"), tip_out)
    led = harness.led.designator
    assert on.joined(Lug(led, "cathode"), pad("GND"))
    assert not off.joined(Lug(led, "cathode"), pad("GND"))
    assert on.joined(Lug(led, "anode"), pad(f"{led} anode"))


@pytest.mark.parametrize("slug", SLUGS)
def test_the_battery_runs_only_with_a_cable_in_and_no_adapter(slug):
    harness = demo(slug)
    plus, minus = Lug("BT1", "red lead +"), Lug("BT1", "black lead -")
    supply = pad(f"+{9:g} V")
    assert Nets(harness, True).joined(minus, pad("GND"))
    assert Nets(harness, True).joined(plus, supply)
    assert not Nets(harness, True, cable_in=False).joined(minus, pad("GND"))
    assert not Nets(harness, True, adapter_in=True).joined(plus, supply)


@pytest.mark.parametrize("slug", SLUGS)
def test_a_centre_negative_adapter_puts_its_centre_on_ground(slug):
    # A centre-negative plug: centre pin negative, barrel positive (common practice, no source).
    nets = Nets(demo(slug), True, adapter_in=True)
    assert nets.joined(Lug("J3", "centre pin"), pad("GND"))
    assert nets.joined(Lug("J3", "sleeve"), pad("+9 V"))
    assert not nets.joined(pad("+9 V"), pad("GND"))


def variant(slug: str, old: str, new: str) -> str:
    text = (DEMO_GUIDES / f"{slug}.md").read_text(encoding="utf-8")
    assert old in text
    return text.replace(old, new)


def test_buffered_bypass_sends_the_output_jack_the_buffer_or_the_effect(tmp_path):
    harness = harness_of(variant("heron-opamp-boost", "bypass: true", "bypass: buffered"),
                         tmp_path)
    buffer_out = next(p for p in harness.pads if p.endswith(" OUT") and p != "OUT")
    on, off = Nets(harness, effect_on=True), Nets(harness, effect_on=False)
    for nets in (on, off):
        assert nets.joined(Lug("J1", "tip"), pad("IN"))
    assert on.joined(Lug("J2", "tip"), pad("OUT")) and not on.joined(Lug("J2", "tip"),
                                                                      pad(buffer_out))
    assert off.joined(Lug("J2", "tip"), pad(buffer_out))
    assert on.joined(Lug("LED1", "cathode"), pad("GND"))


def test_no_bypass_wires_the_jacks_straight_to_the_board(tmp_path):
    text = variant("millrace-jfet-boost", "hardware: SW1 footswitch, 3PDT latching\n", "")
    harness = harness_of(text.replace("bypass: true", "bypass: none"), tmp_path)
    nets = Nets(harness, effect_on=True)
    assert nets.joined(Lug("J1", "tip"), pad("IN")) and nets.joined(pad("OUT"), Lug("J2", "tip"))
    assert nets.joined(Lug("LED1", "cathode"), pad("GND"))


def test_a_guide_without_a_scheme_draws_no_wiring(tmp_path):
    assert harness_of(variant("brookside-boost", "bypass: true\n", ""), tmp_path) is None


# -- the drawing against the list --------------------------------------------------------------

def drawn_connections(svg: str) -> list[tuple[int, str, str]]:
    """(number, lug, lug) for each wire drawn: the lugs found where its path starts and ends."""
    root = ET.fromstring(svg)
    lugs = {(float(c.get("cx")), float(c.get("cy"))): c.get("data-lug")
            for c in root.iter(f"{SVG}circle") if c.get("class") == "lug"}
    found = []
    for path in root.iter(f"{SVG}path"):
        if path.get("class") != "wire":
            continue
        numbers = [float(n) for n in NUMBER.findall(path.get("d"))]
        ends = [(numbers[0], numbers[1]), (numbers[-2], numbers[-1])]
        named = [lugs.get(end) for end in ends]
        assert None not in named, (path.get("d"), "a wire end is on no lug")
        found.append((int(path.get("data-wire")), *named))
    return found


def as_lug(text: str) -> Lug:
    owner, _, name = text.partition(" ")
    return Lug(owner, name)


def listed_and_drawn(harness: Harness, svg: str) -> tuple[list, list]:
    listed = sorted((r.number, frozenset((r.start, r.end))) for r in wiring_rows(harness))
    drawn = sorted((n, frozenset(lug_words(as_lug(x), harness) for x in (a, b)))
                   for n, a, b in drawn_connections(svg))
    return listed, drawn


@pytest.mark.parametrize("slug", SLUGS)
def test_the_drawing_joins_exactly_the_lugs_the_wiring_list_names(slug):
    harness = demo(slug)
    listed, drawn = listed_and_drawn(harness, render_wiring_svg(harness, slug))
    assert drawn == listed
    assert len(listed) >= 10


def test_a_wire_moved_on_the_drawing_no_longer_matches_the_list():
    harness = demo("brookside-boost")
    svg = render_wiring_svg(harness, "moved")
    root = ET.fromstring(svg)
    tip = next(c for c in root.iter(f"{SVG}circle") if c.get("data-lug") == "J1 tip")
    ring = next(c for c in root.iter(f"{SVG}circle") if c.get("data-lug") == "J1 ring")
    at = f'{float(tip.get("cx")):.1f} {float(tip.get("cy")):.1f}'
    moved = svg.replace(f'd="M {at} ', f'd="M {float(ring.get("cx")):.1f} '
                                       f'{float(ring.get("cy")):.1f} ', 1)
    assert moved != svg
    listed, drawn = listed_and_drawn(harness, moved)
    assert drawn != listed


@pytest.mark.parametrize("slug", SLUGS)
def test_every_text_of_the_drawing_is_at_least_9_px_at_its_natural_size(slug):
    root = ET.fromstring(render_wiring_svg(demo(slug), slug))
    sizes = [float(t.get("font-size")) for t in root.iter(f"{SVG}text")]
    assert sizes and min(sizes) >= 9.0


@pytest.mark.parametrize("slug", SLUGS)
def test_every_lug_named_and_no_two_lugs_on_one_spot(slug):
    harness = demo(slug)
    root = ET.fromstring(render_wiring_svg(harness, slug))
    circles = [c for c in root.iter(f"{SVG}circle") if c.get("class") == "lug"]
    spots = [(c.get("cx"), c.get("cy")) for c in circles]
    assert len(set(spots)) == len(spots)
    wired = {str(lug) for w in harness.wires for lug in (w.a, w.b)}
    assert wired <= {c.get("data-lug") for c in circles}
    texts = {t.text for t in root.iter(f"{SVG}text")}
    assert {"IN", "OUT", "GND", "+9 V", "tip", "sleeve", "ring"} <= texts
    assert {str(n) for n in range(1, 10)} <= texts  # the footswitch's lug numbers


def test_the_drawing_is_the_same_bytes_every_time():
    harness = demo("heron-opamp-boost")
    assert render_wiring_svg(harness, "x") == render_wiring_svg(demo("heron-opamp-boost"), "x")


@pytest.mark.parametrize("slug", SLUGS)
def test_each_wired_piece_knows_its_wires_for_the_parts_list(slug):
    harness = demo(slug)
    by_part = wires_by_part(harness)
    for number, wire in enumerate(harness.wires, start=1):
        for lug in (wire.a, wire.b):
            assert lug.owner == BOARD or number in by_part[lug.owner]
    assert BOARD not in by_part
    assert sum(map(len, by_part.values())) == sum(
        len({w.a.owner, w.b.owner} - {BOARD}) for w in harness.wires)
    assert wires_by_part(None) == {}
