"""Design rules about single parts: capacitor polarity and voltage, resistor power, LED
current, E-series values. Each rule: a guide that trips it and the plain test guide that does
not."""

from __future__ import annotations

import pytest

from kitleaf.bom import bom_lines, rating_warnings
from kitleaf.circuit.build import build_circuit
from kitleaf.guide.parse import parse_guide
from rules_kits import GUIDE, checks_of, findings, swapped

# A custom stage whose electrolytic sits between a trimmer's wiper and VREF: the wiper swings
# from ground to VCC, so the capacitor's voltage changes sign across the knob's travel.
SWING = """\
```stage swing
kind: custom
nodes: w
part: VR5 B100k @ 0 w vcc
part: C5 10u electrolytic 25V @ w vref
part: R6 100k @ in out
```
"""


# Red LEDs clipping the signal after the boost, in a custom stage and in a clipper stage.
CLIPPER = """\
```stage clip
kind: custom
nodes: x
part: C21 100n film 63V @ in x
part: R21 10k @ x out
part: LED21 red @ x 0
part: LED22 red @ 0 x
part: R22 1M @ out 0
```

```stage hard
kind: diode-clipper
input-cap: C23 100n film 63V
series: R23 4k7
clip-positive: LED23 red
clip-negative: LED24 red
```
"""


def test_plain_guide_trips_no_rule():
    assert checks_of(GUIDE).findings == ()


class TestCapPolarity:
    def test_a_capacitor_reversed_by_a_knob_is_found(self):
        text = swapped(("knob: Level = VR1", "knob: Level = VR1\nknob: Set = VR5")) + SWING
        found = findings(text, "cap-polarity")
        assert [f.subject for f in found] == ["C5"]
        # The wiper swings 0..8.85 V around VREF (4.42 V): about 4.4 V reversed at one end.
        assert "Set at 0 %" in found[0].message or "Set at 100 %" in found[0].message

    def test_a_capacitor_held_one_way_is_not(self):
        fixed = SWING.replace("@ w vref", "@ vcc 0")
        text = swapped(("knob: Level = VR1", "knob: Level = VR1\nknob: Set = VR5")) + fixed
        assert findings(text, "cap-polarity") == []


class TestCapVoltage:
    def test_a_10_v_can_on_a_9_v_rail_is_over_80_percent(self):
        # 8.85 V is over 80 % of 10 V (8 V); 80 % derating is common practice, no source.
        text = swapped(("C10 100u electrolytic 16V", "C10 100u electrolytic 10V"))
        found = findings(text, "cap-voltage")
        assert [f.subject for f in found] == ["C10"]
        line = text.splitlines().index("bulk-cap: C10 100u electrolytic 10V") + 1
        assert found[0].span.line == line

    def test_a_voltage_no_knob_moves_names_no_knob_position(self):
        # the bulk cap sits across the supply whatever the Level knob does
        text = swapped(("C10 100u electrolytic 16V", "C10 100u electrolytic 10V"))
        message = findings(text, "cap-voltage")[0].message
        assert "at every knob setting" in message
        assert "half way" not in message and "Level at" not in message

    def test_a_polarised_cap_without_rating_is_found(self):
        text = swapped(("C12 22u electrolytic 16V", "C12 22u electrolytic"))
        assert [f.subject for f in findings(text, "cap-voltage")] == ["C12"]

    def test_16_v_cans_pass(self):
        assert findings(GUIDE, "cap-voltage") == []


class TestResistorPower:
    def test_a_100_ohm_divider_across_9_v_overheats_quarter_watt_parts(self):
        # Each 100 Ω leg drops 4.42 V: 4.42² / 100 = 195 mW, over half of 1/4 W (hand calc).
        text = swapped(("R11 22k", "R11 100"), ("R12 22k", "R12 100"))
        found = findings(text, "resistor-power")
        assert sorted(f.subject for f in found) == ["R11", "R12"]
        assert "assumed" in found[0].message

    def test_a_stated_one_watt_rating_passes(self):
        text = swapped(("R11 22k", "R11 100 1W"), ("R12 22k", "R12 100 1W"))
        assert findings(text, "resistor-power") == []


