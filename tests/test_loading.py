"""The loading comparison on the page: a stage alone against in its place, and the source loaded."""

from __future__ import annotations

import math

import pytest
from tests.stages.kits import POWER, make_kit, stage_block

from kitleaf.specs.loading import source_loading, stage_loading
from kitleaf.specs.solve import KitState, nominal_positions

HIGH_PASS = stage_block("hp", "high-pass", "series-cap: C1 10n", "shunt-resistor: R1 100k")
# The next stage's 10k input resistor goes to a virtual ground: a 10k load on the high-pass.
INVERTING = stage_block("inv", "opamp-inverting", "input: R3 10k",
                        "input-cap: C3 100u electrolytic",
                        "opamp: U1A TL072", "feedback: R4 10k", "output-cap: C4 10u")


def rc_corner(r: float, c: float) -> float:
    """f = 1 / (2 pi R C) (Horowitz & Hill, The Art of Electronics 3e, 1.7.1)."""
    return 1 / (2 * math.pi * r * c)


def base_state(kit):
    return KitState(kit, nominal_positions(kit))


class TestStageAloneAndInPlace:
    def test_a_high_pass_corners_higher_in_front_of_a_low_impedance_stage(self):
        kit = make_kit(POWER, HIGH_PASS, INVERTING)
        hp = next(s for s in kit.stages if s.id == "hp")
        table = stage_loading(kit, hp, base_state(kit))
        low = next(r for r in table.rows if r.label.startswith("low corner"))
        # Alone: 100k in parallel with the 1 MΩ load, driven from 100 Ω.
        assert low.first == pytest.approx(rc_corner(1 / (1 / 100e3 + 1 / 1e6) + 100, 10e-9),
                                          rel=0.02)
        # In place: 100k in parallel with the inverting stage's 10k input.
        assert low.second == pytest.approx(rc_corner(1 / (1 / 100e3 + 1 / 10e3) + 100, 10e-9),
                                           rel=0.03)
        assert low.moved and table.moved

    def test_an_op_amp_output_is_not_moved_by_its_load(self):
        kit = make_kit(POWER, INVERTING)
        inv = next(s for s in kit.stages if s.id == "inv")
        gain = stage_loading(kit, inv, base_state(kit)).rows[0]
        # Inverting gain -Rf/Rin = -1 (0 dB) either way (Horowitz & Hill 3e, 4.2.1).
        assert gain.first == pytest.approx(0.0, abs=0.05)
        assert not gain.moved


class TestSourceLoading:
    def test_a_low_z_source_needs_no_comparison(self):
        kit = make_kit(POWER, INVERTING)
        assert source_loading(kit, base_state(kit)) is None

    def test_a_pickup_peaks_near_its_resonance_from_its_own_voltage(self):
        kit = make_kit(POWER, INVERTING, source="pickup")
        table = source_loading(kit, base_state(kit))
        where = next(r for r in table.rows if r.label.startswith("where"))
        # The pickup's L and C resonate at 1 / (2 pi sqrt(L C)) (Horowitz & Hill 3e, 1.7.14);
        # the 10k input loads it, so the peak sits near, not at, that frequency.
        f0 = 1 / (2 * math.pi * math.sqrt(kit.source.inductance * kit.source.capacitance))
        assert where.second < f0 * 1.1
        assert where.first != where.second
