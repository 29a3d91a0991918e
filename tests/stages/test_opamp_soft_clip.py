"""opamp-soft-clip: small-signal gain 1 + (Rf + pot)/Rg, output held near a diode drop past
the input once the diodes across the feedback conduct; ngspice checks every figure."""

from __future__ import annotations

import numpy as np
import pytest
from tests.engine.ngspice_tran import periodic_wave
from tests.stages.kits import (
    POWER,
    QUICK_DRIVE,
    dc_at,
    gain_at,
    guide_text,
    line_of,
    make_kit,
    specs_of,
    stage_block,
)
from tests.stages.spice_oracle import RIPPLE, check_hum, check_large_signal, check_stage

from kitleaf.engine import solve_batch
from kitleaf.engine.harmonics import distortion
from kitleaf.engine.periodic import periodic_steady_state
from kitleaf.errors import CircuitError
from kitleaf.render.schematic_check import check_stage as check_stage_drawing
from kitleaf.render.specs_text import specs_to_text

DIODES = ("clip-positive: D1 1N4148", "clip-negative: D2 1N4148")


def drive(*extra: str, clip=DIODES) -> str:
    return stage_block("drive", "opamp-soft-clip", "input-cap: C1 1u film", "bias: R1 1M",
                       "opamp: U1A TL072", "feedback: R2 10k", "gain-resistor: R3 4k7",
                       "gain-cap: C2 10u electrolytic", "output-cap: C3 10u", *clip, *extra)


def test_small_signal_gain_is_one_plus_rf_over_rg_at_each_end_of_the_gain_pot():
    # G = 1 + Rf / Rg (Horowitz & Hill, The Art of Electronics 3e, 4.2.2); the diodes, at 0 V
    # across them, carry next to nothing (Shockley: g = Is / (n Vt), tens of megohms here)
    kit = make_kit(POWER, drive("gain: VR1 B100k"), load="10M")
    assert abs(gain_at(kit, 1e3, positions={"VR1": 0.0})) == pytest.approx(1 + 10 / 4.7,
                                                                           rel=0.02)
    assert abs(gain_at(kit, 1e3, positions={"VR1": 1.0})) == pytest.approx(1 + 110 / 4.7,
                                                                           rel=0.03)


def test_output_and_inputs_sit_at_the_reference():
    kit = make_kit(POWER, drive("clip-series: R4 1k"), load="10M")
    vref = dc_at(kit, "vref")
    for node in ("drive.p", "drive.m", "drive.o", "drive.k"):
        assert dc_at(kit, node) == pytest.approx(vref, abs=0.02)


def peak_out(block: str, level: float) -> float:
    """Peak swing of the op-amp's output about its DC level under a 1 kHz sine at the input."""
    kit = make_kit(POWER, block, load="10M")
    result = periodic_steady_state([solve_batch(kit.netlist())], "VIN", [level], 1000.0,
                                   nodes=["drive.o", "drive.p"])
    assert result.converged.all(), result.reasons
    out, plus = result.wave("drive.o")[0, 0, 0], result.wave("drive.p")[0, 0, 0]
    return float(np.max(out - plus))  # the feedback network's share of the output


def test_the_diodes_hold_the_feedback_swing_near_one_drop():
    # A conducting silicon diode holds 0.6-0.75 V at a few mA (Horowitz & Hill 3e, 1.6.1):
    # the output can rise only that far above the + input, however high the gain.
    swing = peak_out(drive("gain: VR1 B100k"), 0.5)
    assert 0.45 < swing < 0.75


def test_two_diodes_in_a_stack_let_twice_the_swing_through():
    single = peak_out(drive(), 1.0)
    double = peak_out(drive(clip=("clip-positive: D1 1N4148", "clip-positive: D4 1N4148",
                                  "clip-negative: D2 1N4148")), 1.0)
    assert double == pytest.approx(2 * single, rel=0.15)


def test_leds_clip_later_than_silicon_diodes():
    # a red LED drops well over twice a silicon diode's forward voltage at the same current
    # (about 1.6-1.8 V against 0.6-0.7 V; common practice, no source)
    leds = drive("gain: VR1 B100k", clip=("clip-positive: LED1 red", "clip-negative: LED2 red"))
    assert peak_out(leds, 0.5) > 2 * peak_out(drive("gain: VR1 B100k"), 0.5)


def test_its_gain_is_shown_as_a_small_signal_figure():
    kit, specs = specs_of(POWER, drive(), stage_block("tone", "low-pass", "series-resistor: R9 1k",
                                                       "shunt-cap: C9 1n"))
    assert [s.clips for s in specs.stages] == [False, True, False] and specs.clips
    text = specs_to_text(specs)
    assert "  small-signal gain  " in text and "    small-signal gain " in text
    assert "    gain at 1 kHz    " in text  # the low-pass after it does not clip


