"""tone-active: bass and treble networks around an inverting op-amp, against our own derivation."""

from __future__ import annotations

import numpy as np
import pytest
from tests.stages.kits import POWER, guide_text, make_kit, response, stage_block
from tests.stages.spice_check import check_corners, check_knob_steps
from tests.stages.spice_oracle import RIPPLE, check_hum, check_large_signal
from tests.test_specs_figures import specs_of

from kitleaf.errors import CircuitError

ACTIVE = stage_block("tone", "tone-active", "input-cap: C1 4u7 film", "bass-in: R1 10k",
                     "bass: VR1 B100k", "bass-out: R2 10k", "bass-cap-in: C2 22n",
                     "bass-cap-out: C3 22n", "treble-in: R3 2k2", "treble: VR2 B100k",
                     "treble-out: R4 2k2", "treble-cap: C4 10n", "opamp: U1A TL072",
                     "output-cap: C5 10u film", "pulldown: R5 1M")
VALUES = dict(r1=10e3, pot_b=100e3, r2=10e3, c1=22e-9, c2=22e-9, r3=2.2e3, pot_t=100e3,
              r4=2.2e3, c3=10e-9)
STEPS = (0.0, 0.25, 0.5, 0.75, 1.0)
FREQS = np.array([30.0, 100.0, 300.0, 1e3, 3e3])
NETWORK = ("tone.i", "tone.o")  # after the input cap, the op-amp's output: the network alone


def parallel(a, b):
    return a * b / (a + b)


def ideal(bass: float, treble: float, s: np.ndarray, r1, pot_b, r2, c1, c2, r3, pot_t, r4, c3
          ) -> np.ndarray:
    """Our own derivation for an ideal op-amp (the - input a virtual ground, Horowitz & Hill,
    The Art of Electronics 3e, 4.2.1), rotations linear, clockwise towards the input:

    bass: Vin through R1 and the pot's input half (bridged by C1) into the - input, Vout
    through R2 and the output half (bridged by C2); treble: a T from Vin (R3 and the pot's
    input side) and from Vout (R4 and its output side) to the wiper W, and C3 from W to the
    - input. Kirchhoff's current law at W and at the - input gives

        W = (Vin / Za + Vout / Zb) / (1 / Za + 1 / Zb + 1 / Zc)
        Vin / (R1 + Z1) + Vout / (R2 + Z2) + W / Zc = 0
    """
    z1 = parallel(pot_b * (1 - bass) + 1.0, 1 / (s * c1))  # 1 Ω: the pot's end leg
    z2 = parallel(pot_b * bass + 1.0, 1 / (s * c2))
    za, zb, zc = r3 + pot_t * (1 - treble), r4 + pot_t * treble, 1 / (s * c3)
    d = 1 / za + 1 / zb + 1 / zc
    into = 1 / (r1 + z1) + 1 / (za * zc * d)
    back = 1 / (r2 + z2) + 1 / (zb * zc * d)
    return -into / back


@pytest.mark.parametrize("bass", STEPS)
@pytest.mark.parametrize("treble", STEPS)
def test_every_knob_position_follows_the_ideal_op_amp_derivation(bass, treble):
    got = response(make_kit(POWER, ACTIVE), FREQS, {"VR1": bass, "VR2": treble}, *NETWORK)
    want = ideal(bass, treble, 2j * np.pi * FREQS, **VALUES)
    # the TL072's finite loop gain (3 MHz gain-bandwidth, datasheet, from memory) leaves
    # well under 1 % up to 3 kHz at these gains
    assert np.abs(got / want - 1) == pytest.approx(0.0, abs=0.01)


def test_both_knobs_at_half_way_are_flat():
    freqs = np.geomspace(20.0, 20e3, 31)
    got = response(make_kit(POWER, ACTIVE), freqs, {"VR1": 0.5, "VR2": 0.5}, *NETWORK)
    assert np.abs(20 * np.log10(np.abs(got))) == pytest.approx(0.0, abs=0.1)


def test_each_knob_turns_its_own_band_up_clockwise():
    kit = make_kit(POWER, ACTIVE)
    for pot, hz in (("VR1", 40.0), ("VR2", 8e3)):
        gains = [abs(response(kit, np.array([hz]), {"VR1": 0.5, "VR2": 0.5, pot: p},
                              *NETWORK)[0]) for p in STEPS]
        assert gains == sorted(gains) and gains[-1] > 3 * gains[0], pot


@pytest.mark.parametrize(("wrong", "line", "words"), [
    ("bass: R9 100k", "bass: VR1 B100k", "'bass'"),
    ("treble-cap: R9 10k", "treble-cap: C4 10n", "'treble-cap'"),
    ("opamp: Q9 2N3904", "opamp: U1A TL072", "'opamp'"),
    ("opamp: U9 2N3904", "opamp: U1A TL072", "U9 2N3904 is an NPN BJT; this kind takes an op-amp"),
])
def test_a_part_of_the_wrong_type_is_refused_at_its_line(wrong, line, words):
    text = ACTIVE.replace(line, wrong)
    with pytest.raises(CircuitError, match=words) as caught:
        make_kit(POWER, text)
    lines = guide_text(POWER, text).splitlines()
    assert caught.value.span.line == 1 + lines.index(wrong)


# Our own values (above), driven through 10k into the usual 1 MΩ amplifier input.
KNOBS = ("Bass = VR1", "Treble = VR2")


@pytest.mark.slow
def test_gain_impedances_and_hum_at_every_knob_step_agree_with_ngspice():
    kit, specs = specs_of(POWER, ACTIVE, knobs=KNOBS, source="10k", lines=(RIPPLE,))
    check_knob_steps(kit, specs.stage("tone"))
    check_hum(kit, specs)


@pytest.mark.slow
def test_corners_agree_with_ngspice():
    kit, specs = specs_of(POWER, ACTIVE, knobs=KNOBS, source="10k")
    check_corners(kit, specs.stage("tone"))


@pytest.mark.slow
@pytest.mark.parametrize("setting", [0.0, 0.5, 1.0])
def test_playing_levels_agree_with_ngspice(setting):
    # both knobs together: cut, flat, boosted; at 2 V peak the full boost reaches the
    # TL072's rails. The coupling caps are 470 nF in and 100 nF out, for ngspice's transient
    # to settle within its run (with 4u7 in, it still shows the start's even harmonics
    # near -52 dBc while the engine's settled period has none).
    quick = ACTIVE.replace("C1 4u7", "C1 470n").replace("C5 10u film", "C5 100n film")
    kit = make_kit(POWER, quick, load="100k")
    check_large_signal(kit, {"VR1": setting, "VR2": setting}, "output", (0.3, 1.0, 2.0))
