"""Supply rails: a charge pump's doubled or negative rail, stages on them, and the hum that
the adapter's ripple leaves at the output."""

from __future__ import annotations

import math

import numpy as np
import pytest
from tests.engine.ngspice_run import ac_sweep, operating_point, require_ngspice
from tests.stages.kits import stage_block

from kitleaf.circuit.build import build_circuit
from kitleaf.circuit.chain import OUTPUT, SOURCE
from kitleaf.engine import solve_ac, solve_dc
from kitleaf.errors import KitleafError
from kitleaf.guide.parse import parse_guide
from kitleaf.specs.claims import verify
from kitleaf.specs.derive import derive_specs
from kitleaf.specs.export import specs_to_json
from kitleaf.specs.lookup import computed_values

SUPPLY = "VSUPPLY"


def power(pump: str = "doubler", *extra: str) -> str:
    lines = ["reverse-diode: D1 1N5817", "bulk-cap: C10 100u electrolytic 25V",
             "vref-top: R10 10k", "vref-bottom: R11 10k", "vref-cap: C11 10u electrolytic 25V"]
    if pump != "none":
        lines += [f"{pump}: U2 7660", f"{pump}-cap: C12 10u electrolytic 25V",
                  f"{pump}-reservoir: C13 47u electrolytic 25V"]
    if pump == "doubler":
        lines += ["doubler-diode: D2 1N5817", "doubler-diode: D3 1N5817"]
    return stage_block("power", "power", *lines, *extra)


def gain(rails: str | None, *extra: str) -> str:
    lines = ["input-cap: C1 100n film", "bias: R1 1M", "opamp: U1A RC4558", "feedback: R3 47k",
             "gain-resistor: R4 4k7", "gain-cap: C3 10u electrolytic 25V",
             "output-cap: C4 1u film"]
    return stage_block("gain", "opamp-non-inverting", *lines,
                       *([f"rails: {rails}"] if rails else []), *extra)


def spare(rails: str | None) -> str:
    return stage_block("spare", "opamp-spare", "opamp: U1B RC4558", "tie: vref",
                       *([f"rails: {rails}"] if rails else []))


def text(*blocks: str, ripple: str = "") -> str:
    kit = ["```kit", "title: Fernbrook Rail Test", "code: FB-T9", "supply: 9 V",
           "source: low-z", *([f"adapter-ripple: {ripple}"] if ripple else []), "```", ""]
    return "\n".join(kit) + "\n".join(blocks)


def kit_of(*blocks: str, ripple: str = ""):
    guide = parse_guide("fb.md", text(*blocks, ripple=ripple))
    return guide, build_circuit(guide)


def line_of(source: str, words: str) -> int:
    return next(i for i, line in enumerate(source.splitlines(), start=1) if words in line)


def located_error(*blocks: str) -> KitleafError:
    with pytest.raises(KitleafError) as caught:
        kit_of(*blocks)
    return caught.value


