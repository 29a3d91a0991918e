"""Claims and allow lines: verified against the computed values, broken ones located."""

from __future__ import annotations

import pytest

from kitleaf.display import range_text
from kitleaf.errors import KitleafError, SourceSpan, SpecError
from kitleaf.guide.model import Entry
from kitleaf.specs.claims import Claim, broken, holds
from kitleaf.specs.lookup import Computed
from kitleaf.specs.model import Range
from rules_kits import BUFFER, GUIDE, checks_of, swapped


def with_stage_line(line: str) -> str:
    return swapped(("volume: VR1 A100k", f"volume: VR1 A100k\n{line}"))


def line_of(text: str, needle: str) -> int:
    return next(i for i, t in enumerate(text.splitlines(), 1) if needle in t)


def claim(low, high) -> Claim:
    return Claim(None, "kit", "x", low, high)


class TestHolds:
    """The whole tolerance range must lie inside the claim, not just the nominal value."""

    def test_range_inside(self):
        assert holds(claim(20, 30), Computed("x", Range(25, 22, 28), "db", "gain"))

    def test_nominal_inside_but_range_out(self):
        assert not holds(claim(20, 30), Computed("x", Range(25, 19, 28), "db", "gain"))

    def test_nominal_only_when_no_spread(self):
        assert holds(claim(None, 30), Computed("x", Range(29.9), "db", "gain"))
        assert not holds(claim(30, None), Computed("x", Range(29.9), "db", "gain"))


    def test_a_broken_claim_prints_the_span_it_was_judged_over(self):
        # The 5th-95th percentile spread can miss the nominal build where a part is pushed to an
        # extreme; the message shows the span holds() judged, nominal included.
        computed = Computed("x", Range(-2.0, 1.0, 3.0), "db", "gain")
        stated = Claim(Entry("claim", "x between 5 dB and 10 dB", SourceSpan("g.md", 3)), "kit",
                       "x", 5.0, 10.0)
        message = broken(stated, computed).message
        assert "computed -2.0 dB (range -2.0 dB to 3.0 dB)" in message


class TestClaims:
    def test_a_true_stage_claim_is_verified_with_its_value(self):
        # Gain with Level fully up is 24.8-25.7 dB for this kit (computed, see test_rules_*).
        checks = checks_of(with_stage_line("claim: gain.level-100 between 22 dB and 28 dB"))
        (verified,) = checks.claims_for("boost")
        assert verified.computed.name == "boost.gain.level-100"
        shown = range_text(verified.computed.value, verified.computed.quantity)
        assert shown.endswith(")") and "dB" in shown

    def test_a_kit_claim_in_other_units(self):
        text = swapped(("source: low-z", "source: low-z\nclaim: current below 5 mA"))
        (verified,) = checks_of(text).claims_for("kit")
        assert verified.computed.name == "kit.current"

    def test_a_broken_claim_names_line_value_and_range(self):
        text = with_stage_line("claim: q1.collector between 5 V and 6 V")
        with pytest.raises(SpecError) as err:
            checks_of(text, "guides/fb-t9.md")
        line = line_of(text, "claim: q1.collector")
        message = str(err.value)
        assert message.startswith(f"guides/fb-t9.md:{line}: error: claim 'q1.collector")
        assert "computed 4.31 V (range " in message and "–" in message

    def test_every_broken_claim_is_reported_on_its_own_line(self):
        text = with_stage_line("claim: q1.collector between 5 V and 6 V\n"
                               "claim: q1.base above 3 V")
        with pytest.raises(KitleafError) as err:
            checks_of(text, "guides/fb-t9.md")
        lines = str(err.value).splitlines()
        assert [ln.split(": error: ")[0] for ln in lines] == [
            f"guides/fb-t9.md:{line_of(text, 'claim: q1.collector')}",
            f"guides/fb-t9.md:{line_of(text, 'claim: q1.base')}",
        ]

    def test_an_unknown_name_suggests_the_nearest(self):
        text = with_stage_line("claim: q1.colector below 5 V")
        with pytest.raises(SpecError, match=r"did you mean 'q1\.collector'") as err:
            checks_of(text)
        assert err.value.span.line == line_of(text, "q1.colector")

    def test_a_custom_test_point_is_named_stage_dot_node(self):
        # docs/claims-and-rules.md: a test point with no device is STAGE.NODE, the node as the
        # guide writes it ('test-point: Q2 source = s' in stage buffer).
        assert "buffer.s" in checks_of(BUFFER).values
        assert "buffer.buffer-s" not in checks_of(BUFFER).values

    def test_its_label_spelled_as_device_and_pin_suggests_the_node_name(self):
        text = BUFFER.replace("test-point: Q2 source = s",
                              "test-point: Q2 source = s\nclaim: buffer.q2.source below 8 V")
        with pytest.raises(SpecError, match=r"did you mean 'buffer\.s'\?"):
            checks_of(text)

    @pytest.mark.parametrize("line, words", [
        ("claim: gain.level-100 around 25 dB", "cannot read the claim"),
        ("claim: gain.level-100 below 25", "decibels"),
        ("claim: current between 5 mA and 1 mA", "lower bound is above"),
        ("claim: current below 5 Hz", "its unit is a frequency"),
    ])
    def test_unreadable_claims(self, line, words):
        with pytest.raises(SpecError, match=words):
            checks_of(with_stage_line(line))


class TestAllow:
    def test_an_allow_silences_one_rule_for_one_part_with_its_reason(self):
        text = swapped(("R3 8k2", "R3 8k"), ("R4 1k5", "R4 1k5\nallow: e-series R3: matches the "
                                                   "prototype board"))
        (found,) = checks_of(text).findings
        assert (found.rule, found.subject, found.allowed) == ("e-series", "R3",
                                                             "matches the prototype board")
        assert checks_of(text).warnings == ()

    def test_an_unknown_rule_is_an_error_with_a_suggestion(self):
        with pytest.raises(SpecError, match="did you mean 'e-series'"):
            checks_of(with_stage_line("allow: eseries R3: a reason"))

    def test_an_allow_without_reason_is_an_error(self):
        with pytest.raises(SpecError, match="cannot read allow"):
            checks_of(with_stage_line("allow: e-series R3"))

    def test_an_allow_that_silences_nothing_is_reported(self):
        (found,) = checks_of(with_stage_line("allow: e-series R3: a reason")).findings
        assert found.rule == "unused-allow"

    def test_the_plain_guide_has_no_findings(self):
        assert checks_of(GUIDE).findings == ()

