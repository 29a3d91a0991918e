"""Design rules about the solved circuit: corners on the signal path, transistor regions,
op-amp headroom, input impedance behind a pickup and battery life. Each rule: a guide that
trips it and one that does not."""

from __future__ import annotations

import re

import numpy as np
import pytest
from tests.stages.kits import EVERY_KIND, guide_text

from kitleaf.circuit.build import build_circuit
from kitleaf.engine import solve_batch
from kitleaf.guide.parse import parse_guide
from kitleaf.specs import measures as m
from kitleaf.specs import sampled
from kitleaf.specs.claims import verify
from kitleaf.specs.derive import derive_specs, solve_kit
from kitleaf.specs.model import SAMPLES, SEED
from kitleaf.specs.rules import RuleContext, coupling_corner
from kitleaf.specs.rules.coupling_corner import setting_capacitor
from kitleaf.specs.sampled import solve_nominal
from kitleaf.specs.solve import View
from rules_kits import BUFFER, GUIDE, KIT, OPAMP, POWER, findings, swapped


def filter_guide(block: str, source: str = "low-z") -> str:
    kit = KIT.replace("knob: Level = VR1\n", "").replace("source: low-z", f"source: {source}")
    return kit + "\n" + POWER + "\n" + block


def high_pass(cap: str, resistor: str) -> str:
    return ("```stage cut\nkind: high-pass\n"
            f"series-cap: {cap}\nshunt-resistor: {resistor}\n```\n")


def low_pass(resistor: str, cap: str) -> str:
    return ("```stage cut\nkind: low-pass\n"
            f"series-resistor: {resistor}\nshunt-cap: {cap}\n```\n")


class TestCouplingCorner:
    def test_1n_into_100k_cuts_at_1_6_khz(self):
        # R = 100 kΩ ∥ the 1 MΩ load = 90.9 kΩ; f = 1 / (2π · 90.9 kΩ · 1 nF) = 1.75 kHz
        # (first-order RC high-pass, hand calculation).
        found = findings(filter_guide(high_pass("C1 1n film", "R1 100k")), "coupling-corner")
        assert [f.subject for f in found] == ["cut"]
        assert "1.75 kHz" in found[0].message

    def test_the_finding_names_the_capacitor_that_sets_the_corner(self):
        # the 1 nF input cap into the 83 kΩ bias network cuts at about 1.9 kHz (first-order
        # RC, hand calculation), far above what the 100 µF bypass or 10 µF output cap set
        found = findings(swapped(("C1 1u film 63V", "C1 1n film 63V")), "coupling-corner")
        assert [f.subject for f in found] == ["boost"]
        assert "C1 (input-cap) sets it" in found[0].message
        assert "a larger C1" in found[0].message
        bypass = findings(swapped(("C3 100u electrolytic 16V", "C3 1u electrolytic 16V")),
                          "coupling-corner")
        assert "C3 (bypass-cap) sets it" in bypass[0].message

    def test_100n_into_1m_cuts_at_1_6_hz(self):
        # 1 / (2π · 1 MΩ · 100 nF) = 1.59 Hz, under 20 Hz.
        assert findings(filter_guide(high_pass("C1 100n film", "R1 1M")), "coupling-corner") == []