class TestRails:
    def test_doubled_rail_feeds_the_stage(self):
        _, kit = kit_of(power("doubler"), gain("doubled"), spare("doubled"))
        op = solve_dc(kit.netlist())
        vcc, v2 = op.voltage("vcc"), op.voltage("v2")
        # averaged doubler: twice VCC less two diode drops (about 0.2-0.4 V each for a
        # Schottky at a few mA, common practice, no source) and the pump's I x Rout
        assert 2 * vcc - 1.2 < v2 < 2 * vcc - 0.3
        u1 = op.device("U1A")
        assert u1["vpos"] == pytest.approx(v2, abs=1e-9) and u1["vneg"] == 0.0
        # the reference divider sits across the doubled rail: half of it (10k over 10k)
        assert op.voltage("vref") == pytest.approx(v2 / 2, rel=1e-3)

    def test_bipolar_rails_feed_the_stage(self):
        _, kit = kit_of(power("inverter"), gain("bipolar"), spare("bipolar"))
        op = solve_dc(kit.netlist())
        u1 = op.device("U1A")
        assert u1["vneg"] == pytest.approx(op.voltage("vee"), abs=1e-9)
        assert -op.voltage("vcc") < op.voltage("vee") < -op.voltage("vcc") + 0.5
        # on +-9 V the + input is biased to ground through R1: at IB x R1 (40 nA x 1M), and
        # the output follows it (unity gain at DC)
        assert u1["vout"] == pytest.approx(-0.04, abs=0.01)

    def test_headroom_follows_the_rails(self):
        # the op-amp model's output window is V- + SWING_LO .. V+ - SWING_HI (docs/engine.md);
        # at the op-amp's bias point the smaller side is the headroom, and the output cap into
        # the 1M load passes it whole at 1 kHz
        found = {}
        for rails, pump in ((None, "none"), ("doubled", "doubler"), ("bipolar", "inverter")):
            guide, kit = kit_of(power(pump), gain(rails), spare(rails))
            specs = derive_specs(guide, kit)
            u1 = solve_dc(kit.netlist()).device("U1A")
            window = min(u1["vpos"] - 1.5 - u1["vout"], u1["vout"] - u1["vneg"] - 1.5)
            assert specs.headroom.volts.nominal == pytest.approx(window, rel=0.01)
            found[rails] = window
        assert found["doubled"] > 2.2 * found[None] and found["bipolar"] > 2.2 * found[None]


    def test_drawing_names_the_rails_the_stage_is_on(self):
        from kitleaf.render.schematic import render_stage_svg

        for pump, rails, shown in (("doubler", "doubled", ">V2<"), ("inverter", "bipolar",
                                                                    ">0 V<")):
            _, kit = kit_of(power(pump), gain(rails), spare(rails))
            assert shown in render_stage_svg(kit, kit.stages[1])

    @pytest.mark.parametrize("pump, rails", [("doubler", "doubled"), ("inverter", "bipolar")])
    def test_the_drawing_checker_passes_on_every_rail(self, pump, rails):
        from kitleaf.render.schematic_check import check_stage

        _, kit = kit_of(power(pump), gain(rails), spare(rails))
        for stage in kit.stages:
            assert check_stage(kit, stage) == [], stage.id

    def test_on_bipolar_rails_the_negative_supply_pin_is_drawn_to_the_negative_rail(self):
        from kitleaf.render.schematic import draw_stage

        _, kit = kit_of(power("inverter"), gain("bipolar"), spare("bipolar"))
        record = draw_stage(kit, kit.stages[1]).record
        vneg = record.pins[("U1A", 4)]  # the op-amp's pins: +, -, out, V+, V-
        names = {at: net for at, net in record.names}
        below = [net for at, net in names.items() if at[0] == vneg[0] and at[1] < vneg[1]]
        assert below == ["vee"]

    @pytest.mark.parametrize("pump, rails, label", [("none", None, "VCC, VREF"),
                                                    ("doubler", "doubled", "V2, VREF"),
                                                    ("inverter", "bipolar", "VCC, VEE")])
    def test_the_overview_names_the_rails_the_stages_use(self, pump, rails, label):
        from kitleaf.render.schematic import render_overview_svg

        _, kit = kit_of(power(pump), gain(rails), spare(rails))
        assert f">{label}<" in render_overview_svg(kit, {})