class TestRatingsAgree:
    def test_the_bom_warns_at_the_worst_knob_setting_as_the_rule_does(self):
        # With Set fully clockwise the wiper sits at VCC (8.85 V), so R7 dissipates
        # 8.85² / 470 = 167 mW, over half of an assumed 1/4 W; with Set at half way the 470 Ω
        # load pulls the wiper under 0.1 V (hand calc). Half the rating: common practice.
        stage = SWING.replace("part: R6 100k @ in out", "part: R6 100k @ in out\n"
                              "part: R7 470 @ w 0")
        text = swapped(("knob: Level = VR1", "knob: Level = VR1\nknob: Set = VR5")) + stage
        checks = checks_of(text)
        found = [f for f in checks.findings if f.rule == "resistor-power"]
        assert [f.subject for f in found] == ["R7"]
        assert "Set at 100 %" in found[0].message and "assumed" in found[0].message
        kit = build_circuit(parse_guide("test.md", text))
        warned = [w for line in rating_warnings(bom_lines(kit.parts()), checks.stresses)
                  for w in line.warnings]
        assert [(w.designator, w.message, w.span) for w in warned] \
            == [("R7", found[0].message, found[0].span)]


class TestLedCurrent:
    def test_a_100k_resistor_leaves_the_led_dark(self):
        # (8.85 V - about 1.6 V) / 100 kΩ is about 0.07 mA, under 1 mA (hand calc).
        found = findings(swapped(("R10 4k7", "R10 100k")), "led-current")
        assert [f.subject for f in found] == ["LED1"]

    def test_a_150_ohm_resistor_overdrives_it(self):
        # (8.85 - about 2) V / 150 Ω is about 45 mA, over 20 mA (hand calc).
        assert [f.subject for f in findings(swapped(("R10 4k7", "R10 150")), "led-current")] \
            == ["LED1"]

    def test_4k7_gives_about_1_5_ma(self):
        assert findings(GUIDE, "led-current") == []

    def test_clipping_leds_are_no_indicators(self):
        # LEDs clipping the signal to ground behind a coupling cap carry no DC current by
        # design (common practice, no source): neither dim nor a resistor to change
        text = GUIDE + CLIPPER
        assert findings(text, "led-current") == []

    def test_a_custom_stages_lit_led_is_an_indicator(self):
        # (8.85 V - about 1.6 V) / 220 kΩ is about 33 µA: lit, but under 1 mA (hand calc)
        text = GUIDE + CLIPPER.replace("nodes: x", "nodes: x y\npart: R29 220k @ vcc y\n"
                                                   "part: LED29 red @ y 0")
        found = findings(text, "led-current")
        assert [f.subject for f in found] == ["LED29"]
        assert "lower its series resistor" in found[0].message

    def test_a_clipping_led_fed_20_ma_at_dc_is_found_without_indicator_advice(self):
        # a clipper with no input cap behind a stage pulling its input to the 8.85 V rail
        # through 100 Ω: (8.85 - about 1.9) V / 200 Ω, about 35 mA, over 20 mA (hand calc)
        fed = ("```stage feed\nkind: custom\npart: R27 1M @ in out\npart: R28 100 @ vcc out\n"
               "```\n\n```stage hard\nkind: diode-clipper\nseries: R23 100\n"
               "clip-positive: LED23 red\n```\n")
        found = findings(GUIDE + fed, "led-current")
        assert [f.subject for f in found] == ["LED23"]
        assert "series resistor" not in found[0].message


class TestESeries:
    @pytest.mark.parametrize("line, nearest", [
        ("R3 8k2", None),  # E24 8.2 (IEC 60063)
        ("R3 8k", ("7.5 kΩ", "8.2 kΩ")),  # 8.0 is not in E24; 7.5 and 8.2 are (IEC 60063)
        ("R3 8k2 1%", ("8.06 kΩ", "8.25 kΩ")),  # E96 has 806 and 825, not 820 (IEC 60063)
        ("R3 8k2 10%", None),  # E12 has 8.2 (IEC 60063)
    ])
    def test_values_against_the_series_of_their_tolerance(self, line, nearest):
        found = findings(swapped(("R3 8k2", line)), "e-series")
        if nearest is None:
            assert found == []
        else:
            assert [f.subject for f in found] == ["R3"]
            assert nearest[0] in found[0].message and nearest[1] in found[0].message

    def test_pots_are_exempt(self):
        assert findings(swapped(("VR1 A100k", "VR1 A25k")), "e-series") == []
