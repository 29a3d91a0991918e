"""Specs tables against the engine's own solutions of the demo guides, and against circuit laws."""

from __future__ import annotations

import json

import numpy as np
import pytest

from kitleaf.circuit.chain import INPUT, OUTPUT, SOURCE, input_meter, supply_meter
from kitleaf.engine import solve_ac, solve_dc
from kitleaf.engine.montecarlo import monte_carlo
from kitleaf.render.specs_text import specs_to_text
from kitleaf.render.summary import headline
from kitleaf.specs.derive import derive_specs
from kitleaf.specs.export import SCHEMA, specs_to_json
from kitleaf.specs.solve import KNOB_STEPS, nominal_positions
from specs_kits import DEMOS, solved

REF = np.array([1000.0])


def engine_at(kit, freqs=REF, positions=None):
    """The engine's own DC and AC solution of the kit (knobs at half way unless given)."""
    circuit = kit.netlist(positions if positions is not None else nominal_positions(kit))
    op = solve_dc(circuit)
    return circuit, op, solve_ac(circuit, op, freqs, source=SOURCE)


def db(ac, node_in, node_out):
    return float(20 * np.log10(np.abs(ac.transfer(node_out) / ac.transfer(node_in)))[0])


@pytest.mark.parametrize("name", DEMOS)
class TestAgainstEngine:
    def test_kit_gain_at_1khz(self, name):
        _, kit, specs = solved(name)
        _, _, ac = engine_at(kit)
        assert specs.gain_db.nominal == pytest.approx(db(ac, INPUT, OUTPUT), abs=1e-6)
        assert specs.gain_db.low <= specs.gain_db.high

    def test_stage_gains_and_input_impedance(self, name):
        _, kit, specs = solved(name)
        _, _, ac = engine_at(kit)
        for stage in kit.signal_stages:
            node_in, node_out = kit.stage_nodes(stage.id)
            st = specs.stage(stage.id)
            assert st.gain_db.nominal == pytest.approx(db(ac, node_in, node_out), abs=1e-6)
            # input impedance = V / I at the stage's input meter (Ohm's law)
            z = abs(ac.voltage(node_in)[0] / ac.current(input_meter(stage.id))[0])
            assert st.input_impedance.nominal == pytest.approx(z, rel=1e-6)

    def test_knob_sweep_uses_the_kit_block_names(self, name):
        guide, kit, specs = solved(name)
        names = [k.name for k in kit.knobs]
        assert [p.positions[0][0] for p in specs.knob_sweep] == [
            n for n in names for _ in KNOB_STEPS]
        for point in specs.knob_sweep:
            (knob_name, pos), = point.positions
            pot = next(k.designator for k in kit.knobs if k.name == knob_name)
            positions = {**nominal_positions(kit), pot: pos}
            _, _, ac = engine_at(kit, positions=positions)
            assert point.gain_db.nominal == pytest.approx(db(ac, INPUT, OUTPUT), abs=1e-6)

    def test_supply_current_and_voltages(self, name):
        _, kit, specs = solved(name)
        _, op, _ = engine_at(kit)
        # SPICE sign: the supply's branch current is negative when it feeds the circuit
        assert specs.supply_current.nominal == pytest.approx(-op.current("VSUPPLY"), rel=1e-9)
        for stage in kit.signal_stages:
            meter = op.current(supply_meter(stage.id))
            assert specs.stage(stage.id).supply_current.nominal == pytest.approx(meter, abs=1e-12)
        for st in specs.stages:
            for v in st.voltages:
                assert v.volts.nominal == pytest.approx(op.voltage(v.node), abs=1e-9)

    def test_corners_sit_3db_below_the_band_gain(self, name):
        _, kit, specs = solved(name)
        for sp, (node_in, node_out) in self.measured(kit, specs):
            for corner in (sp.low_corner_hz, sp.high_corner_hz):
                if corner is None:
                    continue
                _, _, ac = engine_at(kit, np.array([corner.nominal]))
                # half power is 10 log10(2) = 3.0103 dB down (definition of the -3 dB point)
                drop = sp.band_gain_db.nominal - db(ac, node_in, node_out)
                assert drop == pytest.approx(10 * np.log10(2), abs=2e-3)

    @staticmethod
    def measured(kit, specs):
        yield specs, (INPUT, OUTPUT)
        for stage in kit.signal_stages:
            yield specs.stage(stage.id), kit.stage_nodes(stage.id)

    def test_spread_matches_the_engines_monte_carlo(self, name):
        _, kit, specs = solved(name)
        circuit = kit.netlist(nominal_positions(kit))
        v = next(v for st in specs.stages for v in st.voltages if st.signal)
        mc = monte_carlo(circuit, samples=specs.samples, seed=specs.seed, nodes=[v.node])
        assert (v.volts.low, v.volts.high) == pytest.approx(
            (mc.voltage(v.node).p5, mc.voltage(v.node).p95), rel=1e-9, abs=1e-12)


