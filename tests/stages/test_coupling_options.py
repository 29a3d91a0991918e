"""Options of the gain kinds: a direct output into the next stage's input cap, and the
non-inverting op-amp's gain leg returned to the reference."""

from __future__ import annotations

import numpy as np
import pytest
from tests.engine.ngspice_run import ac_sweep, operating_point
from tests.stages.kits import POWER, dc_at, gain_at, make_kit, stage_block

from kitleaf.circuit.chain import KNOB_STEPS
from kitleaf.engine import Circuit
from kitleaf.errors import CircuitError

# A follower straight into a boost's input cap: one coupling cap between them, not two.
FOLLOWER = stage_block("buffer", "emitter-follower", "input-cap: C4 100n", "bias-top: R6 1M",
                       "bias-bottom: R7 1M", "transistor: Q2 2N3904", "emitter: R8 10k",
                       "output-coupling: direct")
BOOST = stage_block("boost", "common-emitter", "input-cap: C1 1u", "bias-top: R1 82k",
                    "bias-bottom: R2 18k", "transistor: Q1 2N3904", "collector: R3 4k7",
                    "emitter: R4 1k", "output-cap: C2 10u", "volume: VR1 B100k")
KNOB = "knob: Level = VR1"


def drive(*extra: str) -> str:
    return stage_block("drive", "opamp-non-inverting", "input-cap: C9 1u film",
                       "bias: R12 1M", "opamp: U1A TL072", "feedback: R13 100k",
                       "gain-resistor: R14 4k7", "output-cap: C12 10u film", *extra)


class TestDirectOutput:
    def test_the_boost_keeps_its_own_bias(self):
        # Its input cap blocks the follower's emitter voltage, so the base sits where its
        # divider puts it, as with a coupling cap on each side (Sedra & Smith, divider bias).
        direct = make_kit(POWER, FOLLOWER, BOOST, load="10M")
        capped = make_kit(POWER, FOLLOWER.replace("output-coupling: direct",
                                                  "output-cap: C5 1u\npulldown: R30 1M"),
                          BOOST, load="10M")
        assert dc_at(direct, "boost.b") == pytest.approx(dc_at(capped, "boost.b"), abs=1e-3)
        assert dc_at(direct, "buffer.e") > 2.0  # the follower's output carries its DC
        assert abs(gain_at(direct, 1e3)) == pytest.approx(abs(gain_at(capped, 1e3)), rel=0.01)

    @pytest.mark.parametrize(("blocks", "message"), [
        ((POWER, BOOST, FOLLOWER), "is the last stage"),
        ((POWER, FOLLOWER, stage_block("level", "volume", "volume: VR2 A100k")),
         r"stage 'level' \(volume\) takes DC at its input \(VR2 there"),
        ((POWER, FOLLOWER.replace("direct", "direct\noutput-cap: C5 1u"), BOOST),
         "role 'output-cap': with 'output-coupling: direct'"),
        ((POWER, FOLLOWER.replace("output-coupling: direct\n", ""), BOOST),
         "missing its 'output-cap' part"),
    ])
    def test_bad_input_is_located(self, blocks, message):
        with pytest.raises(CircuitError, match=message) as err:
            make_kit(*blocks)
        assert err.value.span is not None and err.value.span.line > 1


class TestGainToReference:
    def test_gain_is_one_plus_rf_over_rg_with_no_gain_cap(self):
        # The non-inverting amplifier (Horowitz & Hill, The Art of Electronics 3e, 4.2.1):
        # G = 1 + Rf/Rg; the leg ends at VREF, so the output sits at VREF with no gain cap.
        kit = make_kit(POWER, drive("gain-return: vref"), load="10M")
        assert abs(gain_at(kit, 1e3)) == pytest.approx(1 + 100 / 4.7, rel=0.01)
        assert dc_at(kit, "drive.o") == pytest.approx(dc_at(kit, "vref"), abs=5e-3)

    def test_to_ground_still_needs_its_gain_cap(self):
        with pytest.raises(CircuitError, match="missing its 'gain-cap'.*'gain-return: vref'"):
            make_kit(POWER, drive())


