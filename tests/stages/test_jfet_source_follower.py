"""jfet-source-follower: gain gm Rs / (1 + gm Rs), the source above the gate by |VGS|, self
bias or divider bias, N- and P-channel; ngspice checks every figure."""

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

from kitleaf.engine import solve_dc
from kitleaf.errors import CircuitError

DIVIDER = ("bias-top: R2 1M", "bias-bottom: R3 1M")


def follower(transistor: str = "Q1 2N5457", *extra: str) -> str:
    return stage_block("buf", "jfet-source-follower", "input-cap: C1 100n film",
                       "gate: R1 10M", f"transistor: {transistor}", "source: R4 10k",
                       "output-cap: C2 10u", *extra)


def transconductance(kit) -> float:
    """gm of Q1 at its operating point, from the engine's small-signal stamp of the device."""
    op = solve_dc(kit.netlist())
    return op.device("Q1")["gm"]


@pytest.mark.parametrize("transistor", ["Q1 2N5457", "Q1 J201", "Q1 2N5460"])
def test_gain_is_gm_rs_over_one_plus_gm_rs(transistor):
    # Av = gm Rs / (1 + gm Rs) (Horowitz & Hill, The Art of Electronics 3e, 3.2.3)
    kit = make_kit(POWER, follower(transistor, *DIVIDER), load="10M")
    gm = transconductance(kit)
    expected = gm * 10e3 / (1 + gm * 10e3)
    gain = gain_at(kit, 1e3)
    assert abs(gain) == pytest.approx(expected, rel=0.01)
    assert gain.real > 0  # a follower does not invert


def test_self_biased_source_sits_a_little_above_ground():
    # the gate at 0 V, the source at -VGS: between 0 and the device's cutoff |VGS(off)|
    # (J201: VGS(off) -0.3 to -1.5 V, library note from the datasheet, from memory)
    kit = make_kit(POWER, follower("Q1 J201"), load="10M")
    assert dc_at(kit, "buf.g") == pytest.approx(0.0, abs=1e-3)
    assert 0.1 < dc_at(kit, "buf.s") < 1.5


def test_a_divider_lifts_the_source_towards_mid_rail():
    kit = make_kit(POWER, follower("Q1 2N5457", *DIVIDER), load="10M")
    gate, source, vcc = dc_at(kit, "buf.g"), dc_at(kit, "buf.s"), dc_at(kit, "vcc")
    # the gate draws no current: it sits at the divider's half of the supply (Ohm's law)
    assert gate == pytest.approx(vcc / 2, rel=0.01)
    assert 0.3 < source - gate < 6.0  # -VGS within 2N5457's cutoff range (library note)


def test_a_p_channel_part_is_mirrored_on_the_same_rail():
    kit = make_kit(POWER, follower("Q1 2N5460"), load="10M")
    vcc = dc_at(kit, "vcc")
    assert dc_at(kit, "buf.g") == pytest.approx(vcc, abs=1e-3)  # gate resistor to VCC
    assert 0.3 < vcc - dc_at(kit, "buf.s") < 6.0


def test_output_impedance_is_rs_parallel_one_over_gm():
    # Zout = Rs || 1/gm (Horowitz & Hill 3e, 3.2.3)
    _, specs = specs_of(POWER, follower("Q1 2N5457", *DIVIDER), load="10M")
    kit = make_kit(POWER, follower("Q1 2N5457", *DIVIDER), load="10M")
    gm = transconductance(kit)
    # the 10 uF output cap adds 16 ohms of reactance at 1 kHz, in quadrature
    z = abs(complex(1 / (1 / 10e3 + gm), -1 / (2 * 3.14159265 * 1e3 * 10e-6)))
    assert specs.stages[1].output_impedance.nominal == pytest.approx(z, rel=0.01)


def test_drain_stopper_is_optional_and_its_test_point_follows():
    kit = make_kit(POWER, follower("Q1 2N5457", "drain: R5 1k"), load="10M")
    stage = kit.stages[1]
    points = {p.label: p.node for p in kit.kind(stage).test_points(stage)}
    assert points == {"Q1 gate": "g", "Q1 drain": "d", "Q1 source": "s"}
    assert dc_at(kit, "buf.d") < dc_at(kit, "vcc")


class TestBadInput:
    @pytest.mark.parametrize("given", ["bias-top: R2 1M", "bias-bottom: R3 1M"])
    def test_half_a_divider_is_refused_at_its_line(self, given):
        block = follower("Q1 2N5457", given)
        with pytest.raises(CircuitError, match="needs a 'bias-") as caught:
            make_kit(POWER, block)
        assert caught.value.span.line == line_of(guide_text(POWER, block), given)

    def test_a_bipolar_transistor_is_refused_at_its_line(self):
        block = follower("Q1 2N3904")
        with pytest.raises(CircuitError, match="takes an N-channel JFET or a P-channel JFET") \
                as caught:
            make_kit(POWER, block)
        assert caught.value.span.line == line_of(guide_text(POWER, block), "transistor:")


@pytest.mark.slow
@pytest.mark.parametrize("transistor, extra", [
    ("Q1 J201", ()),
    ("Q1 2N5457", DIVIDER + ("drain: R5 1k", "volume: VR1 A100k")),
    ("Q1 2N5460", DIVIDER + ("pulldown: R6 1M",)),
], ids=["self-biased", "divider-volume", "p-channel"])
def test_every_figure_agrees_with_ngspice(transistor, extra):
    knobs = ("Level = VR1",) if any(e.startswith("volume") for e in extra) else ()
    kit, specs = specs_of(POWER, follower(transistor, *extra), knobs=knobs, source="pickup",
                          lines=(RIPPLE,))
    check_stage(kit, specs, "buf")
    check_hum(kit, specs)


@pytest.mark.slow
@pytest.mark.parametrize("transistor, extra", [
    ("Q1 J201", ()), ("Q1 2N5457", DIVIDER), ("Q1 2N5460", DIVIDER),
], ids=["self-biased", "divider", "p-channel"])
def test_playing_levels_agree_with_ngspice(transistor, extra):
    # 300 mV and 1 V peak, two of the playing levels; the self-biased J201's source sits
    # near ground, so 1 V cuts it off on the downswing. The output cap is 100 nF, for
    # ngspice's transient to settle within its run.
    block = follower(transistor, *extra).replace("C2 10u", "C2 100n")
    check_large_signal(make_kit(POWER, block, load="100k"), {}, "output", (0.3, 1.0))
