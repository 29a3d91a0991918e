"""Display filters: every number on a page goes through these (units and rounding of the trade)."""

from kitleaf.render.environment import percent, range_text
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