class TestSharedStates:
    def test_the_rules_read_the_specs_solved_states_and_find_the_same(self, monkeypatch):
        g = parse_guide("test.md", swapped(("C1 1u film 63V", "C1 1n film 63V")))
        kit = build_circuit(g)
        solved = solve_kit(g, kit)
        specs = derive_specs(g, kit, solved)
        alone = verify(g, kit, specs)  # the rules solve their own states
        solves = []
        real = sampled.solve_batch
        monkeypatch.setattr(sampled, "solve_batch",
                            lambda c, *a, **k: solves.append(a) or real(c, *a, **k))
        shared = verify(g, kit, specs, solved)
        # no tolerance batch is solved again: every rule read the specs' samples
        assert [a for a in solves if a and a[0] is not None] == []
        assert [f.line() for f in shared.findings] == [f.line() for f in alone.findings]
        assert shared.stresses == alone.stresses

    def test_a_tenfold_capacitor_keeps_the_operating_point_and_moves_the_corner(self):
        # a capacitor carries no DC current, so the changed kit is solved at the kit's own
        # operating point; its corner equals a fresh solve's
        g = parse_guide("test.md", swapped(("C1 1u film 63V", "C1 1n film 63V")))
        kit = build_circuit(g)
        solved = solve_kit(g, kit)
        ctx = RuleContext(g, kit, derive_specs(g, kit, solved), solved)
        stage = kit.signal_stages[0]
        part, moved = setting_capacitor(ctx, stage)
        changed = ctx.states[0].circuit.replaced(part.designator,
                                                 value=part.value * 10.0)
        fresh = m.corner(*kit.stage_nodes(stage.id), 0)(View(solve_nominal(changed)))[0]
        assert moved == pytest.approx(fresh, rel=1e-9)

    def test_every_capacitor_trial_is_one_batch(self, monkeypatch):
        # a whole-kit solve per trial grew with the kit's size times its flagged stages
        g = parse_guide("test.md", swapped(("C1 1u film 63V", "C1 1n film 63V")))
        kit = build_circuit(g)
        solved = solve_kit(g, kit)
        ctx = RuleContext(g, kit, derive_specs(g, kit, solved), solved)
        stage = kit.signal_stages[0]
        views = []
        monkeypatch.setattr(coupling_corner, "View",
                            lambda *a, **k: views.append(a) or View(*a, **k))
        assert setting_capacitor(ctx, stage) is not None
        assert sum(p.type == "capacitor" for p in stage.all_parts()) >= 2
        assert len(views) == 1


class TestTrebleCorner:
    def test_10k_and_10n_cut_at_1_6_khz(self):
        # 1 / (2π · 10 kΩ · 10 nF) = 1.59 kHz, unloaded by the 1 MΩ load (first-order RC).
        found = findings(filter_guide(low_pass("R1 10k", "C1 10n film")), "treble-corner")
        assert [f.subject for f in found] == ["cut"]

    def test_1k_and_1n_cut_at_159_khz(self):
        assert findings(filter_guide(low_pass("R1 1k", "C1 1n film")), "treble-corner") == []


class TestTransistorRegion:
    def test_a_base_held_at_0_1_v_is_cut_off(self):
        # 9 V · 10k / (1M + 10k) is about 0.09 V at the base, far below a junction's 0.6 V.
        found = findings(swapped(("R2 150k", "R2 10k")), "transistor-region")
        assert [f.subject for f in found] == ["Q1"]
        assert "cut off" in found[0].message

    def test_a_base_driven_hard_saturates(self):
        # 150k/47k divider: base near 6.7 V, emitter current near 4 mA, far more than the
        # 8k2 collector resistor can pass without the collector falling to the emitter.
        found = findings(swapped(("R1 680k", "R1 47k")), "transistor-region")
        assert "saturated" in found[0].message

    def test_the_plain_bias_is_active(self):
        assert findings(GUIDE, "transistor-region") == []

    def test_a_buffer_ohmic_in_a_share_of_builds_is_found_with_that_share(self):
        # Nominally the 2N5457 follower's source sits near 5 V, but across the type's pinch-off
        # range it climbs towards the rail; a build is ohmic where VDS < VGS - VTO (the
        # Shichman-Hodges model, SPICE JFET level 1). Counted here from each build's terminal
        # voltages and drawn VTO, apart from the engine's own region report.
        found = findings(BUFFER, "transistor-region")
        assert [f.subject for f in found] == ["Q2"]
        assert "ohmic" in found[0].message and "not with nominal parts" in found[0].message
        guide = parse_guide("test.md", BUFFER)
        circuit = build_circuit(guide).netlist({})
        batch = solve_batch(circuit, SAMPLES, SEED)
        q2 = circuit.element("Q2")
        vgs = batch.voltage(q2.g) - batch.voltage(q2.s)
        vds = batch.voltage(q2.d) - batch.voltage(q2.s)
        vgst = vgs - batch.params["Q2"]["VTO"]
        ohmic = np.mean((vgst > 0) & (vds < vgst))
        assert ohmic >= 0.05  # the case is exercised: at least 5 % of builds
        share = int(re.search(r"in (\d+) % of builds", found[0].message)[1])
        assert share == pytest.approx(100 * ohmic, abs=1.0)




class TestOpampHeadroom:
    def test_a_reference_0_8_v_above_ground_leaves_no_room(self):
        # VREF = 9 V · 10k / 110k, about 0.8 V: the output sits there, within 1 V of ground.
        text = filter_guide(OPAMP).replace("R11 22k", "R11 100k").replace("R12 22k", "R12 10k")
        found = findings(text, "opamp-headroom")
        assert [f.subject for f in found] == ["U1A"]

    def test_a_mid_rail_reference_passes(self):
        assert findings(filter_guide(OPAMP), "opamp-headroom") == []