def test_test_points_are_the_opamp_pins():
    kit = make_kit(POWER, drive())
    stage = kit.stages[1]
    assert [p.pin for p in kit.kind(stage).test_points(stage)] == ["3", "2", "1", "8"]


class TestBadInput:
    def test_no_diodes_is_refused_at_the_stage(self):
        with pytest.raises(CircuitError, match="has no diodes") as caught:
            make_kit(POWER, drive(clip=()))
        assert caught.value.span.line > 1

    @pytest.mark.parametrize("line", ["clip-positive: D1 2N3904", "clip-negative: D2 TL072"])
    def test_a_device_that_is_no_diode_is_refused_at_its_line(self, line):
        block = drive(clip=(line,))
        with pytest.raises(CircuitError, match="this kind takes a diode") as caught:
            make_kit(POWER, block)
        assert caught.value.span.line == line_of(guide_text(POWER, block), line)

    def test_a_resistor_in_a_diode_role_is_refused_at_its_line(self):
        block = drive(clip=("clip-positive: R9 1k",))
        with pytest.raises(CircuitError, match="takes a diode or led") as caught:
            make_kit(POWER, block)
        assert caught.value.span.line == line_of(guide_text(POWER, block), "clip-positive")

    def test_without_a_power_stage_the_reference_is_missing(self):
        with pytest.raises(CircuitError, match="needs the mid-rail reference"):
            make_kit(drive())


@pytest.mark.slow
@pytest.mark.parametrize("clip", [
    ("clip-series: R4 2k2", *DIODES),
    ("clip-positive: D1 1N4148", "clip-positive: D4 1N4148", "clip-negative: LED1 red"),
], ids=["series-resistor", "asymmetric-led"])
def test_every_figure_agrees_with_ngspice(clip):
    block = drive("gain: VR1 A500k", "feedback-cap: C4 100p", "volume: VR2 A100k", clip=clip)
    kit, specs = specs_of(POWER, block, knobs=("Drive = VR1", "Level = VR2"), lines=(RIPPLE,))
    check_stage(kit, specs, "drive")
    check_hum(kit, specs)




@pytest.mark.slow
@pytest.mark.parametrize("clip", [
    DIODES,
    ("clip-series: R4 2k2", "clip-positive: D1 1N4148", "clip-positive: D3 1N4148",
     "clip-negative: LED1 red"),
], ids=["silicon-pair", "series-resistor-asymmetric"])
def test_clipping_agrees_with_ngspice(clip):
    block = QUICK_DRIVE.replace("pulldown: R5 100k", "\n".join(("pulldown: R5 100k", *clip)))
    kit = make_kit(POWER, block, load="100k")
    for position in (0.0, 1.0):
        check_large_signal(kit, {"VR1": position}, "drive.o", (0.05, 0.5))


def switched(form: str = "SPDT", *extra: str) -> str:
    """The drive with a switch choosing silicon diodes or red LEDs (or, SP3T, neither)."""
    return drive("gain: VR1 B100k", f"clip-switch: S1 {form}", "alt-positive: LED1 red",
                 "alt-negative: LED2 red", *extra)


SWITCH_LINE = {"SPDT": "switch: Clip = S1: silicon, leds",
               "SP3T": "switch: Clip = S1: silicon, leds, off",
               "SPDT on-off-on": "switch: Clip = S1: silicon, off, leds"}


def peak_at(form: str, position: int, level: float = 0.5) -> float:
    kit = make_kit(POWER, switched(form), load="10M", lines=(SWITCH_LINE[form],))
    result = periodic_steady_state([solve_batch(kit.netlist({"S1": position}))], "VIN",
                                   [level], 1000.0, nodes=["drive.o", "drive.p"])
    assert result.converged.all(), result.reasons
    return float(np.max(result.wave("drive.o")[0, 0, 0] - result.wave("drive.p")[0, 0, 0]))