@pytest.mark.parametrize("name", DEMOS)
def test_output_impedance_is_the_thevenin_impedance(name):
    _, kit, specs = solved(name)
    circuit = kit.netlist(nominal_positions(kit))
    loads = (1e6, 10e3)
    volts = []
    for r in loads:
        c = circuit.replaced("RLOAD", value=r)
        volts.append(solve_ac(c, solve_dc(c), REF, source=SOURCE).voltage(OUTPUT)[0])
    # Thevenin from two loads: Z = (V1 - V2) / (V2 / R2 - V1 / R1) (circuits textbook)
    z = (volts[0] - volts[1]) / (volts[1] / loads[1] - volts[0] / loads[0])
    assert specs.output_impedance.nominal == pytest.approx(abs(z), rel=1e-6)


def test_battery_readings_follow_the_supply():
    _, kit, specs = solved("brookside-boost")
    assert [s.name for s in specs.supplies] == ["adapter", "fresh battery"]
    battery = kit.netlist(nominal_positions(kit), specs.supplies[1].volts)
    op = solve_dc(battery)
    for st in specs.stages:
        for v in st.voltages:
            assert v.readings[1].nominal == pytest.approx(op.voltage(v.node), abs=1e-9)


def test_headroom_names_a_device_of_the_kit():
    _, kit, specs = solved("brookside-boost")
    head = specs.stage("boost").headroom
    assert head.limit.startswith("Q1 ")
    assert 0 < head.volts.low <= head.volts.high
    # The nominal collector swing to saturation is VCE - 0.25 V before the output divider.
    _, op, ac = engine_at(kit)
    vce = op.voltage("boost.c") - op.voltage("boost.e")
    across = abs(ac.voltage("boost.c")[0] - ac.voltage("boost.e")[0])
    expected = (vce - 0.25) * abs(ac.voltage(OUTPUT)[0]) / across
    assert head.volts.nominal == pytest.approx(expected, rel=1e-9)


def test_json_is_versioned_stable_and_reproducible():
    guide, kit, specs = solved("heron-opamp-boost")
    data = specs_to_json(specs)
    assert data["schema"] == SCHEMA == "kitleaf-specs/1"
    for key in ("gain_db_1khz", "band_gain_db", "low_corner_hz", "high_corner_hz",
                "input_impedance_ohm_1khz", "output_impedance_ohm_1khz", "supply_current_ma",
                "headroom_v_peak", "drive", "gain_db_1khz_by_knob", "response", "stages",
                "supplies"):
        assert key in data
    assert set(data["gain_db_1khz"]) == {"nominal", "low", "high"}
    assert [k["name"] for k in data["kit"]["knobs"]] == ["Gain", "Level"]
    again = specs_to_json(derive_specs(guide, kit))
    assert json.dumps(again) == json.dumps(data)


