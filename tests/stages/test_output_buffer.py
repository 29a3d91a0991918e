"""output-buffer: an emitter follower or an op-amp follower, chosen by the follower's part;
unity gain, a low output impedance plus the series resistor; ngspice checks every figure."""

from __future__ import annotations

import pytest
from tests.stages.kits import (
    POWER,
    dc_at,
    gain_at,
    guide_text,
    line_of,
    make_kit,
    specs_of,
    stage_block,
)
from tests.stages.spice_oracle import RIPPLE, check_hum, check_large_signal, check_stage

from kitleaf.errors import CircuitError

TRANSISTOR = ("follower: Q1 2N3904", "bias-top: R1 100k", "bias-bottom: R2 100k",
              "emitter: R3 4k7")
OPAMP = ("follower: U1B TL072", "bias: R1 1M")


def buffer(*lines: str) -> str:
    return stage_block("out", "output-buffer", "input-cap: C1 1u film", *lines,
                       "output-cap: C2 10u", "pulldown: R4 100k", "output-resistor: R5 470R")


def test_an_opamp_follower_has_unity_gain_into_a_light_load():
    # a follower's gain is 1 (Horowitz & Hill, The Art of Electronics 3e, 4.2.3, from memory)
    kit = make_kit(POWER, buffer(*OPAMP), load="10M")
    assert abs(gain_at(kit, 1e3)) == pytest.approx(1.0, abs=0.002)


def test_the_series_resistor_divides_against_the_load():
    # 470 ohms into 10k: 10k / 10.47k (voltage divider, Horowitz & Hill 3e, 1.2.3)
    kit = make_kit(POWER, buffer(*OPAMP), load="10k")
    assert abs(gain_at(kit, 1e3)) == pytest.approx(10e3 / 10.47e3, rel=0.003)


def test_an_emitter_follower_gain_is_just_under_one():
    kit = make_kit(POWER, buffer(*TRANSISTOR), load="10M")
    assert 0.97 < abs(gain_at(kit, 1e3)) < 1.0


def test_the_opamp_output_sits_at_the_reference():
    kit = make_kit(POWER, buffer(*OPAMP), load="10M")
    assert dc_at(kit, "out.o") == pytest.approx(dc_at(kit, "vref"), abs=0.02)


def test_output_impedance_is_the_series_resistor_plus_a_little():
    # an op-amp follower's own output impedance is tiny under feedback (Horowitz & Hill 3e,
    # 4.2.3, from memory); what the jack sees is the series resistor, the 100k pulldown across
    # the follower's side, and the output cap's 16 ohms at 1 kHz in quadrature
    _, specs = specs_of(POWER, buffer(*OPAMP), load="10M")
    assert specs.stages[1].output_impedance.nominal == pytest.approx(470.3, rel=0.01)


def test_test_points_follow_the_variant():
    kit = make_kit(POWER, buffer(*OPAMP), stage_block("spare", "opamp-spare",
                                                      "opamp: U1A TL072", "tie: vref"))
    stage = kit.stages[1]
    assert [p.pin for p in kit.kind(stage).test_points(stage)] == ["5", "6", "7", "8"]
    kit = make_kit(POWER, buffer(*TRANSISTOR))
    stage = kit.stages[1]
    assert [p.label for p in kit.kind(stage).test_points(stage)] == [
        "Q1 base", "Q1 collector", "Q1 emitter"]


class TestBadInput:
    @pytest.mark.parametrize("lines, line", [
        (OPAMP + ("emitter: R3 4k7",), "emitter:"),
        (OPAMP + ("bias-top: R6 100k",), "bias-top:"),
        (TRANSISTOR + ("bias: R6 1M",), "bias:"),
    ], ids=["opamp-with-emitter", "opamp-with-divider", "transistor-with-bias"])
    def test_a_role_of_the_other_variant_is_refused_at_its_line(self, lines, line):
        block = buffer(*lines)
        with pytest.raises(CircuitError, match="follower has no") as caught:
            make_kit(POWER, block)
        assert caught.value.span.line == line_of(guide_text(POWER, block), line)

    @pytest.mark.parametrize("lines, missing", [
        (("follower: U1B TL072",), "bias"),
        (TRANSISTOR[:3], "emitter"),
        ((TRANSISTOR[0], TRANSISTOR[2], TRANSISTOR[3]), "bias-top"),
    ])
    def test_a_role_the_variant_needs_is_asked_for_at_the_stage(self, lines, missing):
        block = buffer(*lines)
        with pytest.raises(CircuitError, match=f"needs a '{missing}' part") as caught:
            make_kit(POWER, block)
        assert caught.value.span.line == line_of(guide_text(POWER, block), "```stage out")

    def test_an_opamp_follower_without_a_power_stage_asks_for_the_reference(self):
        with pytest.raises(CircuitError, match="needs the mid-rail reference"):
            make_kit(buffer(*OPAMP))

    def test_a_transistor_follower_needs_no_reference(self):
        assert make_kit(buffer(*TRANSISTOR)).stages[0].kind == "output-buffer"

    def test_a_jfet_is_refused_at_its_line(self):
        block = buffer("follower: Q1 J201", *TRANSISTOR[1:])
        with pytest.raises(CircuitError) as caught:
            make_kit(POWER, block)
        assert caught.value.span.line == line_of(guide_text(POWER, block), "follower:")


@pytest.mark.slow
@pytest.mark.parametrize("lines", [OPAMP, TRANSISTOR, ("follower: Q1 2N3906",) + TRANSISTOR[1:]],
                         ids=["opamp", "npn", "pnp"])
def test_every_figure_agrees_with_ngspice(lines):
    kit, specs = specs_of(POWER, buffer(*lines), load="10k", lines=(RIPPLE,))
    check_stage(kit, specs, "out")
    check_hum(kit, specs)


@pytest.mark.slow
@pytest.mark.parametrize("lines, levels", [
    (OPAMP, (0.3, 1.0, 4.0)), (TRANSISTOR, (0.3, 1.0, 2.0)),
    (("follower: Q1 2N3906",) + TRANSISTOR[1:], (0.3, 1.0, 2.0)),
], ids=["opamp", "npn", "pnp"])
def test_playing_levels_agree_with_ngspice(lines, levels):
    # two playing levels and the top of the sweep; the op-amp follower stays clean there,
    # so it is also driven to 4 V peak, past the TL072's swing on 9 V. The output cap is
    # 100 nF, for ngspice's transient to settle within its run.
    kit = make_kit(POWER, buffer(*lines).replace("C2 10u", "C2 100n"), load="10k")
    check_large_signal(kit, {}, "output", levels)
