"""Claims that set their own test tone: the figure solved at that tone, and the tones that
cannot be simulated or that a figure cannot take, each an error at the claim's line."""

from __future__ import annotations

import pytest
from tests.stages.kits import gain_at

from kitleaf.circuit.build import build_circuit
from kitleaf.circuit.chain import OUTPUT
from kitleaf.errors import SpecError
from kitleaf.guide.parse import parse_guide
from kitleaf.specs.claims import verify
from kitleaf.specs.derive import derive_specs
from rules_kits import GUIDE

# The test boost asking for its large-signal figures, with a small input capacitor whose
# high-pass corner lies near 40 Hz; invented for these tests.
ASKING = GUIDE.replace("supply: 9 V\n", "supply: 9 V\nlarge-signal: yes\n", 1).replace(
    "input-cap: C1 1u film", "input-cap: C1 22n film", 1)
CLAIMS = ("claim: peak.10mv below 5 V at 40 Hz",
          "claim: thd.300mv.level-100 below 1000 % at 40 Hz",
          "claim: peak.100mv below 5 V")


def with_claims(*claims: str) -> str:
    return ASKING.replace("large-signal: yes\n", "large-signal: yes\n" + "".join(
        f"{c}\n" for c in claims), 1)


@pytest.fixture(scope="module")
def toned():
    guide = parse_guide("toned.md", with_claims(*CLAIMS))
    kit = build_circuit(guide)
    return guide, kit, derive_specs(guide, kit)


class TestClaimTone:
    def test_the_figure_is_solved_at_the_claims_tone(self, toned):
        # at a small level the output's peak is the AC gain at the tone times the level (the
        # definition of small-signal analysis), the coupling corner's fall included: the
        # claim at 40 Hz reads it there; a claim without a tone reads the kit's figure
        guide, kit, specs = toned
        at_tone, _, at_kit_tone = verify(guide, kit, specs).claims
        assert at_tone.claim.tone == 40.0 and at_kit_tone.claim.tone is None
        ac_40, ac_1k = (abs(gain_at(kit, f, OUTPUT)) for f in (40.0, 1000.0))
        assert ac_1k > 1.2 * ac_40
        assert at_tone.computed.value.nominal == pytest.approx(ac_40 * 0.01, rel=0.01)
        assert at_kit_tone.computed.value.nominal == specs.drive.base.points[0].peak
        assert "40 Hz test tone" in at_tone.label and "test tone" not in at_kit_tone.label

    def test_the_page_keeps_the_kits_tone(self, toned):
        # the figures at a claim's tone are the claim's alone
        _, _, specs = toned
        assert specs.drive.freq == 1000.0
        assert [p.level for p in specs.drive.base.points] == [0.1, 0.3, 1.0]
        (drives,) = specs.claim_tones
        assert drives.freq == 40.0 and [p.level for p in drives.kit.base.points] == [0.01, 0.3]

    @pytest.mark.parametrize("claim, message", [
        ("peak.10mv below 5 V at 25 kHz", "'25 kHz' in 'claim: .*' cannot be simulated: the "
         "tone .* must be from 20 Hz to 20 kHz"),
        ("thd.300mv below 1 % at 0 Hz", "cannot be simulated: a drive needs a level and a "
         "tone above zero"),
        ("thd.300mv below 1 % at -200 Hz", "above zero"),
        ("thd.300mv below 1 % at loud", "cannot read 'loud'"),
        ("gain below 30 dB at 200 Hz", "'gain' is no large-signal figure"),
        ("thd.20v below 1 % at 200 Hz", "20v is no pickup level that can be simulated"),
    ])
    def test_a_bad_tone_is_an_error_at_its_line(self, toned, claim, message):
        _, kit, specs = toned
        text = with_claims(f"claim: {claim}")
        with pytest.raises(SpecError, match=message) as caught:
            verify(parse_guide("toned.md", text), kit, specs)
        assert caught.value.span.line == text.splitlines().index(f"claim: {claim}") + 1
