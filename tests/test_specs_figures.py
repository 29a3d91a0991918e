"""Figures beyond the headline: the gain from the source's own voltage, impedances at every
knob position and corners outside the plotted band."""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
from tests.engine.ngspice_run import ac_sweep, half_power_corners
from tests.stages.kits import POWER, specs_of, stage_block

from kitleaf.circuit.build import build_circuit
from kitleaf.circuit.chain import INPUT, OUTPUT, SOURCE
from kitleaf.guide import parse_guide
from kitleaf.specs.derive import derive_specs
from kitleaf.specs.export import specs_to_json
from kitleaf.specs.lookup import computed_values

# Inverting gain -Rf/Rin = -1 (0 dB), input impedance Rin (Horowitz & Hill, The Art of
# Electronics 3e, 4.2.1); the 100 µF input cap is a short at 1 kHz.
INVERTING = stage_block("inv", "opamp-inverting", "input: R3 10k",
                        "input-cap: C3 100u electrolytic",
                        "opamp: U1A TL072", "feedback: R4 10k", "output-cap: C4 10u")


# Ten signal stages of the demo guides in a row (the scaling bench's guide, claims dropped).
LONG_CHAIN = Path(__file__).parent / "fixtures" / "long-chain.md"


def divider_db(r_top: float, r_bottom: float) -> float:
    """A voltage divider's ratio in dB (Horowitz & Hill 3e, 1.2.3)."""
    return 20 * math.log10(r_bottom / (r_top + r_bottom))


class TestGainFromTheSource:
    def test_a_10k_source_into_a_10k_input_loses_6_db(self):
        kit, specs = specs_of(POWER, INVERTING, source="10k")
        from_source = specs_to_json(specs)["gain_db_1khz_from_source"]
        expected = specs.gain_db.nominal + divider_db(10e3, 10e3)
        assert from_source["nominal"] == pytest.approx(expected, abs=0.02)
        named = computed_values(specs, kit)["kit.gain-from-source"]
        assert named.value.nominal == pytest.approx(expected, abs=0.02)

    def test_a_low_impedance_source_has_no_separate_figure(self):
        kit, specs = specs_of(POWER, INVERTING)
        assert specs_to_json(specs)["gain_db_1khz_from_source"] is None
        assert "kit.gain-from-source" not in computed_values(specs, kit)


VOLUME = stage_block("vol", "volume", "volume: VR1 B100k")


def parallel(a: float, b: float) -> float:
    return a * b / (a + b)


class TestImpedancesAtEveryKnobPosition:
    """A linear 100k volume pot from a 100 Ω source into the 1 MΩ load: at rotation p the
    input sees (1-p)R in series with pR || 1M, the output (1-p)R + 100 Ω in parallel with pR
    (series and parallel resistors and a divider's Thevenin equivalent, Horowitz & Hill 3e,
    1.2.2-1.2.5)."""

    def test_the_json_names_and_page_rows_follow_the_pot(self):
        kit, specs = specs_of(POWER, VOLUME, knobs=("Level = VR1",))
        by_knob = specs_to_json(specs)["gain_db_1khz_by_knob"]
        names = computed_values(specs, kit)
        for point in by_knob:
            p = point["knobs"]["Level"]
            z_in = (1 - p) * 100e3 + parallel(p * 100e3, 1e6)
            z_out = parallel((1 - p) * 100e3 + 100, p * 100e3) if 0 < p < 1 else None
            got_in = point["input_impedance_ohm_1khz"]["nominal"]
            assert got_in == pytest.approx(z_in, rel=0.01)
            name = f"kit.input-impedance.level-{round(p * 100)}"
            assert names[name].value.nominal == pytest.approx(z_in, rel=0.01)
            if z_out is not None:
                got_out = point["output_impedance_ohm_1khz"]["nominal"]
                assert got_out == pytest.approx(z_out, rel=0.01)
                stage_name = f"vol.output-impedance.level-{round(p * 100)}"
                assert names[stage_name].value.nominal == pytest.approx(z_out, rel=0.01)


def rc_corner(r: float, c: float) -> float:
    """f = 1 / (2 pi R C) (Horowitz & Hill, The Art of Electronics 3e, 1.7.1)."""
    return 1 / (2 * math.pi * r * c)


