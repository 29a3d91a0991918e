"""Trimmers: the set-up target, the position that reaches it, its spread over the builds, and
every figure solved with each build trimmed."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
from tests.engine.ngspice_run import ac_sweep, operating_point
from tests.stages.kits import POWER, dc_at, stage_block
from tests.stages.test_common_emitter import hand_bias

from kitleaf.circuit.build import build_circuit
from kitleaf.circuit.chain import KNOB_STEPS
from kitleaf.display import trim_instruction, trim_travel
from kitleaf.engine import Circuit
from kitleaf.errors import CircuitError
from kitleaf.guide.parse import parse_guide
from kitleaf.render.specs_text import specs_to_text
from kitleaf.specs.derive import SolvedKit, derive_specs
from kitleaf.specs.export import specs_to_json
from kitleaf.specs.solve import KitState


def boost(trim: str = "trim: TR1 sets q1.collector to 4.5 V", collector: str = "TR1 B10k"
          ) -> str:
    """A common-emitter boost whose collector load is a trimmer (invented for these tests)."""
    return stage_block("boost", "common-emitter", "input-cap: C1 10u", "bias-top: R1 82k",
                       "bias-bottom: R2 18k", "transistor: Q1 2N3904",
                       f"collector: {collector}", "emitter: R4 1k", "output-cap: C2 10u",
                       "volume: VR1 B100k", trim)


def guide(*blocks: str) -> str:
    kit = ["```kit", "title: Fernbrook Trim Test", "code: FB-T8", "supply: 9 V",
           "source: low-z", "load: 10M", "knob: Level = VR1", "```", ""]
    return "\n".join(kit) + "\n".join(blocks)


def kit_of(*blocks: str):
    parsed = parse_guide("trim.md", guide(*(blocks or (boost(),))))
    return parsed, build_circuit(parsed)


class TestNominal:
    def test_the_position_gives_the_hand_analysis_load(self):
        # The collector current does not depend on the load while the transistor is active:
        # RC = (VCC - VC) / IC with IC = alpha IE (Sedra & Smith, divider bias; the
        # common-emitter tests' hand_bias), a linear trimmer's track in proportion.
        _, kit = kit_of()
        ie = hand_bias()
        wanted = (9.0 - 4.5) / (ie * 135 / 136) / 10e3
        assert dict(kit.presets)["TR1"] == pytest.approx(wanted, rel=0.05)

    def test_a_bias_trimmer_is_set_from_half_way_not_into_saturation(self):
        # With the top of the divider near 0 ohms the transistor saturates and its collector
        # reads 4.5 V a second time; the bench (and kitleaf) turns from half way, reaching the
        # active-region setting. Hand analysis (Sedra & Smith, divider bias): IC = 4.5 V / RC,
        # VB = VE + VBE (0.65 V, from memory), RTOP = (VCC - VB) / (VB / R2 + IC / beta).
        _, kit = kit_of(boost(collector="R3 4k7").replace("bias-top: R1 82k",
                                                          "bias-top: TR1 B500k"))
        ic = 4.5 / 4.7e3
        vb = ic * 136 / 135 * 1e3 + 0.65
        top = (9.0 - vb) / (vb / 18e3 + ic / 135)
        assert dict(kit.presets)["TR1"] * 500e3 == pytest.approx(top, rel=0.05)

    def test_every_netlist_takes_the_trimmed_position(self):
        _, kit = kit_of()
        assert dc_at(kit, "boost.c") == pytest.approx(4.5, abs=2e-3)
        assert dc_at(kit, "boost.c", {"VR1": 1.0}) == pytest.approx(4.5, abs=2e-3)

    def test_the_parts_list_needs_no_solve(self):
        parsed = parse_guide("trim.md", guide(boost()))
        assert build_circuit(parsed, set_trimmers=False).presets == ()


class TestBuilds:
    def test_each_build_is_trimmed_to_the_target(self):
        parsed, kit = kit_of()
        specs = derive_specs(parsed, kit)
        collector = next(v for v in specs.stage("boost").voltages if v.label == "Q1 collector")
        # each build's own position, read linearly between grid points of 10 %: within a
        # few millivolts of the target over the 5-95 % builds
        assert collector.volts.low == pytest.approx(4.5, abs=0.02)
        assert collector.volts.high == pytest.approx(4.5, abs=0.02)
        untrimmed = KitState(kit, kit.rest_positions(), trims={})
        spread = np.percentile(untrimmed.samples.batch.voltage("boost.c"), [5, 95])
        assert spread[1] - spread[0] > 0.5  # what trimming takes out

    def test_the_spread_of_the_position_and_the_bench_step(self):
        parsed, kit = kit_of()
        trim = derive_specs(parsed, kit).trims[0]
        assert trim.position.low < trim.position.nominal < trim.position.high
        assert trim.out_of_reach == 0.0
        assert trim_instruction(trim) == (
            "Turn TR1 until Q1 collector (point 2 of boost) reads 4.50 V.")
        assert "builds within part tolerances need" in trim_travel(trim)

    def test_the_step_is_in_the_specs_text_and_json(self):
        parsed, kit = kit_of()
        specs = derive_specs(parsed, kit)
        assert "set-up: Turn TR1 until Q1 collector" in specs_to_text(specs)
        exported = specs_to_json(specs)["trims"][0]
        assert (exported["trimmer"], exported["volts"], exported["point_number"]) == (
            "TR1", 4.5, 2)


class TestBadInput:
    def test_a_target_out_of_reach_gives_the_range(self):
        reads = r"TR1 cannot set Q1 collector to 200 mV: over its travel it reads from [\d.]+ mV"
        with pytest.raises(CircuitError, match=reads + " to 9.00 V") as e:
            kit_of(boost("trim: TR1 sets q1.collector to 0.2 V"))
        assert e.value.span.line == 19

    def test_a_missing_test_point(self):
        with pytest.raises(CircuitError, match="no test point 'q1.colector' "
                                               r"\(did you mean 'q1.collector'\?\)") as e:
            kit_of(boost("trim: TR1 sets q1.colector to 4.5 V"))
        assert e.value.span.line == 19

    @pytest.mark.parametrize(("line", "message"), [
        ("trim: TR1 to 4.5 V", "cannot read 'trim: TR1 to 4.5 V'"),
        ("trim: TR2 sets q1.collector to 4.5 V", "names TR2, which is no trimmer"),
        ("trim: TR1 sets q1.collector to 4.5 A", "trim:"),
    ])
    def test_bad_lines(self, line, message):
        with pytest.raises(CircuitError, match=message) as e:
            kit_of(boost(line))
        assert e.value.span.line == 19

    def test_a_trimmer_needs_a_target(self):
        with pytest.raises(CircuitError, match="TR1 is a trimmer with no set-up target") as e:
            kit_of(boost(trim=""))
        assert e.value.span.line == 15


def reference(position: float, level: float) -> Circuit:
    """The boost written out by hand with its trimmer as the resistance it is set to."""
    c = Circuit().vsource("VSUPPLY", "vcc", "0", dc=9.0)
    c.vsource("VIN", "src", "0", ac=1.0).resistor("RSRC", "src", "input", 100.0)
    c.capacitor("C1", "input", "b", 10e-6).resistor("R1", "vcc", "b", 82e3)
    c.resistor("R2", "b", "0", 18e3).bjt("Q1", "c", "b", "e", "2N3904")
    c.resistor("R3", "vcc", "c", 10e3 * position).resistor("R4", "e", "0", 1e3)
    c.capacitor("C2", "c", "o", 10e-6)
    c.pot("VR1", "0", "output", "o", 100e3, position=level, taper="lin")
    return c.resistor("RLOAD", "output", "0", 10e6)


@pytest.mark.slow
def test_the_trimmed_kit_agrees_with_ngspice():
    """The collector at the trimmed position reads the target, and the gain at 1 kHz at
    every step of the Level knob agrees, against Debian's ngspice."""
    parsed, kit = kit_of(boost())
    position = dict(kit.presets)["TR1"]
    assert operating_point(reference(position, 0.5))["c"] == pytest.approx(4.5, abs=2e-3)
    gains = {p.positions[0][1]: p.gain_db.nominal for p in derive_specs(parsed, kit).knob_sweep}
    for level in KNOB_STEPS:
        _, theirs = ac_sweep(reference(position, level), "VIN", ["input", "output"], 1e3, 1e4,
                             per_decade=1)
        expected = 20 * np.log10(abs(theirs["output"][0] / theirs["input"][0]))
        assert gains[level] == pytest.approx(expected, abs=0.02), level
    assert SolvedKit(kit).base.nominal.batch.voltage("boost.c")[0] == pytest.approx(4.5,
                                                                                     abs=2e-3)


