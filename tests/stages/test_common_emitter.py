"""common-emitter: DC bias and mid-band gain against textbook hand analysis; bad input errors."""

from __future__ import annotations

import math

import pytest
from tests.stages.kits import dc_at, gain_at, make_kit, stage_block

from kitleaf.errors import CircuitError

VT = 0.02585  # thermal voltage at 300 K (physical constant kT/q)


def ce(*extra: str, transistor: str = "Q1 2N3904") -> str:
    return stage_block("boost", "common-emitter", "input-cap: C1 10u", "bias-top: R1 82k",
                       "bias-bottom: R2 18k", f"transistor: {transistor}", "collector: R3 4k7",
                       "emitter: R4 1k", "output-cap: C2 10u", *extra)


def hand_bias(vcc=9.0, r1=82e3, r2=18e3, re=1e3, beta=135.0, vbe=0.66):
    """Divider bias with the base current's load (Sedra & Smith, Microelectronic Circuits,
    BJT biasing with a voltage divider): IE = (VTH - VBE) / (RE + RTH / (beta + 1))."""
    vth, rth = vcc * r2 / (r1 + r2), r1 * r2 / (r1 + r2)
    return (vth - vbe) / (re + rth / (beta + 1))


class TestCommonEmitter:
    def test_dc_bias_matches_divider_analysis(self):
        kit = make_kit(ce(), load="10M")
        ie = hand_bias()
        assert dc_at(kit, "boost.e") == pytest.approx(ie * 1e3, rel=0.05)
        assert dc_at(kit, "boost.c") == pytest.approx(9.0 - ie * 4.7e3, rel=0.05)

    def test_unbypassed_gain_is_rc_over_re_plus_little_re(self):
        # Av = -RC / (RE + re), re = VT / IE (Horowitz & Hill, The Art of Electronics 3e, 2.2.7)
        kit = make_kit(ce(), load="10M")
        ie = hand_bias()
        expected = 4.7e3 / (1e3 + VT / ie)
        gain = gain_at(kit, 1e3)
        assert abs(gain) == pytest.approx(expected, rel=0.05)
        assert gain.real < 0  # inverting

    def test_full_bypass_raises_gain_to_rc_over_re(self):
        kit = make_kit(ce("bypass-cap: C3 1000u electrolytic"), load="10M")
        ie = hand_bias()
        # with RE bypassed, Av = RC / re = gm RC (same source), less the 100 ohm source drop
        assert abs(gain_at(kit, 1e3)) == pytest.approx(4.7e3 * ie / VT, rel=0.15)

    def test_partial_bypass_sits_between(self):
        kit = make_kit(ce("bypass-resistor: R5 220R", "bypass-cap: C3 1000u electrolytic"),
                       load="10M")
        ie = hand_bias()
        re_ac = 1e3 * 220 / 1220  # RE in parallel with the bypass resistor at mid band
        assert abs(gain_at(kit, 1e3)) == pytest.approx(4.7e3 / (re_ac + VT / ie), rel=0.05)

    def test_volume_pot_divides_the_output(self):
        kit = make_kit(ce("volume: VR1 B100k"), load="10M")
        full = abs(gain_at(kit, 1e3, positions={"VR1": 1.0}))
        half = abs(gain_at(kit, 1e3, positions={"VR1": 0.5}))
        # a linear pot at half travel: half the signal (voltage divider, no source needed)
        assert half / full == pytest.approx(0.5, rel=0.03)

    def test_pnp_runs_mirror_image_on_the_positive_rail(self):
        # the divider mirrored too (18k on top): the same hand analysis measured down from VCC
        block = ce(transistor="Q1 2N3906").replace("R1 82k", "R1 18k").replace("R2 18k", "R2 82k")
        kit = make_kit(block, load="10M")
        ie = hand_bias(beta=150.0, vbe=0.68)
        assert 9.0 - dc_at(kit, "boost.e") == pytest.approx(ie * 1e3, rel=0.06)
        assert dc_at(kit, "boost.c") == pytest.approx(ie * 4.7e3, rel=0.06)

    def test_test_points_name_each_pin(self):
        kit = make_kit(ce())
        points = kit.kind(kit.stages[0]).test_points(kit.stages[0])
        assert [(p.label, p.node) for p in points] == [
            ("Q1 base", "b"), ("Q1 collector", "c"), ("Q1 emitter", "e")]


class TestBadInput:
    def test_missing_role_names_the_stage_and_role(self):
        block = ce().replace("collector: R3 4k7\n", "")
        with pytest.raises(CircuitError, match=r"stage 'boost'.*missing its 'collector'") as err:
            make_kit(block)
        assert err.value.span.line == 7  # the stage's fence line in the guide

    def test_capacitor_as_collector_resistor(self):
        block = ce().replace("collector: R3 4k7", "collector: C9 100n")
        with pytest.raises(CircuitError, match=r"role 'collector' takes a resistor") as err:
            make_kit(block)
        assert err.value.span.line == 13  # the collector line

    def test_pot_without_taper(self):
        with pytest.raises(CircuitError, match=r"'volume'.*needs a taper") as err:
            make_kit(ce("volume: VR1 100k"))
        assert err.value.span.line == 16  # the volume line

    def test_jfet_model_in_a_bjt_role(self):
        with pytest.raises(CircuitError, match=r"Q1 J201 is an N-channel JFET"):
            make_kit(ce(transistor="Q1 J201"))

    def test_unknown_kind_lists_the_kinds(self):
        block = stage_block("boost", "comon-emitter", "collector: R3 10k")
        with pytest.raises(CircuitError, match=r"did you mean 'common-emitter'.*custom") as err:
            make_kit(block)
        assert err.value.span.line == 8  # the kind line


def test_hand_bias_helper_is_sane():
    # 1.62 V at the base divider, less one VBE, over 1k: just under a milliamp
    assert 0.8e-3 < hand_bias() < 0.96e-3 and math.isfinite(hand_bias())