class TestCornersOutsideThePlottedBand:
    """RC stages into the 1 MΩ load; a gain is output over input voltage, so the source's
    resistance drops out and R is the stage's resistor in parallel with the load
    (Horowitz & Hill 3e, 1.7.1 and 1.2.5)."""

    def test_a_high_pass_corner_near_3_hz(self):
        kit, specs = specs_of(POWER, stage_block("hp", "high-pass", "series-cap: C1 560n film",
                                                 "shunt-resistor: R1 100k"))
        expected = rc_corner(parallel(100e3, 1e6), 560e-9)
        low = specs_to_json(specs)["low_corner_hz"]["nominal"]
        assert expected < 10.0
        assert low == pytest.approx(expected, rel=0.01)
        assert computed_values(specs, kit)["hp.low-corner"].value.nominal == pytest.approx(
            expected, rel=0.01)

    def test_a_low_pass_corner_near_80_khz(self):
        kit, specs = specs_of(POWER, stage_block("lp", "low-pass", "series-resistor: R1 2k",
                                                 "shunt-cap: C1 1n film"))
        expected = rc_corner(parallel(2e3, 1e6), 1e-9)
        high = specs_to_json(specs)["high_corner_hz"]["nominal"]
        assert expected > 40e3
        assert high == pytest.approx(expected, rel=0.01)


@pytest.mark.slow
def test_corners_beyond_the_band_agree_with_ngspice():
    """A high-pass into a low-pass, corners near 3 Hz and 80 kHz, against Debian's ngspice."""
    blocks = (POWER, stage_block("hp", "high-pass", "series-cap: C1 560n film",
                                 "shunt-resistor: R1 100k"),
              stage_block("lp", "low-pass", "series-resistor: R2 2k", "shunt-cap: C2 1n film"))
    kit, specs = specs_of(*blocks)
    freqs, theirs = ac_sweep(kit.netlist({}), SOURCE, [INPUT, OUTPUT], 0.1, 10e6,
                             per_decade=400)
    low, high = half_power_corners(freqs, theirs[OUTPUT] / theirs[INPUT], 1000.0)
    assert low < 10.0 and high > 40e3
    assert specs.low_corner_hz.nominal == pytest.approx(low, rel=0.005)
    assert specs.high_corner_hz.nominal == pytest.approx(high, rel=0.005)


def _band_corners(freqs: np.ndarray, h: np.ndarray) -> tuple[float | None, float | None]:
    """-3 dB corners from a dense sweep relative to the highest gain in 10 Hz..40 kHz, as the
    specs define them, by log-frequency interpolation of the dB response."""
    db = 20 * np.log10(np.abs(h))
    band = (freqs >= 10.0) & (freqs <= 40e3)
    peak = int(np.flatnonzero(band)[np.argmax(db[band])])
    level = db[peak] - 10 * np.log10(2)

    def cross(i: int, j: int) -> float:
        lo, hi = (i, j) if db[i] < db[j] else (j, i)
        return float(np.exp(np.interp(level, [db[lo], db[hi]], np.log(freqs[[lo, hi]]))))

    low = next((cross(i, i + 1) for i in range(peak - 1, -1, -1) if db[i] < level), None)
    high = next((cross(i - 1, i) for i in range(peak + 1, freqs.size) if db[i] < level), None)
    return low, high


@pytest.mark.slow
def test_a_long_chains_stage_corners_agree_with_ngspice():
    """Every stage of a ten-stage kit, its corners far above and below the band included,
    against Debian's ngspice: a long chain is solved stage by stage, joined at the nodes
    between them, and each stage's corner must still be the whole kit's."""
    guide = parse_guide(LONG_CHAIN)
    kit = build_circuit(guide)
    specs = derive_specs(guide, kit)
    nodes = list(dict.fromkeys(n for s in kit.signal_stages for n in kit.stage_nodes(s.id)))
    freqs, theirs = ac_sweep(kit.netlist(kit.rest_positions()), SOURCE, nodes, 0.1, 10e6,
                             per_decade=400)
    signal = {s.id for s in kit.signal_stages}
    for stage in (s for s in specs.stages if s.id in signal):
        node_in, node_out = kit.stage_nodes(stage.id)
        low, high = _band_corners(freqs, theirs[node_out] / theirs[node_in])
        for ours, expected in ((stage.low_corner_hz, low), (stage.high_corner_hz, high)):
            if expected is None:
                assert ours is None or not 0.1 < ours.nominal < 10e6, stage.id
            else:
                assert ours.nominal == pytest.approx(expected, rel=0.005), stage.id
