"""Figures beyond the headline: the gain from the source's own voltage, impedances at every
knob position and corners outside the plotted band."""

from __future__ import annotations

import math

import pytest
from tests.stages.kits import POWER, guide_text, stage_block

from kitleaf.circuit.build import build_circuit
from kitleaf.guide import parse_guide
from kitleaf.specs.derive import derive_specs
from kitleaf.specs.export import specs_to_json
from kitleaf.specs.lookup import computed_values

# Inverting gain -Rf/Rin = -1 (0 dB), input impedance Rin (Horowitz & Hill, The Art of
# Electronics 3e, 4.2.1); the 100 µF input cap is a short at 1 kHz.
INVERTING = stage_block("inv", "opamp-inverting", "input: R3 10k",
                        "input-cap: C3 100u electrolytic",
                        "opamp: U1A TL072", "feedback: R4 10k", "output-cap: C4 10u")


def specs_of(*blocks: str, **kit):
    guide = parse_guide("test.md", guide_text(*blocks, **kit))
    kit_circuit = build_circuit(guide)
    return kit_circuit, derive_specs(guide, kit_circuit)


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