class TestRailErrors:
    def test_a_rail_no_power_stage_makes(self):
        blocks = (power("none"), gain("doubled"), spare(None))
        error = located_error(*blocks)
        assert "runs on the doubled rail, but no power stage makes it" in error.message
        assert error.span.line == line_of(text(*blocks), "rails: doubled")

    def test_the_inverter_makes_no_doubled_rail(self):
        error = located_error(power("inverter"), gain("doubled"), spare("doubled"))
        assert "'doubler: U9 7660'" in error.message

    @pytest.mark.parametrize("blocks, words", [
        ((power("doubler"), gain("sideways"), spare(None)), "'sideways' is not one of"),
        ((power("doubler"), gain("doubled", "rails: doubled"), spare(None)), "'rails:' twice"),
        ((power("doubler", "rails: doubled"), gain(None), spare(None)), "makes the rails"),
        ((power("none", "doubler: U2 7660"), gain(None), spare(None)),
         "needs a 'doubler-cap' part"),
        ((power("inverter", "doubler-diode: D4 1N5817"), gain(None), spare(None)),
         "needs a 'doubler' part"),
    ])
    def test_bad_rail_lines(self, blocks, words):
        assert words in located_error(*blocks).message

    def test_pump_without_its_parts(self):
        blocks = (stage_block("power", "power", "bulk-cap: C10 100u electrolytic",
                              "inverter: U2 7660", "inverter-cap: C12 10u electrolytic"),
                  gain(None), spare(None))
        assert "needs a 'inverter-reservoir' part" in located_error(*blocks).message

    def test_both_pumps_at_once(self):
        both = power("doubler", "inverter: U3 7660", "inverter-cap: C14 10u electrolytic 25V",
                     "inverter-reservoir: C15 47u electrolytic 25V")
        _, kit = kit_of(both, gain("bipolar"), spare("bipolar"))
        op = solve_dc(kit.netlist())
        assert op.voltage("v2") > 16.0 and op.voltage("vee") < -8.0


class TestHum:
    def test_hum_figures_names_and_json(self):
        guide, kit = kit_of(power("none"), gain(None), spare(None), ripple="100 mV at 120 Hz")
        specs = derive_specs(guide, kit)
        assert specs.ripple == (0.1, 120.0)
        circuit = kit.netlist()
        ac = solve_ac(circuit, solve_dc(circuit), [120.0], SUPPLY)
        # the supply driven alone at 1 V: the output per volt of ripple, times the ripple's
        # RMS (a sine of 100 mV peak to peak is 35.4 mV RMS)
        expected = abs(ac.voltage(OUTPUT)[0]) * 0.1 / (2 * math.sqrt(2))
        assert specs.hum.nominal == pytest.approx(expected, rel=1e-6)
        data = specs_to_json(specs)
        assert data["hum_mv_rms"]["nominal"] == pytest.approx(expected * 1e3, rel=1e-5)
        assert data["hum_dbv"]["nominal"] == pytest.approx(20 * math.log10(expected), abs=1e-3)
        assert data["adapter_ripple"] == {"mv_pp": 100.0, "hz": 120.0}
        assert computed_values(specs, kit)["kit.hum"].value == specs.hum

    def test_no_ripple_no_hum(self):
        guide, kit = kit_of(power("none"), gain(None), spare(None))
        specs = derive_specs(guide, kit)
        assert specs.hum is None and specs_to_json(specs)["hum_mv_rms"] is None

    def test_hum_rule_and_its_allow(self):
        # no power stage: the ripple reaches the collector of a common-emitter stage
        boost = stage_block(
            "boost", "common-emitter", "input-cap: C1 100n film", "bias-top: R1 1M",
            "bias-bottom: R2 100k", "transistor: Q1 2N5089", "collector: R3 10k",
            "emitter: R4 390", "output-cap: C2 1u film", "pulldown: R5 1M")
        guide, kit = kit_of(boost, ripple="50 mV at 100 Hz")
        specs = derive_specs(guide, kit)
        findings = [f for f in verify(guide, kit, specs).findings if f.rule == "hum"]
        assert len(findings) == 1 and findings[0].span.line == 6
        assert "above 100 µV" in findings[0].message
        text_allowed = text(boost, ripple="50 mV at 100 Hz").replace(
            "adapter-ripple", "allow: hum kit: meant for a battery\nadapter-ripple")
        guide = parse_guide("fb.md", text_allowed)
        kit = build_circuit(guide)
        found = [f for f in verify(guide, kit, derive_specs(guide, kit)).findings
                 if f.rule == "hum"]
        assert found[0].allowed == "meant for a battery"

    @pytest.mark.parametrize("ripple, words", [
        ("20 mV", "cannot read"), ("lots at 120 Hz", "cannot read"),
        ("5 V at 120 Hz", "outside what an adapter gives"),
        ("20 mV at 10 Hz", "outside what an adapter gives"),
    ])
    def test_bad_ripple_lines(self, ripple, words):
        with pytest.raises(KitleafError, match=words) as caught:
            parse_guide("fb.md", text(gain(None), ripple=ripple))
        assert caught.value.span.line == 6


