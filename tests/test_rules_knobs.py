"""Design rule pot-taper: a knob whose taper crowds its change into one quarter turn, judged
against the gain its stage's textbook formula gives at each position."""

from __future__ import annotations

import math
import re

from rules_kits import GUIDE, KIT, OPAMP, POWER, checks_of, findings, swapped

# The audio (log) taper as the engine draws it: 10 % of the track at half rotation, the
# exponential f(p) = (81**p - 1) / 80 (common practice, no source: pot catalogues give 10 %).
TAPERS = {"A": lambda p: (81**p - 1) / 80, "B": lambda p: p,
          "C": lambda p: 1 - (81 ** (1 - p) - 1) / 80}

GAIN_STAGE = OPAMP.replace("gain-resistor: R4 2k7", "gain-resistor: R4 2k7\ngain: VR2 {taper}50k")


def gain_guide(taper: str) -> str:
    kit = KIT.replace("knob: Level = VR1", "knob: Gain = VR2")
    return kit + "\n" + POWER + "\n" + GAIN_STAGE.format(taper=taper)


def last_quarter_share(taper: str) -> float:
    """The non-inverting gain 1 + Rf / (Rg + the pot's remaining track), the pot shorting
    clockwise (textbook non-inverting amplifier): the last quarter's share of the dB change."""
    def db(p: float) -> float:
        return 20 * math.log10(1 + 82e3 / (2.7e3 + 50e3 * (1 - TAPERS[taper](p))))

    steps = [abs(db(b) - db(a)) for a, b in zip((0, .25, .5, .75), (.25, .5, .75, 1),
                                                  strict=True)]
    return steps[3] / sum(steps)


class TestPotTaper:
    def test_a_log_gain_pot_that_jumps_in_the_last_quarter_is_found(self):
        found = findings(gain_guide("A"), "pot-taper")
        assert [f.subject for f in found] == ["VR2"]
        message = found[0].message
        assert "in the last quarter turn" in message and "C (reverse log)" in message
        share = int(re.search(r"makes (\d+) %", message)[1])
        assert abs(share - 100 * last_quarter_share("A")) <= 1.0  # about 90 %

    def test_a_linear_gain_pot_crowds_the_last_quarter_too(self):
        # 1 + 82k / (2k7 + 12k5) at 75 % against 1 + 82k / 2k7 at 100 %: 63 % of the change
        assert last_quarter_share("B") > 0.6
        assert [f.subject for f in findings(gain_guide("B"), "pot-taper")] == ["VR2"]

    def test_a_reverse_log_gain_pot_spreads_its_change(self):
        assert last_quarter_share("C") < 0.6
        assert findings(gain_guide("C"), "pot-taper") == []

    def test_a_log_volume_passes_and_a_reverse_log_one_is_found(self):
        assert findings(GUIDE, "pot-taper") == []
        found = findings(swapped(("VR1 A100k", "VR1 C100k")), "pot-taper")
        assert [f.subject for f in found] == ["VR1"]
        assert "A (log)" in found[0].message

    def test_an_allow_line_silences_it(self):
        text = gain_guide("A").replace("gain: VR2 A50k",
                                       "gain: VR2 A50k\nallow: pot-taper VR2: as the original")
        found = [f for f in checks_of(text).findings if f.rule == "pot-taper"]
        assert found and found[0].allowed == "as the original"
