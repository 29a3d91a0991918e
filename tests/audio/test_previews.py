"""The bypass clip beside the kit's clips: level-matched to the every-knob-at-half clip when
there is one to match, and said to be unmatched when that clip is missing or silent."""

import numpy as np
import pytest

from kitleaf.audio.clips import clip_plan
from kitleaf.audio.encode import RATE
from kitleaf.audio.previews import Rendered, make_previews

PLAN = clip_plan([("Gain", "VR1")])
DRY = 0.3 * np.sin(2 * np.pi * 440.0 * np.arange(RATE // 10) / RATE)


def renderer(first):
    """Each setting's output is the dry phrase doubled, the first one's ``first(dry)``."""
    def render(settings, dry):
        out = [Rendered(s, 2.0 * dry) for s in settings]
        out[0] = first(settings[0], dry)
        return out
    return render


def rms(x):
    return float(np.sqrt(np.mean(np.square(x))))


def test_the_bypass_clip_is_level_matched_to_the_every_knob_at_half_clip():
    previews = make_previews(PLAN, DRY, renderer(lambda s, d: Rendered(s, 0.5 * d)), "sounds")
    bypass, half = previews.clips[:2]
    assert previews.matched
    assert bypass.label == "Bypass (level-matched)"
    # equal RMS is what level-matched means here (docs/guide-format.md, "Sound previews")
    assert bypass.rms_v == pytest.approx(half.rms_v, rel=1e-12)


@pytest.mark.parametrize("first, why", [
    (lambda s, d: Rendered(s, None, "the solve did not settle"), "could not be made"),
    (lambda s, d: Rendered(s, 0.0 * d), "is silent"),
])
def test_with_nothing_to_match_the_bypass_clip_says_it_is_not_level_matched(first, why):
    previews = make_previews(PLAN, DRY, renderer(first), "sounds")
    bypass = previews.clips[0]
    assert not previews.matched
    assert bypass.label == f"Bypass (not level-matched: the clip 'Every knob at half way' {why})"
    assert "level-matched)" not in bypass.label
    assert bypass.rms_v == pytest.approx(rms(DRY), rel=1e-12)  # the pickup's own level
    assert bypass.file == "sounds/bypass.ogg"