# The 7660's oscillator runs at 10 kHz and its pump at half that; its ripple is
# I_out / (2 f_pump C_reservoir) peak to peak (the 7660's data sheet, from memory), so
# I_out / (f_osc C_reservoir): here C13, 47 uF, unless a test fits another.
FOSC = 10e3


def probed(circuit, node: str):
    """``circuit`` with 1 V of AC driven into ``node`` through 1 MOhm (a current into it):
    every node's voltage then stands to the node's as to a ripple on it (substitution)."""
    return circuit.vsource("VRIP", "rip", "0", ac=1.0).resistor("RRIP", "rip", node, 1e6)


class TestPumpRipple:
    @pytest.mark.parametrize("pump, rails, node", [("doubler", "doubled", "v2"),
                                                   ("inverter", "bipolar", "vee")])
    def test_on_its_rail_the_load_over_fosc_c(self, pump, rails, node):
        guide, kit = kit_of(power(pump), gain(rails), spare(rails))
        (ripple,) = derive_specs(guide, kit).pump_ripples
        load = abs(solve_dc(kit.netlist()).current("U2"))  # what the pump delivers
        assert (ripple.pump, ripple.rail, ripple.hz) == ("U2", node, FOSC / 2)
        assert ripple.volts_pp.nominal == pytest.approx(load / (FOSC * 47e-6), rel=1e-9)
        # the reservoir's +-20 % (an electrolytic's usual tolerance, common practice, no
        # source) spreads it about as much
        assert ripple.volts_pp.low < ripple.volts_pp.nominal < ripple.volts_pp.high

    def test_at_the_output_the_rail_share_of_it(self):
        guide, kit = kit_of(power("inverter"), gain("bipolar"), spare("bipolar"))
        (ripple,) = derive_specs(guide, kit).pump_ripples
        circuit = probed(kit.netlist(), "vee")
        ac = solve_ac(circuit, solve_dc(circuit), [FOSC / 2], "VRIP")
        share = abs(ac.voltage(OUTPUT)[0] / ac.voltage("vee")[0])
        # a sine of the ripple's peak to peak: its RMS is pp / (2 sqrt 2)
        expected = share * ripple.volts_pp.nominal / (2 * math.sqrt(2))
        assert ripple.output.nominal == pytest.approx(expected, rel=1e-3)

    def test_figures_names_json_page_and_terminal(self):
        from kitleaf.render.environment import make_environment, theme_dirs
        from kitleaf.render.specs_text import specs_to_text

        guide, kit = kit_of(power("doubler"), gain("doubled"), spare("doubled"))
        specs = derive_specs(guide, kit)
        (ripple,) = specs.pump_ripples
        names = computed_values(specs, kit)
        assert names["kit.pump-ripple.u2"].value == ripple.volts_pp
        assert names["kit.pump-ripple.u2.output"].value == ripple.output
        (shown,) = specs_to_json(specs)["pump_ripple"]
        assert (shown["pump"], shown["rail"], shown["hz"]) == ("U2", "v2", 5000.0)
        assert shown["mv_pp"]["nominal"] == pytest.approx(ripple.volts_pp.nominal * 1e3,
                                                          rel=1e-5)
        rows = make_environment(theme_dirs(None)).get_template("_spec_rows.html")
        page = rows.render(sp=specs, specs=specs)
        assert "Switching ripple of U2 on V2 (peak to peak, at 5 kHz)" in page
        assert "U2 switching ripple" in specs_to_text(specs)

    @pytest.mark.parametrize("reservoir, found", [("47u", False), ("1u", True)])
    def test_rule_when_it_is_heard(self, reservoir, found):
        blocks = (power("inverter").replace("C13 47u", f"C13 {reservoir}"), gain("bipolar"),
                  spare("bipolar"))
        guide, kit = kit_of(*blocks)
        specs = derive_specs(guide, kit)
        findings = [f for f in verify(guide, kit, specs).findings if f.rule == "pump-ripple"]
        assert bool(findings) == found
        if found:
            assert findings[0].subject == "U2"
            assert findings[0].span.line == line_of(text(*blocks), "inverter: U2 7660")
            assert "switches at 5 kHz, in the audio band" in findings[0].message