def reference_chain(level: float) -> Circuit:
    """The follower into the boost, written out by hand: one cap between them."""
    c = Circuit().vsource("VSUPPLY", "vcc", "0", dc=9.0)
    c.vsource("VIN", "src", "0", ac=1.0).resistor("RSRC", "src", "input", 100.0)
    c.capacitor("C4", "input", "b2", 100e-9).resistor("R6", "vcc", "b2", 1e6)
    c.resistor("R7", "b2", "0", 1e6).bjt("Q2", "vcc", "b2", "e2", "2N3904")
    c.resistor("R8", "e2", "0", 10e3).capacitor("C1", "e2", "b", 1e-6)
    c.resistor("R1", "vcc", "b", 82e3).resistor("R2", "b", "0", 18e3)
    c.bjt("Q1", "c", "b", "e", "2N3904").resistor("R3", "vcc", "c", 4.7e3)
    c.resistor("R4", "e", "0", 1e3).capacitor("C2", "c", "o", 10e-6)
    c.pot("VR1", "0", "output", "o", 100e3, position=level, taper="lin")
    return c.resistor("RLOAD", "output", "0", 10e6)


def reference_drive() -> Circuit:
    """The op-amp stage with its gain leg to a stiff mid-rail reference, by hand."""
    c = Circuit().vsource("VSUPPLY", "vcc", "0", dc=9.0).vsource("VREF", "vref", "0", dc=4.5)
    c.vsource("VIN", "src", "0", ac=1.0).resistor("RSRC", "src", "input", 100.0)
    c.capacitor("C9", "input", "p", 1e-6).resistor("R12", "p", "vref", 1e6)
    c.opamp("U1A", "p", "m", "o", "vcc", "0", "TL072")
    c.resistor("R13", "o", "m", 100e3).resistor("R14", "m", "vref", 4.7e3)
    c.capacitor("C12", "o", "output", 10e-6)
    return c.resistor("RLOAD", "output", "0", 10e6)


def ngspice_gain_db(circuit: Circuit) -> float:
    _, theirs = ac_sweep(circuit, "VIN", ["input", "output"], 1e3, 1e4, per_decade=1)
    return float(20 * np.log10(abs(theirs["output"][0] / theirs["input"][0])))


@pytest.mark.slow
def test_the_direct_chain_agrees_with_ngspice_at_every_knob_step():
    """DC at the follower's emitter and the boost's base, and the gain at 1 kHz at each step
    of the Level knob, against Debian's ngspice."""
    from tests.stages.kits import guide_text

    from kitleaf.circuit.build import build_circuit
    from kitleaf.guide.parse import parse_guide
    from kitleaf.specs.derive import derive_specs

    text = guide_text(FOLLOWER, BOOST, load="10M").replace("source: low-z",
                                                           f"source: low-z\n{KNOB}")
    parsed = parse_guide("direct.md", text)
    kit = build_circuit(parsed)
    gains = {p.positions[0][1]: p.gain_db.nominal for p in derive_specs(parsed, kit).knob_sweep}
    theirs = operating_point(reference_chain(0.5))
    assert dc_at(kit, "buffer.e") == pytest.approx(theirs["e2"], abs=1e-3)
    assert dc_at(kit, "boost.b") == pytest.approx(theirs["b"], abs=1e-3)
    for level in KNOB_STEPS:
        assert gains[level] == pytest.approx(ngspice_gain_db(reference_chain(level)),
                                             abs=0.02), level


@pytest.mark.slow
def test_the_gain_leg_to_the_reference_agrees_with_ngspice():
    kit = make_kit(POWER.replace("vref-cap: C91 10u electrolytic 25V",
                                 "vref-cap: C91 1000u electrolytic 25V"),
                   drive("gain-return: vref"), load="10M")
    ours = 20 * np.log10(abs(gain_at(kit, 1e3)))
    # the kit's reference is a divider with a large cap, the hand circuit's a stiff source:
    # at 1 kHz the two agree to well under 0.01 dB
    assert ours == pytest.approx(ngspice_gain_db(reference_drive()), abs=0.02)
    assert dc_at(kit, "drive.o") - dc_at(kit, "vref") == pytest.approx(
        operating_point(reference_drive())["o"] - 4.5, abs=2e-3)
