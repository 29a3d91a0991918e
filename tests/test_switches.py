"""Switches: the form on a part line, the kit block's position names, and every figure per
position."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
from tests.engine.ngspice_run import ac_sweep, operating_point
from tests.stages.kits import POWER, dc_at, gain_at, stage_block

from kitleaf.bom import bom_lines
from kitleaf.circuit.build import build_circuit
from kitleaf.circuit.chain import KNOB_STEPS
from kitleaf.circuit.partline import read_part
from kitleaf.circuit.switches import (
    CLOSED_OHMS,
    OPEN_OHMS,
    contacts,
    read_form,
    require_form,
    wired_poles,
)
from kitleaf.engine import Circuit
from kitleaf.errors import CircuitError, GuideError, SourceSpan, SpecError
from kitleaf.guide.model import Entry
from kitleaf.guide.parse import parse_guide
from kitleaf.specs.derive import SolvedKit, derive_specs
from kitleaf.specs.lookup import computed_values, lookup


class TestForm:
    # Pole and throw counts as switch makers name them: S single, D double (common practice,
    # no source); on-off-on is a two-throw toggle with a centre position joining nothing.
    @pytest.mark.parametrize(("text", "poles", "throws"), [
        ("SPDT", 1, (0, 1)), ("DPDT", 2, (0, 1)), ("3PDT", 3, (0, 1)), ("SP3T", 1, (0, 1, 2)),
        ("2P6T", 2, (0, 1, 2, 3, 4, 5)), ("SPST", 1, (0, None)), ("dpdt", 2, (0, 1))])
    def test_poles_and_positions(self, text, poles, throws):
        form = read_form(text)
        assert (form.poles, form.throws) == (poles, throws)

    def test_a_centre_off_toggle_has_three_positions(self):
        form = read_form("DPDT", "on-off-on")
        assert form.throws == (0, None, 1)
        assert form.pins == 6  # two poles, each a common and two throws

    @pytest.mark.parametrize(("text", "function", "message"), [
        ("SPXT", None, "cannot read the switch form"),
        ("SP13T", None, "up to 12"),
        ("SPDT", "on-off", "1 'on' positions but SPDT has 2 throws"),
    ])
    def test_bad_forms_say_what_to_write(self, text, function, message):
        with pytest.raises(CircuitError, match=message):
            read_form(text, function)

    def test_each_position_closes_its_own_throw_on_every_pole(self):
        form = read_form("DPDT", "on-off-on")
        nodes = ("c1", "a1", "b1", "c2", "a2", "b2")
        closed = {pos: {(c, t) for _, c, t, ohms in contacts(form, pos, nodes)
                        if ohms == CLOSED_OHMS} for pos in range(3)}
        assert closed == {0: {("c1", "a1"), ("c2", "a2")}, 1: set(),
                          2: {("c1", "b1"), ("c2", "b2")}}
        assert all(ohms in (CLOSED_OHMS, OPEN_OHMS) for *_, ohms in contacts(form, 1, nodes))

    def test_a_kind_states_the_form_it_wires(self):
        part = read_part(Entry("clip-switch", "S1 SPDT on-off-on", SourceSpan("g.md", 9)),
                         ("switch",), "stage 'drive', role 'clip-switch'")
        assert require_form(part, "here", throws=2).positions == 3
        with pytest.raises(CircuitError, match=r"S1 is a SPDT, but this stage wires 2 poles "
                                               r"of 2 throws; fit a DPDT") as err:
            require_form(part, "here", throws=2, poles=2)
        assert err.value.span.line == 9
        with pytest.raises(CircuitError, match="fit a SP3T"):
            require_form(part, "here", throws=3)

    def test_spare_poles_stay_unwired(self):
        form = read_form("DPDT")
        assert [wired_poles(form, ("c",) * n) for n in (3, 6, 4, 9)] == [1, 2, 0, 0]

    def test_a_throw_wired_to_nothing_has_no_contact(self):
        form = read_form("SP3T")
        assert [t for _, _, t, _ in contacts(form, 0, ("c", "a", None, "b"))] == ["a", "b"]


# A boost whose emitter bypass a switch picks: partial, none (centre off) or full, and a
# volume knob; invented for these tests.
BOOST = stage_block(
    "boost", "custom", "nodes: b c e x z y",
    "part: C1 10u @ in b", "part: R1 82k @ vcc b", "part: R2 18k @ b 0",
    "part: Q1 2N3904 @ c b e", "part: R3 4k7 @ vcc c", "part: R4 1k @ e 0",
    "part: S1 SPDT on-off-on @ e x y", "part: R5 220R @ x z",
    "part: C3 1000u electrolytic 16V @ z 0", "part: C4 1000u electrolytic 16V @ y 0",
    "part: C2 10u @ c out", "test-point: Q1 collector = c")
VOLUME = stage_block("level", "volume", "volume: VR1 B100k")


def guide(*blocks: str, switch: str = "switch: Bypass = S1: partial, none, full",
          extra: str = "") -> str:
    kit = ["```kit", "title: Fernbrook Switch Test", "code: FB-T9", "supply: 9 V",
           "source: low-z", "knob: Level = VR1", switch, extra, "```", ""]
    return "\n".join(kit) + "\n".join(blocks)


def kit_of(*blocks: str, **kwargs):
    parsed = parse_guide("switch.md", guide(*(blocks or (POWER, BOOST, VOLUME)), **kwargs))
    return parsed, build_circuit(parsed)


KESTREL = Path(__file__).parents[1] / "guides" / "kestrel-drive.md"


class TestKit:
    def test_positions_are_states_of_the_netlist(self):
        _, kit = kit_of()
        gains = [abs(gain_at(kit, 1e3, positions={"S1": p})) for p in range(3)]
        # unbypassed RC/RE is about 4.7; a full bypass far more; partial in between
        # (Horowitz & Hill, The Art of Electronics 3e, 2.2.7, as the common-emitter tests)
        assert gains[1] < gains[0] < gains[2]
        assert gains[1] == pytest.approx(4.7e3 / 1e3 * 0.5, rel=0.15)  # the level pot halves
        # the bypass carries no DC: the bias is the same in every position
        assert dc_at(kit, "boost.c", {"S1": 0}) == pytest.approx(dc_at(kit, "boost.c",
                                                                        {"S1": 2}), abs=1e-6)

    def test_every_figure_runs_over_the_positions(self):
        parsed, kit = kit_of()
        specs = derive_specs(parsed, kit)
        by_setting = {p.positions: p.gain_db.nominal for p in specs.knob_sweep}
        assert [by_setting[(("Bypass", n),)] for n in ("none", "partial", "full")] == sorted(
            by_setting[(("Bypass", n),)] for n in ("none", "partial", "full"))
        assert [(c.knob, c.position) for c in specs.curves][-3:] == [
            ("Bypass", "partial"), ("Bypass", "none"), ("Bypass", "full")]
        stage = specs.stage("boost")
        assert [p.positions[0][1] for p in stage.knob_sweep] == ["partial", "none", "full"]
        assert specs.switches == (("Bypass", "S1", ("partial", "none", "full"), "partial"),)

    def test_the_knob_ends_take_every_switch_position(self):
        # the gain range of the index card: Level fully up with the full bypass is the top
        parsed, kit = kit_of()
        specs = derive_specs(parsed, kit)
        ends = {p.positions: p.gain_db.nominal for p in specs.knob_ends}
        assert set(ends) == {(("Level", e), ("Bypass", n)) for e in (0.0, 1.0)
                             for n in ("partial", "none", "full")}
        assert max(ends, key=ends.get) == (("Level", 1.0), ("Bypass", "full"))

    def test_a_marked_position_is_where_the_switch_rests(self):
        parsed, kit = kit_of(switch="switch: Bypass = S1: partial, none*, full")
        assert kit.switches[0].rest == 1
        # every netlist rests there unless told otherwise: the unbypassed gain, RC/RE halved
        # by the level pot (as test_positions_are_states_of_the_netlist)
        assert abs(gain_at(kit, 1e3)) == pytest.approx(4.7 * 0.5, rel=0.15)
        specs = derive_specs(parsed, kit)
        by_setting = {p.positions: p.gain_db.nominal for p in specs.knob_sweep}
        assert specs.gain_db.nominal == pytest.approx(by_setting[(("Bypass", "none"),)])
        assert specs.switches[0][3] == "none"
        assert [c.position for c in specs.curves if c.at_rest] == [0.5, "none"]
        from kitleaf.render.plot_specs import kit_plot

        level, bypass = kit_plot(specs).panels
        assert (level.solid, bypass.solid) == (None, 1)  # the band's curve is drawn solid
        assert level.title == "Level knob turned, Bypass set to none"

    @pytest.mark.parametrize("marked, throw", [("silicon, open, LEDs*", 2),
                                                ("silicon*, open, LEDs", 1)])
    def test_the_lever_is_drawn_where_the_switch_rests(self, marked, throw):
        from kitleaf.render.schematic import draw_stage

        source = KESTREL.read_text(encoding="utf-8").replace(
            "S1: silicon, open, LEDs", f"S1: {marked}")
        kit = build_circuit(parse_guide("kestrel.md", source))
        record = draw_stage(kit, next(s for s in kit.stages if s.id == "drive")).record
        common, tip = record.levers["S1:p1"]
        # the pole's pins: its common, then the silicon pair's throw, then the LEDs'
        aim = record.pins[("S1:p1", throw)]
        # the tip lies on the line from the common to the throw of the rest position
        cross = (tip[0] - common[0]) * (aim[1] - common[1]) - (tip[1] - common[1]) * (
            aim[0] - common[0])
        assert cross == pytest.approx(0.0, abs=1e-6)
        assert (tip[0] - common[0]) * (aim[0] - common[0]) + (tip[1] - common[1]) * (
            aim[1] - common[1]) > 0

    @pytest.mark.parametrize("line", ["switch: Bypass = S1: partial*, none*, full"])
    def test_one_rest_at_most(self, line):
        with pytest.raises(GuideError, match="marks 2 positions with"):
            kit_of(switch=line)

    def test_a_claim_names_a_position(self):
        parsed, kit = kit_of()
        values = computed_values(derive_specs(parsed, kit), kit)
        assert values["kit.gain.bypass-full"].value.nominal > values[
            "kit.gain.bypass-none"].value.nominal
        assert "Bypass set to full" in values["kit.gain.bypass-full"].label
        with pytest.raises(SpecError, match="did you mean 'gain.bypass-full'"):
            lookup(values, "gain.bypass-fll", None, "kit")

    def test_the_bom_lists_the_switch(self):
        _, kit = kit_of()
        line = next(x for x in bom_lines(kit.parts()) if x.designators == ("S1",))
        assert line.group == "switch"
        assert line.value_text == "SPDT on-off-on"


class TestBadInput:
    def test_too_few_position_names(self):
        with pytest.raises(CircuitError, match=r"names 2 positions, but S1 \(SPDT on-off-on, "
                                               r"line \d+\) has 3") as err:
            kit_of(switch="switch: Bypass = S1: partial, full")
        assert err.value.span.line == 7

    def test_a_switch_with_no_line(self):
        with pytest.raises(CircuitError, match="S1 is a switch no 'switch:' line") as err:
            kit_of(switch="")
        assert "switch: Clip = S1: first, second, third" in err.value.message

    def test_a_line_naming_no_switch(self):
        with pytest.raises(CircuitError, match="no stage has a switch S7") as err:
            kit_of(switch="switch: Bypass = S7: a, b")
        assert err.value.span.line == 7

    @pytest.mark.parametrize(("line", "message"), [
        ("switch: Bypass S1 a, b", "cannot read switch"),
        ("switch: Bypass = S1: a", "cannot read switch"),
        ("switch: Bypass = S1: low, Low", "position 'Low' is written like 'low'"),
        ("switch: Level = S1: a, b, c", "two controls are named 'Level'"),
        ("switch: Bypass = VR1: a, b", "VR1 is turned by two controls"),
    ])
    def test_bad_switch_lines(self, line, message):
        with pytest.raises(GuideError, match=message) as err:
            kit_of(switch=line)
        assert err.value.span.line == 7

    def test_a_custom_switch_with_the_wrong_pin_count(self):
        block = BOOST.replace("@ e x y", "@ e x")
        with pytest.raises(CircuitError, match=r"SPDT switch joins 3 nodes \(common t1 t2"):
            kit_of(POWER, block, VOLUME)

    def test_a_pole_wired_to_nothing(self):
        block = BOOST.replace("@ e x y", "@ e - -")
        with pytest.raises(CircuitError, match="a pole needs its common and at least one"):
            kit_of(POWER, block, VOLUME)

    def test_a_claim_on_a_missing_position(self):
        parsed, kit = kit_of(extra="claim: gain.bypass-half above 0 dB")
        from kitleaf.specs.claims import verify

        with pytest.raises(SpecError, match="no computed value 'gain.bypass-half'") as err:
            verify(parsed, kit, derive_specs(parsed, kit))
        assert err.value.span.line == 8


def reference(bypass: int, level: float) -> Circuit:
    """The switched boost written out by hand for one bypass position, the closed contact a
    plain wire (a 0 V source) and whatever the switch leaves unconnected left out."""
    c = Circuit().vsource("VSUPPLY", "vcc", "0", dc=9.0)
    c.vsource("VIN", "src", "0", ac=1.0).resistor("RSRC", "src", "input", 100.0)
    c.capacitor("C1", "input", "b", 10e-6).resistor("R1", "vcc", "b", 82e3)
    c.resistor("R2", "b", "0", 18e3).bjt("Q1", "c", "b", "e", "2N3904")
    c.resistor("R3", "vcc", "c", 4.7e3).resistor("R4", "e", "0", 1e3)
    if bypass == 0:
        c.vsource("WIRE", "e", "x").resistor("R5", "x", "z", 220.0)
        c.capacitor("C3", "z", "0", 1000e-6)
    elif bypass == 2:
        c.vsource("WIRE", "e", "y").capacitor("C4", "y", "0", 1000e-6)
    c.capacitor("C2", "c", "o", 10e-6)
    c.pot("VR1", "0", "output", "o", 100e3, position=level, taper="lin")
    return c.resistor("RLOAD", "output", "0", 1e6)


@pytest.mark.slow
def test_every_knob_and_switch_state_agrees_with_ngspice():
    """DC at the collector and the gain at 1 kHz, input jack to output jack, at every step of
    the Level knob and every position of the switch, against Debian's ngspice."""
    parsed, kit = kit_of(BOOST, VOLUME)
    solved = SolvedKit(kit)
    states = {("Bypass", name): (i, 0.5) for i, name in enumerate(("partial", "none", "full"))}
    states.update({("Level", p): (0, p) for p in KNOB_STEPS})
    gains = {p.positions[0]: p.gain_db.nominal for p in derive_specs(parsed, kit).knob_sweep}
    for (name, shown), (bypass, level) in states.items():
        circuit = reference(bypass, level)
        _, theirs = ac_sweep(circuit, "VIN", ["input", "output"], 1e3, 1e4, per_decade=1)
        expected = 20 * np.log10(abs(theirs["output"][0] / theirs["input"][0]))
        assert gains[(name, shown)] == pytest.approx(expected, abs=0.02), (name, shown)
        designator = "S1" if name == "Bypass" else "VR1"
        step = next(s for (p, seen), s in zip(
            dict(kit.switches[0].steps if name == "Bypass" else kit.knobs[0].steps).items(),
            solved.sweeps[designator], strict=True) if seen == shown)
        ours = float(step.nominal.batch.voltage("boost.c")[0])
        assert ours == pytest.approx(operating_point(circuit)["c"], abs=1e-3), (name, shown)