@pytest.mark.slow
def test_pump_ripple_share_against_ngspice():
    """The rail-to-output share of the ripple, the negative rail driven through 1 MOhm,
    solved by Debian's ngspice."""
    require_ngspice()
    guide, kit = kit_of(power("inverter"), gain("bipolar"), spare("bipolar"))
    (ripple,) = derive_specs(guide, kit).pump_ripples
    circuit = probed(kit.netlist(), "vee")
    freqs, spice = ac_sweep(circuit.replaced(SOURCE, ac=0.0).replaced(SUPPLY, ac=0.0), "VRIP",
                            [OUTPUT, "vee"], FOSC / 2, FOSC * 5, per_decade=10)
    assert freqs[0] == pytest.approx(FOSC / 2)
    share = abs(spice[OUTPUT][0] / spice["vee"][0])
    expected = share * ripple.volts_pp.nominal / (2 * math.sqrt(2))
    # ngspice oracle: within 0.1 dB, as the hum
    assert 20 * abs(math.log10(ripple.output.nominal / expected)) < 0.1


@pytest.mark.slow
@pytest.mark.parametrize("pump, rails", [("doubler", "doubled"), ("inverter", "bipolar")])
def test_rails_gain_and_hum_against_ngspice(pump, rails):
    """The kit on 18 V and on +-9 V, exported with its pump, solved by Debian's ngspice: the
    same DC, the same gain, and the same hum (the supply as the AC source)."""
    require_ngspice()
    guide, kit = kit_of(power(pump), gain(rails), spare(rails), ripple="100 mV at 120 Hz")
    circuit = kit.netlist()
    ours, theirs = solve_dc(circuit), operating_point(circuit)
    for node in circuit.nodes():
        # ngspice oracle: within 1 % or 5 mV, as tests/engine/test_ngspice_oracle.py
        assert ours.voltage(node) == pytest.approx(theirs[node], rel=0.01, abs=5e-3), node
    specs = derive_specs(guide, kit)
    for source, hz, figure in ((SOURCE, 1000.0, 10 ** (specs.gain_db.nominal / 20)),
                               (SUPPLY, 120.0, specs.hum.nominal * 2 * math.sqrt(2) / 0.1)):
        alone = circuit.replaced(SOURCE, ac=float(source == SOURCE)).replaced(
            SUPPLY, ac=float(source == SUPPLY))  # ngspice drives every source's ac at once
        freqs, spice = ac_sweep(alone, source, [OUTPUT, "input"], hz, hz * 10, per_decade=10)
        assert freqs[0] == pytest.approx(hz)
        response = abs(spice[OUTPUT][0] / (spice["input"][0] if source == SOURCE else 1.0))
        # ngspice oracle: gain and hum within 0.1 dB
        assert 20 * abs(np.log10(figure / response)) < 0.1