class TestSwitchedPair:
    def test_each_position_clips_with_its_own_pair(self):
        # silicon about 0.5 V at this current, red LEDs well over twice that (common practice,
        # no source); with no pair the feedback swing is the op-amp's to the rail
        silicon, leds, off = (peak_at("SP3T", p) for p in (0, 1, 2))
        assert 0.4 < silicon < 0.75
        assert leds > 2 * silicon
        assert off > leds

    def test_a_centre_off_toggle_rests_unclipped_in_the_middle(self):
        assert peak_at("SPDT on-off-on", 1) == pytest.approx(peak_at("SP3T", 2), rel=0.01)
        assert peak_at("SPDT on-off-on", 2) == pytest.approx(peak_at("SP3T", 1), rel=0.01)

    def test_the_small_signal_gain_is_the_same_in_every_position(self):
        kit = make_kit(POWER, switched("SP3T"), load="10M", lines=(SWITCH_LINE["SP3T"],))
        gains = [abs(gain_at(kit, 1e3, positions={"S1": p})) for p in (0, 1, 2)]
        # resting at 0 V, silicon diodes shunt Rf by some 10 MOhm (Shockley: Is / (n Vt)),
        # LEDs by far more: well under 1 % of gain either way
        assert gains == pytest.approx([gains[2]] * 3, rel=0.01)

    def test_a_second_pair_without_a_switch_is_refused_at_its_line(self):
        block = drive("alt-positive: LED1 red")
        with pytest.raises(CircuitError, match="only a switch can choose") as caught:
            make_kit(POWER, block)
        assert caught.value.span.line == line_of(guide_text(POWER, block), "alt-positive")

    def test_a_one_throw_switch_cannot_choose_a_second_pair(self):
        block = switched("SPST")
        lines = ("switch: Clip = S1: silicon, off",)
        with pytest.raises(CircuitError, match="fit a SPDT") as caught:
            make_kit(POWER, block, lines=lines)
        assert caught.value.span.line == line_of(guide_text(POWER, block, lines=lines),
                                                 "clip-switch")

    def test_a_one_throw_switch_takes_the_pair_in_and_out(self):
        block = drive("gain: VR1 B100k", "clip-switch: S1 SPST")
        kit = make_kit(POWER, block, load="10M", lines=("switch: Clip = S1: in, out",))
        assert kit.switches[0].positions == ("in", "out")

    def test_a_transistor_in_the_second_pair_is_refused_at_its_line(self):
        block = switched("SPDT", "alt-negative: Q9 2N3904")
        with pytest.raises(CircuitError) as caught:
            make_kit(POWER, block, lines=(SWITCH_LINE["SPDT"],))
        assert caught.value.span.line == line_of(
            guide_text(POWER, block, lines=(SWITCH_LINE["SPDT"],)), "alt-negative: Q9")

    @pytest.mark.parametrize("form", sorted(SWITCH_LINE))
    def test_the_drawing_is_its_netlist(self, form):
        kit = make_kit(POWER, switched(form, "clip-series: R4 1k"), lines=(SWITCH_LINE[form],))
        assert check_stage_drawing(kit, kit.stages[1]) == []


@pytest.mark.slow
def test_every_switch_position_agrees_with_ngspice():
    block = switched("SP3T", "feedback-cap: C4 100p", "volume: VR2 A100k")
    kit, specs = specs_of(POWER, block, knobs=("Drive = VR1", "Level = VR2"),
                          lines=(SWITCH_LINE["SP3T"], RIPPLE))
    check_stage(kit, specs, "drive")
    check_hum(kit, specs)
    kit = make_kit(POWER, QUICK_DRIVE.replace("pulldown: R5 100k", "\n".join((
        "pulldown: R5 100k", *DIODES, "clip-switch: S1 SP3T", "alt-positive: LED1 red",
        "alt-negative: LED2 red"))), load="100k", lines=(SWITCH_LINE["SP3T"],))
    # the LEDs' position (the silicon pair is checked above); with no pair the op-amp
    # clips at its rails, checked below
    check_large_signal(kit, {"VR1": 1.0, "S1": 1.0}, "drive.o", (0.05, 0.5))


@pytest.mark.slow
def test_clipping_at_the_rails_is_symmetric_as_ngspice_settles_to():
    """With the switch open the TL072 clips at its own rails, which sit symmetrically about
    the reference: a clip with half-wave symmetry has no even harmonics (Fourier series).
    While the output is pinned the feedback loop is open and the gain leg's capacitor
    charges through the whole feedback network, Rg + Rf + the gain pot: here 100 nF x 111
    kohm = 11 ms. ngspice's transient keeps a leftover of that start, and with it even
    harmonics near -50 dBc, until it has run several such time constants; settled, both
    agree (the 1 uF leg of the other checks would need over a second of transient)."""
    block = QUICK_DRIVE.replace("gain-cap: C2 1u film", "gain-cap: C2 100n film").replace(
        "pulldown: R5 100k", "\n".join(("pulldown: R5 100k", *DIODES, "clip-switch: S1 SP3T",
                                        "alt-positive: LED1 red", "alt-negative: LED2 red")))
    kit = make_kit(POWER, block, load="100k", lines=(SWITCH_LINE["SP3T"],))
    positions = {"VR1": 1.0, "S1": 2.0}
    settle = 6 * 100e-9 * 111e3  # six time constants: e^-6 of the start is left
    check_large_signal(kit, positions, "drive.o", (0.05, 0.5), settle=settle)
    ours = periodic_steady_state([solve_batch(kit.netlist(positions))], "VIN", [0.05, 0.5],
                                 1000.0, nodes=["drive.o"]).distortion("drive.o").dbc()
    theirs = distortion(periodic_wave(kit.netlist(positions), "VIN", 0.5, 1000.0, "drive.o",
                                      settle, steps_per_period=500)).dbc()
    for even in (1, 3):  # the 2nd and 4th harmonics
        assert np.all(ours[0, :, 0, even] < -80.0) and theirs[even] < -80.0