class TestInputImpedance:
    def test_83k_behind_a_pickup_is_found(self):
        text = swapped(("source: low-z", "source: pickup"))
        found = findings(text, "input-impedance")
        assert [f.subject for f in found] == ["kit"]
        assert found[0].span.line == text.splitlines().index("source: pickup") + 1

    def test_83k_behind_a_low_impedance_source_is_fine(self):
        assert findings(GUIDE, "input-impedance") == []

    def test_2m2_behind_a_pickup_is_fine(self):
        # 2.2 MΩ in parallel with the 1 MΩ load: 688 kΩ, and 5 % parts keep it over 650 kΩ
        text = filter_guide(high_pass("C1 100n film", "R1 2M2"), source="pickup")
        assert findings(text, "input-impedance") == []

    def test_1m_sits_on_the_limit_and_half_the_builds_fall_below(self):
        # 1 MΩ in parallel with the 1 MΩ load is 500 kΩ nominally (hand calc); with 5 %
        # parts about half the builds come out below it
        text = filter_guide(high_pass("C1 100n film", "R1 1M"), source="pickup")
        found = findings(text, "input-impedance")
        assert [f.subject for f in found] == ["kit"]
        assert "is 500 kΩ, but below 500 kΩ in at least 5 % of builds" in found[0].message


class TestBatteryLife:
    def test_2_3_ma_for_1000_h_outruns_a_500_mah_battery(self):
        # 2.31 mA · 1000 h = 2310 mAh > 500 mAh (the assumed 9 V alkaline, from memory).
        text = swapped(("source: low-z", "source: low-z\nbattery-life: 1000 h"))
        found = findings(text, "battery-life")
        assert [f.subject for f in found] == ["kit"]

    def test_a_stated_capacity_is_used(self):
        # 2.31 mA · 1000 h = 2310 mAh < 2500 mAh.
        text = swapped(("source: low-z", "source: low-z\nbattery: 2500 mAh\nbattery-life: 1000 h"))
        assert findings(text, "battery-life") == []

    def test_100_h_is_within_reach(self):
        text = swapped(("source: low-z", "source: low-z\nbattery-life: 100 h"))
        assert findings(text, "battery-life") == []


class TestBiasPath:
    """An op-amp input, gate or base reached only through capacitors has no bias of its own
    and drifts to a rail (common practice, no source)."""

    def test_an_op_amp_biased_to_a_reference_nobody_makes(self):
        power = "".join(line for line in POWER.splitlines(keepends=True)
                         if not line.startswith("vref-"))
        text = filter_guide(OPAMP).replace(POWER, power)
        found = findings(text, "bias-path")
        assert [f.subject for f in found] == ["U1A"]
        assert "+ input" in found[0].message and "vref parts" in found[0].message

    def test_an_op_amp_biased_to_the_power_stage_reference_passes(self):
        # the + input through the bias resistor to vref, the - input through the feedback
        # resistor to the output the op-amp drives
        assert findings(filter_guide(OPAMP), "bias-path") == []

    def test_a_divider_biased_base_passes(self):
        assert findings(GUIDE, "bias-path") == []

    def test_a_gate_and_an_input_reached_only_through_capacitors(self):
        from kitleaf.engine import Circuit
        from kitleaf.specs.rules.bias_path import _grounded_nodes

        c = Circuit().vsource("VCC", "vcc", "0", dc=9.0)
        c.capacitor("C1", "in", "g", 100e-9).jfet("Q1", "vcc", "g", "s", "J201")
        c.resistor("RS", "s", "0", 1e3)
        c.capacitor("C2", "s", "p", 100e-9).opamp("U1", "p", "m", "out", "vcc", "0", "TL072")
        c.resistor("RF", "out", "m", 10e3).resistor("RG", "m", "0", 1e3)
        jfet, opamp = (next(e for e in c.elements if e.name == n) for n in ("Q1", "U1"))
        gate_side, _ = _grounded_nodes(c.elements, jfet)
        assert "g" not in gate_side and "s" in gate_side
        input_side, _ = _grounded_nodes(c.elements, opamp)
        assert "p" not in input_side and "m" in input_side

    def test_no_stage_kind_trips_it_as_built(self):
        # each of the twelve kinds with the parts its roles ask for biases what it drives
        assert findings(guide_text(*EVERY_KIND), "bias-path") == []


