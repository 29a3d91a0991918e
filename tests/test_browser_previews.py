"""A page's sound previews in headless chromium at a desktop's width (1280 px) and a phone's
(390 px): every player loads its clip, and the list fits the page without a sideways scroll."""

from __future__ import annotations

import json

import pytest

from chromium_pipe import Page
from kitleaf.site.build import build_site
from site_pages import DEMO_GUIDES

pytestmark = pytest.mark.slow

SLUG = "brookside-boost"
SECONDS = 0.05  # a short phrase will do: the page is what is checked
# Each player's clip read as far as its length, and where the player sits on the page.
PLAYERS = """
Promise.all([...document.querySelectorAll('audio')].map(a => new Promise(done => {
  const box = () => { const r = a.getBoundingClientRect(); return [r.left, r.right]; };
  a.addEventListener('loadedmetadata', () => done([a.getAttribute('src'), a.duration, box()]));
  a.addEventListener('error', () => done([a.getAttribute('src'), -1, box()]));
  a.preload = 'metadata'; a.load();
}))).then(found => JSON.stringify({
  players: found, vorbis: document.createElement('audio').canPlayType('audio/ogg; codecs=vorbis'),
  page: document.documentElement.scrollWidth, view: window.innerWidth}))
"""


@pytest.fixture(scope="module")
def site(tmp_path_factory):
    """The guide alone with its previews on, built in this process with a short phrase."""
    root = tmp_path_factory.mktemp("previews")
    guides = root / "guides"
    guides.mkdir()
    text = (DEMO_GUIDES / f"{SLUG}.md").read_text(encoding="utf-8")
    text = text.replace("\nsound-previews: off\n", "\n").replace(
        "bypass: true\n", "bypass: true\nsound-previews: on\n", 1)
    (guides / f"{SLUG}.md").write_text(text, encoding="utf-8")
    with pytest.MonkeyPatch.context() as patch:
        patch.setattr("kitleaf.audio.phrase.PHRASE_SECONDS", SECONDS)
        build_site(guides, root / "published", jobs=1, use_cache=False)
    return root / "published"


@pytest.mark.parametrize("width", [1280, 390])
def test_every_player_loads_its_clip_and_fits_the_page(site, browser, width):
    page = Page(browser, (site / SLUG / "index.html").as_uri(), width=width)
    assert page.errors() == []
    found = json.loads(page.evaluate(PLAYERS))
    assert found["vorbis"] in ("probably", "maybe")
    assert [p[0] for p in found["players"]] == ["sounds/bypass.ogg", "sounds/all-half.ogg",
                                               "sounds/level-0.ogg", "sounds/level-100.ogg"]
    for src, seconds, (left, right) in found["players"]:
        assert seconds == pytest.approx(SECONDS, abs=0.01), src
        assert 0 <= left and right <= found["view"], src
    assert found["page"] <= found["view"]  # no sideways scroll
