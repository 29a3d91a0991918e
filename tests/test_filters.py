"""Display filters: every number on a page goes through these (units and rounding of the trade)."""

from kitleaf.display import hum_text, percent, range_text, scoop_rows, setting_rows
from kitleaf.specs.model import KnobPoint, Range, Scoop, StageSpecs


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


class TestTinyVoltages:
    # SI prefixes n (1e-9) and p (1e-12) (BIPM, The International System of Units, 9th ed.,
    # table 7); dBV is 20 log10 of volts RMS over 1 V (common practice, no source).
    def test_hum_near_minus_200_dbv_takes_the_pico_prefix(self):
        assert hum_text(Range(7.11e-11, 6.0e-11, 8.0e-11)) == "71.1 pV (60–80) RMS, -203.0 dBV"

    def test_nanovolts(self):
        assert range_text(Range(4.7e-9), "voltage") == "4.7 nV"

    def test_below_a_picovolt_is_a_bound(self):
        assert hum_text(Range(1e-16, 1e-17, 1e-16)) == "under 1 pV RMS, below -240 dBV"

    def test_a_spread_reaching_above_it_says_how_far(self):
        assert range_text(Range(1e-16, 1e-17, 2e-12), "voltage") == "under 1 pV (up to 2 pV)"

    def test_no_hum_at_all(self):
        assert hum_text(Range(0.0)) == "0 V RMS, below -240 dBV"


class TestSettingRows:
    """A per-setting table lists only the settings whose figure reads otherwise than at rest
    (an output impedance after a Level pot moves with Level alone)."""

    @staticmethod
    def stage(*ohms: float) -> StageSpecs:
        points = tuple(KnobPoint(((knob, pos),), Range(0.0), output_impedance=Range(z))
                       for (knob, pos), z in zip(SETTINGS, ohms, strict=True))
        return StageSpecs("level", "volume", "Level", True, (), points, Range(0.0), None, None,
                          None, Range(9000.0), None)

    def test_rows_that_read_as_at_rest_are_folded_into_one(self):
        rows = setting_rows(self.stage(9000.0, 9000.0, 1.0, 9000.0), "output_impedance",
                            "resistance", ())
        assert rows == [(False, "knobs at half way", "9 kΩ"), (True, "Level at 0 %", "1 Ω"),
                        (True, "every other setting", "unchanged")]

    def test_every_row_kept_when_each_differs(self):
        rows = setting_rows(self.stage(1.0, 2.0, 3.0, 4.0), "output_impedance", "resistance",
                            ())
        assert [r[1] for r in rows] == ["knobs at half way", "Gain at 0 %", "Tone at 0 %",
                                        "Level at 0 %", "Tone at 100 %"]

    def test_one_row_when_nothing_moves(self):
        assert setting_rows(self.stage(9000.0, 9000.0, 9000.0, 9000.0), "output_impedance",
                            "resistance", ()) == [(False, "at every knob position", "9 kΩ")]


SETTINGS = (("Gain", 0.0), ("Tone", 0.0), ("Level", 0.0), ("Tone", 1.0))


class TestScoopRows:
    """The mid scoop per setting folds as the other figures do: a setting's scoop (nominal
    parts) that reads as the rest's nominal is 'unchanged', whatever the rest's spread."""

    @staticmethod
    def specs(*depths: float | None) -> StageSpecs:
        points = tuple(KnobPoint(((knob, pos),), Range(0.0), scoop=None if d is None
                                 else Scoop(Range(d), Range(970.0)))
                       for (knob, pos), d in zip(SETTINGS, depths, strict=True))
        return StageSpecs("tone", "tone-blend", "Tone", True, (), points, Range(0.0), None,
                          None, None, Range(9000.0), None,
                          scoop=Scoop(Range(3.9, 3.1, 4.6), Range(970.0, 884.0, 1050.0)))

    def test_the_settings_that_read_as_at_rest_fold_into_one_row(self):
        rows = scoop_rows(self.specs(3.9, None, 3.9, 5.0), ())
        assert rows == [
            (False, "knobs at half way", "3.9 dB (3.1–4.6) deep at 970 Hz (884 Hz–1.05 kHz)"),
            (True, "Tone at 0 %", "none"), (True, "Tone at 100 %", "5.0 dB deep at 970 Hz"),
            (True, "every other setting", "unchanged")]

    def test_one_row_when_no_setting_moves_it(self):
        assert scoop_rows(self.specs(3.9, 3.9, 3.9, 3.9), ()) == [
            (False, "at every knob position",
             "3.9 dB (3.1–4.6) deep at 970 Hz (884 Hz–1.05 kHz)")]