class TestUnusedHalf:
    def test_a_dual_with_one_half_used_leaves_the_other_floating(self):
        text = filter_guide(OPAMP)
        found = findings(text, "unused-half")
        assert [f.subject for f in found] == ["U1A"]
        assert "U1B" in found[0].message and "opamp-spare" in found[0].message
        assert found[0].span.line == text.splitlines().index("opamp: U1A TL072") + 1

    def test_a_spare_stage_ties_it(self):
        spare = "```stage spare\nkind: opamp-spare\nopamp: U1B TL072\ntie: vref\n```\n"
        assert findings(filter_guide(OPAMP) + "\n" + spare, "unused-half") == []


class TestPassiveToneControls:
    def test_a_tone_stack_is_not_judged_by_its_corners(self):
        # half way, the stack's response has a bass shelf and a mid scoop, so its -3 dB points
        # from the band's peak fall inside the audio band: its purpose, not a fault
        stack = ("```stage stack\nkind: tone-stack\ntreble-cap: C1 220p\nslope: R1 47k\n"
                 "treble: VR1 A250k\nbass-cap: C2 22n\nbass: VR2 A1M\nmid-cap: C3 22n\n"
                 "mid: VR3 B25k\n```\n")
        text = filter_guide(stack)
        assert findings(text, "coupling-corner") == findings(text, "treble-corner") == []
        guide = parse_guide("test.md", text)
        specs = derive_specs(guide, build_circuit(guide))
        assert specs.stage("stack").high_corner_hz.nominal < 10e3  # under the rule's limit


STACK = ("```stage stack\nkind: tone-stack\ntreble-cap: C1 220p\nslope: R1 47k\n"
         "treble: VR1 A250k\nbass-cap: C2 22n\nbass: VR2 A1M\nmid-cap: C3 22n\nmid: VR3 B25k\n"
         "```\n")
FOLLOWER = ("```stage buffer\nkind: emitter-follower\ninput-cap: C4 100n film\n"
            "bias-top: R4 1M\nbias-bottom: R5 1M\ntransistor: Q1 2N3904\nemitter: R6 10k\n"
            "output-cap: C5 4u7 film\npulldown: R7 1M\n```\n")


class TestToneDrive:
    def test_a_pickup_straight_into_a_stack_is_too_soft_a_driver(self):
        # about 16 kΩ at 1 kHz: 6.5 kΩ and 2.5 H in series (15.7 kΩ of reactance), the 250 kΩ
        # and 470 pF across (hand calculation), against a tenth of the stack's ~45 kΩ or more
        found = findings(filter_guide(STACK, source="pickup"), "tone-drive")
        assert [f.subject for f in found] == ["stack"]
        assert "the passive guitar pickup" in found[0].message

    def test_a_follower_in_front_drives_it_well(self):
        # an emitter follower's output impedance is tens of ohms (Horowitz & Hill 3e, 2.2.4)
        assert findings(filter_guide(FOLLOWER + "\n" + STACK, source="pickup"),
                        "tone-drive") == []

    def test_a_10k_source_is_named_and_can_be_allowed(self):
        text = filter_guide(STACK, source="10k")
        assert [f.subject for f in findings(text, "tone-drive")] == ["stack"]
        allowed = text.replace("mid: VR3 B25k\n", "mid: VR3 B25k\nallow: tone-drive stack: "
                               "the board's own buffer drives it\n")
        assert [f.allowed for f in findings(allowed, "tone-drive")] == [
            "the board's own buffer drives it"]


class TestToneLoad:
    def test_a_stack_into_a_transistor_stage_is_loaded_down(self):
        # the stack's output impedance climbs to about 240 kΩ with the treble up, against
        # the ~80 kΩ of a 470k/100k divider (hand calculation) behind it
        gain = ("```stage gain\nkind: common-emitter\ninput-cap: C6 100n film\n"
                "bias-top: R8 470k\nbias-bottom: R9 100k\ntransistor: Q2 2N5089\n"
                "collector: R20 10k\nemitter: R21 1k\noutput-cap: C7 1u film\n```\n")
        found = findings(filter_guide(FOLLOWER + "\n" + STACK + "\n" + gain), "tone-load")
        assert [f.subject for f in found] == ["stack"]
        assert "stage 'gain'" in found[0].message

    def test_the_kit_load_of_1m_is_enough(self):
        assert findings(filter_guide(FOLLOWER + "\n" + STACK), "tone-load") == []