def test_a_trimmer_beside_a_power_stage_is_set_from_the_rail():
    _, kit = kit_of(POWER, boost())
    assert dc_at(kit, "boost.c") == pytest.approx(4.5, abs=2e-3)


def test_the_page_shows_each_switch_position_and_the_set_up_step(tmp_path):
    """A guide with a toggle and a trimmer (invented), built as a site."""
    from tests.site_pages import parse_page

    from kitleaf.site.build import build_site

    guides = tmp_path / "guides"
    guides.mkdir()
    source = Path(__file__).parent / "fixtures" / "pages" / "switch-and-trimmer.md"
    (guides / source.name).write_text(source.read_text(encoding="utf-8"), encoding="utf-8")
    build_site(guides, tmp_path / "published", jobs=1, use_cache=False)
    page = parse_page(tmp_path / "published" / "switch-and-trimmer" / "index.html")
    rows = [th.all_text() for th in page.iter("th")]
    for position in ("diodes", "LEDs", "off"):
        assert f"Clip set to {position}" in rows
    assert "Gain at 1 kHz, knobs at half way, Clip set to off" in rows
    set_up = page.find_all("div", "set-up")[0].all_text()
    assert "Turn TR1 until Q1 drain (point 2 of JFET boost) reads 4.50 V." in set_up
    bom = (tmp_path / "published" / "switch-and-trimmer" / "bom.html").read_text()
    assert "SPDT on-off-on" in bom and "TR1" in bom


