"""Marking misreads against the IEC 60062 colour code and capacitor code."""

import pytest

from kitleaf.faults.misreads import capacitor_misreads, resistor_misreads
from kitleaf.marking import neighbours, read_bands


class TestColourBands:
    def test_reading_bands_back(self):
        # IEC 60062: yellow violet orange = 47 x 10^3 ohm; brown black black red = 100 x 10^2
        assert read_bands(("yellow", "violet", "orange", "gold"), 2) == 47e3
        assert read_bands(("brown", "black", "black", "red", "brown"), 3) == 10e3
        # a first figure of black, or gold where a figure belongs, is no code (IEC 60062)
        assert read_bands(("black", "brown", "red"), 2) is None
        assert read_bands(("gold", "red", "brown", "brown"), 2) is None

    def test_neighbouring_colours_follow_the_code_order(self):
        # IEC 60062 figure order black 0 .. white 9; multipliers silver, gold, black, ...
        assert neighbours("red", "figure") == ("brown", "orange")
        assert neighbours("white", "figure") == ("grey",)
        assert neighbours("black", "multiplier") == ("gold", "brown")

    def test_a_22k_resistor_is_confused_with_stocked_values_one_band_off(self):
        # 22 kohm 5 % = red red orange gold (IEC 60062); one band off and in E24 (IEC 60063):
        # red red red (2.2k), brown red orange (12k), red red yellow (220k); 32k, 21k, 23k are
        # not E24 values and a four-band code read backwards starts with gold
        assert [v for v, _ in resistor_misreads(22e3, 0.05)] == [2.2e3, 12e3, 220e3]

    def test_a_five_band_code_read_from_the_wrong_end(self):
        # 1.5 kohm 1 % = brown green black brown brown; from the other end brown brown black
        # green brown = 110 x 10^5 = 11 Mohm, an E24 value (IEC 60062, IEC 60063)
        found = dict(resistor_misreads(1.5e3, 0.01))
        assert found[11e6] == "bands read from the wrong end"


class TestCapacitorCodes:
    @pytest.mark.parametrize("farads, wrong", [(100e-9, (10e-9, 1e-6)),
                                               (4.7e-9, (470e-12, 47e-9))])
    def test_the_multiplier_figure_one_off(self, farads, wrong):
        # IEC 60062 three-figure code: 104 = 10 x 10^4 pF; read as 103 and 105
        assert tuple(v for v, _ in capacitor_misreads(farads)) == pytest.approx(wrong)