def test_text_uses_the_trade_units():
    _, _, specs = solved("brookside-boost")
    text = specs_to_text(specs)
    assert "kΩ" in text and "mA" in text and "Hz" in text and " dB (" in text
    assert "e-0" not in text  # no raw floats


def test_text_gives_each_signal_stage_its_corners_and_impedances():
    from kitleaf.display import range_text
    _, _, specs = solved("heron-opamp-boost")
    text = specs_to_text(specs)
    gain = next(s for s in specs.stages if s.id == "gain")
    block = text[text.index("stage gain"):text.index("stage level")]
    assert f"low corner       {range_text(gain.low_corner_hz, 'frequency')}" in block
    assert f"output impedance {range_text(gain.output_impedance, 'resistance')}" in block
    assert "corner" not in text[text.index("stage power"):text.index("stage gain")]


def test_an_engine_error_is_placed_at_the_part_it_names(monkeypatch):
    # A solve that fails inside derive_specs must still point at the guide line of its part.
    from pathlib import Path

    from kitleaf.circuit.build import build_circuit
    from kitleaf.errors import SolveError
    from kitleaf.guide import parse_guide
    from kitleaf.specs import derive as derive_module

    guide = parse_guide(Path(__file__).parent.parent / "guides" / "brookside-boost.md")
    kit = build_circuit(guide)

    def fail(*_args):
        raise SolveError("the DC operating point did not converge near Q1")

    monkeypatch.setattr(derive_module, "_derive", fail)
    with pytest.raises(SolveError) as err:
        derive_module.derive_specs(guide, kit)
    q1 = next(p for p in kit.parts() if p.designator == "Q1")
    assert err.value.span == q1.span


def test_the_card_gain_range_takes_the_knobs_together():
    # Heron: Gain and Level both fully up leave the non-inverting gain 1 + Rf / Rg with the
    # Gain pot shorted, 1 + 82k / 2k7 = 31.4 or 29.9 dB (textbook non-inverting amplifier);
    # one knob at a time, the other half way, reaches about 12 dB
    _, _, specs = solved("heron-opamp-boost")
    label, text = headline(specs)[0]
    assert label == "Gain range"
    top = float(text.split(" to ")[1].removesuffix(" dB"))
    assert top == pytest.approx(20 * np.log10(1 + 82e3 / 2.7e3), abs=0.2)
    ends = {tuple(p for _, p in point.positions) for point in specs.knob_ends}
    assert ends == {(0.0, 0.0), (0.0, 1.0), (1.0, 0.0), (1.0, 1.0)}


def test_the_card_of_a_kit_that_clips_says_its_gain_is_small_signal():
    # the Alder drive's diodes clamp its output: 30-odd dB holds for the smallest signals only
    _, _, specs = solved("alder-drive")
    assert specs.clips and headline(specs)[0][0] == "Small-signal gain range"


def test_the_heron_counts_both_halves_of_its_dual_op_amp():
    # TL072: 1.4 mA per amplifier (datasheet typical, from memory); the unused half U1B,
    # tied as a follower, draws it as the used one does
    _, _, specs = solved("heron-opamp-boost")
    assert specs.stage("spare").supply_current.nominal == pytest.approx(1.4e-3, rel=0.01)
    parts = sum(s.supply_current.nominal for s in specs.stages if s.supply_current)
    assert specs.supply_current.nominal == pytest.approx(parts, rel=1e-6)


def test_a_draw_below_a_meters_reach_reads_as_none_not_as_a_figure():
    # A power stage with no LED draws nothing: the solver leaves femtoamperes of rounding,
    # which must not be printed as a current (or as a negative one).
    from kitleaf.display import range_text
    from kitleaf.specs.model import Range
    assert range_text(Range(6.51e-15, -2.71e-14, 2.48e-14), "current") == "none (under 1 nA)"
    assert range_text(Range(2.11e-3, 2.02e-3, 2.20e-3), "current") == "2.11 mA (2.02–2.2)"