def test_a_custom_stage_takes_a_trimmer_on_two_or_three_nodes():
    # a JFET's drain load: two nodes make it a variable resistor, three a pot whose wiper
    # feeds another part; either way the drain is set to the target
    for nodes, extra in (("@ vcc c", ()), ("@ vcc c w", ("part: R2 100k @ w 0",))):
        block = stage_block("core", "custom", "nodes: b c w", "part: C1 1u @ in b",
                            "part: R1 1M @ b 0", "part: Q1 J201 @ c b 0",
                            f"part: TR1 B50k {nodes}", *extra, "part: C2 1u @ c out",
                            "test-point: Q1 drain = c", "trim: TR1 sets c to 4.5 V")
        _, kit = kit_of(block, stage_block("level", "volume", "volume: VR1 B100k"))
        assert dc_at(kit, "core.c") == pytest.approx(4.5, abs=2e-3), nodes


def divider_kit(trimmer: str = "TR1 B20k"):
    """A JFET follower biased from a trimmer's wiper: R1 10k from the supply to the track's
    ccw end, TR1 B20k to ground, the gate fed from the wiper through 1M (invented)."""
    block = stage_block("core", "custom", "nodes: t w g s", "part: R1 10k @ vcc t",
                        f"part: {trimmer} @ t w 0", "part: R2 1M @ w g", "part: C1 1u @ in g",
                        "part: Q1 J201 @ vcc g s", "part: R3 47k @ s 0",
                        "part: C2 1u @ s out", "test-point: bias = w",
                        "trim: TR1 sets w to 4.5 V")
    return kit_of(block, stage_block("level", "volume", "volume: VR1 B100k"))


