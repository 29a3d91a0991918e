"""Display filters: every number on a page goes through these (units and rounding of the trade)."""

from kitleaf.display import percent, range_text
from kitleaf.specs.model import Range


class TestRangeText:
    def test_shared_unit_is_written_once(self):
        assert range_text(Range(25.81, 24.93, 26.64), "db") == "25.8 dB (24.9–26.6)"

    def test_different_prefixes_keep_their_units(self):
        assert range_text(Range(990.0, 950.0, 1020.0), "resistance") == "990 Ω (950 Ω–1.02 kΩ)"

    def test_negative_values_are_joined_with_to(self):
        assert range_text(Range(-7.7, -9.1, -6.9), "db") == "-7.7 dB (-9.1 to -6.9)"

    def test_nominal_alone_without_a_spread(self):
        assert range_text(Range(0.00231), "current") == "2.31 mA"

    def test_missing_value_is_a_dash(self):
        assert range_text(None, "frequency") == "–"


def test_percent_of_rotation():
    assert percent(0.25) == "25 %"


class TestMeterVolts:
    # A 3.5-digit meter on its 20 V range shows two decimals (common practice, no source).
    def test_two_decimals_in_volts(self):
        assert range_text(Range(6.8712, 5.671, 7.70), "meter") == "6.87 V (5.67–7.70)"

    def test_microvolts_read_as_zero(self):
        assert range_text(Range(15.7e-6, 13.4e-6, 17.4e-6), "meter") == "0.00 V"

    def test_no_negative_zero(self):
        assert range_text(Range(-1e-4), "meter") == "0.00 V"
