"""volume: a pot divider, output on the wiper."""

from __future__ import annotations

import pytest
from tests.stages.kits import gain_at, make_kit, stage_block

from kitleaf.engine import taper_fraction


@pytest.mark.parametrize("position", [0.25, 0.5, 1.0])
def test_divider_follows_the_taper(position):
    # unloaded divider: Vout / Vin = R_lower / R_total (voltage divider, any circuits text)
    kit = make_kit(stage_block("vol", "volume", "volume: VR1 A100k"), load="100M")
    expected = taper_fraction("log", position)
    assert abs(gain_at(kit, 1e3, positions={"VR1": position})) == pytest.approx(expected,
                                                                                 rel=0.01,
                                                                                 abs=1e-3)


def test_audio_taper_is_about_a_tenth_at_half_travel():
    # common practice, no source: an audio pot passes 10-15 % of the track at mid travel
    kit = make_kit(stage_block("vol", "volume", "volume: VR1 A100k"), load="100M")
    assert 0.08 < abs(gain_at(kit, 1e3, positions={"VR1": 0.5})) < 0.16

