"""The rows of a page's check table: claims that hold, findings, accepted findings."""

from __future__ import annotations

from kitleaf.render.verdicts import VERDICTS, check_rows
from rules_kits import checks_of, swapped

# C1 at 10n against the 680k || 150k bias chain puts the boost stage's low corner near
# 1 / (2 pi 123k 10n) = 129 Hz, above the 20 Hz the coupling-corner rule allows (first-order
# high-pass corner, common practice, no source).
SMALL_INPUT_CAP = ("input-cap: C1 1u film 63V", "input-cap: C1 10n film 63V")
CLAIM = (  # the claim on the kit block's line 7
    "knob: Level = VR1", "knob: Level = VR1\nclaim: current below 20 mA")


def test_a_claim_that_holds_shows_its_text_value_and_line():
    [row] = check_rows(checks_of(swapped(CLAIM)), "kit")
    assert (row.kind, row.check, row.verdict, row.line) == ("claim", "current below 20 mA",
                                                             "holds", 7)
    assert row.given.endswith(")") and " mA (" in row.given  # nominal with its range
    assert row.detail == "claim on current draw, the kit"
    assert (row.symbol, row.words) == VERDICTS["holds"]


def test_a_finding_needs_a_look_and_an_allowed_one_keeps_its_reason():
    text = swapped(SMALL_INPUT_CAP)
    [row] = [r for r in check_rows(checks_of(text), "boost") if r.kind == "rule"]
    assert row.verdict == "look" and row.reason == ""
    assert row.detail == "design rule coupling-corner, on boost"
    assert row.check[0].isupper() and row.given[0].isupper() and row.given.endswith(".")
    allow = "\nallow: coupling-corner boost: a thin bass on purpose"
    allowed = text.replace("volume: VR1 A100k", "volume: VR1 A100k" + allow)
    [row] = [r for r in check_rows(checks_of(allowed), "boost") if r.kind == "rule"]
    assert (row.verdict, row.reason) == ("accepted", "a thin bass on purpose")
    assert row.words == "Accepted by the maker"


def test_every_verdict_is_words_in_sentence_case_and_a_symbol():
    for symbol, words in VERDICTS.values():
        assert symbol and not symbol.isalnum()
        assert words[0].isupper() and words[1:] == words[1:].lower()