class TestDividerInCustomStage:
    """A trimmer wired as a divider is re-set in each tolerance build, as one in a
    resistor's place is."""

    @staticmethod
    def hand_position(r1: np.ndarray, track: np.ndarray) -> np.ndarray:
        # Unloaded divider (the gate draws picoamperes): the track's top reads
        # 9 V * track / (R1 + track), and the wiper 4.5 V with the share 4.5 V / top below
        # it; a linear track turns clockwise away from the top (divider formula,
        # Horowitz & Hill, The Art of Electronics, 1.2.3).
        top = 9.0 * track / (r1 + track)
        return 1.0 - 4.5 / top

    def test_the_nominal_position_is_the_divider_formula(self):
        _, kit = divider_kit()
        # 9 V * 20k / 30k = 6 V at the top; 4.5 / 6 below the wiper: position 0.25
        assert dict(kit.presets)["TR1"] == pytest.approx(
            self.hand_position(np.array(10e3), np.array(20e3)), abs=2e-4)

    def test_each_build_is_trimmed_and_the_position_spreads(self):
        from kitleaf.specs.trim import trimmed_positions

        _, kit = divider_kit()
        trimmed = KitState(kit, kit.rest_positions())
        wiper = trimmed.samples.batch.voltage("core.w")
        # a divider's wiper voltage is linear in a linear track's position, so the builds'
        # positions read between grid points are exact: the spread collapses to the solver's
        assert np.max(np.abs(wiper - 4.5)) < 1e-6
        untrimmed = KitState(kit, kit.rest_positions(), trims={}).samples.batch
        spread = np.percentile(untrimmed.voltage("core.w"), [5, 95])
        assert spread[1] - spread[0] > 0.3  # what trimming takes out
        positions = trimmed_positions(kit)["TR1"]
        wanted = self.hand_position(10e3 * untrimmed.factor("R1"),
                                    20e3 * untrimmed.factor("TR1"))
        assert positions == pytest.approx(wanted, abs=1e-6)
        assert np.ptp(positions) > 0.05

    def test_the_page_ranges_are_those_of_trimmed_builds(self):
        parsed, kit = divider_kit()
        specs = derive_specs(parsed, kit)
        bias = next(v for v in specs.stage("core").voltages if v.label == "bias")
        assert (bias.volts.low, bias.volts.high) == pytest.approx((4.5, 4.5), abs=1e-6)
        trim = specs.trims[0]
        assert trim.position.low < trim.position.nominal < trim.position.high

    def test_the_trimmers_power_in_the_builds_is_the_whole_tracks(self):
        # The wiper carries no current, so wherever each build sets it the track dissipates
        # top**2 / track (Ohm's law); rated 3.7 mW (1.85 mW derated, common practice, no
        # source) the nominal 1.8 mW passes and the builds' 95th percentile does not.
        from kitleaf.specs.claims import verify

        parsed, kit = divider_kit("TR1 B20k 3.7mW")
        stress = verify(parsed, kit, derive_specs(parsed, kit)).stresses["TR1"]
        drawn = KitState(kit, kit.rest_positions(), trims={}).samples.batch
        r1, track = 10e3 * drawn.factor("R1"), 20e3 * drawn.factor("TR1")
        watts = (9.0 * track / (r1 + track)) ** 2 / track
        assert stress.bound == "up to "
        assert stress.value == pytest.approx(np.percentile(watts, 95.0), rel=1e-3)


def test_a_trimmer_that_runs_out_of_travel_in_some_builds_is_a_finding():
    # A J201's drain current spreads widely (its data sheet's IDSS range, from memory): with
    # a 25k drain trimmer some builds cannot reach 4.5 V at all
    from kitleaf.specs.claims import verify

    jfet = stage_block("boost", "jfet-common-source", "input-cap: C1 100n film",
                       "gate: R1 1M", "transistor: Q1 J201", "drain: TR1 B25k",
                       "source: R3 1k", "output-cap: C2 1u film", "volume: VR1 B100k",
                       "trim: TR1 sets q1.drain to 4.5 V")
    messages = {}
    for name, block in (("jfet", jfet), ("boost", boost())):
        parsed, kit = kit_of(block)
        specs = derive_specs(parsed, kit)
        messages[name] = [f.message for f in verify(parsed, kit, specs).findings
                          if f.rule == "trim-reach"]
        assert (specs.trims[0].out_of_reach >= 0.05) == (name == "jfet")
    assert messages["boost"] == []
    assert len(messages["jfet"]) == 1
    assert messages["jfet"][0].startswith("TR1 cannot bring Q1 drain to 4.50 V in ")


def test_pinpoint_names_a_trimmer_never_set_up(capsys):
    """The bench: the toggle-and-trimmer guide with TR1 left fully anticlockwise, read with a
    10 Mohm meter (the netlist at that position, not the fault's own edit)."""
    import json

    from kitleaf.cli import main
    from kitleaf.engine import solve_dc
    from kitleaf.faults.probes import METER_OHMS

    path = Path(__file__).parent / "fixtures" / "pages" / "switch-and-trimmer.md"
    kit = build_circuit(parse_guide(path))
    words = []
    for label, node in (("boost.q1.drain", "boost.d"), ("boost.q1.source", "boost.s")):
        circuit = kit.netlist({"TR1": 0.0}).resistor("METER", node, "0", METER_OHMS)
        words.append(f"{label}={solve_dc(circuit).voltage(node):.2f}")
    assert main(["pinpoint", str(path), *words, "--json"]) == 0
    first = json.loads(capsys.readouterr().out)["candidates"][0]
    assert "TR1:at:ccw" in {first["fault"], *first["reads_the_same_as"]}
